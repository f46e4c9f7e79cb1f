//! The published SGP4 verification set: Vallado, Crawford, Hujsak & Kelso
//! (2006), "Revisiting Spacetrack Report #3", AIAA 2006-6753. Files
//! `SGP4-VER.TLE` and `tcppver.out` as shipped in the PyPI package sgp4 2.27
//! (MIT); see tests/fixtures/sgp4-verification/SOURCE.md.
//!
//! The element file has extra columns after column 69 and deliberately bad
//! checksums, so it goes through the loader's lenient mode.

use std::collections::HashMap;
use std::path::PathBuf;

use passlane_orbit::{LoadOptions, Propagator, elements};

fn dir() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../tests/fixtures/sgp4-verification")
}

struct Case {
    catalog: u32,
    rows: Vec<[f64; 7]>,
}

fn cases() -> Vec<Case> {
    let text = std::fs::read_to_string(dir().join("tcppver.out")).unwrap();
    let mut out: Vec<Case> = Vec::new();
    for line in text.lines() {
        let f: Vec<&str> = line.split_whitespace().collect();
        if f.len() == 2 && f[1] == "xx" {
            out.push(Case { catalog: f[0].parse().unwrap(), rows: Vec::new() });
        } else if f.len() >= 7 {
            let mut row = [0.0; 7];
            for (k, v) in f[..7].iter().enumerate() {
                row[k] = v.parse().unwrap();
            }
            out.last_mut().unwrap().rows.push(row);
        }
    }
    out
}

/// Error cases: (catalog, first failing minutes since epoch), from the python
/// package's own tests and the paper (SOURCE.md, "Cases that end in an error").
/// The third number is the last tabulated time, which must still succeed.
const ERRORS: &[(u32, f64, f64)] = &[
    (22312, 494.202_867_2, 474.202_867_2),
    (28350, 1560.0, 1440.0),
    (28872, 55.0, 50.0),
    (29141, 440.0, 420.0),
    (33333, 25.0, 20.0),
    (33334, 0.0, 0.0),
    (20413, 1_844_345.0, 1_844_340.0),
];

#[test]
fn all_33_cases_reproduce_the_published_vectors() {
    let bytes = std::fs::read(dir().join("SGP4-VER.TLE")).unwrap();
    let report = elements::load(&bytes, "SGP4-VER.TLE", LoadOptions { lenient: true });
    let errors: Vec<_> = report.errors().collect();
    assert!(errors.is_empty(), "{errors:?}");
    let sets: HashMap<u32, _> = report.sets.iter().map(|s| (s.catalog_number, s)).collect();
    let cases = cases();
    assert_eq!(cases.len(), 33, "33 cases in tcppver.out");
    let (mut worst_r_mm, mut worst_v_mm_s, mut compared) = (0.0_f64, 0.0_f64, 0usize);
    for case in &cases {
        let set = sets.get(&case.catalog).unwrap_or_else(|| panic!("{} did not load", case.catalog));
        let prop = Propagator::new(set);
        if case.catalog == 33334 {
            // Fails at initialisation; its single row in tcppver.out repeats the
            // previous case's last row (SOURCE.md) and is not compared.
            let failed = match &prop {
                Err(_) => true,
                Ok(p) => p.state_at_minutes(0.0).is_err(),
            };
            assert!(failed, "33334 must fail at epoch");
            continue;
        }
        let prop = prop.unwrap();
        for row in &case.rows {
            let s = prop
                .state_at_minutes(row[0])
                .unwrap_or_else(|e| panic!("{} at {} min: {e}", case.catalog, row[0]));
            let dr = (0..3).map(|k| (s.position_km[k] - row[1 + k]).powi(2)).sum::<f64>().sqrt() * 1e6;
            let dv = (0..3).map(|k| (s.velocity_km_s[k] - row[4 + k]).powi(2)).sum::<f64>().sqrt() * 1e6;
            // Issue tolerance: 1 mm and 1 mm/s.
            assert!(dr < 1.0, "{} at {} min: position off by {dr} mm", case.catalog, row[0]);
            assert!(dv < 1.0, "{} at {} min: velocity off by {dv} mm/s", case.catalog, row[0]);
            worst_r_mm = worst_r_mm.max(dr);
            worst_v_mm_s = worst_v_mm_s.max(dv);
            compared += 1;
        }
    }
    eprintln!("{compared} rows; worst {worst_r_mm:.4} mm, {worst_v_mm_s:.4} mm/s");
    assert!(compared > 600);
}

#[test]
fn the_published_error_cases_fail_at_the_published_times() {
    let bytes = std::fs::read(dir().join("SGP4-VER.TLE")).unwrap();
    let report = elements::load(&bytes, "SGP4-VER.TLE", LoadOptions { lenient: true });
    for &(catalog, t_min, last_ok) in ERRORS {
        let set = report.sets.iter().find(|s| s.catalog_number == catalog).unwrap();
        match Propagator::new(set) {
            Err(_) => assert_eq!(t_min, 0.0, "{catalog} failed at initialisation"),
            Ok(p) => {
                assert!(p.state_at_minutes(t_min).is_err(), "{catalog} must fail at {t_min} min");
                if t_min > 0.0 {
                    assert!(p.state_at_minutes(last_ok).is_ok(), "{catalog} must still work at {last_ok} min");
                }
            }
        }
    }
}
