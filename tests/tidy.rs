//! Tidy: invariants of the source tree that the compiler does not enforce.
//!
//! Each rule below runs over the workspace's sources on every `cargo test`,
//! and `each_rule_catches_a_planted_violation` proves that each one fails on
//! a small tree with one violation of it planted.
//!
//! - **panics**: library and command-line code (`crates/*/src`, `src/`) must
//!   not panic on bad input, so outside `#[cfg(test)]` items it may not call
//!   `.unwrap()`, `.expect(`, `panic!(`, `unreachable!(`, `todo!(` or
//!   `unimplemented!(` unless the line, or a line of the comment block right
//!   above it, says why failure is impossible with a comment starting
//!   `// invariant:`. (Slice indexing is allowed: bounds are checked by the
//!   code around it and reviewed.) The workspace's clippy lints say the same,
//!   but only as warnings and only when someone runs clippy.
//! - **no-io**: the orbit and planner crates do no file, network or process
//!   I/O (`std::fs`, `std::net`, `std::process`, `File::`).
//! - **sgp4-boundary**: the `sgp4` crate is used in the propagation module of
//!   the orbit crate only (`crates/passlane-orbit/src/propagate.rs`).
//! - **no-printing**: the library crates (orbit, plan, files) never print
//!   (`println!`, `eprintln!`, `print!`, `eprint!`, `dbg!`); they hand results
//!   and diagnostics to their callers.
//! - **one-time-type**: no `chrono` type in a public signature of the orbit
//!   crate; `UtcTime` is the workspace's one time type.
//! - **file-size**: no Rust file under `crates/` or `src/` longer than
//!   [`MAX_LINES`] lines: a file that long holds more than one responsibility.

use std::path::{Path, PathBuf};

const FORBIDDEN: [&str; 6] = [
    ".unwrap()",
    ".expect(",
    "panic!(",
    "unreachable!(",
    "todo!(",
    "unimplemented!(",
];

/// Longest Rust file allowed under `crates/` and `src/`.
const MAX_LINES: usize = 800;

/// Crates that do no I/O and never print, and the crates that never print.
const NO_IO_CRATES: [&str; 2] = ["crates/passlane-orbit/src/", "crates/passlane-plan/src/"];
const LIBRARY_CRATES: [&str; 3] = [
    "crates/passlane-orbit/src/",
    "crates/passlane-plan/src/",
    "crates/passlane-files/src/",
];
const SGP4_HOME: &str = "crates/passlane-orbit/src/propagate.rs";
const ORBIT_SRC: &str = "crates/passlane-orbit/src/";

/// One broken rule: rule name, file (relative, `/`-separated), line, what.
#[derive(Debug)]
struct Violation {
    rule: &'static str,
    file: String,
    line: usize,
    what: String,
}

impl std::fmt::Display for Violation {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "[{}] {}:{}: {}",
            self.rule, self.file, self.line, self.what
        )
    }
}

/// Every Rust file of the tree rooted at `root` that the rules look at:
/// `src/**` and `crates/*/{src,tests,benches,examples}/**`.
fn sources(root: &Path) -> Vec<(String, PathBuf)> {
    let mut files = Vec::new();
    rust_files(&root.join("src"), &mut files);
    if let Ok(entries) = std::fs::read_dir(root.join("crates")) {
        for e in entries.flatten() {
            for sub in ["src", "tests", "benches", "examples"] {
                rust_files(&e.path().join(sub), &mut files);
            }
        }
    }
    files.sort();
    files
        .into_iter()
        .map(|p| {
            let rel = p
                .strip_prefix(root)
                .unwrap_or(&p)
                .to_string_lossy()
                .replace('\\', "/");
            (rel, p)
        })
        .collect()
}

/// Whether `pattern` occurs in `line` as a whole token (not preceded by an
/// identifier character, so `eprint!` is not also `print!`).
fn has_token(line: &str, pattern: &str) -> bool {
    line.match_indices(pattern).any(|(i, _)| {
        !line[..i]
            .chars()
            .next_back()
            .is_some_and(|c| c.is_alphanumeric() || c == '_')
    })
}

