//! The one time type of the workspace.
//!
//! Conventions, written once:
//! - [`UtcTime`] is an instant on the UTC scale, stored as seconds since
//!   2000-01-01T12:00:00 UTC counted at 86,400 s per day. Leap seconds are not
//!   counted: an interval across a leap second is one second short, as in the
//!   element sets' own producers and in the `sgp4` crate (which works in UTC).
//! - The f64 count keeps about 0.1 µs of resolution for decades around 2000,
//!   far below the 1 ms the planners promise.
//! - UT1 is UTC plus a user-set offset (`ut1_utc_s`, default 0); see
//!   [`crate::frames::EarthOrientation`].
//! - Text form everywhere (command line, files): ISO 8601 UTC with a `Z`,
//!   e.g. `2026-12-01T12:00:00.000Z`. Output always carries milliseconds.

use std::fmt;

use chrono::{DateTime, Datelike, NaiveDate, NaiveDateTime, Timelike, Utc};

/// Seconds in a UTC day (no leap seconds).
pub const SECONDS_PER_DAY: f64 = 86_400.0;
/// Julian date of the J2000 reference instant 2000-01-01T12:00:00.
pub const JD_J2000: f64 = 2_451_545.0;

/// An instant on the UTC scale (see the module docs for the conventions).
#[derive(Copy, Clone, PartialEq, PartialOrd, Debug, Default)]
pub struct UtcTime {
    s_since_j2000: f64,
}

/// First calendar year any time may fall in: the first artificial satellite
/// was launched in 1957, so no element set, window or message predates it.
pub const FIRST_YEAR: i32 = 1957;
/// Last calendar year any time may fall in: mean elements say nothing useful
/// decades ahead, and a year far out is almost always a typing slip (a
/// leading `-` read as a negative year made a 380 s run of invented passes).
pub const LAST_YEAR: i32 = 2100;

/// A time string that could not be read as ISO 8601 UTC.
#[derive(Debug, Clone, PartialEq)]
pub struct TimeParseError {
    pub input: String,
    pub reason: String,
}

impl fmt::Display for TimeParseError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "cannot read {:?} as an ISO 8601 UTC time (e.g. 2026-12-01T12:00:00Z): {}",
            self.input, self.reason
        )
    }
}

impl std::error::Error for TimeParseError {}

impl UtcTime {
    /// The J2000 reference instant, 2000-01-01T12:00:00 UTC.
    pub const J2000: UtcTime = UtcTime { s_since_j2000: 0.0 };

    pub const fn from_s_since_j2000(s: f64) -> Self {
        UtcTime { s_since_j2000: s }
    }

    pub const fn s_since_j2000(self) -> f64 {
        self.s_since_j2000
    }

    /// Days since J2000 on the UTC scale.
    pub fn days_since_j2000(self) -> f64 {
        self.s_since_j2000 / SECONDS_PER_DAY
    }

    /// Julian date on the UTC scale.
    pub fn julian_date(self) -> f64 {
        JD_J2000 + self.days_since_j2000()
    }

    /// Julian centuries since J2000 on the UTC scale (used as TT for the
    /// low-precision Sun series, where the ~69 s difference is negligible).
    pub fn centuries_since_j2000(self) -> f64 {
        self.days_since_j2000() / 36_525.0
    }

    /// Builds a time from calendar fields; `second` may carry a fraction.
    /// Returns `None` for an impossible date or time of day.
    pub fn from_calendar(
        year: i32,
        month: u32,
        day: u32,
        hour: u32,
        minute: u32,
        second: f64,
    ) -> Option<Self> {
        if !(0.0..61.0).contains(&second) || hour > 23 || minute > 59 {
            return None;
        }
        let date = NaiveDate::from_ymd_opt(year, month, day)?;
        let days = (date - j2000_date()).num_days() as f64;
        Some(UtcTime {
            s_since_j2000: days * SECONDS_PER_DAY - 43_200.0
                + f64::from(hour) * 3600.0
                + f64::from(minute) * 60.0
                + second,
        })
    }

