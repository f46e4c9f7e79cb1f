//! Element loader speed and peak memory on 50 MB files of each format: TLE,
//! OMM KVN, OMM XML and OMM JSON, and the operator-ephemeris reader on OEM
//! KVN and XML (one segment of states 10 s apart), with bad records mixed in (the test
//! `tests/huge_input.rs` checks what loads; this measures how fast, and how
//! much memory a reader takes beside the input).
//!
//! Run: `cargo bench -p passlane-orbit --bench loader`. Each file repeats the
//! 1,000 records of `tests/fixtures/bench-1000.tle` (so most records are
//! duplicates that the loader reduces to the newest epoch, with a counted
//! warning each); every tenth record is bad (a broken checksum, or a
//! non-number in an OMM field) and, in the TLE file, a junk line comes every
//! ten records.
//!
//! Each format runs in a child process of its own (this same binary with
//! `PASSLANE_LOADER_BENCH_FORMAT` set), so its peak resident memory (VmHWM)
//! is its own: the parent builds the file and leaves it in a temporary
//! directory; the child reads it into one buffer, resets the kernel's peak
//! mark to the memory in use (`support::reset_peak_mb`), loads, and reports
//! how far the peak rose. That growth is compared with the size of the good
//! records in the file (target: under 2× plus a constant). Until the third
//! session's end the child built the file itself, and the memory freed by
//! building it (resident still, reused by the loader) hid part of the
//! loader's own peak.

#![allow(clippy::panic, clippy::unwrap_used, clippy::expect_used)]

#[path = "support/mod.rs"]
mod support;

use std::fmt::Write as _;
use std::path::PathBuf;
use std::time::Instant;

use passlane_orbit::{ElementSet, LoadOptions, elements};

const TARGET_BYTES: usize = 50 * 1024 * 1024;
const FORMATS: [&str; 6] = [
    "tle", "omm-kvn", "omm-xml", "omm-json", "oem-kvn", "oem-xml",
];
const CHILD_VAR: &str = "PASSLANE_LOADER_BENCH_FORMAT";

const INPUT_VAR: &str = "PASSLANE_LOADER_BENCH_INPUT";
const GOOD_VAR: &str = "PASSLANE_LOADER_BENCH_GOOD";

fn main() {
    if let (Ok(format), Ok(input), Ok(good)) = (
        std::env::var(CHILD_VAR),
        std::env::var(INPUT_VAR),
        std::env::var(GOOD_VAR),
    ) {
        let bytes = std::fs::read(&input).expect("the format's input");
        let (good_bytes, good) = good.split_once(',').expect("good bytes,count");
        let good = (good_bytes.parse().unwrap(), good.parse().unwrap());
        if format.starts_with("oem") {
            one_oem(&format, &bytes, good);
        } else {
            one(&format, &bytes, good);
        }
        return;
    }
    let exe = std::env::current_exe().expect("the bench's own path");
    for format in FORMATS {
        let (text, good_bytes, good) = if format.starts_with("oem") {
            oem_text(format == "oem-xml")
        } else {
            element_text(format)
        };
        let input = std::env::temp_dir().join(format!(
            "passlane-loader-bench-{}-{format}.txt",
            std::process::id()
        ));
        std::fs::write(&input, text).expect("write the format's input");
        let status = std::process::Command::new(&exe)
            .env(CHILD_VAR, format)
            .env(INPUT_VAR, &input)
            .env(GOOD_VAR, format!("{good_bytes},{good}"))
            .status()
            .expect("run the bench for one format");
        let _ = std::fs::remove_file(&input);
        assert!(status.success(), "{format}: {status}");
    }
}

