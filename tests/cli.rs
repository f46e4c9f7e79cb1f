//! The command line as scripts use it: field names of the JSON outputs are a
//! contract, errors name the file, line and field, and bad records never
//! spoil the good ones.

#![allow(clippy::unwrap_used, clippy::expect_used)]

use std::io::BufRead;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

use serde_json::Value;

fn repo() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn passlane(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_passlane"))
        .args(args)
        .current_dir(repo())
        .output()
        .expect("run passlane")
}

fn ok_json(args: &[&str]) -> Value {
    let out = passlane(args);
    assert!(
        out.status.success(),
        "passlane {args:?} failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).expect("JSON on stdout")
}

fn tmp(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("passlane-cli-{}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d.join(name)
}

fn has_fields(v: &Value, fields: &[&str]) {
    for f in fields {
        assert!(v.get(*f).is_some(), "missing field {f} in {v}");
    }
}

/// Instants a root finder produced (AOS, LOS, maximum, TCA, volume entry
/// and exit) carry microseconds, so that re-evaluating at the printed time
/// gives the printed figures: 2026-12-01T12:00:00.000000Z.
fn is_iso_us(s: &str) -> bool {
    s.len() == 27 && s.ends_with('Z') && &s[10..11] == "T" && &s[19..20] == "."
}

fn is_iso_ms(s: &str) -> bool {
    // 2026-12-01T12:00:00.000Z
    s.len() == 24 && s.ends_with('Z') && &s[10..11] == "T" && &s[19..20] == "."
}

#[test]
fn elements_json_contract() {
    let v = ok_json(&[
        "elements",
        "scenarios/demo-fleet.tle",
        "--format",
        "json",
        "--at",
        "2026-12-02T00:00:00Z",
    ]);
    let rows = v.as_array().unwrap();
    assert_eq!(rows.len(), 6);
    for r in rows {
        has_fields(
            r,
            &[
                "name",
                "catalog_number",
                "epoch",
                "period_min",
                "semi_major_axis_km",
                "perigee_altitude_km",
                "apogee_altitude_km",
                "inclination_deg",
                "eccentricity",
            ],
        );
        assert!(is_iso_ms(r["epoch"].as_str().unwrap()));
    }
}

#[test]
fn elements_reports_bad_records_with_file_and_line_and_keeps_good_ones() {
    let good = std::fs::read_to_string(repo().join("scenarios/demo-fleet.tle")).unwrap();
    let mut lines: Vec<String> = good.lines().map(String::from).collect();
    // Break the checksum of the second satellite's line 2 (file line 6).
    let l = &mut lines[5];
    let last = l.pop().unwrap();
    l.push(if last == '0' { '1' } else { '0' });
    let path = tmp("broken.tle");
    std::fs::write(&path, lines.join("\n")).unwrap();
    let out = passlane(&["elements", path.to_str().unwrap(), "--format", "json"]);
    assert!(out.status.success());
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(
        v.as_array().unwrap().len(),
        5,
        "the five good records still load"
    );
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("broken.tle:6:"),
        "diagnostic names file and line: {err}"
    );
    assert!(err.contains("checksum"), "{err}");
}

#[test]
fn ephemeris_json_contract_in_every_frame() {
    for frame in ["teme", "earth-fixed"] {
        let v = ok_json(&[
            "ephemeris",
            "--elements",
            "scenarios/demo-fleet.tle",
            "--start",
            "2026-12-01T00:00:00Z",
            "--end",
            "2026-12-01T00:10:00Z",
            "--step-s",
            "300",
            "--frame",
            frame,
            "--format",
            "json",
        ]);
        let rows = v.as_array().unwrap();
        assert_eq!(rows.len(), 6 * 3);
        for r in rows {
            has_fields(
                r,
                &["catalog_number", "time", "position_km", "velocity_km_s"],
            );
            assert!(is_iso_ms(r["time"].as_str().unwrap()));
            assert_eq!(r["position_km"].as_array().unwrap().len(), 3);
        }
    }
    let v = ok_json(&[
        "ephemeris",
        "--elements",
        "scenarios/demo-fleet.tle",
        "--start",
        "2026-12-01T00:00:00Z",
        "--end",
        "2026-12-01T00:10:00Z",
        "--step-s",
        "600",
        "--frame",
        "geodetic",
        "--format",
        "json",
    ]);
    for r in v.as_array().unwrap() {
        has_fields(
            r,
            &[
                "catalog_number",
                "time",
                "latitude_deg",
                "longitude_deg",
                "altitude_km",
            ],
        );
    }
}

#[test]
fn passes_json_contract_sorted_by_aos() {
    let v = ok_json(&[
        "passes",
        "--elements",
        "scenarios/demo-fleet.tle",
        "--station",
        "Bramble Hill,51.42,-126.45,1580",
        "--station",
        "Coral Shoal,-5.64,-155.9,6",
        "--start",
        "2026-12-01T00:00:00Z",
        "--end",
        "2026-12-02T00:00:00Z",
        "--min-elevation",
        "10",
        "--format",
        "json",
        "--ut1-utc-s",
        "0.08",
    ]);
    let rows = v.as_array().unwrap();
    assert!(rows.len() > 10);
    let mut prev = String::new();
    for r in rows {
        has_fields(
            r,
            &[
                "satellite",
                "catalog_number",
                "station",
                "aos",
                "max_elevation_time",
                "los",
                "max_elevation_deg",
                "aos_azimuth_deg",
                "los_azimuth_deg",
                "duration_s",
                "aos_clipped",
                "los_clipped",
            ],
        );
        let aos = r["aos"].as_str().unwrap().to_string();
        assert!(is_iso_us(&aos));
        assert!(aos >= prev, "sorted by AOS");
        prev = aos;
    }
}

#[test]
fn passes_from_the_demo_scenario_alone() {
    let out = passlane(&["passes", "--scenario", "scenarios/demo.json"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("Northfell") && text.contains("KRSL-5 FIRTHEN"));
    assert!(text.contains("pass(es)"));
}

#[test]
fn track_gives_a_pointing_table_from_aos_to_los() {
    let passes = ok_json(&[
        "passes",
        "--elements",
        "scenarios/demo-fleet.tle",
        "--station",
        "Coral Shoal,-5.64,-155.9,6",
        "--start",
        "2026-12-01T00:00:00Z",
        "--end",
        "2026-12-02T00:00:00Z",
        "--format",
        "json",
    ]);
    let p = &passes.as_array().unwrap()[0];
    let inside = p["max_elevation_time"].as_str().unwrap();
    let rows = ok_json(&[
        "track",
        "--elements",
        "scenarios/demo-fleet.tle",
        "--station",
        "Coral Shoal,-5.64,-155.9,6",
        "--satellite",
        &p["catalog_number"].to_string(),
        "--pass-start",
        inside,
        "--step-s",
        "1",
        "--format",
        "json",
    ]);
    let rows = rows.as_array().unwrap();
    assert_eq!(rows[0]["time"], p["aos"]);
    assert_eq!(rows[rows.len() - 1]["time"], p["los"]);
    let expected = p["duration_s"].as_f64().unwrap().ceil() as usize + 1;
    assert!(
        rows.len().abs_diff(expected) <= 1,
        "{} rows for {} s",
        rows.len(),
        expected
    );
    for r in rows {
        has_fields(
            r,
            &[
                "time",
                "azimuth_deg",
                "elevation_deg",
                "range_km",
                "range_rate_km_s",
            ],
        );
    }
}

#[test]
fn screen_json_contract_and_cdm_round_trip() {
    let dir = tmp("cdms");
    let v = ok_json(&[
        "screen",
        "--elements",
        "scenarios/demo-fleet.tle",
        "--catalog",
        "scenarios/demo-debris.tle",
        "--start",
        "2026-12-01T00:00:00Z",
        "--end",
        "2026-12-08T00:00:00Z",
        "--threshold-km",
        "5",
        "--format",
        "json",
        "--cdm-dir",
        dir.to_str().unwrap(),
    ]);
    let events = v.as_array().unwrap();
    assert!(
        !events.is_empty(),
        "the demo debris passes close to the fleet"
    );
    let mut prev = String::new();
    for e in events {
        has_fields(
            e,
            &[
                "primary",
                "secondary",
                "primary_catalog_number",
                "secondary_catalog_number",
                "tca",
                "miss_distance_km",
                "radial_km",
                "in_track_km",
                "cross_track_km",
                "relative_speed_km_s",
                "clipped",
                "tca_inside_volume",
                "volume_entry_clipped",
                "volume_exit_clipped",
                "interval_minima",
                "interval_min_miss_km",
            ],
        );
        // A sphere: the TCA is inside; these designed approaches are brief.
        assert_eq!(e["tca_inside_volume"], true);
        assert_eq!(e["interval_minima"], 1);
        let tca = e["tca"].as_str().unwrap().to_string();
        assert!(is_iso_us(&tca));
        assert!(tca >= prev);
        prev = tca;
        assert!(e["miss_distance_km"].as_f64().unwrap() <= 5.0);
    }
    let files: Vec<_> = std::fs::read_dir(&dir).unwrap().flatten().collect();
    assert_eq!(files.len(), events.len(), "one CDM per event");
    // Reading a written CDM back gives the event's figures.
    let first = &events[0];
    let cdm_file = files
        .iter()
        .map(|f| f.path())
        .find(|p| {
            let name = p.file_name().unwrap().to_string_lossy().to_string();
            name.starts_with(&format!(
                "{}_{}_",
                first["primary_catalog_number"], first["secondary_catalog_number"]
            ))
        })
        .unwrap();
    let a = ok_json(&[
        "cdm",
        cdm_file.to_str().unwrap(),
        "--format",
        "json",
        "--hard-body-radius-m",
        "3",
    ]);
    for f in [
        "tca",
        "miss_distance_m",
        "relative_speed_m_s",
        "pc",
        "pc_alfano",
        "pc_chan",
        "pc_max",
    ] {
        assert!(a.get(f).is_some(), "cdm json lacks {f}");
    }
    let miss_m = first["miss_distance_km"].as_f64().unwrap() * 1000.0;
    assert!((a["miss_distance_m"].as_f64().unwrap() - miss_m).abs() < 1e-3);
    let speed = first["relative_speed_km_s"].as_f64().unwrap() * 1000.0;
    assert!((a["relative_speed_m_s"].as_f64().unwrap() - speed).abs() < 1e-3);
}

#[test]
fn errors_are_clear_and_exit_nonzero() {
    let out = passlane(&[
        "passes",
        "--elements",
        "scenarios/demo-fleet.tle",
        "--start",
        "yesterday",
        "--end",
        "now",
        "--station",
        "X,1,2,3",
    ]);
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("--start") && err.contains("ISO 8601"), "{err}");

    let out = passlane(&[
        "passes",
        "--elements",
        "scenarios/demo-fleet.tle",
        "--station",
        "X,95,2,3",
        "--start",
        "2026-12-01T00:00:00Z",
        "--end",
        "2026-12-02T00:00:00Z",
    ]);
    assert!(!out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("latitude_deg"));

    let out = passlane(&[
        "passes",
        "--elements",
        "no/such/file.tle",
        "--station",
        "X,1,2,3",
    ]);
    assert!(!out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("no/such/file.tle"));

    // An unknown option is a usage error (clap's wording, exit code 2).
    let out = passlane(&["passes", "--bogus"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("unexpected argument '--bogus'"));
}

#[test]
fn plan_writes_every_hand_off_file() {
    let dir = tmp("plan-out");
    let dir_s = dir.to_str().unwrap();
    let v = ok_json(&[
        "plan",
        "--scenario",
        "scenarios/demo.json",
        "--end",
        "2026-12-02T00:00:00Z",
        "--out",
        dir_s,
        "--format",
        "json",
    ]);
    has_fields(
        &v,
        &[
            "contacts",
            "demand",
            "conflicts",
            "score",
            "max_score",
            "upper_bound",
            "method",
        ],
    );
    let contacts = v["contacts"].as_array().unwrap();
    assert!(!contacts.is_empty());
    for c in contacts {
        has_fields(
            c,
            &[
                "spacecraft",
                "catalog_number",
                "station",
                "antenna",
                "aos",
                "los",
                "max_elevation_deg",
                "channels",
                "volume_mb",
            ],
        );
        assert!(is_iso_us(c["aos"].as_str().unwrap()));
    }
    let csv = std::fs::read_to_string(dir.join("plan.csv")).unwrap();
    assert_eq!(csv.lines().count(), contacts.len() + 1);
    let ics = std::fs::read_to_string(dir.join("plan.ics")).unwrap();
    assert_eq!(ics.matches("BEGIN:VEVENT\r\n").count(), contacts.len());
    assert_eq!(
        std::fs::read_dir(dir.join("pointing")).unwrap().count(),
        contacts.len()
    );
    assert_eq!(std::fs::read_dir(dir.join("oem")).unwrap().count(), 6);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn window_without_a_display_fails_cleanly_and_help_still_prints() {
    for args in [
        &[][..],
        &["open", "scenarios/demo.json"][..],
        &["--scenario", "scenarios/demo.json", "--frame-stats"][..],
    ] {
        let out = Command::new(env!("CARGO_BIN_EXE_passlane"))
            .args(args)
            .current_dir(repo())
            .env_remove("DISPLAY")
            .env_remove("WAYLAND_DISPLAY")
            .output()
            .expect("run passlane");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(
            !out.status.success(),
            "{args:?}: should fail without a display"
        );
        assert!(
            err.contains("no display") && err.contains("command-line mode"),
            "{args:?}: {err}"
        );
        assert!(!err.contains("panicked"), "{args:?}: {err}");
    }
    let out = passlane(&["--help"]);
    assert!(out.status.success());
    assert!(String::from_utf8_lossy(&out.stdout).contains("passlane open FILE"));
    let out = passlane(&["--frames-stats"]);
    assert_eq!(
        out.status.code(),
        Some(2),
        "a misspelt window option is a usage error"
    );
}

#[test]
fn a_bare_station_name_picks_the_scenario_station_with_its_channels() {
    let rows = ok_json(&[
        "track",
        "--scenario",
        "scenarios/demo.json",
        "--station",
        "coral shoal",
        "--satellite",
        "KRSL-5 FIRTHEN",
        "--pass-start",
        "2026-12-01T07:55:00Z",
        "--step-s",
        "10",
        "--format",
        "json",
    ]);
    let rows = rows.as_array().unwrap();
    assert!(rows.len() > 10);
    // The demo's Coral Shoal has two channels: one Doppler-corrected frequency each.
    assert_eq!(rows[0]["frequencies_hz"].as_array().unwrap().len(), 2);
    let out = passlane(&[
        "track",
        "--scenario",
        "scenarios/demo.json",
        "--station",
        "Nowhere",
        "--satellite",
        "90005",
        "--pass-start",
        "2026-12-01T07:55:00Z",
    ]);
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("Nowhere") && err.contains("Coral Shoal"),
        "{err}"
    );
}

/// `(long option, description)` for every option line of a command's help,
/// in either of clap's layouts (description on the same line, or on the
/// lines below it).
fn options_in_help(help: &str) -> Vec<(String, String)> {
    let lines: Vec<&str> = help.lines().collect();
    let mut out = Vec::new();
    for (i, line) in lines.iter().enumerate() {
        let spec = line.trim_start();
        if !line.starts_with(' ') || !spec.starts_with('-') {
            continue;
        }
        let Some(at) = spec.find("--") else {
            continue;
        };
        let name: String = spec[at + 2..]
            .chars()
            .take_while(|c| c.is_ascii_alphanumeric() || *c == '-')
            .collect();
        // The description starts after the first run of two blanks.
        let same_line = spec
            .split_once("  ")
            .map(|(_, d)| d.trim().to_string())
            .unwrap_or_default();
        let description = if same_line.is_empty() {
            lines[i + 1..]
                .iter()
                .take_while(|l| !l.trim().is_empty())
                .map(|l| l.trim())
                .collect::<Vec<_>>()
                .join(" ")
        } else {
            same_line
        };
        out.push((name, description));
    }
    out
}

#[test]
fn passes_help_lists_every_option_with_a_description_unit_and_default() {
    let out = passlane(&["passes", "--help"]);
    assert!(out.status.success());
    assert!(out.stderr.is_empty());
    let help = String::from_utf8_lossy(&out.stdout);
    let options = options_in_help(&help);
    let mut names: Vec<&str> = options.iter().map(|(n, _)| n.as_str()).collect();
    names.sort();
    // Every option of the command, including the ones scripts have used
    // since before the parser was clap (and --quiet, new with the progress bar).
    let mut expected = vec![
        "elements",
        "scenario",
        "lenient",
        "station",
        "start",
        "end",
        "min-elevation",
        "format",
        "quiet",
        "ut1-utc-s",
        "ephemeris",
        "allow-stale",
        "help",
    ];
    expected.sort();
    assert_eq!(names, expected, "{help}");
    for (name, description) in &options {
        assert!(
            description.split_whitespace().count() >= 2,
            "--{name} has no description: {help}"
        );
    }
    // An option that takes a value says what it defaults to.
    for line in help
        .lines()
        .filter(|l| l.contains("--") && l.contains(" <"))
    {
        assert!(line.contains("[default"), "no default in {line:?}");
    }
    let described = |name: &str| {
        options
            .iter()
            .find(|(n, _)| n == name)
            .map(|(_, d)| d.clone())
            .unwrap_or_default()
    };
    assert!(described("min-elevation").contains("degrees"));
    assert!(described("ut1-utc-s").contains("seconds"));
    assert!(described("format").contains("table, csv, json"));
    for heading in ["Inputs:", "Window:", "Output:"] {
        assert!(help.contains(heading), "no {heading} group: {help}");
    }
    // The top-level help keeps the window's forms, the commands and the cautions.
    let top = String::from_utf8_lossy(&passlane(&["--help"]).stdout).into_owned();
    for needle in [
        "passlane open FILE",
        "passlane --scenario FILE",
        "--frame-stats",
        "passes",
        "screen",
        "completions",
        "Cautions:",
    ] {
        assert!(top.contains(needle), "{needle:?} missing: {top}");
    }
    assert!(
        !top.contains("write-stress"),
        "the hidden command shows: {top}"
    );
}

#[test]
fn completions_print_a_script_for_each_shell() {
    for (shell, marker) in [
        ("bash", "complete -F"),
        ("zsh", "#compdef passlane"),
        ("fish", "complete -c passlane"),
    ] {
        let out = passlane(&["completions", shell]);
        assert!(out.status.success(), "{shell}");
        let script = String::from_utf8_lossy(&out.stdout);
        assert!(script.contains(marker), "{shell}: {script}");
        assert!(script.contains("threshold-km"), "{shell}");
        assert!(!script.contains("write-stress"), "{shell}: hidden command");
    }
    assert_eq!(passlane(&["completions", "tcsh"]).status.code(), Some(2));
}

#[test]
fn usage_errors_exit_2_with_a_hint_and_runtime_errors_without_usage() {
    // A typo: clap suggests the option meant.
    let out = passlane(&["screen", "--treshold-km", "5"]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("--treshold-km") && err.contains("'--threshold-km'"),
        "{err}"
    );
    // A stray positional is refused, not ignored.
    let out = passlane(&[
        "passes",
        "--scenario",
        "scenarios/demo.json",
        "scenarios/demo-fleet.tle",
    ]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("unexpected argument 'scenarios/demo-fleet.tle'"),
        "{err}"
    );
    // `cdm` takes one file or several (a trend), but at least one.
    let out = passlane(&["cdm"]);
    assert_eq!(out.status.code(), Some(2));
    // A runtime error names the command and the cause, and prints no usage.
    let out = passlane(&["passes", "--scenario", "no/such/scenario.json"]);
    assert_eq!(out.status.code(), Some(1));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.starts_with("passlane passes: error: cannot read scenario no/such/scenario.json"),
        "{err}"
    );
    assert!(!err.to_lowercase().contains("usage"), "{err}");
    // Validation after parsing keeps its wording.
    let out = passlane(&[
        "screen",
        "--scenario",
        "scenarios/demo.json",
        "--threshold-km=0",
    ]);
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("--threshold-km must be positive"));
}