    /// Start of day `day_of_year` (1-based, may carry a fraction) of `year`,
    /// as in the TLE epoch field.
    pub fn from_year_and_day(year: i32, day_of_year: f64) -> Option<Self> {
        if !(1.0..367.0).contains(&day_of_year) {
            return None;
        }
        let jan1 = Self::from_calendar(year, 1, 1, 0, 0, 0.0)?;
        Some(jan1.add_s((day_of_year - 1.0) * SECONDS_PER_DAY))
    }

    /// Parses ISO 8601 / RFC 3339 UTC text: `2026-12-01T12:00:00Z`,
    /// `2026-12-01T12:00:00.250Z`, `2026-12-01 12:00:00`, `2026-12-01T12:00:00+00:00`,
    /// or a bare date `2026-12-01` (midnight). Text without a zone is read as UTC.
    pub fn parse_iso(text: &str) -> Result<Self, TimeParseError> {
        let t = text.trim();
        // The error quotes at most 64 characters: the text may be a whole
        // hostile line (megabytes) and the message goes to a terminal.
        let err = |reason: &str| TimeParseError {
            input: match text.char_indices().nth(64) {
                None => text.to_string(),
                Some((cut, _)) => format!("{}…", &text[..cut]),
            },
            reason: reason.to_string(),
        };
        if t.is_empty() {
            return Err(err("empty"));
        }
        // Every form ends here: the year span, and no leap second.
        let checked = |n: NaiveDateTime| {
            if n.nanosecond() >= 1_000_000_000 {
                return Err(err(
                    "second 60 is a leap second, and Passlane counts UTC without leap seconds (as SGP4 element sets and their producers do), so it has no instant of its own: give 23:59:59.999 or 00:00:00 of the next day",
                ));
            }
            if !(FIRST_YEAR..=LAST_YEAR).contains(&n.year()) {
                return Err(err(&format!(
                    "year {} is outside {FIRST_YEAR}-{LAST_YEAR} (no satellite flew before {FIRST_YEAR}; a leading '-' is read as a negative year)",
                    n.year()
                )));
            }
            Ok(Self::from_naive(n))
        };
        if let Ok(dt) = DateTime::parse_from_rfc3339(t) {
            return checked(dt.with_timezone(&Utc).naive_utc());
        }
        let naive = t.strip_suffix('Z').unwrap_or(t);
        for fmt in [
            "%Y-%m-%dT%H:%M:%S%.f",
            "%Y-%m-%d %H:%M:%S%.f",
            "%Y-%m-%dT%H:%M",
        ] {
            if let Ok(n) = NaiveDateTime::parse_from_str(naive, fmt) {
                return checked(n);
            }
        }
        if let Ok(d) = NaiveDate::parse_from_str(naive, "%Y-%m-%d") {
            return checked(d.and_hms_opt(0, 0, 0).ok_or_else(|| err("date"))?);
        }
        // Day-of-year form used by some OMM producers: 2026-335T12:00:00.
        if let Ok(n) = NaiveDateTime::parse_from_str(naive, "%Y-%jT%H:%M:%S%.f") {
            return checked(n);
        }
        Err(err("expected YYYY-MM-DDTHH:MM:SS[.fff]Z"))
    }

    /// The current time from the system clock.
    pub fn now() -> Self {
        Self::from_naive(Utc::now().naive_utc())
    }

    pub(crate) fn from_naive(n: NaiveDateTime) -> Self {
        let days = (n.date() - j2000_date()).num_days() as f64;
        let tod = f64::from(n.num_seconds_from_midnight()) + f64::from(n.nanosecond()) * 1e-9;
        UtcTime {
            s_since_j2000: days * SECONDS_PER_DAY - 43_200.0 + tod,
        }
    }

    /// The nearest microsecond as a chrono UTC time.
    pub(crate) fn to_naive(self) -> NaiveDateTime {
        let us_total = (self.s_since_j2000 * 1e6).round() as i64;
        let base = j2000_noon();
        base + chrono::TimeDelta::microseconds(us_total)
    }

