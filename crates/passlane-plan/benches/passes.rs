//! Pass-finder speed: the demo fleet (6 spacecraft × 3 stations × 7 days), and
//! 1,000 spacecraft × 10 stations × 7 days on all cores.
//!
//! Run: `cargo bench -p passlane-plan --bench passes`. The side-by-side with
//! skyfield (whole command, start-up included) is
//! `python3 scripts/bench/passes_vs_skyfield.py`.

use std::path::PathBuf;
use std::time::Instant;

use passlane_orbit::{LoadOptions, UtcTime, elements};
use passlane_plan::Silent;
use passlane_plan::passes::{PassOptions, find_passes, find_passes_on};
use passlane_plan::station::Station;

#[path = "../../passlane-orbit/benches/support/mod.rs"]
mod support;

fn main() {
    let repo = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../..");
    let load = |name: &str| {
        let bytes = std::fs::read(repo.join(name)).expect("fixture");
        elements::load(&bytes, name, LoadOptions::default()).sets
    };
    let demo = load("scenarios/demo-fleet.tle");
    let big = load("tests/fixtures/bench-1000.tle");
    let start = UtcTime::parse_iso("2026-12-01T00:00:00Z").expect("time");
    let end = UtcTime::parse_iso("2026-12-08T00:00:00Z").expect("time");
    let options = PassOptions::new(start, end);
    let three = vec![
        Station::new("Northfell", 73.36, -98.74, 240.0),
        Station::new("Bramble Hill", 51.42, -126.45, 1580.0),
        Station::new("Coral Shoal", -5.64, -155.9, 6.0),
    ];
    // Ten invented stations spread over latitudes: the three demo sites and
    // seven open-ocean points hundreds of kilometres from any land, so that
    // none stands for a real place.
    let ten: Vec<Station> = [
        (73.36, -98.74),
        (64.8, -30.0),
        (51.42, -126.45),
        (40.4, -45.0),
        (35.4, 160.0),
        (19.0, -135.0),
        (-5.64, -155.9),
        (-25.9, 80.0),
        (-33.9, -20.0),
        (-52.9, -140.0),
    ]
    .iter()
    .enumerate()
    .map(|(i, (lat, lon))| Station::new(&format!("Site {i}"), *lat, *lon, 100.0))
    .collect();

    let one_thread = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .expect("pool");
    let runs = 20;
    let t0 = Instant::now();
    let c0 = support::cpu_seconds();
    let mut n = 0;
    for _ in 0..runs {
        n = one_thread
            .install(|| find_passes(&demo, &three, &options, &Silent))
            .passes
            .len();
    }
    let per_run = t0.elapsed().as_secs_f64() / runs as f64;
    let cpu_per_run = (support::cpu_seconds() - c0) / runs as f64;
    println!(
        "demo fleet, 6 x 3 stations x 7 d, 1 thread: {:.2} ms wall, {:.2} ms CPU per run, {n} passes",
        per_run * 1e3,
        cpu_per_run * 1e3
    );

    // Threads or not, by fleet size: the first N of the synthetic 1,000
    // over the three demo stations, 7 days, on the calling thread and on
    // rayon's pool (2 cores), CPU and wall per run. The threshold in
    // `passes/mod.rs` is chosen from these figures.
    println!("fleet size: serial ms CPU / wall | parallel ms CPU / wall");
    for n in [1usize, 3, 6, 12, 24, 50, 100] {
        let fleet = &big[..n];
        let runs = (200 / n).max(4);
        let mut row = format!("  {n:4}:");
        for parallel in [false, true] {
            let t0 = Instant::now();
            let c0 = support::cpu_seconds();
            for _ in 0..runs {
                find_passes_on(fleet, &three, &options, &Silent, parallel);
            }
            let wall = t0.elapsed().as_secs_f64() / runs as f64;
            let cpu = (support::cpu_seconds() - c0) / runs as f64;
            row += &format!("  {:8.2} / {:8.2}", cpu * 1e3, wall * 1e3);
        }
        println!("{row}");
    }

    let t0 = Instant::now();
    let c0 = support::cpu_seconds();
    let report = find_passes(&big, &ten, &options, &Silent);
    let wall = t0.elapsed().as_secs_f64();
    let cpu = support::cpu_seconds() - c0;
    println!(
        "1,000 spacecraft x 10 stations x 7 d, all cores: {:.2} s wall, {:.2} s CPU, {} passes (target < 2 s on 2 cores)",
        wall,
        cpu,
        report.passes.len()
    );
}
