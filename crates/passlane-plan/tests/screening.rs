//! Close-approach screening checks: against a python-sgp4 brute-force fixture,
//! against the crate's own brute-force reference, interpolation accuracy, and
//! properties of the event geometry.
#![allow(clippy::unwrap_used)]

use passlane_orbit::{ElementSet, Propagator, UtcTime};
use std::sync::atomic::{AtomicUsize, Ordering};

use passlane_plan::Progress;
use passlane_plan::screen::{
    ScreeningRequest, ScreeningResult, ScreeningSettings, ScreeningVolume, hermite_state,
    interpolation_plan, relative_geometry, screen, screen_brute_force, screen_with_progress,
};
use proptest::prelude::*;

/// Element sets through the workspace loader (which must report nothing).
fn parse_tles(text: &str) -> Vec<ElementSet> {
    let r = passlane_orbit::elements::load(text.as_bytes(), "test", Default::default());
    assert!(r.diagnostics.is_empty(), "{:?}", r.diagnostics);
    r.sets
}

fn demo_objects() -> Vec<ElementSet> {
    let root = env!("CARGO_MANIFEST_DIR");
    let mut v = parse_tles(
        &std::fs::read_to_string(format!("{root}/../../scenarios/demo-fleet.tle")).unwrap(),
    );
    v.extend(parse_tles(
        &std::fs::read_to_string(format!("{root}/../../scenarios/demo-debris.tle")).unwrap(),
    ));
    v
}

fn t(s: &str) -> UtcTime {
    UtcTime::parse_iso(s).unwrap()
}

fn sphere(radius_km: f64) -> ScreeningSettings {
    ScreeningSettings {
        volume: ScreeningVolume::Sphere { radius_km },
        ..Default::default()
    }
}

#[derive(serde::Deserialize)]
struct Fixture {
    start: String,
    end: String,
    threshold_km: f64,
    events: Vec<FixtureEvent>,
}

#[derive(serde::Deserialize)]
struct FixtureEvent {
    primary: String,
    secondary: String,
    tca_s_after_start: f64,
    miss_distance_km: f64,
}

#[test]
fn demo_week_matches_python_sgp4_brute_force() {
    // Source: tests/fixtures/screening-sgp4.json, made by
    // scripts/fixtures/make_screening_fixture.py (python sgp4 2.27, 1 s sampling,
    // bisection of r·v to 1e-7 s). Tolerances: TCA 10 ms, miss 1 m.
    let root = env!("CARGO_MANIFEST_DIR");
    let text = std::fs::read_to_string(format!("{root}/../../tests/fixtures/screening-sgp4.json"))
        .unwrap();
    let fx: Fixture = serde_json::from_str(&text).unwrap();
    let objects = demo_objects();
    let start = t(&fx.start);
    let request = ScreeningRequest {
        primaries: &objects,
        secondaries: None,
        start,
        end: t(&fx.end),
        settings: sphere(fx.threshold_km),
    };
    let result = screen(&request);
    assert!(result.diagnostics.is_empty(), "{:?}", result.diagnostics);
    assert!(!result.cancelled);
    assert_eq!(result.events.len(), fx.events.len(), "{:#?}", result.events);
    for (got, want) in result.events.iter().zip(&fx.events) {
        assert_eq!(
            (got.primary.as_str(), got.secondary.as_str()),
            (want.primary.as_str(), want.secondary.as_str())
        );
        let dt = got.tca.s_since(start) - want.tca_s_after_start;
        assert!(
            dt.abs() < 0.010,
            "TCA off by {dt} s for {want:?}",
            want = want.tca_s_after_start
        );
        let dm = got.miss_distance_km - want.miss_distance_km;
        assert!(dm.abs() < 1e-3, "miss off by {dm} km");
        assert!(got.volume_entry < got.tca && got.tca < got.volume_exit);
    }
    // Each designed debris object passes within 1 km of its target.
    assert!(
        result
            .events
            .iter()
            .any(|e| e.secondary == "DEBRIS 99871" && e.miss_distance_km < 1.0)
    );
    assert!(
        result
            .events
            .iter()
            .any(|e| e.secondary == "DEBRIS 99872" && e.miss_distance_km < 1.0)
    );
}

#[test]
fn fast_screening_equals_brute_force_reference() {
    let objects = demo_objects();
    let request = ScreeningRequest {
        primaries: &objects,
        secondaries: None,
        start: t("2026-12-01T00:00:00Z"),
        end: t("2026-12-08T00:00:00Z"),
        settings: sphere(50.0),
    };
    let fast = screen(&request);
    let brute = screen_brute_force(&request, 10.0);
    assert!(!fast.events.is_empty());
    assert_eq!(fast.events.len(), brute.events.len());
    for (a, b) in fast.events.iter().zip(&brute.events) {
        assert_eq!(
            (a.primary_catalog_number, a.secondary_catalog_number),
            (b.primary_catalog_number, b.secondary_catalog_number)
        );
        assert!(a.tca.s_since(b.tca).abs() < 1e-3);
        assert!((a.miss_distance_km - b.miss_distance_km).abs() < 1e-6);
    }
}

