//! Issue 12, item 15: details that misled the user — unknown scenario keys
//! ignored in silence, a byte-order mark refused as "expected value", a
//! perigee inside the Earth loaded silently, a `--cdm-dir` failure that hid
//! the results table.

#![allow(clippy::unwrap_used, clippy::panic)]

mod support;

use support::{demo_scenario_in, passlane, scratch};

/// The demo with a one-hour window (enough for a quick command).
fn short_demo(dir: &std::path::Path, edit: impl FnOnce(&mut serde_json::Value)) -> String {
    demo_scenario_in(dir, |v| {
        v["window"]["end"] = "2026-12-01T01:00:00Z".into();
        edit(v)
    })
}

#[test]
fn unknown_scenario_keys_are_named_with_a_suggestion() {
    let dir = scratch("unknown-keys");
    let scenario = short_demo(&dir, |v| {
        v["stations"][0]["min_elevaton_deg"] = 12.0.into();
        v["screening"]["treshold_km"] = 2.0.into();
        v["favourite_colour"] = "teal".into();
    });
    let out = passlane(&["passes", "--scenario", &scenario, "--format", "json"]);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(out.status.success(), "{stderr}");
    assert!(
        stderr.contains(
            "stations[0].min_elevaton_deg: unknown key, ignored (did you mean \"min_elevation_deg\"?)"
        ),
        "{stderr}"
    );
    assert!(
        stderr.contains(
            "screening.treshold_km: unknown key, ignored (did you mean \"threshold_km\"?)"
        ),
        "{stderr}"
    );
    assert!(
        stderr.contains("favourite_colour: unknown key, ignored"),
        "{stderr}"
    );
    // The demo as shipped has no unknown key.
    let clean = short_demo(&dir, |_| {});
    let out = passlane(&["passes", "--scenario", &clean, "--format", "json"]);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(!stderr.contains("unknown key"), "{stderr}");
}

#[test]
fn a_scenario_with_a_byte_order_mark_reads_as_without() {
    let dir = scratch("bom");
    let scenario = short_demo(&dir, |_| {});
    let plain = passlane(&["passes", "--scenario", &scenario, "--format", "json"]);
    assert!(plain.status.success());
    let text = std::fs::read_to_string(&scenario).unwrap();
    std::fs::write(&scenario, format!("\u{feff}{text}")).unwrap();
    let bom = passlane(&["passes", "--scenario", &scenario, "--format", "json"]);
    assert!(
        bom.status.success(),
        "{}",
        String::from_utf8_lossy(&bom.stderr)
    );
    assert_eq!(bom.stdout, plain.stdout);
}

#[test]
fn a_perigee_inside_the_earth_is_named_when_loading() {
    let dir = scratch("perigee");
    // The demo's first spacecraft with eccentricity 0.2 (columns 27-33 of
    // line 2, checksum redone): perigee radius ≈ 5,500 km.
    let line1 = "1 90001U 26901A   26335.21354167  .00000876  00000-0  21000-3 0  9993";
    let body = "2 90001  97.4021  45.1200 2000000  88.1000 272.0000 15.20279803 1234";
    let sum: u32 = body
        .chars()
        .map(|c| match c {
            '-' => 1,
            d => d.to_digit(10).unwrap_or(0),
        })
        .sum();
    let file = dir.join("low.tle");
    std::fs::write(&file, format!("LOW ONE\n{line1}\n{body}{}\n", sum % 10)).unwrap();
    let out = passlane(&["elements", file.to_str().unwrap()]);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(out.status.success(), "{stderr}");
    assert!(stderr.contains("low.tle:1"), "{stderr}");
    assert!(stderr.contains("perigee"), "{stderr}");
    assert!(stderr.contains("below the Earth's surface"), "{stderr}");
}

#[test]
fn a_cdm_folder_that_cannot_be_made_leaves_the_results_table() {
    let dir = scratch("cdm-dir-fails");
    let scenario = demo_scenario_in(&dir, |_| {});
    // A regular file where the folder's parent should be.
    let blocker = dir.join("not-a-folder");
    std::fs::write(&blocker, "x").unwrap();
    let cdm_dir = blocker.join("cdms");
    let out = passlane(&[
        "screen",
        "--scenario",
        &scenario,
        "--quiet",
        "--cdm-dir",
        cdm_dir.to_str().unwrap(),
    ]);
    let stdout = String::from_utf8_lossy(&out.stdout);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(!out.status.success(), "the failure is reported: {stderr}");
    assert!(stdout.contains("event(s)."), "results printed: {stdout}");
    assert!(stdout.contains("TCA (UTC)"), "{stdout}");
    assert!(stderr.contains("not-a-folder"), "{stderr}");
    assert!(stderr.contains("results above are complete"), "{stderr}");
}
