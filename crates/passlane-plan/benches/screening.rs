//! Screening benchmark on two synthetic catalogs (plain std timing).
//!
//! - **realistic** (the default): 30,000 objects shaped like today's sky —
//!   dense constellation-like shells, a debris band, eccentric LEO-crossers,
//!   MEO, GEO and far HEO; see `support/catalog.rs` for its make-up. Sphere of
//!   5 km, as an operator would screen.
//! - **uniform** (the earlier case, kept for comparison): 30,000 element sets,
//!   LEO-heavy but evenly spread (most 400–1,200 km at 50–100° inclination,
//!   with a sun-synchronous cluster), plus MEO, a GEO belt and eccentric
//!   HEO/transfer orbits; sphere of 10 km.
//!
//! Both are generated here with fixed-seed generators, so no file is committed.
//!
//! Cases (first argument, default `every` = all but `write-tle`):
//! - `all`, `fleet`, `reference`: the uniform catalog — 30,000 all-vs-all
//!   over 24 h; a 100-satellite fleet against the 30,000 over 7 days; a
//!   2,000-object subset, screening vs brute-force sampling at 10 s over 6 h;
//! - `real-all [N]`: the realistic catalog (or an even pick of N of it)
//!   all-vs-all over 24 h;
//! - `real-sso`, `real-fleet`: 10 sun-synchronous spacecraft / a 100-spacecraft
//!   fleet against the realistic 30,000 over 7 days;
//! - `real-prediction`: the screening's mean-element prediction against
//!   SGP4 for every object of the 30,000 it covers (the allowance's check);
//! - `real-dense`: the dense 2,000-object subset over 6 h, screening vs
//!   brute-force sampling (10 s samples of direct SGP4, every minimum refined
//!   with direct SGP4), with a check that the events agree;
//! - `write-tle DIR`: writes the realistic catalog (30,000, 10,000 and 5,000),
//!   the ten SSO spacecraft and the fleet of 100 as TLE files into DIR for the
//!   whole-command benchmark (`scripts/bench/screen_cli.sh`).
//!
//! Run: `cargo bench -p passlane-plan --bench screening [-- CASE [ARG]]`.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

use std::time::Instant;

use passlane_orbit::{ElementSet, SourceRef, UtcTime};
use passlane_plan::screen::{
    ScreeningRequest, ScreeningResult, ScreeningSettings, ScreeningVolume, screen,
    screen_brute_force,
};

const MU_KM3_S2: f64 = 398_600.8;
const EARTH_RADIUS_KM: f64 = 6378.135;
const THRESHOLD_KM: f64 = 10.0;

#[path = "support/catalog.rs"]
mod catalog;
#[path = "../../passlane-orbit/benches/support/mod.rs"]
mod support;

use catalog::Rng;

fn mean_motion_rev_day(a_km: f64) -> f64 {
    (MU_KM3_S2 / a_km.powi(3)).sqrt() * 86_400.0 / std::f64::consts::TAU
}

fn element_set(
    catalog: u32,
    epoch: UtcTime,
    a_km: f64,
    e: f64,
    inc: f64,
    bstar: f64,
    rng: &mut Rng,
) -> ElementSet {
    ElementSet {
        name: format!("SYNTH {catalog}"),
        catalog_number: catalog,
        international_designator: String::new(),
        classification: 'U',
        epoch,
        mean_motion_dot_rev_day2: 0.0,
        mean_motion_ddot_rev_day3: 0.0,
        bstar_per_earth_radii: bstar,
        ephemeris_type: 0,
        element_set_number: 1,
        inclination_deg: inc,
        raan_deg: rng.uniform(0.0, 360.0),
        eccentricity: e,
        arg_perigee_deg: rng.uniform(0.0, 360.0),
        mean_anomaly_deg: rng.uniform(0.0, 360.0),
        mean_motion_rev_day: mean_motion_rev_day(a_km),
        revolution_number: 0,
        ephemeris: None,
        source: SourceRef::default(),
    }
}