#[test]
fn fleet_against_catalog_finds_only_cross_pairs() {
    let objects = demo_objects();
    let (fleet, debris) = objects.split_at(6);
    let request = ScreeningRequest {
        primaries: fleet,
        secondaries: Some(debris),
        start: t("2026-12-01T00:00:00Z"),
        end: t("2026-12-08T00:00:00Z"),
        settings: sphere(10.0),
    };
    let r = screen(&request);
    assert_eq!(r.events.len(), 8);
    assert!(
        r.events
            .iter()
            .all(|e| e.primary.starts_with("KRSL") && e.secondary.starts_with("DEBRIS"))
    );
    assert_eq!(
        r.events.len(),
        screen_brute_force(&request, 10.0).events.len()
    );
}

#[test]
fn hermite_between_60_s_samples_is_within_a_metre_in_leo() {
    // Against direct SGP4 at 1 s spacing over a day, for the LEO demo satellites.
    for set in demo_objects().iter().filter(|s| s.eccentricity < 0.01) {
        let p = Propagator::new(set).unwrap();
        let start = t("2026-12-01T00:00:00Z");
        let mut worst_km: f64 = 0.0;
        for k in 0..1440 {
            let a = p.state_at(start.add_s(60.0 * k as f64)).unwrap();
            let b = p.state_at(start.add_s(60.0 * (k + 1) as f64)).unwrap();
            for s in 1..60 {
                let tt = a.time.add_s(s as f64);
                let h = hermite_state(&a, &b, tt);
                let d = p.state_at(tt).unwrap();
                let e = (0..3)
                    .map(|i| (h.position_km[i] - d.position_km[i]).powi(2))
                    .sum::<f64>()
                    .sqrt();
                worst_km = worst_km.max(e);
            }
        }
        assert!(worst_km < 1e-3, "{}: {worst_km} km", set.name);
    }
}

#[test]
fn interpolation_allowance_covers_the_actual_error() {
    // For every demo object (LEO and the eccentric KRSL-6), the error of the
    // interpolant at the sample step the screening picks stays below the
    // allowance that widens the search.
    let fleet = ScreeningSettings::fleet_vs_catalog(ScreeningSettings::default().volume);
    for (settings, set) in [ScreeningSettings::default(), fleet]
        .into_iter()
        .flat_map(|s| demo_objects().into_iter().map(move |o| (s, o)))
    {
        let plan = interpolation_plan(&set, &settings);
        let p = Propagator::new(&set).unwrap();
        let start = t("2026-12-01T00:00:00Z");
        let n = (86_400.0 / plan.sample_step_s) as usize;
        let mut worst_km: f64 = 0.0;
        for k in 0..n {
            let a = p
                .state_at(start.add_s(plan.sample_step_s * k as f64))
                .unwrap();
            let b = p
                .state_at(start.add_s(plan.sample_step_s * (k + 1) as f64))
                .unwrap();
            for s in 1..8 {
                let tt = a.time.add_s(plan.sample_step_s * s as f64 / 8.0);
                let h = hermite_state(&a, &b, tt);
                let d = p.state_at(tt).unwrap();
                let e = (0..3)
                    .map(|i| (h.position_km[i] - d.position_km[i]).powi(2))
                    .sum::<f64>()
                    .sqrt();
                worst_km = worst_km.max(e);
            }
        }
        assert!(
            worst_km < plan.margin_km,
            "{}: step {} s, error {worst_km} km, allowance {} km",
            set.name,
            plan.sample_step_s,
            plan.margin_km
        );
    }
}

#[test]
fn cancel_returns_partial_result() {
    let objects = demo_objects();
    let request = ScreeningRequest {
        primaries: &objects,
        secondaries: None,
        start: t("2026-12-01T00:00:00Z"),
        end: t("2026-12-08T00:00:00Z"),
        settings: sphere(10.0),
    };
    // Cancels at the third progress report.
    struct StopAtThird(AtomicUsize);
    impl Progress for StopAtThird {
        fn report(&self, f: f64) {
            self.0.fetch_add(1, Ordering::Relaxed);
            assert!((0.0..=1.0).contains(&f));
        }
        fn cancelled(&self) -> bool {
            self.0.load(Ordering::Relaxed) >= 3
        }
    }
    let r = screen_with_progress(&request, &StopAtThird(AtomicUsize::new(0)));
    assert!(r.cancelled);
    assert!(r.screened_until < request.end);
    assert!(r.events.iter().all(|e| e.tca < r.screened_until));
}

