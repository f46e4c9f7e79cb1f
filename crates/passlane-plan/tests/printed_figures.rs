//! Every printed figure as exact as its computation: the Doppler figures of
//! a pass are those of its pointing table at the same instant, whatever the
//! window; the peak azimuth rate of near-zenith passes is found, not sampled.

#![allow(clippy::unwrap_used, clippy::expect_used)]

use std::path::PathBuf;

use passlane_orbit::constants::SPEED_OF_LIGHT_KM_S;
use passlane_orbit::{ElementSet, LoadOptions, Propagator, UtcTime, elements};
use passlane_plan::Scenario;
use passlane_plan::Silent;
use passlane_plan::passes::{PassOptions, find_passes};
use passlane_plan::pointing::look_at;
use serde_json::Value;

fn repo() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../..")
}

fn demo_fleet() -> Vec<ElementSet> {
    let bytes = std::fs::read(repo().join("scenarios/demo-fleet.tle")).unwrap();
    elements::load(&bytes, "demo-fleet.tle", LoadOptions::default()).sets
}

fn demo_scenario() -> Scenario {
    let text = std::fs::read_to_string(repo().join("scenarios/demo.json")).unwrap();
    Scenario::from_json(&text, "demo.json").unwrap()
}

fn t(s: &str) -> UtcTime {
    UtcTime::parse_iso(s).unwrap()
}

/// UT1−UTC of skyfield 1.55's built-in table mid-window (see
/// `passes_reference.rs`): the rates fixture was made with it.
const SKYFIELD_UT1_UTC_S: f64 = 0.0841;

#[test]
fn pass_doppler_equals_the_pointing_table_at_aos_and_los_for_any_window() {
    let fleet = demo_fleet();
    let scenario = demo_scenario();
    let stations = &scenario.stations;
    assert!(stations.iter().all(|s| !s.channels.is_empty()));
    let eop = scenario.earth_orientation;
    let run = |end: &str| {
        let mut o = PassOptions::new(t("2026-12-01T00:00:00Z"), t(end));
        o.earth_orientation = eop;
        find_passes(&fleet, stations, &o, &Silent).passes
    };
    let day = run("2026-12-02T00:00:00Z");
    let week = run("2026-12-08T00:00:00Z");
    let mut compared = 0;
    for p in day.iter().filter(|p| !p.los_clipped) {
        let set = fleet
            .iter()
            .find(|s| s.catalog_number == p.catalog_number)
            .unwrap();
        let prop = Propagator::new(set).unwrap();
        let site = stations[p.station_index].site();
        let at_aos = look_at(&prop, &site, p.aos, &eop).unwrap();
        let at_los = look_at(&prop, &site, p.los, &eop).unwrap();
        let twin = week
            .iter()
            .find(|q| {
                q.catalog_number == p.catalog_number
                    && q.station_index == p.station_index
                    && q.aos.s_since(p.aos).abs() < 1e-3
            })
            .expect("the same pass in the week-long search");
        for (d, dw) in p.doppler.iter().zip(&twin.doppler) {
            // −f·ṙ/c at the instant, as `track` prints it (its rows come from
            // the same direct SGP4 look angles).
            let want_aos = -d.frequency_hz * at_aos.range_rate_km_s / SPEED_OF_LIGHT_KM_S;
            let want_los = -d.frequency_hz * at_los.range_rate_km_s / SPEED_OF_LIGHT_KM_S;
            assert!(
                (d.aos_shift_hz - want_aos).abs() < 0.01,
                "{} {}",
                p.satellite,
                d.channel
            );
            assert!(
                (d.los_shift_hz - want_los).abs() < 0.01,
                "{} {}",
                p.satellite,
                d.channel
            );
            assert!((d.aos_shift_hz - dw.aos_shift_hz).abs() < 0.01);
            assert!((d.los_shift_hz - dw.los_shift_hz).abs() < 0.01);
            compared += 1;
        }
    }
    assert!(compared > 50, "{compared}");
}

#[test]
fn peak_azimuth_rate_of_near_zenith_passes_is_within_one_percent_of_skyfield() {
    // tests/fixtures/rates-skyfield.json: skyfield 1.55 alt/az every 0.01 s
    // around each culmination above 85° (scripts/fixtures/make_rates_fixture.py).
    let fx: Value = serde_json::from_str(
        &std::fs::read_to_string(repo().join("tests/fixtures/rates-skyfield.json")).unwrap(),
    )
    .unwrap();
    let fleet = demo_fleet();
    let scenario = demo_scenario();
    let mut o = PassOptions::new(t("2026-12-01T00:00:00Z"), t("2026-12-08T00:00:00Z"));
    o.earth_orientation.ut1_utc_s = SKYFIELD_UT1_UTC_S;
    let passes = find_passes(&fleet, &scenario.stations, &o, &Silent).passes;
    let refs = fx["passes"].as_array().unwrap();
    assert!(refs.len() >= 10, "the demo has near-zenith passes");
    for r in refs {
        let culm = t(r["max_elevation_time"].as_str().unwrap());
        let p = passes
            .iter()
            .find(|p| {
                p.catalog_number == r["catalog_number"].as_u64().unwrap() as u32
                    && p.station == r["station"].as_str().unwrap()
                    && p.max_elevation_time.s_since(culm).abs() < 1.0
            })
            .unwrap_or_else(|| panic!("pass {r} not found"));
        let want = r["peak_azimuth_rate_deg_s"].as_f64().unwrap();
        let w = p
            .mount_warnings
            .iter()
            .find(|w| w.axis == "azimuth" && w.start <= culm && w.end >= culm)
            .unwrap_or_else(|| panic!("no azimuth warning over the culmination of {r}"));
        assert!(
            (w.required_rate_deg_s - want).abs() <= 0.01 * want,
            "{} over {} at {}: {} deg/s vs skyfield {want}",
            p.satellite,
            p.station,
            culm,
            w.required_rate_deg_s
        );
    }
}
