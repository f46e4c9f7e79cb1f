//! Contact windows checked against outside references and first principles.

use std::path::PathBuf;

use passlane_orbit::constants::SPEED_OF_LIGHT_KM_S;
use passlane_orbit::{
    EarthOrientation, ElementSet, LoadOptions, Propagator, TemeToEarthFixed, UtcTime, elements,
};
use passlane_plan::Scenario;
use passlane_plan::Silent;
use passlane_plan::passes::{Pass, PassOptions, find_passes};
use passlane_plan::pointing::{look_at, pointing_table};
use passlane_plan::station::{Channel, LinkDirection, MaskPoint, Station};
use serde_json::Value;

#[path = "support/brute_passes.rs"]
mod brute_passes;

fn repo() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../..")
}

fn demo_fleet() -> Vec<ElementSet> {
    let bytes = std::fs::read(repo().join("scenarios/demo-fleet.tle")).unwrap();
    let r = elements::load(&bytes, "demo-fleet.tle", LoadOptions::default());
    assert!(r.diagnostics.is_empty(), "{:?}", r.diagnostics);
    assert_eq!(r.sets.len(), 6);
    r.sets
}

fn demo_scenario() -> Scenario {
    let text = std::fs::read_to_string(repo().join("scenarios/demo.json")).unwrap();
    Scenario::from_json(&text, "demo.json").unwrap()
}

fn t(s: &str) -> UtcTime {
    UtcTime::parse_iso(s).unwrap()
}

fn fixture() -> Value {
    let text = std::fs::read_to_string(repo().join("tests/fixtures/passes-skyfield.json")).unwrap();
    serde_json::from_str(&text).unwrap()
}

fn fixture_stations(fx: &Value) -> Vec<Station> {
    fx["stations"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| {
            let mut st = Station::new(
                s["name"].as_str().unwrap(),
                s["latitude_deg"].as_f64().unwrap(),
                s["longitude_deg"].as_f64().unwrap(),
                s["height_m"].as_f64().unwrap(),
            );
            st.min_elevation_deg = fx["elevation_mask_deg"].as_f64().unwrap();
            st
        })
        .collect()
}

/// UT1−UTC of skyfield 1.55's built-in table over the fixture window: 0.0853 s
/// at the start, 0.0841 s mid-window, 0.0849 s at the end (values printed by
/// the fixture script). We use the mid-window value; the ±0.6 ms spread moves
/// a LEO pass by well under a millisecond.
const SKYFIELD_UT1_UTC_S: f64 = 0.0841;

fn compare_with_skyfield(window: &Value, label: &str) {
    let fx = fixture();
    let stations = fixture_stations(&fx);
    let mut options = PassOptions::new(
        t(window["start"].as_str().unwrap()),
        t(window["end"].as_str().unwrap()),
    );
    options.earth_orientation.ut1_utc_s = SKYFIELD_UT1_UTC_S;
    let report = find_passes(&demo_fleet(), &stations, &options, &Silent);
    assert!(report.failures.is_empty());
    let expected = window["passes"].as_array().unwrap();
    let mut worst = [0.0_f64; 3];
    assert_eq!(report.passes.len(), expected.len(), "{label}: pass count");
    for e in expected {
        let cat = e["catalog_number"].as_u64().unwrap() as u32;
        let station = e["station"].as_str().unwrap();
        let aos = t(e["aos"].as_str().unwrap());
        let found: Vec<&Pass> = report
            .passes
            .iter()
            .filter(|p| {
                p.catalog_number == cat && p.station == station && p.aos.s_since(aos).abs() < 5.0
            })
            .collect();
        assert_eq!(found.len(), 1, "{label}: {cat} over {station} at {aos}");
        let p = found[0];
        let los = t(e["los"].as_str().unwrap());
        // Issue tolerance: AOS/LOS within 10 ms of skyfield 1.55's refined events.
        worst[0] = worst[0]
            .max(p.aos.s_since(aos).abs())
            .max(p.los.s_since(t(e["los"].as_str().unwrap())).abs());
        worst[1] =
            worst[1].max((p.max_elevation_deg - e["max_elevation_deg"].as_f64().unwrap()).abs());
        worst[2] = worst[2].max(
            p.max_elevation_time
                .s_since(t(e["max_elevation_time"].as_str().unwrap()))
                .abs(),
        );
        assert!(
            p.aos.s_since(aos).abs() < 0.010,
            "{label}: AOS {} vs {aos}",
            p.aos
        );
        assert!(
            p.los.s_since(los).abs() < 0.010,
            "{label}: LOS {} vs {los}",
            p.los
        );
        // Maximum elevation within 0.001° of skyfield's.
        let max_el = e["max_elevation_deg"].as_f64().unwrap();
        assert!(
            (p.max_elevation_deg - max_el).abs() < 1e-3,
            "{label}: max el {} vs {max_el}",
            p.max_elevation_deg
        );
        // The time of maximum is flat-topped, so less sharply defined than
        // AOS/LOS: the fixture notes allow ~1 ms (skyfield's own golden
        // search against the root of its elevation rate: 0.14 ms). It was
        // 0.1 s while our culmination came from the interpolant (58 ms
        // worst); found on direct SGP4 positions it is 0.1 ms worst.
        let tmax = t(e["max_elevation_time"].as_str().unwrap());
        assert!(
            p.max_elevation_time.s_since(tmax).abs() < 1e-3,
            "{label}: tmax"
        );
        for (key, ours) in [
            ("aos_azimuth_deg", p.aos_azimuth_deg),
            ("los_azimuth_deg", p.los_azimuth_deg),
        ] {
            let theirs = e[key].as_f64().unwrap();
            let d = (ours - theirs + 540.0).rem_euclid(360.0) - 180.0;
            assert!(d.abs() < 0.01, "{label}: {key} {ours} vs {theirs}");
        }
        assert_eq!(
            p.aos_clipped,
            e["aos_clipped"].as_bool().unwrap(),
            "{label}: aos_clipped"
        );
        assert_eq!(
            p.los_clipped,
            e["los_clipped"].as_bool().unwrap(),
            "{label}: los_clipped"
        );
    }
    eprintln!(
        "{label}: worst AOS/LOS {:.3} ms, max el {:.2e}°, max el time {:.1} ms",
        worst[0] * 1e3,
        worst[1],
        worst[2] * 1e3
    );
}