/// The uniform synthetic catalog: 84 % LEO, 6 % MEO, 6 % GEO, 4 % HEO/transfer.
fn uniform_catalog(n: usize, epoch: UtcTime) -> Vec<ElementSet> {
    let mut rng = Rng(0x9E37_79B9_7F4A_7C15);
    (0..n)
        .map(|k| {
            let catalog = 10_000 + k as u32;
            let kind = rng.uniform(0.0, 100.0);
            if kind < 84.0 {
                // LEO: altitude weighted towards 500–900 km (sum of two uniforms).
                let alt = 400.0 + 400.0 * (rng.uniform(0.0, 1.0) + rng.uniform(0.0, 1.0));
                let inc = if rng.uniform(0.0, 1.0) < 0.3 {
                    rng.uniform(97.0, 99.5)
                } else {
                    rng.uniform(50.0, 100.0)
                };
                let e = rng.uniform(0.0, 0.02);
                let a = (EARTH_RADIUS_KM + alt) / (1.0 - e);
                element_set(catalog, epoch, a, e, inc, rng.uniform(1e-5, 3e-4), &mut rng)
            } else if kind < 90.0 {
                let a = EARTH_RADIUS_KM + rng.uniform(19_000.0, 23_500.0);
                element_set(
                    catalog,
                    epoch,
                    a,
                    rng.uniform(0.0, 0.02),
                    rng.uniform(50.0, 65.0),
                    0.0,
                    &mut rng,
                )
            } else if kind < 96.0 {
                let a = EARTH_RADIUS_KM + 35_786.0 + rng.uniform(-150.0, 150.0);
                element_set(
                    catalog,
                    epoch,
                    a,
                    rng.uniform(0.0, 0.001),
                    rng.uniform(0.0, 15.0),
                    0.0,
                    &mut rng,
                )
            } else if rng.uniform(0.0, 1.0) < 0.5 {
                // Molniya-like.
                element_set(
                    catalog,
                    epoch,
                    26_560.0,
                    rng.uniform(0.68, 0.74),
                    63.4,
                    0.0,
                    &mut rng,
                )
            } else {
                // Transfer orbit: perigee 250–600 km, apogee near GEO.
                let rp = EARTH_RADIUS_KM + rng.uniform(250.0, 600.0);
                let ra = EARTH_RADIUS_KM + 35_786.0;
                let a = 0.5 * (rp + ra);
                element_set(
                    catalog,
                    epoch,
                    a,
                    (ra - rp) / (ra + rp),
                    rng.uniform(0.0, 30.0),
                    1e-4,
                    &mut rng,
                )
            }
        })
        .collect()
}

/// A 100-satellite operator fleet: 450–650 km, sun-synchronous and 53°.
fn fleet(epoch: UtcTime) -> Vec<ElementSet> {
    let mut rng = Rng(0x0123_4567_89AB_CDEF);
    (0..100)
        .map(|k| {
            let alt = rng.uniform(450.0, 650.0);
            let inc = if k % 2 == 0 { 97.6 } else { 53.0 };
            let mut s = element_set(
                90_000 + k,
                epoch,
                EARTH_RADIUS_KM + alt,
                0.001,
                inc,
                1e-4,
                &mut rng,
            );
            s.name = format!("FLEET {k}");
            s
        })
        .collect()
}

fn report(label: &str, r: &ScreeningResult, seconds: f64, cpu_seconds: f64) {
    println!(
        "{label}: {:.2} s wall, {:.2} s CPU, {} events, {} objects ({} removed by the perigee/apogee filter), {} SGP4 samples, {} candidate pairs, {} refinements, {} diagnostics; phases: propagation {:.1} s, hash {:.1} s, evaluation {:.1} s; peak RSS so far {:.0} MB",
        seconds,
        cpu_seconds,
        r.events.len(),
        r.stats.objects,
        r.stats.objects_filtered,
        r.stats.sgp4_samples,
        r.stats.candidate_pairs,
        r.stats.refinements,
        r.diagnostics.len(),
        r.stats.propagation_s,
        r.stats.hash_s,
        r.stats.evaluation_s,
        support::max_rss_mb()
    );
}

