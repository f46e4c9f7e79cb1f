//! The binary under hostile conditions: files that are not what they claim
//! to be, and a process killed in the middle of a save.

#![allow(clippy::unwrap_used, clippy::panic)]

mod support;

use std::path::Path;
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

use support::{demo, demo_scenario_in, passlane, refuses, scratch};

#[test]
fn the_cli_refuses_hostile_files_in_words() {
    let dir = scratch("hostile");
    let mut files: Vec<(&str, Vec<u8>)> = vec![
        ("nul.tle", vec![0u8; 100_000]),
        (
            "invalid-utf8.tle",
            [0xffu8, 0xfe, b'\n', 0xc3, 0x28].repeat(1000),
        ),
        ("one-line.tle", b"1".repeat(10 * 1024 * 1024)),
        ("deep.json", "[".repeat(100_000).into_bytes()),
        (
            "nan.kvn",
            b"CCSDS_OMM_VERS = 2.0\nOBJECT_NAME = X\nMEAN_MOTION = NaN\n".to_vec(),
        ),
        (
            "overflow.xml",
            b"<ndm><omm><MEAN_MOTION>1e309</MEAN_MOTION></omm></ndm>".to_vec(),
        ),
        ("empty.tle", Vec::new()),
    ];
    files.push((
        "scenario-deep.json",
        format!(
            "{{\"format_version\":1,\"stations\":{}",
            "[".repeat(100_000)
        )
        .into_bytes(),
    ));
    files.push(("scenario-nul.json", vec![0u8; 1000]));
    files.push(("scenario-bad-utf8.json", vec![b'{', 0xff, b'}']));
    files.push(("scenario-newer.json", b"{\"format_version\": 99}".to_vec()));
    files.push(("cdm-nul.kvn", vec![0u8; 1000]));
    files.push((
        "cdm-nan.kvn",
        b"CCSDS_CDM_VERS = 1.0\nMISS_DISTANCE = NaN [m]\n".to_vec(),
    ));
    files.push(("cdm-bad-utf8.kvn", vec![b'C', 0xff, b'\n']));
    for (name, bytes) in &files {
        std::fs::write(dir.join(name), bytes).unwrap();
    }
    let p = |name: &str| dir.join(name).display().to_string();
    for name in [
        "nul.tle",
        "invalid-utf8.tle",
        "one-line.tle",
        "deep.json",
        "nan.kvn",
        "overflow.xml",
        "empty.tle",
    ] {
        let stderr = refuses(&["elements", &p(name)]);
        assert!(
            stderr.contains(name),
            "the diagnostic names the file: {stderr}"
        );
    }
    for name in [
        "scenario-deep.json",
        "scenario-nul.json",
        "scenario-bad-utf8.json",
        "scenario-newer.json",
    ] {
        let stderr = refuses(&["passes", "--scenario", &p(name)]);
        assert!(
            stderr.contains(name),
            "the diagnostic names the file: {stderr}"
        );
    }
    for name in ["cdm-nul.kvn", "cdm-nan.kvn", "cdm-bad-utf8.kvn"] {
        let stderr = refuses(&["cdm", &p(name)]);
        assert!(
            stderr.contains(name),
            "the diagnostic names the file: {stderr}"
        );
    }
    // A path that is a directory, and one that does not exist.
    refuses(&["elements", &dir.display().to_string()]);
    refuses(&["cdm", &p("missing.kvn")]);
    std::fs::remove_dir_all(&dir).unwrap();
}

/// Parses `passlane-write-stress ROUND CHECKSUM` and checks the body against it.
fn intact(bytes: &[u8]) -> Result<u64, String> {
    let newline = bytes
        .iter()
        .position(|&b| b == b'\n')
        .ok_or("no header line")?;
    let header = std::str::from_utf8(&bytes[..newline]).map_err(|_| "header not UTF-8")?;
    let parts: Vec<&str> = header.split(' ').collect();
    let [tag, round, sum] = parts.as_slice() else {
        return Err(format!("bad header {header:?}"));
    };
    if *tag != "passlane-write-stress" {
        return Err(format!("bad header {header:?}"));
    }
    let want = u64::from_str_radix(sum, 16).map_err(|_| "bad checksum text")?;
    let got = fnv1a64(&bytes[newline + 1..]);
    if got != want {
        return Err(format!("checksum mismatch in round {round}: torn file"));
    }
    round.parse().map_err(|_| "bad round".to_string())
}

