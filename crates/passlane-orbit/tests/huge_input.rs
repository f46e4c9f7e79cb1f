//! A 50 MB element file with good and bad records mixed: everything good
//! loads, every bad record is reported, and memory stays in proportion.
//!
//! Alone in its test binary so that the process's peak resident memory
//! (`VmHWM` in /proc/self/status, Linux) belongs to this test only. Its speed
//! is measured in `benches/propagation.rs`-style benches, not asserted here.

#![allow(clippy::unwrap_used, clippy::panic)]

use passlane_orbit::elements::{LoadOptions, load};

const LINE1: &str = "1 90001U 26901A   26335.21354167  .00000876  00000-0  21000-3 0  999";
const LINE2: &str = "2 90001  97.4021  45.1200 0010170  88.1000 272.0000 15.20279803 1234";

fn checksum(line: &str) -> char {
    let sum: u32 = line
        .bytes()
        .map(|b| match b {
            b'0'..=b'9' => u32::from(b - b'0'),
            b'-' => 1,
            _ => 0,
        })
        .sum();
    char::from(b'0' + (sum % 10) as u8)
}

/// A record for catalog number `n` (five digits); line 2's checksum digit is
/// wrong when `broken` is set.
fn record(out: &mut String, n: u32, broken: bool) {
    let cat = alpha5(n);
    let l1 = LINE1.replacen("90001", &cat, 1);
    let l2 = LINE2.replacen("90001", &cat, 1);
    let mut c2 = checksum(&l2);
    if broken {
        c2 = char::from(b'0' + (c2 as u8 - b'0' + 1) % 10);
    }
    out.push_str(&format!(
        "INVENTED SATELLITE NUMBER {n:06}\n{l1}{}\n{l2}{c2}\n",
        checksum(&l1)
    ));
}

/// Catalog number in the five-character form: digits up to 99,999, then a
/// letter (A-Z without I and O, standing for 10-33) and four digits.
fn alpha5(n: u32) -> String {
    if n < 100_000 {
        return format!("{n:05}");
    }
    let letters = b"ABCDEFGHJKLMNPQRSTUVWXYZ";
    let letter = char::from(letters[(n / 10_000 - 10) as usize]);
    format!("{letter}{:04}", n % 10_000)
}

fn peak_resident_kib() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

#[test]
fn fifty_megabytes_of_mixed_records() {
    const TARGET_BYTES: usize = 50 * 1024 * 1024;
    let mut text = String::with_capacity(TARGET_BYTES + 1024);
    let (mut good, mut bad) = (0usize, 0usize);
    let mut n = 0u32;
    while text.len() < TARGET_BYTES {
        n += 1;
        // Distinct catalog numbers (about 300,000 records fit in 50 MB; the
        // five-character form reaches 339,999).
        let cat = n;
        assert!(cat < 340_000);
        match n % 10 {
            // A record with a broken checksum.
            3 => {
                record(&mut text, cat, true);
                bad += 1;
            }
            // A line of junk.
            7 => {
                text.push_str(
                    "this is not an element set, and it is rather long, on purpose ......\n",
                );
                bad += 1;
            }
            _ => {
                record(&mut text, cat, false);
                good += 1;
            }
        }
    }
    let bytes = text.into_bytes();
    let before_kib = peak_resident_kib();
    let started = std::time::Instant::now();
    let r = load(&bytes, "huge.tle", LoadOptions::default());
    eprintln!("loaded {} MB in {:?}", bytes.len() >> 20, started.elapsed());
    let after_kib = peak_resident_kib();

    assert_eq!(r.sets.len(), good, "every good record loads");
    // Every bad record is reported (junk lines next to each other are
    // reported once, as a run; here each stands alone between records).
    // The first findings are kept in full, the rest counted.
    assert_eq!(r.error_count(), bad, "one error per bad record");
    assert_eq!(
        r.diagnostics.len(),
        passlane_orbit::elements::MAX_DIAGNOSTICS_KEPT
    );
    assert!(r.errors().all(|d| d.line > 0 && d.file == "huge.tle"));

    // Peak memory: the input (50 MB, already counted in `before`) plus the
    // records and diagnostics. Each record and diagnostic is a few hundred
    // bytes; the bound allows 1 KiB per input line and fails on anything
    // like a copy per line or a quadratic buffer.
    if let (Some(before), Some(after)) = (before_kib, after_kib) {
        let lines = bytes.iter().filter(|&&b| b == b'\n').count() as u64;
        let grown_kib = after.saturating_sub(before);
        eprintln!("peak resident memory grew by {grown_kib} KiB while loading {lines} lines");
        assert!(
            grown_kib < lines,
            "memory grew by {grown_kib} KiB for {lines} lines"
        );
    }
}
