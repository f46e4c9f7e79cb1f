//! The binary under hostile conditions: files that are not what they claim
//! to be, and a process killed in the middle of a save.

#![allow(clippy::unwrap_used, clippy::panic)]

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("passlane-hardening-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn passlane(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_passlane"))
        .args(args)
        .stdin(Stdio::null())
        .output()
        .unwrap()
}

/// Runs the CLI on a hostile file: it must fail or warn, in words, without a
/// panic and within a few seconds.
fn refuses(args: &[&str]) -> String {
    let started = Instant::now();
    let out = passlane(args);
    let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
    assert!(
        !stderr.contains("panicked at"),
        "passlane {args:?} panicked: {stderr}"
    );
    assert!(
        !out.status.success() || !stderr.is_empty(),
        "passlane {args:?}: no diagnostics"
    );
    assert!(!stderr.trim().is_empty(), "passlane {args:?}: silent");
    assert!(
        started.elapsed() < Duration::from_secs(60),
        "passlane {args:?} took {:?}",
        started.elapsed()
    );
    stderr
}

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

/// The repository's demo scenario (relative to the workspace root).
fn demo(file: &str) -> String {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("scenarios")
        .join(file)
        .display()
        .to_string()
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