/// Same as the binary's (src/cli/write_stress.rs).
fn fnv1a64(bytes: &[u8]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for &b in bytes {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    h
}

fn temporaries(dir: &Path) -> Vec<String> {
    std::fs::read_dir(dir)
        .unwrap()
        .flatten()
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|n| n.contains(passlane_files::TEMP_MARKER))
        .collect()
}

#[test]
fn a_save_killed_at_random_points_leaves_the_old_or_the_new_file() {
    let dir = scratch("kill");
    let target = dir.join("scenario.json");
    let target_arg = target.display().to_string();
    // A small xorshift generator with a fixed seed: the same kill times on
    // every run, spread over a save's duration.
    let mut state: u64 = 0x2545_f491_4f6c_dd1d;
    let mut next = || {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        state
    };
    let mut saw_temporary = false;
    let mut rounds_seen = std::collections::BTreeSet::new();
    // The round of the last complete file seen: a later look may find a
    // newer one, never an older one (that would be a lost save).
    let mut last_round = None;
    for kill in 0..12u64 {
        // Each child numbers its rounds from its own base, so the file tells
        // which process and which save wrote it.
        let first_round = (kill * 1000).to_string();
        let mut child = Command::new(env!("CARGO_BIN_EXE_passlane"))
            .args(["__write-stress", &target_arg, "2000000", &first_round])
            .stdin(Stdio::null())
            .stdout(Stdio::null())
            .stderr(Stdio::piped())
            .spawn()
            .unwrap();
        let wait_ms = 20 + next() % 300;
        std::thread::sleep(Duration::from_millis(wait_ms));
        saw_temporary |= !temporaries(&dir).is_empty();
        // SIGKILL: no destructor, no flush, no cleanup runs in the child.
        child.kill().unwrap();
        let status = child.wait().unwrap();
        assert!(
            !status.success(),
            "kill {kill}: the child finished before it was killed"
        );
        if target.exists() {
            let bytes = std::fs::read(&target).unwrap();
            match intact(&bytes) {
                Ok(round) => {
                    assert!(
                        last_round <= Some(round),
                        "kill {kill}: round {round} after {last_round:?}"
                    );
                    last_round = Some(round);
                    rounds_seen.insert(round);
                }
                Err(e) => panic!("kill {kill} after {wait_ms} ms: {e}"),
            }
        }
    }
    assert!(target.exists(), "no save completed in any run");
    // The next start clears what the killed saves left behind.
    passlane_files::remove_stale_temporaries(&target);
    assert_eq!(temporaries(&dir), Vec::<String>::new());
    intact(&std::fs::read(&target).unwrap()).unwrap();
    eprintln!("rounds seen after kills: {rounds_seen:?}; temporary seen mid-save: {saw_temporary}");
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn the_cli_clears_stale_temporaries_before_reading_a_scenario() {
    let dir = scratch("stale");
    let scenario = dir.join("s.json");
    std::fs::write(&scenario, "{\"format_version\": 1}").unwrap();
    let stale = dir.join(format!(".s.json{}12345-0", passlane_files::TEMP_MARKER));
    std::fs::write(&stale, "half a save").unwrap();
    let _ = passlane(&["passes", "--scenario", &scenario.display().to_string()]);
    assert!(!stale.exists(), "the stale temporary is still there");
    std::fs::remove_dir_all(&dir).unwrap();
}

/// Runs the CLI, killing it after `limit`: a hang is a failure, not a stuck test.
fn passlane_within(args: &[&str], limit: Duration) -> Output {
    let mut child = Command::new(env!("CARGO_BIN_EXE_passlane"))
        .args(args)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let started = Instant::now();
    while child.try_wait().unwrap().is_none() {
        if started.elapsed() > limit {
            child.kill().unwrap();
            let out = child.wait_with_output().unwrap();
            panic!(
                "passlane {args:?} still running after {limit:?}; stderr: {}",
                String::from_utf8_lossy(&out.stderr)
            );
        }
        std::thread::sleep(Duration::from_millis(20));
    }
    child.wait_with_output().unwrap()
}

#[test]
fn steps_below_a_millisecond_or_tables_over_the_row_cap_are_refused_naming_the_flag() {
    // Issue 12 items 1 and 7: a step below the time resolution never
    // advanced (memory grew until allocation failed), and 1e-300 overflowed
    // the sample count to zero (a header only, exit 0).
    let dir = scratch("steps");
    let out_dir = dir.join("hand-off");
    let out_s = out_dir.display().to_string();
    let fleet = ["--elements", "scenarios/demo-fleet.tle"];
    let day = [
        "--start",
        "2026-12-01T00:00:00Z",
        "--end",
        "2026-12-02T00:00:00Z",
    ];
    let cases: Vec<(Vec<&str>, &str, &str)> = vec![
        (
            [
                &["track"][..],
                &fleet,
                &[
                    "--station",
                    "Coral Shoal,-5.64,-155.9,6",
                    "--satellite",
                    "90001",
                    "--pass-start",
                    "2026-12-01T07:55:00Z",
                    "--step-s",
                    "1e-9",
                ],
            ]
            .concat(),
            "--step-s",
            "1 ms",
        ),
        (
            vec![
                "plan",
                "--scenario",
                "scenarios/demo.json",
                "--end",
                "2026-12-02T00:00:00Z",
                "--pointing-step-s",
                "1e-17",
                "--out",
                &out_s,
            ],
            "--pointing-step-s",
            "1 ms",
        ),
        (
            [&["ephemeris"][..], &fleet, &day, &["--step-s", "1e-300"]].concat(),
            "--step-s",
            "1 ms",
        ),
        (
            [&["ephemeris"][..], &fleet, &day, &["--step-s", "0"]].concat(),
            "--step-s",
            "positive",
        ),
        // A day at 1 ms for every spacecraft: far over the 10 million rows.
        (
            [&["ephemeris"][..], &fleet, &day, &["--step-s", "0.001"]].concat(),
            "--step-s",
            "10000000",
        ),
    ];
    for (args, flag, words) in cases {
        let out = passlane_within(&args, Duration::from_secs(60));
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert!(!out.status.success(), "passlane {args:?} succeeded");
        assert!(
            stderr.contains(flag) && stderr.contains(words),
            "passlane {args:?}: {stderr}"
        );
        assert!(!stderr.contains("panicked"), "{stderr}");
        assert!(out.stdout.is_empty(), "passlane {args:?} printed a table");
    }
    assert!(!out_dir.exists(), "a refused plan created its folder");
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn the_cli_refuses_years_outside_1957_to_2100_and_leap_seconds() {
    // Issue 12, item 4: `--start -2026-...` was read as the year -2026 and ran
    // for minutes inventing passes.
    let fleet = demo("demo-fleet.tle");
    for (start, words) in [
        ("-2026-12-01T00:00:00Z", "year -2026 is outside 1957-2100"),
        ("2026-11-30T23:59:60Z", "leap second"),
    ] {
        let out = passlane(&[
            "passes",
            "--elements",
            &fleet,
            "--station",
            "X,10,20,0",
            "--start",
            start,
            "--end",
            "2026-12-02T00:00:00Z",
        ]);
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert!(!out.status.success(), "{start}: accepted");
        assert!(stderr.contains(words), "{start}: {stderr}");
    }
    // The same in a scenario's window.
    let dir = scratch("years");
    let text = std::fs::read_to_string(demo("demo.json"))
        .unwrap()
        .replace("2026-12-08T00:00:00.000Z", "2226-12-08T00:00:00.000Z")
        .replace(
            "\"demo-",
            &format!("\"{}/demo-", demo("").trim_end_matches('/')),
        );
    std::fs::write(dir.join("far.json"), text).unwrap();
    let stderr = refuses(&[
        "passes",
        "--scenario",
        &dir.join("far.json").display().to_string(),
    ]);
    assert!(stderr.contains("year 2226"), "{stderr}");
    std::fs::remove_dir_all(&dir).unwrap();
}

/// Files under `dir` (relative paths), links and hidden entries included.
fn files_on_disk(dir: &Path) -> Vec<String> {
    let mut out = Vec::new();
    let mut stack = vec![(dir.to_path_buf(), String::new())];
    while let Some((d, prefix)) = stack.pop() {
        for e in std::fs::read_dir(&d).unwrap().flatten() {
            let rel = format!("{prefix}{}", e.file_name().to_string_lossy());
            if e.file_type().unwrap().is_dir() {
                stack.push((e.path(), format!("{rel}/")));
            } else {
                out.push(rel);
            }
        }
    }
    out.sort();
    out
}

/// `passlane plan --out`: the count it printed.
fn plan_into(scenario: &str, end: &str, out: &Path) -> Result<usize, String> {
    let o = passlane(&[
        "plan",
        "--scenario",
        scenario,
        "--start",
        "2026-12-01T00:00:00Z",
        "--end",
        end,
        "--quiet",
        "--out",
        &out.display().to_string(),
    ]);
    let stdout = String::from_utf8_lossy(&o.stdout).into_owned();
    if !o.status.success() {
        return Err(String::from_utf8_lossy(&o.stderr).into_owned());
    }
    let n = stdout
        .split("Wrote ")
        .nth(1)
        .and_then(|r| r.split(' ').next())
        .and_then(|n| n.parse().ok())
        .unwrap_or_else(|| panic!("no count in {stdout}"));
    Ok(n)
}

fn planned_contacts(out: &Path) -> usize {
    let v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("plan.json")).unwrap()).unwrap();
    v["contacts"].as_array().unwrap().len()
}