#[test]
fn seven_days_match_skyfield_one_to_one() {
    // Reference: tests/fixtures/passes-skyfield.json, made by
    // scripts/fixtures/make_passes_fixture.py with skyfield 1.55 and sgp4 2.27.
    let fx = fixture();
    compare_with_skyfield(&fx["window"], "7-day window");
}

#[test]
fn window_edges_clip_passes_like_skyfield() {
    // Same reference; its short window starts and ends inside passes.
    let fx = fixture();
    let w = &fx["short_window"];
    compare_with_skyfield(w, "short window");
    let n_clipped = w["passes"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|p| p["aos_clipped"].as_bool().unwrap() || p["los_clipped"].as_bool().unwrap())
        .count();
    assert!(n_clipped >= 2);
}

/// Every interval above the horizon that 1 s sampling with direct SGP4 sees
/// must be a pass the finder reports, and vice versa (first principles: a
/// brute-force scan is the definition of "above the horizon").
#[test]
fn no_pass_missed_against_one_second_sampling() {
    // The whole demo week, every demo station (two with horizon masks:
    // passes split by a dip below the mask must come out as two passes).
    let sc = demo_scenario();
    let sets = demo_fleet();
    let start = t("2026-12-01T00:00:00Z");
    let end = t("2026-12-08T00:00:00Z");
    let options = PassOptions::new(start, end);
    let report = find_passes(&sets, &sc.stations, &options, &Silent);
    let mut brute_total = 0;
    for set in &sets {
        let prop = Propagator::new(set).unwrap();
        for st in &sc.stations {
            let mut st = st.clone();
            st.normalise();
            let intervals = brute_passes::intervals_up(&prop, &st.site(), start, 7 * 86_400, |l| {
                l.elevation_deg > st.horizon_deg(l.azimuth_deg)
            });
            brute_total += intervals.len();
            let ours: Vec<&Pass> = report
                .passes
                .iter()
                .filter(|p| p.catalog_number == set.catalog_number && p.station == st.name)
                .collect();
            let label = format!("{} over {}", set.name, st.name);
            brute_passes::assert_one_to_one(&label, &intervals, &ours, start);
        }
    }
    let ours_total = report.passes.iter().filter(|p| p.duration_s > 1.0).count();
    assert!(brute_total >= ours_total.saturating_sub(0));
    assert!(
        brute_total > 50,
        "the demo day should have many passes: {brute_total}"
    );
}