/// The fixture's 1,000 records, as loaded element sets and as TLE text.
fn fixture() -> (Vec<ElementSet>, Vec<[String; 3]>) {
    let repo = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../..");
    let text = std::fs::read_to_string(repo.join("tests/fixtures/bench-1000.tle"))
        .unwrap_or_else(|e| panic!("bench-1000.tle: {e}"));
    let lines: Vec<&str> = text.lines().filter(|l| !l.starts_with('#')).collect();
    let tle: Vec<[String; 3]> = lines
        .chunks(3)
        .filter(|c| c.len() == 3)
        .map(|c| [c[0].to_string(), c[1].to_string(), c[2].to_string()])
        .collect();
    let sets =
        elements::load_records(text.as_bytes(), "bench-1000.tle", LoadOptions::default()).sets;
    assert_eq!(sets.len(), tle.len());
    (sets, tle)
}

/// `KEYWORD → value` pairs of one OMM; `bad` puts a non-number in ECCENTRICITY.
fn omm_pairs(s: &ElementSet, bad: bool) -> Vec<(&'static str, String)> {
    let epoch = s.epoch.to_iso_us();
    vec![
        ("OBJECT_NAME", s.name.clone()),
        ("CENTER_NAME", "EARTH".into()),
        ("REF_FRAME", "TEME".into()),
        ("TIME_SYSTEM", "UTC".into()),
        ("MEAN_ELEMENT_THEORY", "SGP4".into()),
        ("EPOCH", epoch.trim_end_matches('Z').to_string()),
        ("MEAN_MOTION", format!("{:.8}", s.mean_motion_rev_day)),
        (
            "ECCENTRICITY",
            if bad {
                "NaN".into()
            } else {
                format!("{:.7}", s.eccentricity)
            },
        ),
        ("INCLINATION", format!("{:.4}", s.inclination_deg)),
        ("RA_OF_ASC_NODE", format!("{:.4}", s.raan_deg)),
        ("ARG_OF_PERICENTER", format!("{:.4}", s.arg_perigee_deg)),
        ("MEAN_ANOMALY", format!("{:.4}", s.mean_anomaly_deg)),
        ("EPHEMERIS_TYPE", "0".into()),
        ("CLASSIFICATION_TYPE", "U".into()),
        ("NORAD_CAT_ID", s.catalog_number.to_string()),
        ("ELEMENT_SET_NO", s.element_set_number.to_string()),
        ("REV_AT_EPOCH", s.revolution_number.to_string()),
        ("BSTAR", format!("{:e}", s.bstar_per_earth_radii)),
        (
            "MEAN_MOTION_DOT",
            format!("{:.8}", s.mean_motion_dot_rev_day2),
        ),
        ("MEAN_MOTION_DDOT", "0".into()),
    ]
}

/// One record of `format` appended to `out`.
fn push_record(out: &mut String, format: &str, i: usize, sets: &[ElementSet], tle: &[[String; 3]]) {
    let k = i % sets.len();
    let bad = i % 10 == 3;
    match format {
        "tle" => {
            let r = &tle[k];
            if bad {
                // Line 2 with its checksum digit changed.
                let (body, sum) = r[2].split_at(r[2].len() - 1);
                let wrong = (sum.as_bytes()[0] - b'0' + 1) % 10;
                let _ = writeln!(out, "{}\n{}\n{body}{wrong}", r[0], r[1]);
            } else {
                let _ = writeln!(out, "{}\n{}\n{}", r[0], r[1], r[2]);
            }
        }
        "omm-kvn" => {
            out.push_str(
                "CCSDS_OMM_VERS = 2.0\nCREATION_DATE = 2026-12-01T00:00:00\nORIGINATOR = BENCH\n",
            );
            for (k, v) in omm_pairs(&sets[k], bad) {
                let _ = writeln!(out, "{k} = {v}");
            }
        }
        "omm-xml" => {
            out.push_str("<omm id=\"CCSDS_OMM_VERS\" version=\"2.0\"><header><CREATION_DATE>2026-12-01T00:00:00</CREATION_DATE><ORIGINATOR>BENCH</ORIGINATOR></header>\n<body><segment><metadata/><data>\n");
            for (k, v) in omm_pairs(&sets[k], bad) {
                let _ = writeln!(out, "<{k}>{v}</{k}>");
            }
            out.push_str("</data></segment></body></omm>\n");
        }
        "omm-json" => {
            if i > 0 {
                out.push_str(",\n");
            }
            let body: Vec<String> = omm_pairs(&sets[k], bad)
                .into_iter()
                .map(|(k, v)| format!("\"{k}\": \"{v}\""))
                .collect();
            let _ = write!(out, "{{{}}}", body.join(",\n"));
        }
        _ => panic!("unknown format {format}"),
    }
    if format == "tle" && i % 10 == 7 {
        out.push_str("this line is not part of any element set, on purpose\n");
    }
}