#[test]
fn planning_again_into_a_folder_leaves_exactly_the_new_plans_files() {
    // Issue 12 item 8: re-planning kept the previous run's pointing tables.
    let dir = scratch("replan");
    let scenario = demo_scenario_in(&dir, |_| {});
    let out = dir.join("hand-off");
    let first = plan_into(&scenario, "2026-12-01T12:00:00Z", &out).unwrap();
    assert_eq!(files_on_disk(&out).len(), first);
    let day_contacts = planned_contacts(&out);
    let second = plan_into(&scenario, "2026-12-01T04:00:00Z", &out).unwrap();
    let on_disk = files_on_disk(&out);
    assert_eq!(on_disk.len(), second, "{on_disk:?}");
    let contacts = planned_contacts(&out);
    assert!(contacts < day_contacts);
    assert_eq!(
        on_disk
            .iter()
            .filter(|f| f.starts_with("pointing/"))
            .count(),
        contacts,
        "pointing tables of the earlier plan remain"
    );
    // Nothing left beside the folder either.
    let beside: Vec<String> = std::fs::read_dir(&dir)
        .unwrap()
        .flatten()
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|n| n.starts_with('.'))
        .collect();
    assert_eq!(beside, Vec::<String>::new());
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn a_second_plan_into_a_folder_being_written_fails_clearly() {
    // Issue 12 item 8: two `plan --out` at once both "succeeded" with a mix.
    let dir = scratch("lock");
    let scenario = demo_scenario_in(&dir, |_| {});
    let out = dir.join("hand-off");
    plan_into(&scenario, "2026-12-01T03:00:00Z", &out).unwrap();
    let before: Vec<(String, Vec<u8>)> = files_on_disk(&out)
        .into_iter()
        .map(|f| {
            let b = std::fs::read(out.join(&f)).unwrap();
            (f, b)
        })
        .collect();
    // The first writer, as a running `passlane plan --out` holds it.
    let lock = std::fs::OpenOptions::new()
        .create(true)
        .truncate(false)
        .write(true)
        .open(dir.join(".hand-off.passlane-lock"))
        .unwrap();
    lock.try_lock().unwrap();
    let err = plan_into(&scenario, "2026-12-01T06:00:00Z", &out).unwrap_err();
    assert!(err.contains("another Passlane process is writing"), "{err}");
    let after: Vec<(String, Vec<u8>)> = files_on_disk(&out)
        .into_iter()
        .map(|f| {
            let b = std::fs::read(out.join(&f)).unwrap();
            (f, b)
        })
        .collect();
    assert!(before == after, "the folder changed under a held lock");
    drop(lock);
    std::fs::remove_dir_all(&dir).unwrap();
}

