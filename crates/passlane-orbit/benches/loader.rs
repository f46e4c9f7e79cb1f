//! Element loader speed on a 50 MB catalog with bad records mixed in (the
//! test `tests/huge_input.rs` checks what loads and the memory; this measures
//! how fast).
//!
//! Run: `cargo bench -p passlane-orbit --bench loader`. The file is the 1,000
//! records of `tests/fixtures/bench-1000.tle` repeated (so most records are
//! duplicates that the loader reduces to the newest epoch, with a warning
//! each), with a junk line and a record with a broken checksum every ten.

#![allow(clippy::panic)]

use std::path::PathBuf;
use std::time::Instant;

use passlane_orbit::{LoadOptions, elements};

fn main() {
    let repo = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../..");
    let fixture = std::fs::read_to_string(repo.join("tests/fixtures/bench-1000.tle"))
        .unwrap_or_else(|e| panic!("bench-1000.tle: {e}"));
    let lines: Vec<&str> = fixture.lines().collect();
    let records: Vec<&[&str]> = lines.chunks(3).filter(|c| c.len() == 3).collect();
    const TARGET_BYTES: usize = 50 * 1024 * 1024;
    let mut text = String::with_capacity(TARGET_BYTES + 1024);
    let mut i = 0usize;
    while text.len() < TARGET_BYTES {
        let r = records[i % records.len()];
        match i % 10 {
            3 => {
                // Line 2 with its checksum digit changed.
                let l2 = r[2];
                let (body, sum) = l2.split_at(l2.len() - 1);
                let wrong = (sum.as_bytes()[0] - b'0' + 1) % 10;
                text.push_str(&format!("{}\n{}\n{body}{wrong}\n", r[0], r[1]));
            }
            7 => text.push_str("this line is not part of any element set, on purpose\n"),
            _ => {
                for l in r {
                    text.push_str(l);
                    text.push('\n');
                }
            }
        }
        i += 1;
    }
    let bytes = text.into_bytes();
    let mut best = f64::INFINITY;
    let mut last = None;
    for _ in 0..3 {
        let t0 = Instant::now();
        let report = elements::load(&bytes, "bench-50mb.tle", LoadOptions::default());
        best = best.min(t0.elapsed().as_secs_f64());
        last = Some(report);
    }
    let report = last.unwrap_or_default();
    let mb = bytes.len() as f64 / 1e6;
    println!(
        "loader: {mb:.1} MB, {} sets, {} errors, {} diagnostics in {best:.3} s (best of 3) = {:.0} MB/s",
        report.sets.len(),
        report.errors().count(),
        report.diagnostics.len(),
        mb / best
    );
}
