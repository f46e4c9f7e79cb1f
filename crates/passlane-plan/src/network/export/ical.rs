//! iCalendar (RFC 5545) export: one `VEVENT` per kept contact.
//!
//! What the RFC asks for and how it is met here:
//! - lines end in CRLF and are folded so that no line exceeds 75 octets (a
//!   continuation starts with one space; a UTF-8 character is never split);
//! - TEXT values escape backslash, semicolon, comma and newline (§3.3.11);
//! - times are UTC date-times with a `Z` (`DTSTART:20261201T031200Z`), whole
//!   seconds (the contact's AOS and LOS rounded to the nearest second);
//! - every event carries `UID` and `DTSTAMP` (§3.6.1).
//!
//! UIDs are derived from what identifies a contact (catalog number, station,
//! antenna, AOS rounded to the minute) through 64-bit FNV-1a, so a plan made
//! again, or updated, gives the same UID for the same contact and a calendar
//! that re-imports it updates the event instead of adding a second one. A
//! contact whose AOS moves across a minute boundary gets a new UID. `DTSTAMP`
//! is the caller's creation time (a parameter, so output is reproducible).

use std::io::{self, Write};

use passlane_orbit::UtcTime;

use super::fnv1a_64;
use crate::schedule::{Plan, PlannedContact};

/// Writes the plan as one VCALENDAR.
pub fn write_icalendar(
    w: &mut dyn Write,
    plan: &Plan,
    stamp: UtcTime,
    calendar_name: &str,
) -> io::Result<()> {
    let mut lines: Vec<String> = vec![
        "BEGIN:VCALENDAR".into(),
        "VERSION:2.0".into(),
        "PRODID:-//Passlane//Network contact plan//EN".into(),
        "CALSCALE:GREGORIAN".into(),
        "METHOD:PUBLISH".into(),
    ];
    if !calendar_name.is_empty() {
        // A widely read extension property; RFC 5545 allows X- names (§3.8.8.2).
        lines.push(format!("X-WR-CALNAME:{}", escape_text(calendar_name)));
    }
    for c in &plan.contacts {
        lines.push("BEGIN:VEVENT".into());
        lines.push(format!("UID:{}", contact_uid(c)));
        lines.push(format!("DTSTAMP:{}", ical_time(stamp)));
        lines.push(format!("DTSTART:{}", ical_time(c.aos)));
        lines.push(format!("DTEND:{}", ical_time(c.los)));
        lines.push(format!("SUMMARY:{}", escape_text(&summary(c))));
        lines.push(format!("LOCATION:{}", escape_text(&c.station)));
        lines.push(format!("DESCRIPTION:{}", escape_text(&description(c))));
        lines.push("TRANSP:OPAQUE".into());
        lines.push("END:VEVENT".into());
    }
    lines.push("END:VCALENDAR".into());
    for l in lines {
        w.write_all(fold(&l).as_bytes())?;
    }
    Ok(())
}

/// The event title, e.g. "KRSL-5 FIRTHEN: Northfell / NF-A 3.7 m".
pub fn summary(c: &PlannedContact) -> String {
    format!("{}: {} / {}", c.spacecraft, c.station, c.antenna)
}

/// The event text. Times to the second, like DTSTART/DTEND (the plan CSV and
/// pointing files carry milliseconds), so that a calendar entry does not
/// change with sub-second refinements of the pass finder.
fn description(c: &PlannedContact) -> String {
    let mut d = format!(
        "Spacecraft {} (catalog {})\nStation {}, antenna {}\nAOS {}, LOS {} ({:.0} s)\nMax elevation {:.1} deg",
        c.spacecraft,
        c.catalog_number,
        c.station,
        c.antenna,
        c.aos.to_iso_s(),
        c.los.to_iso_s(),
        c.duration_s,
        c.max_elevation_deg
    );
    if !c.channels.is_empty() {
        d.push_str(&format!("\nChannels: {}", c.channels.join(", ")));
    }
    if c.volume_mb > 0.0 {
        d.push_str(&format!("\nExpected downlink {:.1} MB", c.volume_mb));
    }
    if c.pinned {
        d.push_str("\nPinned by the operator");
    }
    d
}

/// The stable UID of a contact (see the module docs).
pub fn contact_uid(c: &PlannedContact) -> String {
    let minute = (c.aos.s_since_j2000() / 60.0).round() as i64;
    let key = format!(
        "{}|{}|{}|{}",
        c.catalog_number, c.station, c.antenna, minute
    );
    format!(
        "{:016x}-{}@passlane",
        fnv1a_64(key.as_bytes()),
        c.catalog_number
    )
}

/// `YYYYMMDDTHHMMSSZ`, rounded to the second.
pub fn ical_time(t: UtcTime) -> String {
    t.to_iso_s()
        .chars()
        .filter(|ch| *ch != '-' && *ch != ':')
        .collect()
}

/// TEXT escaping of RFC 5545 §3.3.11 (backslash, semicolon, comma, line
/// break), control characters replaced; every text value of the calendar
/// goes through it.
pub fn escape_text(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for ch in s.chars() {
        match ch {
            '\\' => out.push_str("\\\\"),
            ';' => out.push_str("\\;"),
            ',' => out.push_str("\\,"),
            '\n' => out.push_str("\\n"),
            '\r' => {}
            // TEXT excludes control characters other than HTAB (§3.3.11,
            // §3.1 CONTROL): NUL, escape and the like become U+FFFD.
            c if c.is_control() && c != '\t' => out.push('\u{FFFD}'),
            _ => out.push(ch),
        }
    }
    out
}

/// Folds one content line at 75 octets (§3.1) and ends it with CRLF.
pub fn fold(line: &str) -> String {
    let mut out = String::with_capacity(line.len() + 8);
    let mut used = 0usize;
    for ch in line.chars() {
        let n = ch.len_utf8();
        if used + n > 75 {
            out.push_str("\r\n ");
            used = 1;
        }
        out.push(ch);
        used += n;
    }
    out.push_str("\r\n");
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn folds_at_75_octets_without_splitting_characters() {
        let line = format!("SUMMARY:{}", "é".repeat(60));
        let folded = fold(&line);
        for l in folded.split("\r\n").filter(|l| !l.is_empty()) {
            assert!(l.len() <= 75, "{} octets", l.len());
        }
        let unfolded = folded.replace("\r\n ", "");
        assert_eq!(unfolded, format!("{line}\r\n"));
    }

    #[test]
    fn escapes_text() {
        assert_eq!(escape_text("a,b;c\\d\ne"), "a\\,b\\;c\\\\d\\ne");
    }

    #[test]
    fn fnv_reference_values() {
        // Published FNV-1a 64 test vectors (the algorithm's reference page): "" and "a".
        assert_eq!(fnv1a_64(b""), 0xcbf29ce484222325);
        assert_eq!(fnv1a_64(b"a"), 0xaf63dc4c8601ec8c);
    }
}
