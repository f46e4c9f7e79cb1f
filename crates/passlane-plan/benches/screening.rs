//! Screening benchmark on a synthetic catalog (plain std timing).
//!
//! The catalog is generated here with a fixed-seed xorshift generator, so no
//! file is committed: 30,000 element sets, LEO-heavy (most 400–1,200 km at
//! 50–100° inclination, with a sun-synchronous cluster), plus navigation-like
//! MEO, a GEO belt and eccentric HEO/transfer orbits.
//!
//! Cases (pick one by name as the first argument, default all):
//! - `all`: 30,000 all-vs-all over 24 h;
//! - `fleet`: a 100-satellite fleet against the 30,000 over 7 days;
//! - `reference`: a 2,000-object subset, screening vs brute-force sampling at
//!   10 s over 6 h, with the speed ratio and a check that the events agree.
//!
//! Run: `cargo bench -p passlane-plan --bench screening [-- all|fleet|reference [hash_step_s]]`.
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

/// xorshift64* — small, fixed-seed, good enough to scatter orbits.
struct Rng(u64);

impl Rng {
    fn next_u64(&mut self) -> u64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }
    fn uniform(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * ((self.next_u64() >> 11) as f64 / (1u64 << 53) as f64)
    }
}

#[path = "../../passlane-orbit/benches/support/mod.rs"]
mod support;

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

/// The synthetic catalog: 84 % LEO, 6 % MEO, 6 % GEO, 4 % HEO/transfer.
fn catalog(n: usize, epoch: UtcTime) -> Vec<ElementSet> {
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

fn main() {
    let which = std::env::args()
        .nth(1)
        .filter(|a| !a.starts_with('-'))
        .unwrap_or_else(|| "every".into());
    let epoch = UtcTime::parse_iso("2026-12-01T00:00:00Z").unwrap();
    let cat = catalog(30_000, epoch);
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
