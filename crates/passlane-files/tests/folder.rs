//! The hand-off folder as one unit (issue 12, items 8 and 13): re-writing
//! leaves exactly the new set, a failed write leaves the earlier set, one
//! writer at a time, only dead processes' leftovers are removed, and no
//! symbolic link is ever written through.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

use std::collections::BTreeMap;
use std::fs;
use std::io;
use std::path::{Path, PathBuf};

use passlane_files::folder::{write_folder, write_folder_with};

fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("passlane-folder-{}-{name}", std::process::id()));
    let _ = fs::remove_dir_all(&d);
    fs::create_dir_all(&d).unwrap();
    d
}

/// The layout of these tests' "hand-off": `a.txt` and `p/*`.
fn recognised(rel: &str) -> bool {
    rel == "a.txt" || rel == "p/" || (rel.starts_with("p/") && !rel[2..].contains('/'))
}

/// Every file under `dir` with its contents, and every entry's kind.
fn contents(dir: &Path) -> BTreeMap<String, String> {
    let mut out = BTreeMap::new();
    let mut stack = vec![(dir.to_path_buf(), String::new())];
    while let Some((d, prefix)) = stack.pop() {
        for e in fs::read_dir(&d).unwrap().flatten() {
            let rel = format!("{prefix}{}", e.file_name().to_string_lossy());
            let t = e.file_type().unwrap();
            if t.is_dir() {
                stack.push((e.path(), format!("{rel}/")));
            } else {
                out.insert(rel, fs::read_to_string(e.path()).unwrap_or_default());
            }
        }
    }
    out
}

fn set(files: &[(&str, &str)]) -> BTreeMap<String, String> {
    files
        .iter()
        .map(|(a, b)| (a.to_string(), b.to_string()))
        .collect()
}

fn write(
    dir: &Path,
    files: &[(&str, &str)],
) -> Result<passlane_files::folder::FolderSummary, String> {
    write_folder(
        dir,
        files.iter().map(|(p, c)| (*p, c.as_bytes())),
        &recognised,
    )
}

/// Entries of `parent` other than the ones named (hidden siblings left over).
fn siblings(parent: &Path, except: &[&str]) -> Vec<String> {
    fs::read_dir(parent)
        .unwrap()
        .flatten()
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|n| !except.contains(&n.as_str()))
        .collect()
}

/// A process id that was in use a moment ago and is not any more.
fn dead_pid() -> u32 {
    let mut child = std::process::Command::new("true").spawn().unwrap();
    let pid = child.id();
    child.wait().unwrap();
    pid
}

#[test]
fn writing_again_leaves_exactly_the_new_set() {
    let root = scratch("again");
    let out = root.join("out");
    let first = [("a.txt", "1"), ("p/x.csv", "x"), ("p/y.csv", "y")];
    let s = write(&out, &first).unwrap();
    assert_eq!((s.files, s.replaced.len(), s.removed.len()), (3, 0, 0));
    assert_eq!(contents(&out), set(&first));
    let second = [("a.txt", "2"), ("p/z.csv", "z")];
    let s = write(&out, &second).unwrap();
    assert_eq!(
        contents(&out),
        set(&second),
        "files of the first set remain"
    );
    assert_eq!(s.files, 2);
    assert_eq!(s.replaced, vec!["a.txt".to_string()]);
    assert_eq!(
        s.removed,
        vec!["p/x.csv".to_string(), "p/y.csv".to_string()]
    );
    assert_eq!(siblings(&root, &["out"]), Vec::<String>::new());
    fs::remove_dir_all(&root).unwrap();
}