/// Circular equatorial orbit over an equatorial station: the pass goes
/// through the zenith, and the visible arc follows from plane geometry.
#[test]
fn equatorial_overhead_pass_matches_geometry() {
    // Invented elements: ~700 km circular, inclination 0.
    let n_rev_day = 14.6;
    let set = ElementSet {
        name: "EQUATOR TEST".into(),
        catalog_number: 99990,
        international_designator: String::new(),
        classification: 'U',
        epoch: t("2026-12-01T00:00:00Z"),
        mean_motion_dot_rev_day2: 0.0,
        mean_motion_ddot_rev_day3: 0.0,
        bstar_per_earth_radii: 0.0,
        ephemeris_type: 0,
        element_set_number: 1,
        inclination_deg: 0.0,
        raan_deg: 0.0,
        eccentricity: 0.0,
        arg_perigee_deg: 0.0,
        mean_anomaly_deg: 0.0,
        mean_motion_rev_day: n_rev_day,
        revolution_number: 1,
        ephemeris: None,
        source: Default::default(),
    };
    let mut st = Station::new("Equator", 0.0, 0.0, 0.0);
    st.min_elevation_deg = 0.0;
    let options = PassOptions::new(t("2026-12-01T00:00:00Z"), t("2026-12-02T00:00:00Z"));
    let report = find_passes(
        std::slice::from_ref(&set),
        std::slice::from_ref(&st),
        &options,
        &Silent,
    );
    let prop = Propagator::new(&set).unwrap();
    let full: Vec<&Pass> = report
        .passes
        .iter()
        .filter(|p| !p.aos_clipped && !p.los_clipped)
        .collect();
    assert!(full.len() >= 10);
    for p in full {
        // Overhead: 90° up to SGP4's small out-of-plane wobble.
        assert!(p.max_elevation_deg > 89.9, "{}", p.max_elevation_deg);
        // Visible arc at 0° elevation: Earth central angle λ = acos(R/r) on each
        // side; the satellite gains on the station at (n − ω_E).
        let s = prop.state_at(p.max_elevation_time).unwrap();
        let r = passlane_orbit::frames::norm(&s.position_km);
        let v = passlane_orbit::frames::norm(&s.velocity_km_s);
        let re = passlane_orbit::constants::WGS84_A_KM;
        let lambda = (re / r).acos();
        let rate = v / r - passlane_orbit::constants::EARTH_ROTATION_RAD_S;
        let expected_s = 2.0 * lambda / rate;
        assert!(
            (p.duration_s - expected_s).abs() / expected_s < 0.01,
            "{} vs {expected_s}",
            p.duration_s
        );
    }
}

fn with_channels(mut st: Station) -> Station {
    st.channels = vec![
        Channel {
            name: "down".into(),
            direction: LinkDirection::Downlink,
            frequency_hz: 2.2e9,
        },
        Channel {
            name: "up".into(),
            direction: LinkDirection::Uplink,
            frequency_hz: 4.5e8,
        },
    ];
    st
}

#[test]
fn pointing_table_agrees_with_look_angles_and_doppler() {
    let sc = demo_scenario();
    let sets = demo_fleet();
    let eop = EarthOrientation::default();
    let options = PassOptions::new(t("2026-12-01T00:00:00Z"), t("2026-12-01T12:00:00Z"));
    for st in &sc.stations {
        let st = with_channels(st.clone());
        let report = find_passes(&sets, std::slice::from_ref(&st), &options, &Silent);
        let p = report
            .passes
            .iter()
            .find(|p| !p.aos_clipped && !p.los_clipped)
            .unwrap();
        let set = sets
            .iter()
            .find(|s| s.catalog_number == p.catalog_number)
            .unwrap();
        let rows = pointing_table(set, &st, p, 1.0, &eop).unwrap();
        assert_eq!(rows.first().unwrap().time, p.aos);
        assert_eq!(rows.last().unwrap().time, p.los);
        let mut st_sorted = st.clone();
        st_sorted.normalise();
        // Elevation at AOS and LOS equals the horizon there (mask or minimum).
        for r in [rows.first().unwrap(), rows.last().unwrap()] {
            let h = st_sorted.horizon_deg(r.azimuth_deg);
            assert!(
                (r.elevation_deg - h).abs() < 1e-3,
                "{} vs horizon {h}",
                r.elevation_deg
            );
        }
        let prop = Propagator::new(set).unwrap();
        for r in &rows {
            let l = look_at(&prop, &st.site(), r.time, &eop).unwrap();
            assert!((l.azimuth_deg - r.azimuth_deg).abs() < 1e-9);
            assert!((l.elevation_deg - r.elevation_deg).abs() < 1e-9);
            // Doppler (one-way, first order in ṙ/c): the receiver hears
            // f·(1 − ṙ/c) and tunes to it; the transmitter sends f/(1 − ṙ/c)
            // so that the spacecraft hears f exactly.
            let beta = r.range_rate_km_s / SPEED_OF_LIGHT_KM_S;
            assert!((r.frequencies_hz[0] - 2.2e9 * (1.0 - beta)).abs() < 1e-6);
            assert!((r.frequencies_hz[1] - 4.5e8 / (1.0 - beta)).abs() < 1e-6);
            assert!(((r.frequencies_hz[1] * (1.0 - beta)) - 4.5e8).abs() < 1e-6);
        }
        // Range-rate is the derivative of range (central difference over the table).
        for w in rows.windows(3) {
            if (w[2].time.s_since(w[0].time) - 2.0).abs() < 1e-6 {
                let d = (w[2].range_km - w[0].range_km) / 2.0;
                assert!((d - w[1].range_rate_km_s).abs() < 1e-3);
            }
        }
        let _ = TemeToEarthFixed::at(p.aos, &eop);
    }
}

