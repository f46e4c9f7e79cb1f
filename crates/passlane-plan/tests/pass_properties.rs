//! Invariants of the pass finder for random stations over the demo fleet and
//! one day: AOS < max-elevation time < LOS, elevation at AOS and LOS equal
//! to the station's horizon there (unless clipped by the window), and no two
//! passes of one satellite over one station overlap.
//!
//! Tolerances: 0.05° of elevation at AOS/LOS (the finder refines crossings to
//! well under a second; a LEO satellite near the horizon climbs at most
//! ~0.07°/s); passes of the same pair may touch but not overlap.

#![allow(clippy::unwrap_used, clippy::panic)]

use std::path::PathBuf;

use passlane_orbit::{EarthOrientation, ElementSet, LoadOptions, Propagator, UtcTime, elements};
use passlane_plan::Silent;
use passlane_plan::passes::{PassOptions, find_passes};
use passlane_plan::pointing::look_at;
use passlane_plan::station::Station;
use proptest::prelude::*;

fn demo_fleet() -> Vec<ElementSet> {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../scenarios/demo-fleet.tle");
    let bytes = std::fs::read(path).unwrap();
    elements::load(&bytes, "demo-fleet.tle", LoadOptions::default()).sets
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(16))]

    #[test]
    fn passes_are_ordered_bounded_by_the_horizon_and_disjoint(
        latitude_deg in -89.0..89.0f64,
        longitude_deg in -180.0..180.0f64,
        height_m in -100.0..4000.0f64,
        min_elevation_deg in 0.0..20.0f64,
        start_offset_s in 0.0..86_400.0f64,
    ) {
        let fleet = demo_fleet();
        prop_assert_eq!(fleet.len(), 6);
        let mut station = Station::new("random", latitude_deg, longitude_deg, height_m);
        station.min_elevation_deg = min_elevation_deg;
        let start = UtcTime::parse_iso("2026-12-01T00:00:00Z").unwrap().add_s(start_offset_s);
        let end = start.add_s(86_400.0);
        let options = PassOptions::new(start, end);
        let report = find_passes(&fleet, std::slice::from_ref(&station), &options, &Silent);
        prop_assert!(report.failures.is_empty(), "{:?}", report.failures);
        // Sun-synchronous LEO satellites rise over any place a few times a
        // day: an empty result would make the checks below vacuous.
        prop_assert!(report.passes.len() >= 6, "only {} passes", report.passes.len());
        let eop = EarthOrientation::default();
        let site = station.site();
        for p in &report.passes {
            prop_assert!(p.aos <= p.max_elevation_time && p.max_elevation_time <= p.los, "{p:?}");
            prop_assert!(p.aos < p.los, "{p:?}");
            prop_assert!(p.aos >= start && p.los <= end, "{p:?}");
            let set = fleet.iter().find(|s| s.catalog_number == p.catalog_number).unwrap();
            let prop = Propagator::new(set).unwrap();
            for (t, clipped, az) in [(p.aos, p.aos_clipped, p.aos_azimuth_deg), (p.los, p.los_clipped, p.los_azimuth_deg)] {
                let look = look_at(&prop, &site, t, &eop).unwrap();
                let horizon = station.horizon_deg(az);
                if clipped {
                    prop_assert!(look.elevation_deg >= horizon - 0.05, "{p:?}");
                } else {
                    prop_assert!((look.elevation_deg - horizon).abs() < 0.05,
                        "elevation {} vs horizon {horizon} at {t}: {p:?}", look.elevation_deg);
                }
            }
            let top = look_at(&prop, &site, p.max_elevation_time, &eop).unwrap();
            prop_assert!((top.elevation_deg - p.max_elevation_deg).abs() < 0.05, "{p:?}");
        }
        for sat in fleet.iter().map(|s| s.catalog_number) {
            let mut mine: Vec<_> = report.passes.iter().filter(|p| p.catalog_number == sat).collect();
            mine.sort_by(|a, b| a.aos.s_since_j2000().total_cmp(&b.aos.s_since_j2000()));
            for w in mine.windows(2) {
                prop_assert!(w[0].los <= w[1].aos, "overlap: {:?} and {:?}", w[0], w[1]);
            }
        }
    }
}