/// One OEM of `states` states 10 s apart from 2026-12-01 (a circular orbit
/// in TEME), every tenth state with a non-number; returns the text and the
/// bytes of its good state lines.
fn oem_text(xml: bool) -> (String, usize, usize) {
    let mut text = String::with_capacity(TARGET_BYTES + 64 * 1024);
    let per_state = if xml { 250 } else { 110 };
    let states = TARGET_BYTES / per_state;
    let start = passlane_orbit::UtcTime::parse_iso("2026-12-01T00:00:00Z").unwrap();
    let stop = start.add_s(10.0 * (states - 1) as f64);
    let iso = |t: passlane_orbit::UtcTime| t.to_iso_ms().trim_end_matches('Z').to_string();
    let meta = [
        ("OBJECT_NAME", "BENCH".to_string()),
        ("OBJECT_ID", "2026-901A".into()),
        ("CENTER_NAME", "EARTH".into()),
        ("REF_FRAME", "TEME".into()),
        ("TIME_SYSTEM", "UTC".into()),
        ("START_TIME", iso(start)),
        ("STOP_TIME", iso(stop)),
        ("INTERPOLATION", "LAGRANGE".into()),
        ("INTERPOLATION_DEGREE", "5".into()),
    ];
    if xml {
        text.push_str("<?xml version=\"1.0\"?>\n<oem id=\"CCSDS_OEM_VERS\" version=\"3.0\">\n<header><CREATION_DATE>2026-11-30T12:00:00</CREATION_DATE><ORIGINATOR>BENCH</ORIGINATOR></header>\n<body><segment><metadata>\n");
        for (k, v) in &meta {
            let _ = writeln!(text, "<{k}>{v}</{k}>");
        }
        text.push_str("</metadata><data>\n");
    } else {
        text.push_str("CCSDS_OEM_VERS = 3.0\nCREATION_DATE = 2026-11-30T12:00:00\nORIGINATOR = BENCH\nMETA_START\n");
        for (k, v) in &meta {
            let _ = writeln!(text, "{k} = {v}");
        }
        text.push_str("META_STOP\n");
    }
    let (r, w) = (7000.0f64, 7.546 / 7000.0);
    let mut good_bytes = 0;
    let mut good = 0;
    for i in 0..states {
        let t = 10.0 * i as f64;
        let (s, c) = (w * t).sin_cos();
        let v = [r * c, r * s, 0.0, -7.546 * s, 7.546 * c, 0.0];
        let x = if i % 10 == 3 {
            "NaN".to_string()
        } else {
            format!("{:.6}", v[0])
        };
        let before = text.len();
        if xml {
            let _ = writeln!(
                text,
                "<stateVector><EPOCH>{}</EPOCH><X>{x}</X><Y>{:.6}</Y><Z>{:.6}</Z><X_DOT>{:.9}</X_DOT><Y_DOT>{:.9}</Y_DOT><Z_DOT>{:.9}</Z_DOT></stateVector>",
                iso(start.add_s(t)),
                v[1],
                v[2],
                v[3],
                v[4],
                v[5]
            );
        } else {
            let _ = writeln!(
                text,
                "{} {x} {:.6} {:.6} {:.9} {:.9} {:.9}",
                iso(start.add_s(t)),
                v[1],
                v[2],
                v[3],
                v[4],
                v[5]
            );
        }
        if i % 10 != 3 {
            good_bytes += text.len() - before;
            good += 1;
        }
    }
    if xml {
        text.push_str("</data></segment></body></oem>\n");
    }
    (text, good_bytes, good)
}

