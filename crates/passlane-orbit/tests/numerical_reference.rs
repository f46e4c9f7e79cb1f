//! The numerical propagator against an independent general-purpose
//! integrator: scipy 1.17.1 `solve_ivp` with the DOP853 method (rtol 1e-13)
//! on the same force model (central gravity, J2–J4 with python sgp4 2.27's
//! WGS-72 constants, drag from B*), three days, states every hour. Fixture:
//! `tests/fixtures/numerical-scipy.json`, made by
//! `scripts/fixtures/make_numerical_fixture.py`.

#![allow(clippy::unwrap_used, clippy::expect_used)]

use std::path::PathBuf;

use passlane_orbit::UtcTime;
use passlane_orbit::frames::{norm, sub};
use passlane_orbit::numerical::{
    Cartesian, Drag, ForceModel, J2_WGS72, J3_WGS72, J4_WGS72, NumericalTrajectory, Tolerance,
};
use serde_json::Value;

fn fixture() -> Value {
    let p =
        PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../tests/fixtures/numerical-scipy.json");
    serde_json::from_str(&std::fs::read_to_string(p).unwrap()).unwrap()
}

fn vec3(v: &Value) -> [f64; 3] {
    let a = v.as_array().unwrap();
    [
        a[0].as_f64().unwrap(),
        a[1].as_f64().unwrap(),
        a[2].as_f64().unwrap(),
    ]
}

#[test]
fn the_wgs72_zonals_are_those_of_python_sgp4() {
    // python sgp4 2.27, sgp4.earth_gravity.wgs72: j2, j3, j4.
    assert_eq!(J2_WGS72, 0.001082616);
    assert_eq!(J3_WGS72, -0.00000253881);
    assert_eq!(J4_WGS72, -0.00000165597);
}

#[test]
fn three_days_agree_with_scipy_dop853_within_a_metre() {
    let fx = fixture();
    let t0 = UtcTime::parse_iso("2026-12-01T00:00:00Z").unwrap();
    for case in fx["cases"].as_array().unwrap() {
        let name = case["name"].as_str().unwrap();
        let bstar = case["bstar_per_earth_radii"].as_f64().unwrap();
        let model = ForceModel::zonal(Drag::from_bstar(bstar));
        let start = Cartesian {
            position_km: vec3(&case["position_km"]),
            velocity_km_s: vec3(&case["velocity_km_s"]),
        };
        let tr = NumericalTrajectory::propagate(
            model,
            t0,
            start,
            t0.add_s(3.0 * 86_400.0),
            Tolerance::default(),
        )
        .unwrap();
        let mut worst_m = 0.0f64;
        for st in case["states"].as_array().unwrap() {
            let t = t0.add_s(st["t_s"].as_f64().unwrap());
            let got = tr.state_at(t).unwrap();
            let d_m = norm(&sub(&got.position_km, &vec3(&st["position_km"]))) * 1000.0;
            let dv_mm_s = norm(&sub(&got.velocity_km_s, &vec3(&st["velocity_km_s"]))) * 1e6;
            worst_m = worst_m.max(d_m);
            assert!(d_m <= 1.0, "{name} at +{} s: {d_m} m", st["t_s"]);
            assert!(dv_mm_s <= 1.0, "{name} at +{} s: {dv_mm_s} mm/s", st["t_s"]);
        }
        eprintln!(
            "{name}: worst {worst_m:.4} m over 3 days, {} steps",
            tr.steps()
        );
    }
}
