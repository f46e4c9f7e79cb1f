//! Every CDM and OEM the tool writes, KVN and XML, read back by an outside
//! reader, the PyPI package `ccsds-ndm` 3.1.1 (models generated from the
//! CCSDS NDM/XML schemas), through `scripts/fixtures/check_ccsds.py`, which
//! adds the checks the library leaves out (order against the schema's
//! sequence = CCSDS 508.0-B-1 Tables 3-1..3-4 and 502.0-B-3 Tables 5-2..5-4,
//! designators, number forms, Z-less times); and by the tool's own readers.
//!
//! The Python with ccsds-ndm is `PASSLANE_PYTHON`, else `.venv/bin/python`
//! at the repository root (made by `scripts/setup.sh` from
//! `scripts/fixtures/requirements.txt`). Without it these tests fail and say
//! so: they are not skipped.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

use std::path::{Path, PathBuf};
use std::process::Command;

use passlane_orbit::ephemeris::{OemFormat, load_oem};
use passlane_orbit::{EarthOrientation, ElementSet, Propagator, UtcTime};
use passlane_plan::Scenario;
use passlane_plan::cdm::{Cdm, ccsds_time};
use passlane_plan::conjunction::{CdmContext, event_to_cdm};
use passlane_plan::export::{self, OemFrame, OemOptions};
use passlane_plan::job::{ScreeningJob, screen_and_assess};
use passlane_plan::screen::ScreeningVolume;
use serde_json::Value;

fn repo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../..")
}

fn python() -> PathBuf {
    let p = std::env::var_os("PASSLANE_PYTHON")
        .map(PathBuf::from)
        .unwrap_or_else(|| repo().join(".venv/bin/python"));
    assert!(
        p.exists(),
        "no Python with ccsds-ndm 3.1.1 at {}: run `bash scripts/setup.sh` (it makes .venv from \
         scripts/fixtures/requirements.txt) or set PASSLANE_PYTHON",
        p.display()
    );
    p
}

fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("passlane-ccsds-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// Runs the ccsds-ndm 3.1.1 checker on `files`; fails with its findings.
fn ccsds_ndm(files: &[PathBuf]) -> Vec<Value> {
    let out = Command::new(python())
        .arg(repo().join("scripts/fixtures/check_ccsds.py"))
        .args(files)
        .output()
        .expect("run the checker");
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_ne!(
        out.status.code(),
        Some(2),
        "ccsds-ndm 3.1.1 is not installed for this Python: {stderr}"
    );
    let doc: Value = serde_json::from_slice(&out.stdout)
        .unwrap_or_else(|e| panic!("checker output is not JSON ({e}): {stderr}"));
    assert_eq!(doc["library"], "ccsds-ndm 3.1.1");
    let results = doc["results"].as_array().unwrap().clone();
    for r in &results {
        assert_eq!(
            r["problems"].as_array().map(Vec::len),
            Some(0),
            "ccsds-ndm 3.1.1 / check_ccsds.py on {}: {:#}",
            r["file"],
            r["problems"]
        );
    }
    assert!(out.status.success(), "{stderr}");
    results
}

fn load(path: &str) -> Vec<ElementSet> {
    let bytes = std::fs::read(repo().join(path)).unwrap();
    let r = passlane_orbit::elements::load(&bytes, path, Default::default());
    assert!(r.diagnostics.is_empty(), "{:?}", r.diagnostics);
    r.sets
}

fn t(s: &str) -> UtcTime {
    UtcTime::parse_iso(s).unwrap()
}

fn rel(a: f64, b: f64) -> f64 {
    if a == b { 0.0 } else { ((a - b) / b).abs() }
}

#[test]
fn every_cdm_the_tool_writes_is_read_by_ccsds_ndm_and_by_its_own_reader() {
    let scenario: Scenario = Scenario::from_json(
        &std::fs::read_to_string(repo().join("scenarios/demo.json")).unwrap(),
        "demo.json",
    )
    .unwrap();
    let fleet = load("scenarios/demo-fleet.tle");
    let catalog = load("scenarios/demo-debris.tle");
    let (start, end) = (t("2026-12-01T00:00:00Z"), t("2026-12-08T00:00:00Z"));
    let dir = scratch("cdm");
    let mut files = Vec::new();
    let mut expected = Vec::new();
    // One volume of each shape (a sphere is written as an equal-axes ellipsoid).
    for (v, volume) in [
        ScreeningVolume::Sphere { radius_km: 5.0 },
        ScreeningVolume::Box {
            radial_km: 2.0,
            in_track_km: 25.0,
            cross_track_km: 5.0,
        },
    ]
    .into_iter()
    .enumerate()
    {
        let outcome = screen_and_assess(
            &ScreeningJob {
                fleet: &fleet,
                catalog: &catalog,
                all_vs_all: false,
                start,
                end,
                volume,
                scenario: &scenario,
                hard_body_radius_override_m: None,
            },
            &passlane_plan::Silent,
        );
        assert!(!outcome.result.events.is_empty());
        for (k, (e, risk)) in outcome.result.events.iter().zip(&outcome.risks).enumerate() {
            let risk = risk.as_ref().unwrap();
            let find = |n: u32| {
                fleet
                    .iter()
                    .chain(&catalog)
                    .find(|s| s.catalog_number == n)
                    .unwrap()
            };
            let cdm = event_to_cdm(
                e,
                find(e.primary_catalog_number),
                find(e.secondary_catalog_number),
                Some(risk),
                &outcome.covariance,
                &CdmContext {
                    originator: "Kestrel Ridge (test)",
                    message_id: format!("T{v}_{k}"),
                    creation_date: t("2026-11-30T12:00:00Z"),
                    screen_start: start,
                    screen_stop: end,
                    volume,
                    earth_orientation: scenario.earth_orientation,
                },
            )
            .unwrap();
            for xml in [false, true] {
                let path = dir.join(format!("{v}_{k}.{}", if xml { "xml" } else { "cdm" }));
                let mut buf = Vec::new();
                if xml {
                    cdm.write_xml(&mut buf).unwrap();
                } else {
                    cdm.write_kvn(&mut buf).unwrap();
                }
                std::fs::write(&path, &buf).unwrap();
                files.push(path);
                expected.push((cdm.clone(), risk.pc, risk.hard_body_radius_m));
            }
        }
    }
    let results = ccsds_ndm(&files);
    assert_eq!(results.len(), files.len());
    for ((r, path), (cdm, pc, hbr)) in results.iter().zip(&files).zip(&expected) {
        let v = &r["values"];
        assert_eq!(r["type"], "CDM");
        // What the reference library read equals what was meant.
        assert_eq!(v["tca"], ccsds_time(cdm.relative.tca));
        assert_eq!(v["creation_date"], "2026-11-30T12:00:00.000");
        assert_eq!(v["originator"], "KESTREL_RIDGE_TEST");
        assert!(
            rel(
                v["miss_distance_m"].as_f64().unwrap(),
                cdm.relative.miss_distance_m
            ) < 1e-15
        );
        assert!(["ELLIPSOID", "BOX"].contains(&v["screen_volume_shape"].as_str().unwrap()));
        for (o, ours) in v["objects"]
            .as_array()
            .unwrap()
            .iter()
            .zip([&cdm.object1, &cdm.object2])
        {
            assert_eq!(
                o["international_designator"],
                ours.international_designator.as_str()
            );
            for k in 0..3 {
                assert!(rel(o["state"][k].as_f64().unwrap(), ours.state.position_km[k]) < 1e-15);
                assert!(
                    rel(
                        o["state"][3 + k].as_f64().unwrap(),
                        ours.state.velocity_km_s[k]
                    ) < 1e-15
                );
            }
        }
        // Our reader, and the probability from the message alone: the
        // radius recorded in the header COMMENT gives back the screening's
        // Pc (to 1e-9 relative; the file's 16-digit numbers change it by
        // about 1e-15).
        let text = std::fs::read_to_string(path).unwrap();
        let back = Cdm::parse(&text, &path.display().to_string()).unwrap();
        let radius = back.hard_body_radius(None);
        assert_eq!(radius.radius_m, *hbr, "{}", radius.source);
        assert!(radius.source.starts_with("recorded"), "{}", radius.source);
        let a = back.recompute_with(&radius).unwrap();
        assert!(
            rel(a.pc, *pc) < 1e-9,
            "{}: {} vs {}",
            path.display(),
            a.pc,
            pc
        );
        assert!(a.covariance_note.is_some());
    }
    let _ = std::fs::remove_dir_all(&dir);
}

fn demo_oems(dir: &Path, format: OemFormat, frame: OemFrame) -> Vec<(PathBuf, ElementSet)> {
    let (start, end) = (t("2026-12-01T00:00:00Z"), t("2026-12-01T06:00:00Z"));
    load("scenarios/demo-fleet.tle")
        .into_iter()
        .map(|set| {
            let states = export::oem_states(&set, start, end, export::oem_step_s(&set)).unwrap();
            let mut buf = Vec::new();
            export::write_oem(
                &mut buf,
                &set,
                &states,
                &OemOptions {
                    created: t("2026-11-30T12:00:00Z"),
                    originator: "Kestrel Ridge Space Lab",
                    format,
                    frame,
                    ..Default::default()
                },
            )
            .unwrap();
            let path = dir.join(format!(
                "{}_{}.{}",
                set.catalog_number,
                frame.keyword(),
                export::oem::oem_extension(format)
            ));
            std::fs::write(&path, buf).unwrap();
            (path, set)
        })
        .collect()
}

#[test]
fn every_oem_the_tool_writes_is_read_by_ccsds_ndm_and_by_its_own_reader() {
    let dir = scratch("oem");
    let mut all = Vec::new();
    for format in [OemFormat::Kvn, OemFormat::Xml] {
        for frame in [OemFrame::Eme2000, OemFrame::Teme] {
            all.extend(demo_oems(&dir, format, frame));
        }
    }
    let files: Vec<PathBuf> = all.iter().map(|(p, _)| p.clone()).collect();
    let results = ccsds_ndm(&files);
    for (r, (path, set)) in results.iter().zip(&all) {
        assert_eq!(r["type"], "OEM");
        let v = &r["values"];
        assert_eq!(v["version"], "3.0");
        assert_eq!(v["originator"], "KESTREL_RIDGE_SPACE_LAB");
        let seg = &v["segments"][0];
        assert_eq!(seg["interpolation"], "LAGRANGE");
        assert_eq!(
            seg["interpolation_degree"],
            export::oem::OEM_INTERPOLATION_DEGREE
        );
        assert_eq!(
            seg["object_id"],
            set.international_designator_ccsds().unwrap().as_str()
        );
        // Our reader gives back the same first and last state.
        let (eph, diags) = load_oem(
            &std::fs::read(path).unwrap(),
            &path.display().to_string(),
            &EarthOrientation::default(),
        );
        assert!(diags.is_empty(), "{diags:?}");
        let eph = eph.unwrap();
        let s = &eph.segments[0];
        assert_eq!(s.node_count() as u64, seg["states"].as_u64().unwrap());
        assert_eq!(s.ref_frame_text, seg["ref_frame"].as_str().unwrap());
        let last = &seg["last"];
        assert_eq!(ccsds_time(s.usable_stop), last[0].as_str().unwrap());
        let prop = Propagator::new(set).unwrap();
        let teme = prop.state_at(s.usable_stop).unwrap();
        let (r_back, _) = eph.state_at(s.usable_stop).unwrap();
        for (back, want) in r_back.iter().zip(teme.position_km) {
            // Written to the micrometre; frames rotated there and back.
            assert!((back - want).abs() < 2e-9, "{}", path.display());
        }
    }
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn oem_interpolation_reproduces_sgp4_to_a_millimetre() {
    // The files recommend LAGRANGE of degree OEM_INTERPOLATION_DEGREE at
    // the written spacing (a hundredth of an orbit): read back and evaluated
    // between the states (quarter, half and three-quarter points of every
    // interval), they must give SGP4's state to 1 mm and 0.01 mm/s, for every
    // orbit of the demo fleet (five near-circular LEO, one with e = 0.13).
    let dir = scratch("interp");
    let mut worst = (0.0_f64, 0.0_f64);
    for (path, set) in demo_oems(&dir, OemFormat::Kvn, OemFrame::Eme2000) {
        let (eph, diags) = load_oem(
            &std::fs::read(&path).unwrap(),
            "x",
            &EarthOrientation::default(),
        );
        assert!(diags.is_empty(), "{diags:?}");
        let eph = eph.unwrap();
        let prop = Propagator::new(&set).unwrap();
        let seg = &eph.segments[0];
        for w in seg.times_s.windows(2) {
            for f in [0.25, 0.5, 0.75] {
                let when = seg.t0.add_s(w[0] + f * (w[1] - w[0]));
                let (r, v) = eph.state_at(when).unwrap();
                let s = prop.state_at(when).unwrap();
                let dr = (0..3)
                    .map(|k| (r[k] - s.position_km[k]).powi(2))
                    .sum::<f64>()
                    .sqrt();
                let dv = (0..3)
                    .map(|k| (v[k] - s.velocity_km_s[k]).powi(2))
                    .sum::<f64>()
                    .sqrt();
                worst = (worst.0.max(dr), worst.1.max(dv));
            }
        }
    }
    assert!(worst.0 < 1e-6, "worst position error {} m", worst.0 * 1e3);
    assert!(worst.1 < 1e-8, "worst velocity error {} m/s", worst.1 * 1e3);
    let _ = std::fs::remove_dir_all(&dir);
    eprintln!(
        "worst interpolation error: {:.3e} m, {:.3e} m/s",
        worst.0 * 1e3,
        worst.1 * 1e3
    );
}
