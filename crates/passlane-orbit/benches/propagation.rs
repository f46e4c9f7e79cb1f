//! SGP4 throughput, side by side with the PyPI `sgp4` package's C++
//! `SatrecArray` on the same 1,000 element sets × 10,080 one-minute steps.
//!
//! Run: `cargo bench -p passlane-orbit --bench propagation`. It runs
//! `scripts/bench/python_sgp4_bench.py` (needs `pip install -r
//! scripts/fixtures/requirements.txt`) in the same run when python3 with sgp4
//! is available, and prints the ratios. CPU time is measured with
//! getrusage-equivalent process time from /proc so that a busy machine does
//! not distort the per-core figure.

use std::path::PathBuf;
use std::process::Command;
use std::sync::atomic::{AtomicU64, Ordering};
use std::time::Instant;

use passlane_orbit::{LoadOptions, Propagator, TimeGrid, UtcTime, elements, propagate_grid_with};

#[path = "support/mod.rs"]
mod support;

fn main() {
    let repo = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../..");
    let bytes = std::fs::read(repo.join("tests/fixtures/bench-1000.tle")).expect("bench-1000.tle");
    let report = elements::load(&bytes, "bench-1000.tle", LoadOptions::default());
    assert_eq!(report.sets.len(), 1000, "{:?}", report.diagnostics.first());
    let props: Vec<Propagator> = report
        .sets
        .iter()
        .map(|s| Propagator::new(s).expect("elements"))
        .collect();
    let grid = TimeGrid {
        start: UtcTime::parse_iso("2026-12-01T00:00:00Z").expect("time"),
        step_s: 60.0,
        count: 10_080,
    };
    let total = (props.len() * grid.count) as f64;
    let mut results = Vec::new();
    for threads in [1usize, 2] {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .expect("pool");
        let checksum = AtomicU64::new(0);
        let cpu0 = support::cpu_seconds();
        let t0 = Instant::now();
        pool.install(|| {
            propagate_grid_with(&props, grid, |_, samples| {
                let ok = samples.iter().filter(|s| s.is_ok()).count() as u64;
                checksum.fetch_add(ok, Ordering::Relaxed);
            })
        });
        let wall = t0.elapsed().as_secs_f64();
        let cpu = support::cpu_seconds() - cpu0;
        assert_eq!(checksum.load(Ordering::Relaxed) as f64, total);
        println!(
            "passlane, {threads} thread(s): {:.3} s wall, {:.2} s CPU -> {:.3e} propagations/s wall, {:.3e} per CPU-second",
            wall,
            cpu,
            total / wall,
            total / cpu.max(1e-9)
        );
        results.push((threads, total / wall, total / cpu.max(1e-9)));
    }
    let python = Command::new("python3")
        .arg(repo.join("scripts/bench/python_sgp4_bench.py"))
        .arg("--no-write")
        .output();
    let per_cpu = match python {
        Ok(out) if out.status.success() => {
            let text = String::from_utf8_lossy(&out.stdout).to_string();
            print!("{text}");
            text.lines()
                .find(|l| l.starts_with("cpu"))
                .and_then(|l| l.split("->").nth(1))
                .and_then(|r| r.split_whitespace().next())
                .and_then(|v| v.parse::<f64>().ok())
        }
        _ => {
            println!(
                "python3 with sgp4 not available: install scripts/fixtures/requirements.txt for the side-by-side ratio"
            );
            None
        }
    };
    if let Some(py) = per_cpu {
        let one = results[0].2;
        let two_wall = results[1].1;
        println!(
            "ratio per core (1 thread, per CPU-second): {:.2}x python-sgp4 SatrecArray",
            one / py
        );
        println!(
            "ratio on 2 cores (wall throughput vs python per CPU-second): {:.2}x",
            two_wall / py
        );
    }
}
