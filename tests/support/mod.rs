//! Helpers the command-line test files share: run the binary, scratch
//! folders, the demo scenario.

#![allow(dead_code, clippy::unwrap_used, clippy::panic)]

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

pub fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("passlane-hardening-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

pub fn passlane(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_passlane"))
        .args(args)
        .stdin(Stdio::null())
        .output()
        .unwrap()
}

/// Runs the CLI on a hostile file: it must fail or warn, in words, without a
/// panic and within a few seconds.
pub fn refuses(args: &[&str]) -> String {
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

/// The repository's demo scenario (relative to the workspace root).
pub fn demo(file: &str) -> String {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("scenarios")
        .join(file)
        .display()
        .to_string()
}

/// The demo scenario with its element files named by absolute path, saved
/// in `dir`, after `edit`.
pub fn demo_scenario_in(dir: &Path, edit: impl FnOnce(&mut serde_json::Value)) -> String {
    let repo = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let mut v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(repo.join("scenarios/demo.json")).unwrap())
            .unwrap();
    for key in ["element_files", "catalog_files"] {
        for f in v[key].as_array_mut().unwrap() {
            *f = repo
                .join("scenarios")
                .join(f.as_str().unwrap())
                .display()
                .to_string()
                .into();
        }
    }
    edit(&mut v);
    let path = dir.join("scenario.json");
    std::fs::write(&path, serde_json::to_string_pretty(&v).unwrap()).unwrap();
    path.display().to_string()
}