#[test]
fn options_keep_their_forms_last_value_wins_and_negative_values_pass() {
    // `--flag=value`, a repeated option (the last one counts), a negative
    // value after its option, and --quiet: the same output as the plain form.
    let plain = passlane(&[
        "passes",
        "--scenario",
        "scenarios/demo.json",
        "--end",
        "2026-12-01T06:00:00Z",
        "--format",
        "csv",
        "--ut1-utc-s",
        "-0.2",
    ]);
    assert!(
        plain.status.success(),
        "{}",
        String::from_utf8_lossy(&plain.stderr)
    );
    let other = passlane(&[
        "passes",
        "--scenario=scenarios/demo.json",
        "--end=2026-12-05T00:00:00Z",
        "--end",
        "2026-12-01T06:00:00Z",
        "--format=csv",
        "--ut1-utc-s=-0.2",
        "--quiet",
    ]);
    assert!(
        other.status.success(),
        "{}",
        String::from_utf8_lossy(&other.stderr)
    );
    assert_eq!(plain.stdout, other.stdout);
    assert!(plain.stdout.len() > 200);
    // No progress bar when standard error is not a terminal.
    assert!(
        plain.stderr.is_empty(),
        "{}",
        String::from_utf8_lossy(&plain.stderr)
    );
}