/// The OEM cases: load time (best of 3) and memory beside the input.
fn one_oem(format: &str, bytes: &[u8], (good_bytes, good): (usize, usize)) {
    let eop = passlane_orbit::EarthOrientation::default();
    let peak_before_mb = support::reset_peak_mb().unwrap_or_else(support::max_rss_mb);
    let mut best = f64::INFINITY;
    let mut grown_mb = f64::NAN;
    let mut loaded = (0usize, 0usize);
    for run in 0..3 {
        let t0 = Instant::now();
        let (eph, diagnostics) = passlane_orbit::ephemeris::load_oem(bytes, "bench-50mb", &eop);
        best = best.min(t0.elapsed().as_secs_f64());
        if run == 0 {
            grown_mb = support::max_rss_mb() - peak_before_mb;
        }
        loaded = (
            eph.map(|e| e.segments.iter().map(|s| s.node_count()).sum())
                .unwrap_or(0),
            diagnostics.len(),
        );
    }
    let mb = bytes.len() as f64 / 1e6;
    let good_mb = good_bytes as f64 / 1e6;
    println!(
        "loader {format:>8}: {mb:.1} MB, {good} good states, {} loaded, {} diagnostics kept; {best:.3} s (best of 3) = {:.0} MB/s; peak memory +{grown_mb:.1} MB beside the input = {:.2}× the good records ({good_mb:.1} MB)",
        loaded.0,
        loaded.1,
        mb / best,
        grown_mb / good_mb,
    );
}

/// An element file of about 50 MB in `format`, with the size and count of
/// its good records.
fn element_text(format: &str) -> (String, usize, usize) {
    let (sets, tle) = fixture();
    let mut text = String::with_capacity(TARGET_BYTES + 64 * 1024);
    let (open, close) = match format {
        "omm-xml" => ("<?xml version=\"1.0\"?>\n<ndm>\n", "</ndm>\n"),
        "omm-json" => ("[\n", "\n]\n"),
        _ => ("", ""),
    };
    text.push_str(open);
    let (mut good_bytes, mut good) = (0usize, 0usize);
    let mut i = 0usize;
    while text.len() < TARGET_BYTES {
        let before = text.len();
        push_record(&mut text, format, i, &sets, &tle);
        if i % 10 != 3 {
            good_bytes += text.len() - before;
            good += 1;
        }
        i += 1;
    }
    text.push_str(close);
    (text, good_bytes, good)
}

fn one(format: &str, bytes: &[u8], (good_bytes, good): (usize, usize)) {
    // The first load measures memory (from the peak mark reset with the
    // input in memory); the best of three measures speed.
    let peak_before_mb = support::reset_peak_mb().unwrap_or_else(support::max_rss_mb);
    let mut best = f64::INFINITY;
    let mut grown_mb = f64::NAN;
    let mut last = None;
    for run in 0..3 {
        let t0 = Instant::now();
        let report = elements::load(bytes, "bench-50mb", LoadOptions::default());
        best = best.min(t0.elapsed().as_secs_f64());
        if run == 0 {
            grown_mb = support::max_rss_mb() - peak_before_mb;
        }
        last = Some(report);
    }
    let report = last.unwrap_or_default();
    let mb = bytes.len() as f64 / 1e6;
    let good_mb = good_bytes as f64 / 1e6;
    println!(
        "loader {format:>8}: {mb:.1} MB, {} good records ({} distinct kept), {} rejected, {} errors, {} warnings; {best:.3} s (best of 3) = {:.0} MB/s; peak memory +{grown_mb:.1} MB beside the input = {:.2}× the good records ({good_mb:.1} MB)",
        good,
        report.sets.len(),
        report.rejected_records,
        report.error_count(),
        report.warning_count(),
        mb / best,
        grown_mb / good_mb,
    );
}
