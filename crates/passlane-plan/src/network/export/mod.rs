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

pub use hand_off::{HandOff, HandOffContext, HandOffFile, hand_off_files};
pub use ical::write_icalendar;
pub use oem::{OemFrame, OemOptions, oem_states, oem_step_s, write_oem};
pub use pointing::{pointing_file_name, write_pointing_csv};
pub use table::{write_plan_csv, write_plan_json};

/// Quotes a CSV field when it holds a comma, quote or newline (RFC 4180).
pub fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// A name reduced to ASCII letters, digits and single dashes, for file names.
pub fn slug(s: &str) -> String {
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
