//! Speed and peak memory of the plan crate's readers of untrusted text, on
//! inputs near their size caps: the CDM reader (KVN and XML, a message padded
//! with 15 MB of COMMENT lines, which the standard allows and the reader
//! keeps) and the scenario reader (as many minimal stations in compact JSON
//! as a scenario may hold, the same as the program writes them: pretty,
//! every field; and 30 MB of compact stations, refused for their number).
//!
//! Run: `cargo bench -p passlane-plan --bench readers`. As in the element
//! loader bench (`passlane-orbit`'s `loader`), each case runs in a child
//! process of its own (`PASSLANE_READERS_BENCH_CASE`): the parent builds the
//! input and leaves it in a temporary file, the child reads the file into
//! one string, resets the kernel's peak-memory mark to the memory in use now
//! (writing `5` to `/proc/self/clear_refs`), reads, and reports how far the
//! peak rose above that, compared with the input's size (every record here
//! is good; target: under 2× plus a constant). Building the input in the
//! measured process left its scratch memory behind (freed, still resident,
//! reused by the reader) and in the peak mark, which hid up to twice the
//! input of the reader's own peak.

#![allow(clippy::panic, clippy::unwrap_used, clippy::expect_used)]

#[path = "../../passlane-orbit/benches/support/mod.rs"]
mod support;

use std::time::Instant;

use passlane_plan::cdm::Cdm;
use passlane_plan::scenario::Scenario;

const CASES: [&str; 5] = [
    "cdm-kvn",
    "cdm-xml",
    "scenario-compact",
    "scenario",
    "scenario-over-cap",
];
const CHILD_VAR: &str = "PASSLANE_READERS_BENCH_CASE";
const INPUT_VAR: &str = "PASSLANE_READERS_BENCH_INPUT";
const GOOD_CDM: &str = include_str!("../tests/fixtures/cdm/ormivel_vs_debris_99871.kvn");

fn main() {
    if let (Ok(case), Ok(input)) = (std::env::var(CHILD_VAR), std::env::var(INPUT_VAR)) {
        let text = std::fs::read_to_string(&input).expect("the case's input");
        one(&case, &text);
        return;
    }
    let exe = std::env::current_exe().expect("the bench's own path");
    for case in CASES {
        let input = std::env::temp_dir().join(format!(
            "passlane-readers-bench-{}-{case}.txt",
            std::process::id()
        ));
        std::fs::write(&input, input_of(case)).expect("write the case's input");
        let status = std::process::Command::new(&exe)
            .env(CHILD_VAR, case)
            .env(INPUT_VAR, &input)
            .status()
            .expect("run the bench for one case");
        let _ = std::fs::remove_file(&input);
        assert!(status.success(), "{case}: {status}");
    }
}

fn input_of(case: &str) -> String {
    match case {
        "cdm-kvn" => padded_cdm(false, 240_000),
        "cdm-xml" => padded_cdm(true, 220_000),
        // As many minimal stations as a scenario may hold (the cap of
        // `scenario::MAX_ENTRIES`): the largest station list accepted.
        "scenario-compact" => scenario_text(10_000),
        // 30 MB of them: refused for their number before any is built.
        "scenario-over-cap" => scenario_text(370_000),
        // As the program writes it (pretty, every field): the compact one read
        // and written back.
        _ => Scenario::from_json(&scenario_text(10_000), "compact.json")
            .unwrap()
            .to_json(),
    }
}

/// The fixture CDM with `n` comment lines after its header's first line.
fn padded_cdm(xml: bool, n: usize) -> String {
    if xml {
        let mut bytes = Vec::new();
        Cdm::parse(GOOD_CDM, "good.kvn")
            .unwrap()
            .write_xml(&mut bytes)
            .unwrap();
        let text = String::from_utf8(bytes).unwrap();
        let at = text.find("<header>").unwrap() + "<header>".len();
        let pad = "<COMMENT>padding of the benchmark, sixty-odd bytes of text</COMMENT>\n";
        format!("{}\n{}{}", &text[..at], pad.repeat(n), &text[at..])
    } else {
        let at = GOOD_CDM.find('\n').unwrap() + 1;
        let pad = "COMMENT padding of the benchmark, sixty-odd bytes of text here\n";
        format!("{}{}{}", &GOOD_CDM[..at], pad.repeat(n), &GOOD_CDM[at..])
    }
}

fn scenario_text(n: usize) -> String {
    let stations: Vec<String> = (0..n)
        .map(|k| {
            format!(
                "{{\"name\": \"Station {k:07}\", \"latitude_deg\": {:.4}, \"longitude_deg\": {:.4}}}",
                -60.0 + (k % 1200) as f64 * 0.1,
                -170.0 + (k % 3400) as f64 * 0.1
            )
        })
        .collect();
    format!(
        "{{\"format_version\": 1, \"name\": \"bench\", \"stations\": [\n{}\n]}}\n",
        stations.join(",\n")
    )
}

fn one(case: &str, text: &str) {
    let peak_before_mb = support::reset_peak_mb().unwrap_or_else(support::max_rss_mb);
    let mut best = f64::INFINITY;
    let mut grown_mb = f64::NAN;
    let mut what = String::new();
    for run in 0..3 {
        let t0 = Instant::now();
        what = if case.starts_with("scenario") {
            match Scenario::from_json_with_warnings(text, "bench.json") {
                Ok((s, w)) => format!(
                    "{} stations ({} B of text, {} B of struct each), {} warnings",
                    s.stations.len(),
                    text.len() / s.stations.len().max(1),
                    std::mem::size_of::<passlane_plan::Station>(),
                    w.len()
                ),
                Err(e) => format!("refused: {e}"),
            }
        } else {
            match Cdm::parse(text, "bench") {
                Ok(c) => format!("read, miss {} m", c.relative.miss_distance_m),
                Err(e) => format!("refused: {e}"),
            }
        };
        best = best.min(t0.elapsed().as_secs_f64());
        if run == 0 {
            grown_mb = support::max_rss_mb() - peak_before_mb;
        }
    }
    let mb = text.len() as f64 / 1e6;
    println!(
        "reader {case:>8}: {mb:.1} MB, {what}; {best:.3} s (best of 3) = {:.0} MB/s; peak memory +{grown_mb:.1} MB beside the input = {:.2}× the input",
        mb / best,
        grown_mb / mb,
    );
}