#[test]
fn decaying_object_is_reported_and_the_rest_go_on() {
    let mut objects = demo_objects();
    let mut doomed = objects[0].clone();
    doomed.name = "DOOMED".into();
    doomed.catalog_number = 99990;
    doomed.mean_motion_rev_day = 16.3;
    doomed.bstar_per_earth_radii = 0.05;
    objects.push(doomed);
    let request = ScreeningRequest {
        primaries: &objects,
        secondaries: None,
        start: t("2026-12-01T00:00:00Z"),
        end: t("2026-12-08T00:00:00Z"),
        settings: sphere(10.0),
    };
    let r = screen(&request);
    assert_eq!(r.diagnostics.len(), 1, "{:?}", r.diagnostics);
    assert_eq!(r.diagnostics[0].catalog_number, 99990);
    assert_eq!(r.events.len(), 8);
}

#[test]
fn a_decaying_catalog_object_is_screened_up_to_its_decay_with_or_without_prediction() {
    // Fleet vs catalog: a catalog object that decays during the week, flying
    // 0.01° behind a fleet spacecraft. Predicted or sampled throughout, it is
    // screened up to the sample where SGP4 fails, reported there once, and
    // gives the same events.
    let fleet = demo_objects();
    let mut doomed = fleet[0].clone();
    doomed.name = "DOOMED".into();
    doomed.catalog_number = 99990;
    doomed.mean_anomaly_deg += 0.01;
    // Drag strong enough to bring it down within days.
    doomed.bstar_per_earth_radii = 0.5;
    let catalog = vec![doomed];
    let request = |predict_max_fleet| ScreeningRequest {
        primaries: &fleet,
        secondaries: Some(&catalog),
        start: t("2026-12-01T00:00:00Z"),
        end: t("2026-12-08T00:00:00Z"),
        settings: ScreeningSettings {
            predict_max_fleet,
            ..ScreeningSettings::fleet_vs_catalog(ScreeningVolume::Sphere { radius_km: 10.0 })
        },
    };
    let predicted = screen(&request(30));
    let sampled = screen(&request(0));
    assert_eq!(predicted.stats.objects_predicted, 1);
    for r in [&predicted, &sampled] {
        assert_eq!(r.diagnostics.len(), 1, "{:?}", r.diagnostics);
        assert_eq!(r.diagnostics[0].catalog_number, 99990);
        assert!(!r.events.is_empty(), "{:?}", r.diagnostics);
    }
    assert_eq!(predicted.diagnostics[0].time, sampled.diagnostics[0].time);
    let decay = sampled.diagnostics[0].time.expect("a failure time");
    assert!(decay < t("2026-12-08T00:00:00Z"), "{decay}");
    let key = |r: &ScreeningResult| -> Vec<(u32, String)> {
        r.events
            .iter()
            .map(|e| (e.primary_catalog_number, e.tca.to_iso_ms()))
            .collect()
    };
    assert_eq!(key(&predicted), key(&sampled));
}

#[test]
fn box_and_ellipsoid_report_the_encounters_that_enter_them() {
    // Every sphere event whose TCA lies inside the volume is reported; any
    // other reported event is an encounter that enters the volume away from
    // its TCA (issue 17), checked at its entry and exit; and the whole set
    // equals the brute-force reference's.
    let objects = demo_objects();
    let base = ScreeningRequest {
        primaries: &objects,
        secondaries: None,
        start: t("2026-12-01T00:00:00Z"),
        end: t("2026-12-08T00:00:00Z"),
        settings: sphere(10.0),
    };
    let all = screen(&base).events;
    for volume in [
        ScreeningVolume::Box {
            radial_km: 2.0,
            in_track_km: 10.0,
            cross_track_km: 8.0,
        },
        ScreeningVolume::Ellipsoid {
            radial_km: 2.0,
            in_track_km: 10.0,
            cross_track_km: 8.0,
        },
    ] {
        let request = ScreeningRequest {
            settings: ScreeningSettings {
                volume,
                ..Default::default()
            },
            ..base
        };
        let r = screen(&request);
        let brute = screen_brute_force(&request, 10.0);
        assert_eq!(r.events.len(), brute.events.len(), "{volume:?}");
        for (a, b) in r.events.iter().zip(&brute.events) {
            assert!(a.tca.s_since(b.tca).abs() < 1e-3);
            assert!((a.miss_distance_km - b.miss_distance_km).abs() < 1e-6);
        }
        let inside_at_tca: Vec<_> = all
            .iter()
            .filter(|e| volume.contains(&[e.radial_km, e.in_track_km, e.cross_track_km]))
            .collect();
        for e in &inside_at_tca {
            assert!(
                r.events
                    .iter()
                    .any(|a| a.tca.s_since(e.tca).abs() < 1e-3 && a.tca_inside_volume),
                "{volume:?}: {e:?}"
            );
        }
        for a in r.events.iter().filter(|a| !a.tca_inside_volume) {
            // Inside just after the entry and just before the exit.
            let p1 = Propagator::new(objects.iter().find(|s| s.name == a.primary).unwrap());
            let p2 = Propagator::new(objects.iter().find(|s| s.name == a.secondary).unwrap());
            let (p1, p2) = (p1.unwrap(), p2.unwrap());
            for tt in [a.volume_entry.add_s(2e-3), a.volume_exit.add_s(-2e-3)] {
                let (s1, s2) = (p1.state_at(tt).unwrap(), p2.state_at(tt).unwrap());
                let d: [f64; 3] = std::array::from_fn(|k| s2.position_km[k] - s1.position_km[k]);
                let ric =
                    passlane_plan::screen::ric_components(&s1.position_km, &s1.velocity_km_s, &d);
                assert!(volume.contains(&ric), "{volume:?} {a:?} at {tt}: {ric:?}");
            }
        }
        assert!(r.events.len() >= inside_at_tca.len());
    }
}

