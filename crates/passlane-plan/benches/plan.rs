//! Network-plan speed: 50 spacecraft (the first 50 sets of the synthetic
//! `tests/fixtures/bench-1000.tle`), 8 invented stations with 12 antennas,
//! 7 days. Times the pass search, the candidate building (antenna elevation
//! limits, one SGP4 root search per limit) and the solver apart; the target
//! is the solver (and candidates) under 1 s on 2 cores once the contact
//! windows are known. Demands are set high enough that the antennas are
//! contended (6–14 contacts a day, half also 1.5 GB a day). Also prints how close the plan comes to the relaxed
//! bound (every conflict ignored), which no plan can exceed.
//!
//! Run: `cargo bench -p passlane-plan --bench plan`.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

use std::path::PathBuf;
use std::time::Instant;

use passlane_orbit::{LoadOptions, UtcTime, elements};
use passlane_plan::Silent;
use passlane_plan::passes::{PassOptions, find_passes};
use passlane_plan::scenario::{SatelliteNeeds, Scenario};
use passlane_plan::schedule::{Network, Problem, build_candidates, solve};
use passlane_plan::station::{Antenna, Station};

fn main() {
    let repo = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../..");
    let bytes = std::fs::read(repo.join("tests/fixtures/bench-1000.tle")).expect("fixture");
    let mut sets = elements::load(&bytes, "bench-1000.tle", LoadOptions::default()).sets;
    sets.truncate(50);
    let start = UtcTime::parse_iso("2026-12-01T00:00:00Z").expect("time");
    let end = UtcTime::parse_iso("2026-12-08T00:00:00Z").expect("time");

    // Eight invented stations (the three demo sites and open-ocean points far
    // from any land, as in the passes bench); the first four have two antennas
    // (12 in all), the second of which only works above 15°.
    let sites = [
        (73.36, -98.74),
        (64.8, -30.0),
        (51.42, -126.45),
        (-52.9, -140.0),
        (35.4, 160.0),
        (-5.64, -155.9),
        (-25.9, 80.0),
        (19.0, -135.0),
    ];
    let mut scenario = Scenario::default();
    for (i, (lat, lon)) in sites.iter().enumerate() {
        let mut s = Station::new(&format!("Site {i}"), *lat, *lon, 100.0);
        s.min_elevation_deg = 5.0;
        s.downlink_rate_bps = Some(if i % 2 == 0 { 2e6 } else { 5e5 });
        s.antennas.push(Antenna {
            name: "A".into(),
            turnaround_s: 120.0,
            min_elevation_deg: None,
        });
        if i < 4 {
            s.antennas.push(Antenna {
                name: "B".into(),
                turnaround_s: 60.0,
                min_elevation_deg: Some(15.0),
            });
        }
        scenario.stations.push(s);
    }
    for (i, set) in sets.iter().enumerate() {
        scenario.satellites.push(SatelliteNeeds {
            catalog_number: set.catalog_number,
            priority: [1.0, 1.0, 2.0, 3.0, 5.0][i % 5],
            min_contact_s: 120.0,
            contacts_per_day: Some([6.0, 10.0, 14.0][i % 3]),
            downlink_mb_per_day: if i % 2 == 0 { Some(1500.0) } else { None },
            allow_simultaneous: false,
            hard_body_radius_m: None,
        });
    }

    let t0 = Instant::now();
    let passes = find_passes(
        &sets,
        &scenario.stations,
        &PassOptions::new(start, end),
        &Silent,
    )
    .passes;
    let t_passes = t0.elapsed().as_secs_f64();

    let t1 = Instant::now();
    let network = Network::from_scenario(&scenario, &sets).expect("network");
    let cands = build_candidates(
        &network,
        &passes,
        &sets,
        &scenario.stations,
        &scenario.earth_orientation,
    );
    let t_cands = t1.elapsed().as_secs_f64();
    let n_cands = cands.candidates.len();

    let t2 = Instant::now();
    let problem = Problem::new(network, cands.candidates, start, end);
    let plan = solve(&problem, &Silent).expect("plan");
    let t_solve = t2.elapsed().as_secs_f64();

    println!(
        "network plan: 50 spacecraft x 8 stations (12 antennas) x 7 days, {} thread(s)",
        rayon::current_num_threads()
    );
    println!(
        "  pass search          {:>8.3} s  ({} passes)",
        t_passes,
        passes.len()
    );
    println!(
        "  candidates           {:>8.3} s  ({} kept, {} too short or too low)",
        t_cands, n_cands, cands.dropped
    );
    println!(
        "  solve ({:?})    {:>8.3} s  ({} contacts, {} conflicts reported)",
        plan.method,
        t_solve,
        plan.contacts.len(),
        plan.conflicts.len()
    );
    println!(
        "  after the windows    {:>8.3} s  (candidates + solve; target < 1 s)",
        t_cands + t_solve
    );
    println!(
        "  score {:.2} of {:.2} possible; relaxed bound {:.2}: plan at {:.1}% of the bound, {:.1}% of all demand",
        plan.score,
        plan.max_score,
        plan.upper_bound,
        100.0 * plan.score / plan.upper_bound.max(1e-12),
        100.0 * plan.demand_met_fraction()
    );
}