#[test]
fn a_failure_half_way_keeps_the_earlier_set_whole() {
    // A full disk, simulated: the writer fails at the third file.
    let root = scratch("fail");
    let out = root.join("out");
    let first = [("a.txt", "1"), ("p/x.csv", "x")];
    write(&out, &first).unwrap();
    let second = [
        ("a.txt", "2"),
        ("p/y.csv", "y"),
        ("p/z.csv", "z"),
        ("p/w.csv", "w"),
    ];
    let mut n = 0;
    let mut failing = |path: &Path, bytes: &[u8]| -> io::Result<()> {
        n += 1;
        if n == 3 {
            return Err(io::Error::other("No space left on device (simulated)"));
        }
        passlane_files::folder::write_new_file(path, bytes)
    };
    let err = write_folder_with(
        &out,
        second.iter().map(|(p, c)| (*p, c.as_bytes())),
        &recognised,
        &mut failing,
    )
    .unwrap_err();
    assert!(
        err.contains("No space left") && err.contains("unchanged"),
        "{err}"
    );
    assert!(
        err.contains(&out.join("p/z.csv").display().to_string()),
        "{err}"
    );
    assert_eq!(contents(&out), set(&first), "the earlier set is not whole");
    assert_eq!(
        siblings(&root, &["out"]),
        Vec::<String>::new(),
        "temporary left"
    );
    fs::remove_dir_all(&root).unwrap();
}

#[test]
fn a_second_writer_fails_clearly_while_the_first_holds_the_folder() {
    let root = scratch("lock");
    let out = root.join("out");
    write(&out, &[("a.txt", "1")]).unwrap();
    // The first writer, as another process would hold it: an OS lock on the sibling lock file.
    let held = fs::OpenOptions::new()
        .create(true)
        .truncate(false)
        .write(true)
        .open(root.join(".out.passlane-lock"))
        .unwrap();
    held.try_lock().unwrap();
    let err = write(&out, &[("a.txt", "2")]).unwrap_err();
    assert!(err.contains("another Passlane process is writing"), "{err}");
    assert_eq!(contents(&out), set(&[("a.txt", "1")]));
    held.unlock().unwrap();
    drop(held);
    write(&out, &[("a.txt", "3")]).unwrap();
    assert_eq!(contents(&out), set(&[("a.txt", "3")]));
    assert_eq!(
        siblings(&root, &["out"]),
        Vec::<String>::new(),
        "lock file left"
    );
    fs::remove_dir_all(&root).unwrap();
}

#[test]
fn only_leftovers_of_dead_processes_are_removed() {
    let root = scratch("stale");
    let out = root.join("out");
    let dead = dead_pid();
    // Process 1 is always running: its temporary belongs to a live writer.
    let live_tmp = format!(".out{}1-0", passlane_files::TEMP_MARKER);
    let dead_tmp = format!(".out{}{dead}-0", passlane_files::TEMP_MARKER);
    for t in [&live_tmp, &dead_tmp] {
        fs::create_dir_all(root.join(t).join("p")).unwrap();
        fs::write(root.join(t).join("a.txt"), "half").unwrap();
    }
    write(&out, &[("a.txt", "1")]).unwrap();
    assert!(
        root.join(&live_tmp).exists(),
        "a live writer's temporary was deleted"
    );
    assert!(
        !root.join(&dead_tmp).exists(),
        "a dead writer's temporary remains"
    );
    // The same rule for the temporaries of single-file saves.
    let file = root.join("s.json");
    fs::write(&file, "{}").unwrap();
    let live = root.join(format!(".s.json{}1-7", passlane_files::TEMP_MARKER));
    let gone = root.join(format!(".s.json{}{dead}-7", passlane_files::TEMP_MARKER));
    fs::write(&live, "x").unwrap();
    fs::write(&gone, "x").unwrap();
    assert_eq!(passlane_files::remove_stale_temporaries(&file), 1);
    assert!(live.exists() && !gone.exists());
    fs::remove_dir_all(&root).unwrap();
}