/// Fast screening against the brute-force reference: identical pairs, TCA
/// within 10 ms, miss within 1 m; prints every difference.
fn compare(fast: &ScreeningResult, brute: &ScreeningResult) -> bool {
    let key = |e: &passlane_plan::screen::CloseApproach| {
        (e.primary_catalog_number, e.secondary_catalog_number)
    };
    let mut same = fast.events.len() == brute.events.len();
    for a in &fast.events {
        let m = brute
            .events
            .iter()
            .find(|e| key(e) == key(a) && e.tca.s_since(a.tca).abs() < 0.010);
        match m {
            Some(e) if (e.miss_distance_km - a.miss_distance_km).abs() < 1e-3 => {}
            Some(e) => {
                same = false;
                println!("  miss differs: fast {a:?}\n  brute {e:?}");
            }
            None => {
                same = false;
                println!(
                    "  only fast:  {} {} {} {:.4} km",
                    a.tca, a.primary, a.secondary, a.miss_distance_km
                );
            }
        }
    }
    for e in &brute.events {
        if !fast
            .events
            .iter()
            .any(|a| key(a) == key(e) && e.tca.s_since(a.tca).abs() < 0.010)
        {
            same = false;
            println!(
                "  only brute: {} {} {} {:.4} km",
                e.tca, e.primary, e.secondary, e.miss_distance_km
            );
        }
    }
    same
}

fn timed(label: &str, f: impl FnOnce() -> ScreeningResult) -> (ScreeningResult, f64) {
    let (t0, c0) = (Instant::now(), support::cpu_seconds());
    let r = f();
    let cpu = support::cpu_seconds() - c0;
    report(label, &r, t0.elapsed().as_secs_f64(), cpu);
    (r, cpu)
}