/// Runs passlane with standard output piped, reads one line and closes the
/// pipe, as `passlane ... | head -1` does; the rest of the output must be
/// larger than a pipe's buffer for the write to hit the closed pipe.
fn read_one_line_then_close(args: &[&str]) -> (Option<i32>, String, String) {
    let mut child = Command::new(env!("CARGO_BIN_EXE_passlane"))
        .args(args)
        .current_dir(repo())
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("run passlane");
    let mut first = String::new();
    {
        let stdout = child.stdout.take().expect("piped stdout");
        let mut reader = std::io::BufReader::new(stdout);
        reader.read_line(&mut first).expect("first line");
        // The reader (and the pipe) is dropped here.
    }
    let out = child.wait_with_output().expect("wait for passlane");
    (
        out.status.code(),
        first,
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn a_reader_that_stops_early_ends_the_command_quietly() {
    for args in [
        // About 1 MB of JSON and 130 kB of CSV over the demo's week, well
        // beyond a pipe's 64 kB buffer.
        &[
            "passes",
            "--scenario",
            "scenarios/demo.json",
            "--format",
            "json",
        ][..],
        &[
            "passes",
            "--scenario",
            "scenarios/demo.json",
            "--format",
            "csv",
        ][..],
        &[
            "plan",
            "--scenario",
            "scenarios/demo.json",
            "--format",
            "json",
        ][..],
        &["passes", "--help"][..],
    ] {
        let (code, first, stderr) = read_one_line_then_close(args);
        assert!(!first.is_empty(), "{args:?}: no first line");
        assert_eq!(code, Some(0), "{args:?}: {stderr}");
        assert_eq!(stderr, "", "{args:?}");
    }
}

#[test]
fn two_stations_of_one_name_are_refused_naming_both() {
    let out = passlane(&[
        "passes",
        "--elements",
        "scenarios/demo-fleet.tle",
        "--station",
        "Ridge,10,20,0",
        "--station",
        "RIDGE ,11,21,0",
        "--start",
        "2026-12-01T00:00:00Z",
        "--end",
        "2026-12-01T06:00:00Z",
    ]);
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("stations[1].name") && err.contains("stations[0]"),
        "{err}"
    );
}

#[test]
fn avoid_json_contract_and_refusals() {
    // The demo's designed encounter of KRSL-3 with DEBRIS 99871.
    let base = [
        "avoid",
        "--scenario",
        "scenarios/demo.json",
        "--primary",
        "90003",
        "--secondary",
        "99871",
        "--tca",
        "2026-12-03T06:00:00Z",
    ];
    let mut one: Vec<&str> = base.to_vec();
    one.extend([
        "--burn-time",
        "2026-12-03T03:00:00Z",
        "--dv-ric-m-s",
        "0,0.05,0",
        "--format",
        "json",
    ]);
    let v = ok_json(&one);
    has_fields(
        &v,
        &[
            "primary_catalog_number",
            "secondary_catalog_number",
            "burn_time",
            "dv_ric_m_s",
            "before",
            "after",
        ],
    );
    for side in ["before", "after"] {
        has_fields(
            &v[side],
            &[
                "tca",
                "miss_distance_km",
                "radial_km",
                "in_track_km",
                "cross_track_km",
                "relative_speed_km_s",
                "pc",
                "pc_max",
            ],
        );
    }
    assert_eq!(v["dv_ric_m_s"][1].as_f64(), Some(0.05));
    // What else the burn changes: looked for, and said.
    assert!(v["new_events"].is_array(), "{v}");
    assert!(v["new_events_until"].is_string());
    let shifts = v["contact_shifts"].as_array().unwrap();
    assert!(!shifts.is_empty());
    has_fields(
        &shifts[0],
        &["station", "aos_before", "aos_after", "aos_shift_s"],
    );
    assert!(v["after"]["miss_distance_km"].as_f64() > v["before"]["miss_distance_km"].as_f64());

    let mut tr: Vec<&str> = base.to_vec();
    tr.extend([
        "--trade",
        "--orbits-before",
        "1,2",
        "--dv-m-s=-0.1,0.1",
        "--format",
        "json",
    ]);
    let v = ok_json(&tr);
    let rows = v["trade"].as_array().unwrap();
    assert_eq!(rows.len(), 4);
    has_fields(
        &rows[0],
        &[
            "orbits_before",
            "burn_time",
            "dv_in_track_m_s",
            "miss_distance_km",
            "pc",
        ],
    );
    assert_eq!(v["smallest"].as_array().unwrap().len(), 2);

    // A burn after the TCA names the option.
    let mut late: Vec<&str> = base.to_vec();
    late.extend([
        "--burn-time",
        "2026-12-03T07:00:00Z",
        "--dv-ric-m-s",
        "0,0.05,0",
    ]);
    let out = passlane(&late);
    assert!(!out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("--burn-time"));
    // An unknown catalog number names the option too.
    let out = passlane(&[
        "avoid",
        "--scenario",
        "scenarios/demo.json",
        "--primary",
        "12345",
        "--secondary",
        "99871",
        "--tca",
        "2026-12-03T06:00:00Z",
        "--trade",
    ]);
    assert!(String::from_utf8_lossy(&out.stderr).contains("--primary 12345"));
}

#[test]
fn cdms_in_kvn_and_xml_give_the_screenings_pc_with_the_recorded_radius_and_a_trend() {
    // `passlane screen --cdm-dir` twice (KVN, then XML): every message reads
    // back with `passlane cdm`, which takes the hard-body radius the tool
    // recorded in the message, says so, and gives the screening's Pc to
    // 1e-9 relative; both messages of one event line up as a trend.
    let args = |dir: &Path, format: &str| {
        vec![
            "screen".to_string(),
            "--scenario".into(),
            "scenarios/demo.json".into(),
            "--format".into(),
            "json".into(),
            "--quiet".into(),
            "--cdm-format".into(),
            format.into(),
            "--cdm-dir".into(),
            dir.to_str().unwrap().into(),
        ]
    };
    let (kvn, xml) = (tmp("cdm-kvn"), tmp("cdm-xml"));
    let run = |a: Vec<String>| ok_json(&a.iter().map(String::as_str).collect::<Vec<_>>());
    let events = run(args(&kvn, "kvn"));
    let _ = run(args(&xml, "xml"));
    let events = events.as_array().unwrap();
    assert!(!events.is_empty());
    for e in events {
        // MESSAGE_ID and file name: PRIMARY_SECONDARY_TCASTAMP (the TCA to
        // the second), stable across runs.
        let tca: String = passlane_orbit::UtcTime::parse_iso(e["tca"].as_str().unwrap())
            .unwrap()
            .to_iso_s()
            .chars()
            .filter(|c| c.is_ascii_digit())
            .collect();
        let stem = kvn.join(format!(
            "{}_{}_{tca}.cdm",
            e["primary_catalog_number"], e["secondary_catalog_number"]
        ));
        assert!(stem.is_file(), "{}", stem.display());
        let name = stem.file_stem().unwrap().to_string_lossy().to_string();
        let k = kvn.join(format!("{name}.cdm"));
        let x = xml.join(format!("{name}.xml"));
        assert!(std::fs::read_to_string(&x).unwrap().starts_with("<?xml"));
        for file in [&k, &x] {
            let a = ok_json(&["cdm", file.to_str().unwrap(), "--format", "json"]);
            let (got, want) = (a["pc"].as_f64().unwrap(), e["pc"].as_f64().unwrap());
            assert!(((got - want) / want).abs() < 1e-9, "{got} vs {want}");
            assert_eq!(a["hard_body_radius_m"], e["hard_body_radius_m"]);
            assert!(
                a["hard_body_radius_source"]
                    .as_str()
                    .unwrap()
                    .starts_with("recorded in the message")
            );
        }
        // The table says which radius and from where; an override says so.
        let out = passlane(&["cdm", k.to_str().unwrap(), "--hard-body-radius-m", "3"]);
        let text = String::from_utf8_lossy(&out.stdout);
        assert!(
            text.contains("hard-body radius   3.0 m, given by the user"),
            "{text}"
        );
        // The two messages of this event: one trend with two rows.
        let trend = ok_json(&[
            "cdm",
            k.to_str().unwrap(),
            x.to_str().unwrap(),
            "--format",
            "json",
        ]);
        let groups = trend.as_array().unwrap();
        assert_eq!(groups.len(), 1, "{trend}");
        let rows = groups[0]["rows"].as_array().unwrap();
        assert_eq!(rows.len(), 2);
        assert!(rows[0]["creation_date"].as_str() <= rows[1]["creation_date"].as_str());
        for r in rows {
            has_fields(
                r,
                &[
                    "creation_date",
                    "tca",
                    "miss_distance_m",
                    "radial_m",
                    "in_track_m",
                    "cross_track_m",
                    "pc",
                    "object1_sigma_rtn_m",
                    "object2_sigma_rtn_m",
                ],
            );
        }
    }
}

#[test]
fn an_oem_from_the_plan_is_a_spacecrafts_motion_for_passes() {
    // The plan's OEM of one spacecraft, given back with --ephemeris, gives
    // the passes its element set gives (same count, AOS within 10 ms).
    let dir = tmp("plan-oem");
    let _ = passlane(&[
        "plan",
        "--scenario",
        "scenarios/demo.json",
        "--out",
        dir.to_str().unwrap(),
        "--quiet",
        "--oem-format",
        "xml",
    ]);
    let oem = std::fs::read_dir(dir.join("oem"))
        .unwrap()
        .flatten()
        .map(|f| f.path())
        .find(|p| {
            p.file_name()
                .unwrap()
                .to_string_lossy()
                .starts_with("90001_")
        })
        .unwrap();
    assert_eq!(oem.extension().unwrap(), "xml");
    let common = [
        "passes",
        "--station",
        "Test,10,20,0",
        "--start",
        "2026-12-01T00:00:00Z",
        "--end",
        "2026-12-03T00:00:00Z",
        "--format",
        "json",
        "--quiet",
    ];
    let spec = format!("90001={}", oem.display());
    let mut with_oem = common.to_vec();
    with_oem.extend(["--ephemeris", spec.as_str()]);
    let mut with_tle = common.to_vec();
    with_tle.extend(["--elements", "scenarios/demo-fleet.tle"]);
    let a = ok_json(&with_oem);
    let b: Vec<Value> = ok_json(&with_tle)
        .as_array()
        .unwrap()
        .iter()
        .filter(|p| p["catalog_number"] == 90001)
        .cloned()
        .collect();
    let a = a.as_array().unwrap();
    assert!(!a.is_empty());
    assert_eq!(a.len(), b.len());
    let secs = |v: &Value| passlane_orbit::UtcTime::parse_iso(v.as_str().unwrap()).unwrap();
    for (p, q) in a.iter().zip(&b) {
        assert!(secs(&p["aos"]).s_since(secs(&q["aos"])).abs() < 0.010);
        assert!(secs(&p["los"]).s_since(secs(&q["los"])).abs() < 0.010);
    }
    // A file that is not an OEM is named on stderr, with its line.
    let bad = dir.join("bad.oem");
    std::fs::write(&bad, "CCSDS_OEM_VERS = 3.0\nCREATION_DATE = soon\n").unwrap();
    let mut args = common.to_vec();
    let bad_spec = format!("90001={}", bad.display());
    args.extend([
        "--elements",
        "scenarios/demo-fleet.tle",
        "--ephemeris",
        bad_spec.as_str(),
    ]);
    let out = passlane(&args);
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("bad.oem:2: error: CREATION_DATE"), "{err}");
    assert!(out.status.success(), "the element sets still load");
}