    /// ISO 8601 UTC with milliseconds and `Z`, rounded to the nearest millisecond.
    pub fn to_iso_ms(self) -> String {
        self.iso_with_fraction(3)
    }

    /// ISO 8601 UTC with microseconds and `Z`, rounded to the nearest
    /// microsecond: for instants a root finder produced (AOS, LOS, maximum,
    /// TCA, volume entry and exit), so that a figure re-evaluated at the
    /// printed time is the figure printed.
    pub fn to_iso_us(self) -> String {
        self.iso_with_fraction(6)
    }

    /// Appends [`UtcTime::to_iso_us`]'s text to `out` without an
    /// allocation (for writers of long listings).
    pub fn push_iso_us(self, out: &mut Vec<u8>) {
        match self.iso_text(6) {
            // The bytes as they are (only ASCII is written): checking them
            // as UTF-8 was 0.7 % of a pass listing (callgrind).
            IsoLayout::Fixed(text) => out.extend_from_slice(text.as_bytes()),
            IsoLayout::Wide(text) => out.extend_from_slice(text.as_bytes()),
        }
    }

    /// The nearest whole millisecond (times on a printed grid).
    pub fn round_to_ms(self) -> Self {
        UtcTime {
            s_since_j2000: (self.s_since_j2000 * 1e3).round() / 1e3,
        }
    }

    /// ISO 8601 with `digits` (3 or 6) of seconds' fraction.
    fn iso_with_fraction(self, digits: u32) -> String {
        match self.iso_text(digits) {
            IsoLayout::Fixed(text) => text.as_str().to_string(),
            IsoLayout::Wide(text) => text,
        }
    }

    /// The ISO 8601 text of [`UtcTime::iso_with_fraction`], in a buffer on
    /// the stack for the years 0000–9999 (the serialisers write it without
    /// an allocation: a pass listing prints tens of thousands of times).
    fn iso_text(self, digits: u32) -> IsoLayout {
        if digits == 6 {
            self.iso_text_in::<1_000_000>(6)
        } else {
            self.iso_text_in::<1_000>(3)
        }
    }

    /// [`UtcTime::iso_text`] in units of 1/`PER_S` s (`PER_S` = 10^digits;
    /// a constant, so the divisions below are multiplications).
    fn iso_text_in<const PER_S: i64>(self, digits: usize) -> IsoLayout {
        // Whole units (ms or µs) since 2000-01-01T00:00:00, split into a day
        // number and a time of day, then the civil date by Hinnant's
        // days-to-civil algorithm: exact, and far cheaper than a general
        // formatter (outputs print thousands of these).
        let units = (self.s_since_j2000 * PER_S as f64).round();
        // Far inside i64 for any date that means something (±3,000 years in µs).
        if !units.is_finite() || units.abs() > 1e17 {
            return IsoLayout::Wide("invalid-time".to_string());
        }
        let since_midnight_2000 = units as i64 + 43_200 * PER_S;
        let day = since_midnight_2000.div_euclid(86_400 * PER_S);
        let of_day = since_midnight_2000.rem_euclid(86_400 * PER_S);
        let (y, m, d) = civil_from_days(day + 10_957);
        let (h, rest) = (of_day / (3_600 * PER_S), of_day % (3_600 * PER_S));
        let (min, rest) = (rest / (60 * PER_S), rest % (60 * PER_S));
        let (sec, frac) = (rest / PER_S, rest % PER_S);
        if !(0..=9999).contains(&y) {
            return IsoLayout::Wide(format!(
                "{y:04}-{m:02}-{d:02}T{h:02}:{min:02}:{sec:02}.{frac:0digits$}Z"
            ));
        }
        // Digits written in pairs at fixed places of a template: `format!`
        // with padded fields cost about ten times as much.
        let mut bytes = *b"0000-00-00T00:00:00.000000Z";
        let mut put = |at: usize, v: i64| {
            let i = 2 * (v as usize % 100);
            bytes[at] = DIGIT_PAIRS[i];
            bytes[at + 1] = DIGIT_PAIRS[i + 1];
        };
        put(0, y / 100);
        put(2, y % 100);
        put(5, m);
        put(8, d);
        put(11, h);
        put(14, min);
        put(17, sec);
        if digits == 6 {
            put(20, frac / 10_000);
            put(22, frac / 100 % 100);
            put(24, frac % 100);
        } else {
            put(20, frac / 10);
            bytes[22] = b'0' + (frac % 10) as u8;
            bytes[23] = b'Z';
        }
        IsoLayout::Fixed(IsoText {
            bytes,
            len: 21 + digits,
        })
    }

