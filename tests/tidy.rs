//! Tidy: invariants of the source tree that the compiler does not enforce.
//!
//! Library and command-line code must not panic on bad input, so outside
//! `#[cfg(test)]` items it may not call `.unwrap()`, `.expect(`, `panic!(`,
//! `unreachable!(`, `todo!(` or `unimplemented!(` unless the line, or a line of
//! the comment block right above it, says why failure is impossible with a
//! comment starting `// invariant:`. Slice indexing is allowed (bounds are
//! checked by the code around it and reviewed, not by this test).
//!
//! The workspace's clippy lints (`unwrap_used`, `expect_used`, `panic`) say the
//! same, but only as warnings and only when someone runs clippy; this test
//! runs with every `cargo test`.

use std::path::{Path, PathBuf};

const FORBIDDEN: [&str; 6] = [
    ".unwrap()",
    ".expect(",
    "panic!(",
    "unreachable!(",
    "todo!(",
    "unimplemented!(",
];

#[test]
fn no_unexplained_panics_outside_tests() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let mut files = Vec::new();
    rust_files(&root.join("src"), &mut files);
    if let Ok(entries) = std::fs::read_dir(root.join("crates")) {
        for e in entries.flatten() {
            rust_files(&e.path().join("src"), &mut files);
        }
    }
    files.sort();
    assert!(files.len() > 10, "tidy found too few sources: {files:?}");

    let mut violations = Vec::new();
    for file in &files {
        let Ok(text) = std::fs::read_to_string(file) else {
            continue;
        };
        let shown = file
            .strip_prefix(root)
            .unwrap_or(file)
            .display()
            .to_string();
        for (line_no, what) in violations_in(&text) {
            violations.push(format!("{shown}:{line_no}: {what}"));
        }
    }
    assert!(
        violations.is_empty(),
        "library code may not panic without a stated invariant; handle the error, or put \
         `// invariant: <why this cannot fail>` on the line or just above it:\n{}",
        violations.join("\n")
    );
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