#[test]
fn ut1_utc_given_on_the_command_line_reads_an_earth_fixed_ephemeris() {
    // An ITRF OEM made from the tool's own Earth-fixed states with UT1-UTC =
    // 0.4 s reads back onto the element set's TEME states only when the same
    // UT1-UTC is given (0.4 s of Earth rotation is ~190 m at this orbit).
    let dir = tmp("itrf-ut1");
    std::fs::create_dir_all(&dir).unwrap();
    let window = [
        "--start",
        "2026-12-01T00:00:00Z",
        "--end",
        "2026-12-01T01:00:00Z",
        "--step-s",
        "60",
        "--format",
        "json",
    ];
    let states = |extra: &[&str]| {
        let mut a = vec!["ephemeris"];
        a.extend(window);
        a.extend(extra);
        ok_json(&a).as_array().unwrap().clone()
    };
    let ecef = states(&[
        "--elements",
        "scenarios/demo-fleet.tle",
        "--satellite",
        "90001",
        "--frame",
        "earth-fixed",
        "--ut1-utc-s",
        "0.4",
    ]);
    let mut oem = String::from(
        "CCSDS_OEM_VERS = 3.0\nCREATION_DATE = 2026-11-30T12:00:00.000\nORIGINATOR = TEST\n\
         META_START\nOBJECT_NAME = KRSL-1 ORMIVEL\nOBJECT_ID = 2026-901A\nCENTER_NAME = EARTH\n\
         REF_FRAME = ITRF2000\nTIME_SYSTEM = UTC\nSTART_TIME = 2026-12-01T00:00:00.000\n\
         STOP_TIME = 2026-12-01T01:00:00.000\nINTERPOLATION = LAGRANGE\nINTERPOLATION_DEGREE = 9\nMETA_STOP\n",
    );
    for r in &ecef {
        let p = r["position_km"].as_array().unwrap();
        let v = r["velocity_km_s"].as_array().unwrap();
        let t = r["time"].as_str().unwrap().trim_end_matches('Z');
        oem.push_str(&format!(
            "{t} {} {} {} {} {} {}\n",
            p[0], p[1], p[2], v[0], v[1], v[2]
        ));
    }
    let file = dir.join("itrf.oem");
    std::fs::write(&file, oem).unwrap();
    let spec = format!("90001={}", file.display());
    let teme = states(&[
        "--elements",
        "scenarios/demo-fleet.tle",
        "--satellite",
        "90001",
    ]);
    let worst = |extra: &[&str]| {
        let mut a = vec!["--ephemeris", spec.as_str()];
        a.extend(extra);
        let got = states(&a);
        assert_eq!(got.len(), teme.len());
        got.iter()
            .zip(&teme)
            .map(|(g, t)| {
                (0..3)
                    .map(|k| {
                        let d = g["position_km"][k].as_f64().unwrap()
                            - t["position_km"][k].as_f64().unwrap();
                        d * d
                    })
                    .sum::<f64>()
                    .sqrt()
                    * 1000.0
            })
            .fold(0.0, f64::max)
    };
    let same = worst(&["--ut1-utc-s", "0.4"]);
    let unset = worst(&[]);
    assert!(
        same < 0.01,
        "read with the UT1-UTC it was made with: {same} m"
    );
    assert!(unset > 100.0, "read with UT1-UTC = 0: {unset} m");
}