/// Public signatures of a file (outside `#[cfg(test)]`): each `pub` item's
/// text up to its body, and each public field, with the line it starts on.
fn public_signatures(code: &str, skip: &[bool]) -> Vec<(usize, String)> {
    let lines: Vec<&str> = code.lines().collect();
    let mut out = Vec::new();
    let mut i = 0;
    while i < lines.len() {
        let t = lines[i].trim_start();
        if skip.get(i).copied().unwrap_or(false) || !t.starts_with("pub ") {
            i += 1;
            continue;
        }
        let start = i;
        let mut sig = String::new();
        loop {
            let l = lines[i];
            let cut = l.find(['{', ';']).unwrap_or(l.len());
            sig.push_str(&l[..cut]);
            sig.push(' ');
            if cut < l.len() || i + 1 >= lines.len() || !t.starts_with("pub fn") {
                break;
            }
            i += 1;
        }
        out.push((start + 1, sig));
        i += 1;
    }
    out
}

/// Checks every rule on the tree rooted at `root`.
fn check_tree(root: &Path) -> Vec<Violation> {
    let mut out = Vec::new();
    for (rel, path) in sources(root) {
        let Ok(text) = std::fs::read_to_string(&path) else {
            continue;
        };
        let mut push = |rule: &'static str, line: usize, what: String| {
            out.push(Violation {
                rule,
                file: rel.clone(),
                line,
                what,
            })
        };
        let n_lines = text.lines().count();
        if n_lines > MAX_LINES {
            push(
                "file-size",
                n_lines,
                format!("{n_lines} lines, more than {MAX_LINES}: split it by responsibility"),
            );
        }
        let is_src =
            rel.starts_with("src/") || (rel.starts_with("crates/") && rel.contains("/src/"));
        if !is_src {
            continue;
        }
        for (line_no, what) in violations_in(&text) {
            push(
                "panics",
                line_no,
                format!("{what} without a stated invariant"),
            );
        }
        let code = code_only(&text);
        let skip = test_lines(&code);
        let live = || {
            code.lines()
                .enumerate()
                .filter(|(i, _)| !skip.get(*i).copied().unwrap_or(false))
        };
        if NO_IO_CRATES.iter().any(|c| rel.starts_with(c)) {
            for (i, l) in live() {
                for p in ["std::fs", "std::net", "std::process", "File::"] {
                    if has_token(l, p) {
                        push("no-io", i + 1, format!("{p}: this crate does no I/O"));
                    }
                }
            }
        }
        if rel != SGP4_HOME {
            for (i, l) in code.lines().enumerate() {
                if has_token(l, "sgp4::") {
                    push(
                        "sgp4-boundary",
                        i + 1,
                        format!("sgp4:: outside {SGP4_HOME}"),
                    );
                }
            }
        }
        if LIBRARY_CRATES.iter().any(|c| rel.starts_with(c)) {
            for (i, l) in live() {
                for p in ["println!", "eprintln!", "print!", "eprint!", "dbg!"] {
                    if has_token(l, p) {
                        push("no-printing", i + 1, format!("{p} in a library crate"));
                    }
                }
            }
        }
        if rel.starts_with(ORBIT_SRC) {
            for (line, sig) in public_signatures(&code, &skip) {
                if [
                    "chrono",
                    "NaiveDateTime",
                    "NaiveDate",
                    "DateTime<",
                    "TimeDelta",
                ]
                .iter()
                .any(|p| has_token(&sig, p))
                {
                    push(
                        "one-time-type",
                        line,
                        format!("a chrono type in a public signature: {}", sig.trim()),
                    );
                }
            }
        }
    }
    out
}

#[test]
fn the_tree_keeps_its_architecture() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    assert!(sources(root).len() > 10, "tidy found too few sources");
    let violations = check_tree(root);
    assert!(
        violations.is_empty(),
        "the source tree breaks its invariants (see the rules in tests/tidy.rs; for panics, \
         handle the error or put `// invariant: <why this cannot fail>` on the line or just \
         above it):\n{}",
        violations
            .iter()
            .map(ToString::to_string)
            .collect::<Vec<_>>()
            .join("\n")
    );
}