fn realistic_cases(which: &str, arg: Option<&str>) {
    let epoch = catalog::epoch();
    // Sweeps of the method's tuning (the figures behind the defaults):
    // SCREEN_HASH_STEP_S and SCREEN_TOLERANCE_KM override the defaults.
    let env = |k: &str| std::env::var(k).ok().and_then(|v| v.parse::<f64>().ok());
    let sphere = ScreeningVolume::Sphere { radius_km: 5.0 };
    // Each mode's own defaults, as the command uses them.
    let defaults = if which == "real-sso" || which == "real-fleet" {
        ScreeningSettings::fleet_vs_catalog(sphere)
    } else {
        ScreeningSettings::default()
    };
    let settings = ScreeningSettings {
        volume: sphere,
        hash_step_s: env("SCREEN_HASH_STEP_S").unwrap_or(defaults.hash_step_s),
        interpolation_tolerance_km: env("SCREEN_TOLERANCE_KM")
            .unwrap_or(defaults.interpolation_tolerance_km),
        // SCREEN_PREDICT_MAX_FLEET: largest fleet whose catalog objects are
        // predicted (0: none; sweeps of the threshold).
        predict_max_fleet: env("SCREEN_PREDICT_MAX_FLEET")
            .map_or(defaults.predict_max_fleet, |n| n as usize),
        direct_scan_max_fleet: env("SCREEN_DIRECT_MAX_FLEET")
            .map_or(defaults.direct_scan_max_fleet, |n| Some(n as usize)),
        ..defaults
    };
    println!(
        "hash step {} s, interpolation tolerance {} km",
        settings.hash_step_s, settings.interpolation_tolerance_km
    );
    fn request<'a>(
        primaries: &'a [ElementSet],
        secondaries: Option<&'a [ElementSet]>,
        hours: f64,
        settings: ScreeningSettings,
    ) -> ScreeningRequest<'a> {
        let start = catalog::epoch();
        ScreeningRequest {
            primaries,
            secondaries,
            start,
            end: start.add_s(hours * 3600.0),
            settings,
        }
    }
    let _ = epoch;
    match which {
        "real-all" => {
            let n = arg.and_then(|a| a.parse().ok()).unwrap_or(30_000);
            let cat = catalog::realistic(n);
            let req = request(&cat, None, 24.0, settings);
            timed(&format!("realistic all-vs-all {n} x 24 h, 5 km"), || {
                screen(&req)
            });
        }
        "real-sso" | "real-fleet" => {
            let cat = catalog::realistic(30_000);
            let mut fleet = if which == "real-sso" {
                catalog::element_sets(&catalog::sso_fleet_synth())
            } else {
                catalog::element_sets(&catalog::fleet_100_synth())
            };
            // SCREEN_FLEET_N: the first N of the fleet (fleet-size sweeps).
            if let Some(n) = env("SCREEN_FLEET_N") {
                fleet.truncate(n as usize);
            }
            let req = request(&fleet, Some(&cat), 7.0 * 24.0, settings);
            timed(
                &format!("realistic {} vs 30,000 x 7 d, 5 km", fleet.len()),
                || screen(&req),
            );
        }
        "real-prediction" => {
            // The screening's mean-element prediction against SGP4 for every
            // object of the realistic 30,000 it covers, every 60 s over 7
            // days, the phase anchored per 256-minute chunk.
            let cat = catalog::realistic(30_000);
            let start = catalog::epoch();
            let end = start.add_s(7.0 * 86_400.0);
            let t0 = Instant::now();
            let mut errors: Vec<(f64, String)> = cat
                .iter()
                .filter_map(|set| {
                    passlane_plan::screen::prediction_error_km(set, start, end, 15_360.0, 60.0)
                        .map(|e| (e, set.name.clone()))
                })
                .collect();
            errors.sort_by(|a, b| a.0.total_cmp(&b.0));
            let pct = |q: f64| errors[((errors.len() - 1) as f64 * q) as usize].0;
            println!(
                "prediction vs SGP4, {} of {} objects predicted, 7 d every 60 s: median {:.1} km, 99 % {:.1} km, max {:.1} km ({}); {:.0} s",
                errors.len(),
                cat.len(),
                pct(0.5),
                pct(0.99),
                pct(1.0),
                errors.last().map_or("", |e| e.1.as_str()),
                t0.elapsed().as_secs_f64()
            );
        }
        "real-dense" => {
            let subset = catalog::element_sets(&catalog::dense_subset_synth());
            let req = request(&subset, None, 6.0, settings);
            let (fast, c_fast) = timed("dense 2,000 x 6 h, screening", || screen(&req));
            let (brute, c_brute) = timed("dense 2,000 x 6 h, brute force 10 s", || {
                screen_brute_force(&req, 10.0)
            });
            let same = compare(&fast, &brute);
            println!(
                "CPU ratio brute/screening: {:.0}x; identical events (TCA 10 ms, miss 1 m): {same}",
                c_brute / c_fast.max(0.01)
            );
        }
        "write-tle" => {
            let dir = std::path::PathBuf::from(arg.expect("write-tle DIR"));
            std::fs::create_dir_all(&dir).unwrap();
            for n in [30_000, 10_000, 5_000] {
                let text = catalog::tle_text(&catalog::realistic_synth_n(n));
                std::fs::write(dir.join(format!("catalog-{n}.tle")), text).unwrap();
            }
            let sso = catalog::tle_text(&catalog::sso_fleet_synth());
            std::fs::write(dir.join("sso-10.tle"), sso).unwrap();
            let fleet = catalog::tle_text(&catalog::fleet_100_synth());
            std::fs::write(dir.join("fleet-100.tle"), fleet).unwrap();
            println!(
                "wrote catalog-30000/10000/5000.tle, sso-10.tle, fleet-100.tle to {}",
                dir.display()
            );
        }
        _ => panic!("unknown case {which}"),
    }
}