#[test]
fn event_serialises_with_the_contract_field_names() {
    let objects = demo_objects();
    let r = screen(&ScreeningRequest {
        primaries: &objects,
        secondaries: None,
        start: t("2026-12-03T05:00:00Z"),
        end: t("2026-12-03T07:00:00Z"),
        settings: sphere(10.0),
    });
    let v = serde_json::to_value(&r.events[0]).unwrap();
    for key in [
        "primary",
        "secondary",
        "primary_catalog_number",
        "secondary_catalog_number",
        "tca",
        "miss_distance_km",
        "radial_km",
        "in_track_km",
        "cross_track_km",
        "relative_speed_km_s",
    ] {
        assert!(v.get(key).is_some(), "{key}");
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(24))]

    #[test]
    fn swapping_primary_and_secondary_keeps_tca_and_miss(
        pair in 0usize..2,
        offset_h in 0.0f64..100.0,
    ) {
        // Debris pairs with known repeated approaches; a random 24 h window.
        let objects = demo_objects();
        let (a, b) = [(2, 6), (5, 7)][pair];
        let start = t("2026-12-01T00:00:00Z").add_s(offset_h * 3600.0);
        let mk = |p: &ElementSet, s: &ElementSet| vec![p.clone(), s.clone()];
        let fwd = mk(&objects[a], &objects[b]);
        let rev = mk(&objects[b], &objects[a]);
        let run = |objs: &[ElementSet]| screen(&ScreeningRequest {
            primaries: objs, secondaries: None, start, end: start.add_s(86_400.0), settings: sphere(50.0),
        }).events;
        let (x, y) = (run(&fwd), run(&rev));
        prop_assert_eq!(x.len(), y.len());
        for (e, f) in x.iter().zip(&y) {
            prop_assert!(e.tca.s_since(f.tca).abs() < 1e-3);
            prop_assert!((e.miss_distance_km - f.miss_distance_km).abs() < 1e-9 * e.miss_distance_km.max(1.0));
            prop_assert_eq!(&e.primary, &f.secondary);
        }
    }

    #[test]
    fn miss_distance_is_the_norm_of_ric(
        r1 in prop::array::uniform3(-8000.0f64..8000.0),
        v1 in prop::array::uniform3(-8.0f64..8.0),
        d in prop::array::uniform3(-50.0f64..50.0),
        v2 in prop::array::uniform3(-8.0f64..8.0),
    ) {
        prop_assume!(r1.iter().map(|x| x * x).sum::<f64>().sqrt() > 6000.0);
        let cross = [r1[1]*v1[2]-r1[2]*v1[1], r1[2]*v1[0]-r1[0]*v1[2], r1[0]*v1[1]-r1[1]*v1[0]];
        prop_assume!(cross.iter().map(|x| x * x).sum::<f64>().sqrt() > 1000.0);
        let s1 = passlane_orbit::StateTeme { time: UtcTime::J2000, position_km: r1, velocity_km_s: v1 };
        let r2 = [r1[0] + d[0], r1[1] + d[1], r1[2] + d[2]];
        let s2 = passlane_orbit::StateTeme { time: UtcTime::J2000, position_km: r2, velocity_km_s: v2 };
        let g = relative_geometry(&s1, &s2);
        let ric = (g.radial_km.powi(2) + g.in_track_km.powi(2) + g.cross_track_km.powi(2)).sqrt();
        prop_assert!((ric - g.miss_distance_km).abs() <= 1e-9 * g.miss_distance_km);
        // Swapping the objects keeps the distance; the RIC vector changes frame.
        let h = relative_geometry(&s2, &s1);
        prop_assert!((h.miss_distance_km - g.miss_distance_km).abs() <= 1e-12 * g.miss_distance_km.max(1.0));
    }
}
