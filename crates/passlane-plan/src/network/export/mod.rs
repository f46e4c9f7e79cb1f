//! Hand-off files from a network plan, each written to any `std::io::Write`
//! (the caller chooses the file and writes it atomically):
//!
//! - [`table`]: the plan as CSV and JSON, one row per kept contact;
//! - [`ical`]: iCalendar (RFC 5545), one event per contact with a UID derived
//!   from what identifies the contact, so a re-imported plan updates events;
//! - [`pointing`]: per-contact pointing tables as CSV;
//! - [`oem`]: CCSDS Orbit Ephemeris Messages (502.0-B-3, KVN or XML) per spacecraft;
//! - [`hand_off`]: all of them for one plan, as the set of files of a
//!   hand-off folder (paths and contents) for the file writer.
//!
//! Nothing here computes a plan or touches the file system.

pub mod hand_off;
pub mod ical;
pub mod oem;
pub mod pointing;
pub mod table;

pub use hand_off::{HandOff, HandOffContext, HandOffFile, hand_off_files, is_hand_off_path};
pub use ical::write_icalendar;
pub use oem::{OemFrame, OemOptions, oem_states, oem_step_s, write_oem};
pub use pointing::{pointing_file_name, write_pointing_csv};
pub use table::{write_plan_csv, write_plan_json};

/// One CSV field (RFC 4180), the only way a text value enters a CSV file
/// the tool writes: quoted when it holds a comma, quote or line break (a
/// quote doubled); any other control character (NUL, escape, ...), which
/// RFC 4180's TEXTDATA excludes and which spreadsheet and terminal readers
/// mishandle, becomes U+FFFD so the reader sees that something was there.
pub fn csv_field(s: &str) -> String {
    let s: String = s
        .chars()
        .map(|c| {
            if c.is_control() && !matches!(c, '\n' | '\r' | '\t') {
                '\u{FFFD}'
            } else {
                c
            }
        })
        .collect();
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s
    }
}

/// Longest slug in a file name, bytes: a longer name is cut to
/// [`SLUG_KEEP_BYTES`] and followed by `-` and 8 hex digits of a hash of the
/// whole name, so a 300-character station, antenna or spacecraft name gives
/// a file name well inside the 255-byte limit of file systems, and two long
/// names that share their first 40 characters still differ.
pub const MAX_SLUG_BYTES: usize = 48;
/// What is kept of a long name (see [`MAX_SLUG_BYTES`]).
pub const SLUG_KEEP_BYTES: usize = 39;

/// A name for a file name: ASCII letters, digits and single dashes, at most
/// [`MAX_SLUG_BYTES`] long (truncated with a short stable hash).
pub fn slug(s: &str) -> String {
    let full = slug_unbounded(s);
    if full.len() <= MAX_SLUG_BYTES {
        return full;
    }
    // ASCII only, so any byte index is a character boundary.
    let kept = full[..SLUG_KEEP_BYTES].trim_end_matches('-');
    format!("{kept}-{}", short_hash(s))
}

/// 8 hex digits of the 64-bit FNV-1a hash of `s`: stable across runs,
/// builds and platforms.
pub fn short_hash(s: &str) -> String {
    format!("{:08x}", fnv1a_64(s.as_bytes()) >> 32)
}

/// 64-bit FNV-1a: fixed constants, the same on every platform and build
/// (the standard library's hasher makes no such promise).
pub(crate) fn fnv1a_64(bytes: &[u8]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for &b in bytes {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    h
}

fn slug_unbounded(s: &str) -> String {
    let mut out = String::new();
    for ch in s.chars() {
        if ch.is_ascii_alphanumeric() {
            out.push(ch);
        } else if !out.ends_with('-') && !out.is_empty() {
            out.push('-');
        }
    }
    while out.ends_with('-') {
        out.pop();
    }
    if out.is_empty() { "x".to_string() } else { out }
}