    /// ISO 8601 UTC rounded to the second, without fraction (for tables).
    pub fn to_iso_s(self) -> String {
        let s_total = self.s_since_j2000.round() as i64;
        let n = j2000_noon() + chrono::TimeDelta::seconds(s_total);
        n.format("%Y-%m-%dT%H:%M:%SZ").to_string()
    }

    /// Calendar year of this instant.
    pub fn year(self) -> i32 {
        self.to_naive().year()
    }

    pub fn add_s(self, s: f64) -> Self {
        UtcTime {
            s_since_j2000: self.s_since_j2000 + s,
        }
    }

    /// `self - earlier`, in seconds.
    pub fn s_since(self, earlier: UtcTime) -> f64 {
        self.s_since_j2000 - earlier.s_since_j2000
    }

    pub fn is_finite(self) -> bool {
        self.s_since_j2000.is_finite()
    }

    pub fn min(self, other: Self) -> Self {
        if other < self { other } else { self }
    }

    pub fn max(self, other: Self) -> Self {
        if other > self { other } else { self }
    }
}

impl fmt::Display for UtcTime {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.to_iso_ms())
    }
}

impl std::str::FromStr for UtcTime {
    type Err = TimeParseError;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        Self::parse_iso(s)
    }
}

/// Serialises an instant with microseconds, for fields a root finder
/// produced: `#[serde(serialize_with = "passlane_orbit::time::iso_us")]`.
pub fn iso_us<S: serde::Serializer>(t: &UtcTime, s: S) -> Result<S::Ok, S::Error> {
    t.iso_text(6).serialize(s)
}

impl serde::Serialize for UtcTime {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        self.iso_text(3).serialize(s)
    }
}

impl<'de> serde::Deserialize<'de> for UtcTime {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let text = <std::borrow::Cow<'de, str>>::deserialize(d)?;
        UtcTime::parse_iso(&text).map_err(serde::de::Error::custom)
    }
}

/// Civil date (year, month, day) of a day count from 1970-01-01 (H. Hinnant,
/// "chrono-Compatible Low-Level Date Algorithms", `civil_from_days`).
fn civil_from_days(z: i64) -> (i64, i64, i64) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let y = yoe + era * 400;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    (if m <= 2 { y + 1 } else { y }, m, d)
}

fn j2000_date() -> NaiveDate {
    // Invariant: 2000-01-01 is a valid calendar date.
    NaiveDate::from_ymd_opt(2000, 1, 1).unwrap_or_default()
}

fn j2000_noon() -> NaiveDateTime {
    j2000_date().and_hms_opt(12, 0, 0).unwrap_or_default()
}

/// An ISO 8601 time of the years 0000–9999, at most
/// `YYYY-MM-DDTHH:MM:SS.ffffffZ` (27 bytes, ASCII).
struct IsoText {
    bytes: [u8; 27],
    len: usize,
}

/// "00" to "99", two bytes each.
const DIGIT_PAIRS: &[u8; 200] = b"\
    0001020304050607080910111213141516171819\
    2021222324252627282930313233343536373839\
    4041424344454647484950515253545556575859\
    6061626364656667686970717273747576777879\
    8081828384858687888990919293949596979899";

impl IsoText {
    fn as_bytes(&self) -> &[u8] {
        &self.bytes[..self.len]
    }