#[cfg(unix)]
#[test]
fn plan_never_writes_through_a_symbolic_link() {
    // Issue 12 item 13.
    use std::os::unix::fs::symlink;
    let dir = scratch("symlink");
    let scenario = demo_scenario_in(&dir, |_| {});
    let elsewhere = dir.join("elsewhere");
    std::fs::create_dir_all(&elsewhere).unwrap();
    let link = dir.join("out-link");
    symlink(&elsewhere, &link).unwrap();
    let err = plan_into(&scenario, "2026-12-01T03:00:00Z", &link).unwrap_err();
    assert!(err.contains("symbolic link"), "{err}");
    let out = dir.join("hand-off");
    plan_into(&scenario, "2026-12-01T03:00:00Z", &out).unwrap();
    std::fs::remove_dir_all(out.join("pointing")).unwrap();
    symlink(&elsewhere, out.join("pointing")).unwrap();
    let err = plan_into(&scenario, "2026-12-01T03:00:00Z", &out).unwrap_err();
    assert!(
        err.contains("symbolic link inside the hand-off folder"),
        "{err}"
    );
    assert!(
        files_on_disk(&elsewhere).is_empty(),
        "written outside the folder"
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn clashing_and_very_long_names_give_every_file_and_the_count_on_disk() {
    // Issue 12 items 9 and 10: "CS A" and "CS-A" shared file names (the
    // summary said 104 written, 91 existed); a 300-character name stopped
    // the export half-way with "File name too long".
    let dir = scratch("names");
    let scenario = demo_scenario_in(&dir, |v| {
        for s in v["stations"].as_array_mut().unwrap() {
            if s["name"] == "Coral Shoal" {
                // Two equal antennas that may serve one spacecraft at once.
                s["antennas"][1] = s["antennas"][0].clone();
                s["antennas"][0]["name"] = "CS A".into();
                s["antennas"][1]["name"] = "CS-A".into();
            }
            if s["name"] == "Northfell" {
                s["name"] = format!("Northfell{}", " and beyond".repeat(27)).into();
            }
        }
        for sat in v["satellites"].as_array_mut().unwrap() {
            sat["allow_simultaneous"] = true.into();
        }
    });
    let out = dir.join("hand-off");
    let printed = plan_into(&scenario, "2026-12-02T00:00:00Z", &out).unwrap();
    let v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("plan.json")).unwrap()).unwrap();
    for antenna in ["CS A", "CS-A"] {
        assert!(
            v["contacts"]
                .as_array()
                .unwrap()
                .iter()
                .any(|c| c["antenna"] == antenna),
            "no contact on {antenna}: the clash is not exercised"
        );
    }
    let on_disk = files_on_disk(&out);
    assert_eq!(on_disk.len(), printed, "{on_disk:?}");
    assert_eq!(
        on_disk
            .iter()
            .filter(|f| f.starts_with("pointing/"))
            .count(),
        planned_contacts(&out)
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn text_from_files_reaches_the_terminal_without_escape_sequences() {
    // Issue 12, items 11 and 12: an OMM name and a CDM line carrying
    // terminal escapes; nothing the CLI prints may contain them.
    let dir = scratch("escapes");
    let omm = "CCSDS_OMM_VERS = 2.0\nCREATION_DATE = 2026-12-01T00:00:00\nORIGINATOR = TEST\n\
OBJECT_NAME = EVIL\u{1b}]0;owned\u{7}\u{1b}[2J\nOBJECT_ID = 2026-901A\nCENTER_NAME = EARTH\n\
REF_FRAME = TEME\nTIME_SYSTEM = UTC\nMEAN_ELEMENT_THEORY = SGP4\nEPOCH = 2026-12-01T05:07:30.000288\n\
MEAN_MOTION = 15.20279803\nECCENTRICITY = 0.0010170\nINCLINATION = 97.4021\nRA_OF_ASC_NODE = 45.1200\n\
ARG_OF_PERICENTER = 88.1000\nMEAN_ANOMALY = 272.0000\nNORAD_CAT_ID = 90001\nBSTAR = 0.00021\n";
    std::fs::write(dir.join("evil.kvn"), omm).unwrap();
    std::fs::write(
        dir.join("evil.cdm"),
        "CCSDS_CDM_VERS = 1.0\n\u{1b}[31mRED\u{1b}[0m = 1\n",
    )
    .unwrap();
    let out = passlane(&["elements", &dir.join("evil.kvn").display().to_string()]);
    assert!(out.status.success(), "{out:?}");
    let stdout = String::from_utf8_lossy(&out.stdout);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(stdout.contains("EVIL?"), "{stdout}");
    assert!(
        stderr.contains("OBJECT_NAME") && stderr.contains("U+001B"),
        "{stderr}"
    );
    let out = passlane(&["cdm", &dir.join("evil.cdm").display().to_string()]);
    assert!(!out.status.success());
    for text in [&out.stdout, &out.stderr] {
        let text = String::from_utf8_lossy(text);
        assert!(
            !text.contains('\u{1b}') && !text.contains('\u{7}'),
            "{text:?}"
        );
    }
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn elements_fails_when_nothing_loaded() {
    // Issue 12, item 15: `elements` exited 0 on a file with no good record.
    let dir = scratch("nothing-loaded");
    let bad = dir.join("junk.tle");
    std::fs::write(&bad, "1 this is not\n2 an element set\n").unwrap();
    let out = passlane(&["elements", &bad.display().to_string()]);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(!out.status.success(), "{stderr}");
    assert!(stderr.contains("no element set loaded from"), "{stderr}");
    assert!(stderr.contains("junk.tle:1"), "{stderr}");
    std::fs::remove_dir_all(&dir).unwrap();
}