#[test]
fn a_swap_cut_off_between_its_renames_is_put_back_first() {
    let root = scratch("swap");
    let out = root.join("out");
    // The earlier set, renamed aside by a writer that died before the new set moved in.
    let old = root.join(format!(
        ".out{}{}-0",
        passlane_files::folder::OLD_MARKER,
        dead_pid()
    ));
    fs::create_dir_all(old.join("p")).unwrap();
    fs::write(old.join("a.txt"), "earlier").unwrap();
    fs::write(old.join("p/x.csv"), "x").unwrap();
    let s = write(&out, &[("a.txt", "new")]).unwrap();
    assert_eq!(s.replaced, vec!["a.txt".to_string()]);
    assert_eq!(s.removed, vec!["p/x.csv".to_string()]);
    assert_eq!(contents(&out), set(&[("a.txt", "new")]));
    assert_eq!(siblings(&root, &["out"]), Vec::<String>::new());
    fs::remove_dir_all(&root).unwrap();
}

#[test]
fn a_folder_with_someone_elses_files_is_refused_not_emptied() {
    let root = scratch("foreign");
    let out = root.join("out");
    fs::create_dir_all(out.join("p")).unwrap();
    fs::write(out.join("notes.txt"), "mine").unwrap();
    let err = write(&out, &[("a.txt", "1")]).unwrap_err();
    assert!(
        err.contains("notes.txt") && err.contains("not part of a hand-off"),
        "{err}"
    );
    assert_eq!(contents(&out), set(&[("notes.txt", "mine")]));
    fs::remove_dir_all(&root).unwrap();
}

#[cfg(unix)]
#[test]
fn symbolic_links_are_never_written_through() {
    use std::os::unix::fs::symlink;
    let root = scratch("links");
    let elsewhere = root.join("elsewhere");
    fs::create_dir_all(&elsewhere).unwrap();
    // `--out` that is a link.
    let link = root.join("out-link");
    symlink(&elsewhere, &link).unwrap();
    let err = write(&link, &[("a.txt", "1"), ("p/x.csv", "x")]).unwrap_err();
    assert!(err.contains("symbolic link"), "{err}");
    // A `p` planted inside an earlier set, pointing outside it.
    let out = root.join("out");
    write(&out, &[("a.txt", "1"), ("p/x.csv", "x")]).unwrap();
    fs::remove_dir_all(out.join("p")).unwrap();
    symlink(&elsewhere, out.join("p")).unwrap();
    let err = write(&out, &[("a.txt", "2"), ("p/y.csv", "y")]).unwrap_err();
    assert!(
        err.contains("symbolic link inside the hand-off folder"),
        "{err}"
    );
    assert_eq!(
        contents(&elsewhere),
        BTreeMap::new(),
        "written outside the folder"
    );
    assert!(
        fs::symlink_metadata(&link)
            .unwrap()
            .file_type()
            .is_symlink()
    );
    assert_eq!(fs::read_to_string(out.join("a.txt")).unwrap(), "1");
    fs::remove_dir_all(&root).unwrap();
}

#[test]
fn names_are_checked_before_the_first_write() {
    let root = scratch("names");
    let out = root.join("out");
    let long = format!("p/{}.csv", "n".repeat(300));
    for files in [
        vec![("a.txt", "1"), ("p/CS-A.csv", "x"), ("p/cs-a.csv", "y")],
        vec![("a.txt", "1"), (long.as_str(), "x")],
        vec![("a.txt", "1"), ("../escape.txt", "x")],
    ] {
        assert!(write(&out, &files).is_err(), "{files:?}");
        assert!(!out.exists(), "something was written for {files:?}");
    }
    assert_eq!(siblings(&root, &[]), Vec::<String>::new());
    // A long folder name keeps its hidden siblings within the name limit.
    let long_dir = root.join("d".repeat(250));
    write(&long_dir, &[("a.txt", "1")]).unwrap();
    write(&long_dir, &[("a.txt", "2")]).unwrap();
    assert_eq!(contents(&long_dir), set(&[("a.txt", "2")]));
    fs::remove_dir_all(&root).unwrap();
}