/// A mask that blocks one azimuth sector changes exactly the passes that
/// cross that sector above the plain minimum elevation.
#[test]
fn horizon_mask_affects_only_passes_through_its_sector() {
    let sets = demo_fleet();
    let base = Station::new("Bramble Hill", 51.42, -126.45, 1580.0);
    let mut masked = base.clone();
    masked.horizon_mask = vec![
        MaskPoint {
            azimuth_deg: 89.9,
            elevation_deg: 0.0,
        },
        MaskPoint {
            azimuth_deg: 90.0,
            elevation_deg: 40.0,
        },
        MaskPoint {
            azimuth_deg: 180.0,
            elevation_deg: 40.0,
        },
        MaskPoint {
            azimuth_deg: 180.1,
            elevation_deg: 0.0,
        },
    ];
    let options = PassOptions::new(t("2026-12-01T00:00:00Z"), t("2026-12-04T00:00:00Z"));
    let plain = find_passes(&sets, std::slice::from_ref(&base), &options, &Silent);
    let with_mask = find_passes(&sets, std::slice::from_ref(&masked), &options, &Silent);
    let eop = EarthOrientation::default();
    let (mut unchanged, mut changed) = (0, 0);
    for p in &plain.passes {
        let set = sets
            .iter()
            .find(|s| s.catalog_number == p.catalog_number)
            .unwrap();
        let prop = Propagator::new(set).unwrap();
        let site = base.site();
        // Does the pass cross the blocked sector above 10°?
        let mut crosses = false;
        let mut k = 0.0;
        while k <= p.duration_s {
            let l = look_at(&prop, &site, p.aos.add_s(k), &eop).unwrap();
            if (89.9..=180.1).contains(&l.azimuth_deg) && l.elevation_deg < 40.0 {
                crosses = true;
            }
            k += 0.5;
        }
        let same = with_mask.passes.iter().any(|q| {
            q.catalog_number == p.catalog_number
                && (q.aos.s_since(p.aos)).abs() < 0.01
                && (q.los.s_since(p.los)).abs() < 0.01
        });
        if crosses {
            changed += 1;
            assert!(
                !same,
                "pass {} crosses the sector but was not shortened",
                p.aos
            );
            // Whatever remains lies inside the original pass.
            for q in with_mask.passes.iter().filter(|q| {
                q.catalog_number == p.catalog_number
                    && q.aos >= p.aos.add_s(-0.01)
                    && q.los <= p.los.add_s(0.01)
            }) {
                assert!(q.duration_s < p.duration_s);
            }
        } else {
            unchanged += 1;
            assert!(same, "pass {} avoids the sector but changed", p.aos);
        }
    }
    assert!(
        unchanged > 5 && changed > 5,
        "unchanged {unchanged}, changed {changed}"
    );
}

/// A satellite that re-enters during the window is reported, and the others'
/// passes are exactly what they would be without it.
#[test]
fn a_decaying_satellite_is_reported_and_the_others_go_on() {
    let sets = demo_fleet();
    let mut doomed = sets[0].clone();
    doomed.name = "DOOMED (invented)".into();
    doomed.catalog_number = 99_998;
    doomed.mean_motion_rev_day = 16.3; // about 200 km
    doomed.bstar_per_earth_radii = 0.05; // very high drag
    doomed.mean_motion_dot_rev_day2 = 0.01;
    let sc = demo_scenario();
    let options = PassOptions::new(t("2026-12-01T00:00:00Z"), t("2026-12-11T00:00:00Z"));
    let without = find_passes(&sets, &sc.stations, &options, &Silent);
    let mut with_doomed = sets.clone();
    with_doomed.push(doomed);
    let with = find_passes(&with_doomed, &sc.stations, &options, &Silent);
    assert_eq!(with.failures.len(), 1, "{:?}", with.failures);
    assert_eq!(with.failures[0].catalog_number, 99_998);
    let others: Vec<&Pass> = with
        .passes
        .iter()
        .filter(|p| p.catalog_number != 99_998)
        .collect();
    assert_eq!(others.len(), without.passes.len());
    for (a, b) in others.iter().zip(&without.passes) {
        assert_eq!(a.aos, b.aos);
        assert_eq!(a.los, b.los);
    }
}