#[test]
fn each_rule_catches_a_planted_violation() {
    let root = std::env::temp_dir().join(format!("passlane-tidy-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&root);
    let write = |rel: &str, text: &str| {
        let p = root.join(rel);
        std::fs::create_dir_all(p.parent().unwrap_or(&root)).unwrap_or_else(|e| panic!("{e}"));
        std::fs::write(&p, text).unwrap_or_else(|e| panic!("{e}"));
    };
    write(
        "crates/passlane-orbit/src/lib.rs",
        "pub fn at(t: chrono::NaiveDateTime) -> u8 { 0 }\n\
         pub fn fine(t: UtcTime) -> u8 { let x = sgp4::Elements::default(); 0 }\n\
         pub(crate) fn hidden(t: chrono::NaiveDateTime) {}\n",
    );
    write(
        "crates/passlane-orbit/src/propagate.rs",
        "use sgp4::Constants;\n",
    );
    write(
        "crates/passlane-plan/src/lib.rs",
        "fn read() { let _ = std::fs::read(\"x\"); println!(\"hi\"); }\n\
         #[cfg(test)]\nmod tests { fn t() { std::fs::read(\"x\").unwrap(); println!(); } }\n",
    );
    write(
        "crates/passlane-files/src/lib.rs",
        "fn f() { eprint!(\"x\"); let v: Option<u8> = None; v.unwrap(); }\n",
    );
    write(
        "crates/passlane-gui/src/app.rs",
        &"// a line\n".repeat(MAX_LINES + 1),
    );
    let got: Vec<String> = check_tree(&root).iter().map(ToString::to_string).collect();
    let _ = std::fs::remove_dir_all(&root);
    let expected = [
        "[one-time-type] crates/passlane-orbit/src/lib.rs:1:",
        "[sgp4-boundary] crates/passlane-orbit/src/lib.rs:2:",
        "[no-io] crates/passlane-plan/src/lib.rs:1: std::fs",
        "[no-printing] crates/passlane-plan/src/lib.rs:1: println!",
        "[no-printing] crates/passlane-files/src/lib.rs:1: eprint!",
        "[panics] crates/passlane-files/src/lib.rs:1: .unwrap()",
        "[file-size] crates/passlane-gui/src/app.rs:801:",
    ];
    for e in expected {
        assert!(
            got.iter().any(|g| g.starts_with(e)),
            "missing {e:?} in {got:#?}"
        );
    }
    // Nothing else: not the test module, not the pub(crate) item, not the
    // propagation module, not `print!` inside `eprint!`.
    assert_eq!(got.len(), expected.len(), "{got:#?}");
}

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    let Ok(entries) = std::fs::read_dir(dir) else {
        return;
    };
    for e in entries.flatten() {
        let p = e.path();
        if p.is_dir() {
            rust_files(&p, out);
        } else if p.extension().is_some_and(|x| x == "rs") {
            out.push(p);
        }
    }
}

/// `(1-based line, forbidden call)` for each unexplained call outside
/// `#[cfg(test)]` items.
fn violations_in(text: &str) -> Vec<(usize, &'static str)> {
    let code = code_only(text);
    let skip = test_lines(&code);
    let original: Vec<&str> = text.lines().collect();
    let mut out = Vec::new();
    for (i, line) in code.lines().enumerate() {
        if skip.get(i).copied().unwrap_or(false) {
            continue;
        }
        for pattern in FORBIDDEN {
            if line.contains(pattern) && !explained(&original, i) {
                out.push((i + 1, pattern));
            }
        }
    }
    out
}

/// Whether line `i` or the comment block right above it carries `// invariant:`.
fn explained(lines: &[&str], i: usize) -> bool {
    if lines.get(i).is_some_and(|l| l.contains("// invariant:")) {
        return true;
    }
    let mut j = i;
    while j > 0 {
        j -= 1;
        let l = lines[j].trim_start();
        if !l.starts_with("//") {
            return false;
        }
        if l.contains("// invariant:") {
            return true;
        }
    }
    false
}

/// The text with comments, string and char literals blanked out (newlines
/// kept), so that patterns and braces inside them are not seen.
fn code_only(text: &str) -> String {
    let b: Vec<char> = text.chars().collect();
    let mut out = String::with_capacity(text.len());
    let mut i = 0;
    let blank = |c: char| if c == '\n' { '\n' } else { ' ' };
    while i < b.len() {
        let c = b[i];
        let next = b.get(i + 1).copied();
        if c == '/' && next == Some('/') {
            while i < b.len() && b[i] != '\n' {
                out.push(' ');
                i += 1;
            }
        } else if c == '/' && next == Some('*') {
            let mut depth = 0;
            while i < b.len() {
                if b[i] == '/' && b.get(i + 1) == Some(&'*') {
                    depth += 1;
                    out.push_str("  ");
                    i += 2;
                } else if b[i] == '*' && b.get(i + 1) == Some(&'/') {
                    depth -= 1;
                    out.push_str("  ");
                    i += 2;
                    if depth == 0 {
                        break;
                    }
                } else {
                    out.push(blank(b[i]));
                    i += 1;
                }
            }
        } else if c == 'r' && (next == Some('"') || next == Some('#')) && !ident_before(&b, i) {
            // Raw string r"..." or r#"..."#.
            let mut j = i + 1;
            let mut hashes = 0;
            while b.get(j) == Some(&'#') {
                hashes += 1;
                j += 1;
            }
            if b.get(j) != Some(&'"') {
                out.push(c);
                i += 1;
                continue;
            }
            j += 1;
            while j < b.len() {
                if b[j] == '"' && (0..hashes).all(|k| b.get(j + 1 + k) == Some(&'#')) {
                    j += 1 + hashes;
                    break;
                }
                j += 1;
            }
            for &ch in &b[i..j.min(b.len())] {
                out.push(blank(ch));
            }
            i = j;
        } else if c == '"' {
            out.push(' ');
            i += 1;
            while i < b.len() && b[i] != '"' {
                if b[i] == '\\' {
                    out.push(' ');
                    i += 1;
                }
                if i < b.len() {
                    out.push(blank(b[i]));
                    i += 1;
                }
            }
            out.push(' ');
            i += 1;
        } else if c == '\'' {
            // A char literal ('x', '\n', '\u{..}') or a lifetime ('a).
            let close = if next == Some('\\') {
                (i + 2..b.len().min(i + 12)).find(|&j| b[j] == '\'')
            } else if b.get(i + 2) == Some(&'\'') {
                Some(i + 2)
            } else {
                None
            };
            match close {
                Some(j) => {
                    for _ in i..=j {
                        out.push(' ');
                    }
                    i = j + 1;
                }
                None => {
                    out.push(c);
                    i += 1;
                }
            }
        } else {
            out.push(c);
            i += 1;
        }
    }
    out
}

fn ident_before(b: &[char], i: usize) -> bool {
    i > 0 && (b[i - 1].is_alphanumeric() || b[i - 1] == '_')
}

/// Marks the lines that belong to an item under `#[cfg(test)]` (usually the
/// `mod tests { ... }` at the end of a file), by matching braces.
fn test_lines(code: &str) -> Vec<bool> {
    let lines: Vec<&str> = code.lines().collect();
    let mut skip = vec![false; lines.len()];
    let mut i = 0;
    while i < lines.len() {
        if !lines[i].trim_start().starts_with("#[cfg(test)]") {
            i += 1;
            continue;
        }
        // Skip from the attribute to the end of the item it is on.
        let mut depth = 0i64;
        let mut opened = false;
        let mut j = i;
        while j < lines.len() {
            skip[j] = true;
            for ch in lines[j].chars() {
                match ch {
                    '{' => {
                        depth += 1;
                        opened = true;
                    }
                    '}' => depth -= 1,
                    _ => {}
                }
            }
            let ends_without_body = !opened && lines[j].trim_end().ends_with(';');
            if (opened && depth <= 0) || ends_without_body {
                break;
            }
            j += 1;
        }
        i = j + 1;
    }
    skip
}

#[test]
fn the_scanner_sees_what_it_should() {
    let src = r##"
fn a() {
    let s = "x.unwrap() in a string";
    // a comment mentioning .unwrap()
    let c = '{';
    x.unwrap();
    // invariant: the list is never empty here.
    y.expect("non-empty");
    z.unwrap(); // invariant: checked above.
}
#[cfg(test)]
mod tests {
    fn t() { a.unwrap(); let r = r#"}"#; }
    fn u() { b.unwrap(); }
}
fn after() { panic!("boom"); }
"##;
    assert_eq!(violations_in(src), vec![(6, ".unwrap()"), (16, "panic!(")]);
}
