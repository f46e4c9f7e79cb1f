//! TEME ↔ EME2000 ↔ GCRF against the PyPI package pyerfa 2.0.1.5 (ERFA's
//! IAU 1976/1980 functions), fixture `tests/fixtures/inertial-pyerfa.json`
//! made by `scripts/fixtures/make_inertial_fixture.py`.
#![allow(clippy::unwrap_used)]

use passlane_orbit::UtcTime;
use passlane_orbit::inertial::{
    Eme2000ToTeme, frame_bias, gcrf_to_teme, mean_obliquity_1980, nutation_1980, precession_1976,
    tai_minus_utc_s, teme_to_eme2000, teme_to_gcrf,
};
use serde_json::Value;

fn fixture() -> Value {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/../../tests/fixtures/inertial-pyerfa.json"
    );
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

fn v3(v: &Value) -> [f64; 3] {
    std::array::from_fn(|k| v[k].as_f64().unwrap())
}

fn m3(v: &Value) -> [[f64; 3]; 3] {
    std::array::from_fn(|i| v3(&v[i]))
}

fn dist(a: &[f64; 3], b: &[f64; 3]) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
}

#[test]
fn states_match_pyerfa_to_a_millimetre() {
    // Tolerance: 1 mm and 1 µm/s (the issue asks for ≤ 1 m); measured
    // differences are at the micrometre level (the same models in the same
    // arithmetic).
    let f = fixture();
    let samples = f["samples"].as_array().unwrap();
    assert!(samples.len() >= 20);
    for s in samples {
        let t = UtcTime::parse_iso(s["time_utc"].as_str().unwrap()).unwrap();
        let (r, v) = (v3(&s["teme_position_km"]), v3(&s["teme_velocity_km_s"]));
        let (re, ve) = teme_to_eme2000(t, &r, &v);
        assert!(dist(&re, &v3(&s["eme2000_position_km"])) < 1e-6, "{s}");
        assert!(dist(&ve, &v3(&s["eme2000_velocity_km_s"])) < 1e-9, "{s}");
        let (rg, vg) = teme_to_gcrf(t, &r, &v);
        assert!(dist(&rg, &v3(&s["gcrf_position_km"])) < 1e-6, "{s}");
        assert!(dist(&vg, &v3(&s["gcrf_velocity_km_s"])) < 1e-9, "{s}");
        // And back.
        let (rt, vt) = gcrf_to_teme(t, &rg, &vg);
        assert!(dist(&rt, &r) < 1e-9 && dist(&vt, &v) < 1e-12);
    }
}

#[test]
fn models_match_pyerfa() {
    let f = fixture();
    for m in f["models"].as_array().unwrap() {
        let t = UtcTime::parse_iso(m["time_utc"].as_str().unwrap()).unwrap();
        let c = m["tt_centuries"].as_f64().unwrap();
        let (dpsi, deps) = nutation_1980(c);
        // 1e-12 rad = 0.2 µas.
        assert!(
            (dpsi - m["dpsi_rad"].as_f64().unwrap()).abs() < 1e-12,
            "{m}"
        );
        assert!(
            (deps - m["deps_rad"].as_f64().unwrap()).abs() < 1e-12,
            "{m}"
        );
        assert!((mean_obliquity_1980(c) - m["mean_obliquity_rad"].as_f64().unwrap()).abs() < 1e-14);
        let p = precession_1976(c);
        let want = m3(&m["precession"]);
        let full = Eme2000ToTeme::at(t).matrix();
        let want_full = m3(&m["teme_from_eme2000"]);
        for i in 0..3 {
            for j in 0..3 {
                assert!((p[i][j] - want[i][j]).abs() < 1e-14, "{m}");
                assert!((full[i][j] - want_full[i][j]).abs() < 1e-13, "{m}");
            }
        }
    }
    let b = frame_bias();
    let want = m3(&f["frame_bias"]);
    for i in 0..3 {
        for j in 0..3 {
            assert!((b[i][j] - want[i][j]).abs() < 1e-15);
        }
    }
}

#[test]
fn leap_seconds_match_pyerfa() {
    for row in fixture()["tai_minus_utc"].as_array().unwrap() {
        let t = UtcTime::parse_iso(row["date"].as_str().unwrap()).unwrap();
        assert_eq!(
            tai_minus_utc_s(t),
            row["tai_utc_s"].as_f64().unwrap(),
            "{row}"
        );
    }
}