    fn as_str(&self) -> &str {
        // Only ASCII digits and separators are ever written.
        std::str::from_utf8(&self.bytes[..self.len]).unwrap_or("invalid-time")
    }
}

enum IsoLayout {
    Fixed(IsoText),
    /// Outside the fixed layout (other years, or not a time).
    Wide(String),
}

impl IsoLayout {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        match self {
            IsoLayout::Fixed(text) => s.serialize_str(text.as_str()),
            IsoLayout::Wide(text) => s.serialize_str(text),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn iso_round_trip_keeps_milliseconds() {
        let t = UtcTime::parse_iso("2026-12-01T12:34:56.789Z").unwrap();
        assert_eq!(t.to_iso_ms(), "2026-12-01T12:34:56.789Z");
        let t = UtcTime::parse_iso("2026-12-01T23:59:59.9996Z").unwrap();
        assert_eq!(t.to_iso_ms(), "2026-12-02T00:00:00.000Z");
    }

    #[test]
    fn j2000_is_noon_of_first_january_2000() {
        // Definition of the J2000.0 epoch (IAU): JD 2451545.0 = 2000-01-01T12:00 TT;
        // here on the UTC scale by the module's convention.
        let t = UtcTime::parse_iso("2000-01-01T12:00:00Z").unwrap();
        assert_eq!(t.s_since_j2000(), 0.0);
        assert_eq!(t.julian_date(), 2_451_545.0);
    }

    #[test]
    fn accepts_the_usual_spellings() {
        let a = UtcTime::parse_iso("2026-12-01T12:00:00Z").unwrap();
        for s in [
            "2026-12-01T12:00:00",
            "2026-12-01 12:00:00",
            "2026-12-01T12:00:00+00:00",
            "2026-12-01T13:00:00+01:00",
            "2026-12-01T12:00",
            "2026-335T12:00:00",
        ] {
            assert_eq!(UtcTime::parse_iso(s).unwrap(), a, "{s}");
        }
        assert!(UtcTime::parse_iso("yesterday").is_err());
        assert!(UtcTime::parse_iso("").is_err());
    }

    #[test]
    fn fast_formatter_agrees_with_chrono() {
        // Every 7,777,777.777 s over 1957–2100 (the years times may have), plus day and leap-year edges.
        let mut t = UtcTime::parse_iso("1957-01-01T00:00:00Z").unwrap();
        let end = UtcTime::parse_iso("2100-01-01T00:00:00Z").unwrap();
        while t < end {
            let ms = (t.s_since_j2000() * 1e3).round() as i64;
            let n = j2000_noon() + chrono::TimeDelta::milliseconds(ms);
            assert_eq!(
                t.to_iso_ms(),
                n.format("%Y-%m-%dT%H:%M:%S%.3fZ").to_string()
            );
            let us = (t.s_since_j2000() * 1e6).round() as i64;
            let n = j2000_noon() + chrono::TimeDelta::microseconds(us);
            assert_eq!(
                t.to_iso_us(),
                n.format("%Y-%m-%dT%H:%M:%S%.6fZ").to_string()
            );
            t = t.add_s(7_777_777.777_123);
        }
        for s in [
            "2000-02-29T23:59:59.999Z",
            "2100-02-28T00:00:00.000Z",
            "1999-12-31T23:59:59.999Z",
        ] {
            assert_eq!(UtcTime::parse_iso(s).unwrap().to_iso_ms(), s);
        }
        let t = UtcTime::parse_iso("2026-12-01T10:20:30.123456Z").unwrap();
        assert_eq!(t.to_iso_us(), "2026-12-01T10:20:30.123456Z");
        assert_eq!(t.round_to_ms().to_iso_us(), "2026-12-01T10:20:30.123000Z");
    }

    #[test]
    fn tle_day_of_year() {
        // 26335.5 = 2026-12-01T12:00Z (1 December is day 335 of a common year).
        let t = UtcTime::from_year_and_day(2026, 335.5).unwrap();
        assert_eq!(t.to_iso_ms(), "2026-12-01T12:00:00.000Z");
    }
}