#[test]
fn screening_again_updates_each_events_cdm_in_place() {
    // Issue 12 item 8: CDM files were named by their place in the run's
    // list, so a second screening with other events wrote a second file for
    // the same event. Now: pair + TCA, one file per event.
    let dir = tmp("cdm-in-place");
    let _ = std::fs::remove_dir_all(&dir);
    let screen = |threshold: &str| {
        ok_json(&[
            "screen",
            "--elements",
            "scenarios/demo-fleet.tle",
            "--catalog",
            "scenarios/demo-debris.tle",
            "--start",
            "2026-12-01T00:00:00Z",
            "--end",
            "2026-12-04T00:00:00Z",
            "--threshold-km",
            threshold,
            "--format",
            "json",
            "--quiet",
            "--cdm-dir",
            dir.to_str().unwrap(),
        ])
        .as_array()
        .unwrap()
        .len()
    };
    // Measured on the demo files: 2 events within 3 km, 18 within 30 km
    // (the earlier naming left 20 files).
    let few = screen("3");
    let files = || std::fs::read_dir(&dir).unwrap().count();
    assert_eq!(files(), few);
    let many = screen("30");
    assert!(many > few, "{many} events at 30 km, {few} at 3 km");
    assert_eq!(files(), many, "an event got a second file");
    assert_eq!(screen("3"), few);
    assert_eq!(files(), many);
    let _ = std::fs::remove_dir_all(&dir);
}
