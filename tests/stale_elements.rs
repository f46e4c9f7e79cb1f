//! Issue 12, item 14: element sets far from the window give a warning, and
//! beyond a hard limit a refusal unless `--allow-stale`; JSON rows that rest
//! on one set carry `element_age_days`. The demo fleet's epochs are near
//! 2026-12-01 (invented demo data).

#![allow(clippy::unwrap_used, clippy::panic)]

mod support;

use support::{demo, passlane};

fn passes(start: &str, end: &str, extra: &[&str]) -> std::process::Output {
    let scenario = demo("demo.json");
    let mut args = vec![
        "passes",
        "--scenario",
        &scenario,
        "--start",
        start,
        "--end",
        end,
        "--format",
        "json",
    ];
    args.extend_from_slice(extra);
    passlane(&args)
}

#[test]
fn old_element_sets_warn_and_beyond_thirty_days_are_refused_unless_allowed() {
    // Inside the demo window: no warning, every row carries its age.
    let out = passes("2026-12-01T00:00:00Z", "2026-12-02T00:00:00Z", &[]);
    assert!(out.status.success());
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(!stderr.contains("warning"), "{stderr}");
    let rows: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let rows = rows.as_array().unwrap();
    assert!(!rows.is_empty());
    for r in rows {
        let age = r["element_age_days"].as_f64().unwrap();
        assert!(age.abs() < 3.0, "{r}");
    }
    // Ten days on: computed, with a warning that names the common practice.
    let out = passes("2026-12-11T00:00:00Z", "2026-12-12T00:00:00Z", &[]);
    assert!(out.status.success());
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        stderr.contains("warning: 6 element set(s) are more than 3 days"),
        "{stderr}"
    );
    assert!(stderr.contains("common practice") || stderr.contains("Common practice"));
    let rows: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    for r in rows.as_array().unwrap() {
        let age = r["element_age_days"].as_f64().unwrap();
        assert!((9.0..12.0).contains(&age), "{r}");
    }
    // Ninety days on: refused, naming the way out; computed with --allow-stale.
    let out = passes("2027-03-01T00:00:00Z", "2027-03-02T00:00:00Z", &[]);
    assert!(!out.status.success());
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(stderr.contains("more than 30 days"), "{stderr}");
    assert!(stderr.contains("--allow-stale"), "{stderr}");
    assert!(out.stdout.is_empty());
    let out = passes(
        "2027-03-01T00:00:00Z",
        "2027-03-02T00:00:00Z",
        &["--allow-stale"],
    );
    assert!(out.status.success());
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(stderr.contains("computed anyway"), "{stderr}");
}

#[test]
fn screening_and_tracking_with_very_old_elements_are_refused_too() {
    let scenario = demo("demo.json");
    let out = passlane(&[
        "screen",
        "--scenario",
        &scenario,
        "--start",
        "2028-01-01T00:00:00Z",
        "--end",
        "2028-01-02T00:00:00Z",
    ]);
    assert!(!out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("--allow-stale"));
    let out = passlane(&[
        "track",
        "--scenario",
        &scenario,
        "--station",
        "Bramble Hill",
        "--satellite",
        "90004",
        "--pass-start",
        "2028-01-01T00:00:00Z",
    ]);
    assert!(!out.status.success());
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(stderr.contains("from --pass-start"), "{stderr}");
}
