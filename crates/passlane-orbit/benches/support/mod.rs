//! What every benchmark of the workspace measures besides wall time: the CPU
//! time and the peak memory of the process, read from `/proc` (Linux). On a
//! shared machine wall time says little; CPU seconds over all threads do.
//!
//! Included by path from each crate's benches (`#[path = ...] mod support;`).

#![allow(dead_code)]

/// CPU seconds (user + system, all threads) this process has used so far;
/// NaN where `/proc/self/stat` cannot be read.
pub fn cpu_seconds() -> f64 {
    std::fs::read_to_string("/proc/self/stat")
        .ok()
        .and_then(|s| {
            // Fields after the parenthesised command name; utime and stime
            // are fields 14 and 15, in clock ticks of 1/100 s.
            let rest = s.rsplit_once(')')?.1;
            let f: Vec<&str> = rest.split_whitespace().collect();
            let ticks = f.get(11)?.parse::<f64>().ok()? + f.get(12)?.parse::<f64>().ok()?;
            Some(ticks / 100.0)
        })
        .unwrap_or(f64::NAN)
}

/// Peak resident memory of this process so far, MB; NaN where unknown.
pub fn max_rss_mb() -> f64 {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines()
                .find(|l| l.starts_with("VmHWM:"))
                .and_then(|l| l.split_whitespace().nth(1))
                .and_then(|kb| kb.parse::<f64>().ok())
        })
        .map_or(f64::NAN, |kb| kb / 1024.0)
}

/// Resets this process's peak resident memory (VmHWM) to its resident memory
/// now and returns that, MB; `None` where the kernel does not allow it
/// (writing `5` to `/proc/self/clear_refs`). Measure a reader's peak from
/// here, after reading its input into memory, with nothing else built in
/// the process: memory freed by building an input stays resident and the
/// reader reuses it, which hides its own peak.
pub fn reset_peak_mb() -> Option<f64> {
    std::fs::write("/proc/self/clear_refs", "5").ok()?;
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let kb: f64 = status
        .lines()
        .find(|l| l.starts_with("VmRSS:"))?
        .split_whitespace()
        .nth(1)?
        .parse()
        .ok()?;
    Some(kb / 1024.0)
}