fn main() {
    let which = std::env::args()
        .nth(1)
        .filter(|a| !a.starts_with('-'))
        .unwrap_or_else(|| "every".into());
    if which == "every" {
        for case in ["real-sso", "real-fleet", "real-dense"] {
            realistic_cases(case, None);
        }
        realistic_cases("real-all", Some("30000"));
    }
    if which.starts_with("real-") || which == "write-tle" {
        realistic_cases(&which, std::env::args().nth(2).as_deref());
        println!("peak RSS (VmHWM): {:.0} MB", support::max_rss_mb());
        return;
    }
    let epoch = UtcTime::parse_iso("2026-12-01T00:00:00Z").unwrap();
    let cat = uniform_catalog(30_000, epoch);
    let settings = ScreeningSettings {
        volume: ScreeningVolume::Sphere {
            radius_km: THRESHOLD_KM,
        },
        hash_step_s: std::env::args()
            .nth(2)
            .and_then(|a| a.parse().ok())
            .unwrap_or(ScreeningSettings::default().hash_step_s),
        ..Default::default()
    };
    println!("hash step {} s", settings.hash_step_s);
    println!("threads: {}", rayon::current_num_threads());
    if which == "every" || which == "all" {
        let req = ScreeningRequest {
            primaries: &cat,
            secondaries: None,
            start: epoch,
            end: epoch.add_s(86_400.0),
            settings,
        };
        let (t0, c0) = (Instant::now(), support::cpu_seconds());
        let r = screen(&req);
        report(
            "all-vs-all 30,000 x 24 h",
            &r,
            t0.elapsed().as_secs_f64(),
            support::cpu_seconds() - c0,
        );
    }
    if which == "every" || which == "fleet" {
        let fl = fleet(epoch);
        let req = ScreeningRequest {
            primaries: &fl,
            secondaries: Some(&cat),
            start: epoch,
            end: epoch.add_s(7.0 * 86_400.0),
            settings,
        };
        let (t0, c0) = (Instant::now(), support::cpu_seconds());
        let r = screen(&req);
        report(
            "fleet 100 vs 30,000 x 7 d",
            &r,
            t0.elapsed().as_secs_f64(),
            support::cpu_seconds() - c0,
        );
    }
    if which == "every" || which == "reference" {
        // Every 15th object: a 2,000-object subset with the catalog's mix.
        let subset: Vec<ElementSet> = cat.iter().step_by(15).cloned().collect();
        let req = ScreeningRequest {
            primaries: &subset,
            secondaries: None,
            start: epoch,
            end: epoch.add_s(6.0 * 3600.0),
            settings,
        };
        let (t0, c0) = (Instant::now(), support::cpu_seconds());
        let fast = screen(&req);
        let t_fast = t0.elapsed().as_secs_f64();
        let c_fast = support::cpu_seconds() - c0;
        report("subset 2,000 x 6 h, screening", &fast, t_fast, c_fast);
        let (t0, c0) = (Instant::now(), support::cpu_seconds());
        let brute = screen_brute_force(&req, 10.0);
        let t_brute = t0.elapsed().as_secs_f64();
        let c_brute = support::cpu_seconds() - c0;
        report(
            "subset 2,000 x 6 h, brute force 10 s",
            &brute,
            t_brute,
            c_brute,
        );
        let same = fast.events.len() == brute.events.len()
            && fast.events.iter().zip(&brute.events).all(|(a, b)| {
                a.primary_catalog_number == b.primary_catalog_number
                    && a.secondary_catalog_number == b.secondary_catalog_number
                    && a.tca.s_since(b.tca).abs() < 1e-3
                    && (a.miss_distance_km - b.miss_distance_km).abs() < 1e-6
            });
        println!(
            "speed ratio brute/screening: {:.0}x wall, {:.0}x CPU; identical events: {same}",
            t_brute / t_fast,
            c_brute / c_fast.max(0.01)
        );
        if !same {
            for e in &fast.events {
                println!(
                    "  fast  {} {} {} {:.3}",
                    e.tca, e.primary, e.secondary, e.miss_distance_km
                );
            }
            for e in &brute.events {
                println!(
                    "  brute {} {} {} {:.3}",
                    e.tca, e.primary, e.secondary, e.miss_distance_km
                );
            }
        }
    }
    println!("peak RSS (VmHWM): {:.0} MB", support::max_rss_mb());
}
