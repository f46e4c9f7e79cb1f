//! Invented element records shared by the element-reader tests (the first
//! three of the demo fleet), and helpers to edit and combine them.

#![allow(dead_code, clippy::unwrap_used)]

use passlane_orbit::elements::{LoadReport, tle_checksum};

pub const ORMIVEL: [&str; 3] = [
    "KRSL-1 ORMIVEL",
    "1 90001U 26901A   26335.21354167  .00000876  00000-0  21000-3 0  9993",
    "2 90001  97.4021  45.1200 0010170  88.1000 272.0000 15.20279803 12341",
];

pub const BREVANDT: [&str; 3] = [
    "KRSL-2 BREVANDT",
    "1 90002U 26901B   26335.22100000  .00000876  00000-0  24000-3 0  9993",
    "2 90002  97.4033  45.3100 0010171  91.4000 250.0000 15.20611168 12333",
];

pub const LUNNOCK: [&str; 3] = [
    "KRSL-3 LUNNOCK",
    "1 90003U 26902A   26335.40312500  .00000876  00000-0  16000-3 0  9996",
    "2 90003  97.5712 312.4400 0010828 120.7000 239.5000 15.05981034  8719",
];

pub fn fix_checksum(line: &str) -> String {
    let mut s = line[..68].to_string();
    s.push(char::from(b'0' + tle_checksum(s.as_bytes())));
    s
}

/// Replaces columns `first..=last` (1-based) of `line` and recomputes the checksum.
pub fn edit(line: &str, first: usize, text: &str) -> String {
    let mut s = line.to_string();
    s.replace_range(first - 1..first - 1 + text.len(), text);
    fix_checksum(&s)
}

/// ORMIVEL (lines 1-3), then `middle` (from line 4), then LUNNOCK.
pub fn around(middle: &[String]) -> Vec<u8> {
    let mut lines: Vec<String> = ORMIVEL.iter().map(|s| s.to_string()).collect();
    lines.extend(middle.iter().cloned());
    lines.extend(LUNNOCK.iter().map(|s| s.to_string()));
    (lines.join("\n") + "\n").into_bytes()
}

pub fn brevandt() -> Vec<String> {
    BREVANDT.iter().map(|s| s.to_string()).collect()
}

pub fn catalogs(r: &LoadReport) -> Vec<u32> {
    r.sets.iter().map(|s| s.catalog_number).collect()
}
