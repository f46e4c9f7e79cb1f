//! TLE reader: 2-line and 3-line element sets, read field by field by column.
//!
//! Column layout (common practice, 1-based, inclusive):
//!
//! | line 1 | field                                   | line 2 | field                    |
//! |--------|-----------------------------------------|--------|--------------------------|
//! | 1      | line number `1`                         | 1      | line number `2`          |
//! | 3-7    | catalog number (or Alpha-5)             | 3-7    | catalog number           |
//! | 8      | classification                          | 9-16   | inclination, deg         |
//! | 10-17  | international designator                | 18-25  | RAAN, deg                |
//! | 19-32  | epoch `YYDDD.DDDDDDDD`                  | 27-33  | eccentricity (leading decimal point assumed) |
//! | 34-43  | ndot/2, rev/day²                        | 35-42  | argument of perigee, deg |
//! | 45-52  | nddot/6, rev/day³ (assumed-decimal exponent form) | 44-51 | mean anomaly, deg |
//! | 54-61  | BSTAR, 1/Earth radii (same form)        | 53-63  | mean motion, rev/day     |
//! | 63     | ephemeris type                          | 64-68  | revolution number        |
//! | 65-68  | element set number                      |        |                          |
//! | 69     | checksum (mod 10; digits count their value, `-` counts 1) | 69 | checksum |
//!
//! The reader does not trust any other parser: every field is checked and a
//! problem is reported with its line and columns. It works on bytes, so binary
//! input or invalid UTF-8 yields diagnostics rather than a failure, and a
//! giant line is looked at once and reported once.

use chrono::{NaiveDate, TimeDelta};

use super::lines::{excerpt, lines, trim_end};
use super::{Diagnostic, ElementSet, LoadOptions, LoadReport, Severity, SourceRef};
use crate::time::UtcTime;

/// Checksum digit of a TLE line: the sum of the digits of columns 1-68, with
/// each `-` counting 1, modulo 10 (common practice).
pub fn tle_checksum(line: &[u8]) -> u8 {
    let mut sum = 0u32;
    for &b in line.iter().take(68) {
        if b.is_ascii_digit() {
            sum += u32::from(b - b'0');
        } else if b == b'-' {
            sum += 1;
        }
    }
    (sum % 10) as u8
}

/// Length of a TLE element line.
const LINE_LEN: usize = 69;
/// Longest line accepted as a satellite name (names are usually at most 24
/// characters; some sources write longer ones).
const MAX_NAME_LEN: usize = 80;

/// Fields of line 1: first column, last column, name.
const LINE1_FIELDS: &[(usize, usize, &str)] = &[
    (1, 1, "line number"),
    (3, 7, "catalog number"),
    (8, 8, "classification"),
    (10, 17, "international designator"),
    (19, 32, "epoch"),
    (34, 43, "mean motion derivative"),
    (45, 52, "mean motion second derivative"),
    (54, 61, "BSTAR"),
    (63, 63, "ephemeris type"),
    (65, 68, "element set number"),
    (69, 69, "checksum"),
];

/// Fields of line 2: first column, last column, name.
const LINE2_FIELDS: &[(usize, usize, &str)] = &[
    (1, 1, "line number"),
    (3, 7, "catalog number"),
    (9, 16, "inclination"),
    (18, 25, "RAAN"),
    (27, 33, "eccentricity"),
    (35, 42, "argument of perigee"),
    (44, 51, "mean anomaly"),
    (53, 63, "mean motion"),
    (64, 68, "revolution number"),
    (69, 69, "checksum"),
];

/// Columns that separate the fields and must be blank.
const LINE1_BLANKS: &[usize] = &[2, 9, 18, 33, 44, 53, 62, 64];
const LINE2_BLANKS: &[usize] = &[2, 8, 17, 26, 34, 43, 52];

/// `columns A-B (name)` or `column A (name)`.
fn columns(first: usize, last: usize, name: &str) -> String {
    if first == last {
        format!("column {first} ({name})")
    } else {
        format!("columns {first}-{last} ({name})")
    }
}

#[derive(Clone, Copy, PartialEq, Eq)]
enum Kind {
    Line1,
    Line2,
    Other,
}

fn kind(line: &[u8]) -> Kind {
    let element = line.len() == 1 || line.get(1) == Some(&b' ');
    match line.first() {
        Some(b'1') if element => Kind::Line1,
        Some(b'2') if element => Kind::Line2,
        _ => Kind::Other,
    }
}

/// Lines that are neither blank nor `#` comments, trailing blanks removed.
fn significant(bytes: &[u8]) -> impl Iterator<Item = (usize, &[u8])> {
    lines(bytes)
        .map(|(n, l)| (n, trim_end(l)))
        .filter(|(_, l)| !l.is_empty() && l.first() != Some(&b'#'))
}

/// A run of consecutive lines that belong to no record, reported once.
struct Stray {
    first: usize,
    last: usize,
    count: usize,
    reason: String,
}

struct Reader<'a> {
    file: &'a str,
    options: LoadOptions,
    report: &'a mut LoadReport,
    stray: Option<Stray>,
}

impl Reader<'_> {
    fn diag(&self, severity: Severity, line: usize, field: String, message: String) -> Diagnostic {
        Diagnostic {
            severity,
            file: self.file.to_string(),
            line,
            field,
            message,
        }
    }

    fn push(&mut self, d: Diagnostic) {
        self.flush_stray();
        self.report.diagnostics.push(d);
    }

    fn stray(&mut self, line: usize, reason: String) {
        match &mut self.stray {
            Some(s) => {
                s.last = line;
                s.count += 1;
            }
            None => {
                self.stray = Some(Stray {
                    first: line,
                    last: line,
                    count: 1,
                    reason,
                })
            }
        }
    }

    fn flush_stray(&mut self) {
        if let Some(s) = self.stray.take() {
            let mut message = s.reason;
            if s.count > 1 {
                message.push_str(&format!(
                    " (and {} more lines like it, through line {})",
                    s.count - 1,
                    s.last
                ));
            }
            let d = self.diag(Severity::Error, s.first, String::new(), message);
            self.report.diagnostics.push(d);
        }
    }
}

/// Why a line that is not an element line cannot be a name line, if it cannot.
fn not_a_name(line: &[u8]) -> Option<String> {
    if line.len() > MAX_NAME_LEN {
        return Some(format!(
            "not a TLE line: {} bytes long, while a name line has at most {MAX_NAME_LEN} characters and an element line 69 (starts {:?})",
            line.len(),
            excerpt(line)
        ));
    }
    match std::str::from_utf8(line) {
        Err(_) => Some(format!(
            "not a TLE line: not valid UTF-8 text ({:?})",
            excerpt(line)
        )),
        Ok(s) if s.chars().any(|c| c.is_control() && c != '\t') => Some(format!(
            "not a TLE line: contains control characters ({:?})",
            excerpt(line)
        )),
        Ok(_) => None,
    }
}

pub(super) fn load_tle(bytes: &[u8], file: &str, options: LoadOptions, report: &mut LoadReport) {
    let before_sets = report.sets.len();
    let before_errors = report.errors().count();
    let mut r = Reader {
        file,
        options,
        report,
        stray: None,
    };
    let mut it = significant(bytes).peekable();
    // The name line waiting for its element lines: line number and text.
    let mut name: Option<(usize, String)> = None;
    while let Some((n, line)) = it.next() {
        match kind(line) {
            Kind::Line1 => {
                let record_name = name.take();
                match it.peek() {
                    Some(&(n2, line2)) if kind(line2) == Kind::Line2 => {
                        it.next();
                        r.flush_stray();
                        read_record(&mut r, record_name, (n, line), (n2, line2));
                    }
                    next => {
                        let what = match next {
                            Some((n2, l2)) => {
                                format!("line {n2} ({:?}) is not a line 2", excerpt(l2))
                            }
                            None => "the file ends here (truncated?)".to_string(),
                        };
                        let d = r.diag(
                            Severity::Error,
                            n,
                            columns(1, 1, "line number"),
                            format!("line 1 is not followed by its line 2: {what}; record skipped"),
                        );
                        r.push(d);
                    }
                }
            }
            Kind::Line2 => {
                let d = r.diag(
                    Severity::Error,
                    n,
                    columns(1, 1, "line number"),
                    "line 2 without a line 1 before it; record skipped".to_string(),
                );
                name = None;
                r.push(d);
            }
            Kind::Other => match not_a_name(line) {
                Some(reason) => {
                    if let Some((pn, _)) = name.take() {
                        r.stray(pn, "name line not followed by a TLE line 1".to_string());
                    }
                    r.stray(n, reason);
                }
                None => {
                    let text = String::from_utf8_lossy(line);
                    let text = text.strip_prefix("0 ").unwrap_or(&text).trim().to_string();
                    if let Some((pn, _)) = name.replace((n, text)) {
                        r.stray(pn, "name line not followed by a TLE line 1".to_string());
                    }
                }
            },
        }
    }
    if let Some((pn, _)) = name {
        r.stray(
            pn,
            "name line not followed by a TLE line 1 (file truncated?)".to_string(),
        );
    }
    r.flush_stray();
    if r.report.sets.len() == before_sets && r.report.errors().count() == before_errors {
        let d = r.diag(
            Severity::Error,
            0,
            String::new(),
            "no TLE records found".to_string(),
        );
        r.report.diagnostics.push(d);
    }
}

/// One element line being read.
#[derive(Clone, Copy)]
struct ElementLine<'a> {
    number: usize,
    which: u8,
    text: &'a [u8],
}

impl<'a> ElementLine<'a> {
    fn fields(&self) -> &'static [(usize, usize, &'static str)] {
        if self.which == 1 {
            LINE1_FIELDS
        } else {
            LINE2_FIELDS
        }
    }

    /// Text of columns `first..=last` (the line is ASCII and long enough when
    /// this is called).
    fn cols(&self, first: usize, last: usize) -> &'a str {
        let end = last.min(self.text.len());
        let start = (first - 1).min(end);
        std::str::from_utf8(&self.text[start..end]).unwrap_or("")
    }
}

/// Structural checks of one element line: length, characters, blank
/// separators, checksum. Returns the line cut to 69 columns, or the error.
fn check_line<'a>(r: &mut Reader<'_>, l: ElementLine<'a>) -> Result<ElementLine<'a>, Diagnostic> {
    let which = l.which;
    let len = l.text.len();
    if len < LINE_LEN {
        let missing: Vec<&str> = l
            .fields()
            .iter()
            .filter(|(_, last, _)| *last > len)
            .map(|(_, _, name)| *name)
            .collect();
        return Err(r.diag(
            Severity::Error,
            l.number,
            format!("columns {}-{LINE_LEN}", len + 1),
            format!(
                "line {which} is only {len} columns long; columns {}-{LINE_LEN} ({}) are missing; record skipped",
                len + 1,
                missing.join(", ")
            ),
        ));
    }
    if len > LINE_LEN && !r.options.lenient {
        return Err(r.diag(
            Severity::Error,
            l.number,
            format!("columns {}-{len}", LINE_LEN + 1),
            format!(
                "line {which} is {len} columns long; a TLE line has {LINE_LEN} (lenient mode ignores the extra columns); record skipped"
            ),
        ));
    }
    let l = ElementLine {
        text: &l.text[..LINE_LEN],
        ..l
    };
    if let Some(i) = l.text.iter().position(|b| !(b' '..=b'~').contains(b)) {
        return Err(r.diag(
            Severity::Error,
            l.number,
            format!("column {}", i + 1),
            format!(
                "byte 0x{:02X} is not a printable ASCII character; record skipped",
                l.text[i]
            ),
        ));
    }
    let blanks = if which == 1 {
        LINE1_BLANKS
    } else {
        LINE2_BLANKS
    };
    if let Some(&c) = blanks.iter().find(|&&c| l.text[c - 1] != b' ') {
        return Err(r.diag(
            Severity::Error,
            l.number,
            format!("column {c}"),
            format!(
                "expected a blank between fields, found {:?}: the fields of line {which} look shifted; record skipped",
                char::from(l.text[c - 1])
            ),
        ));
    }
    let given = l.text[LINE_LEN - 1];
    let field = columns(LINE_LEN, LINE_LEN, "checksum");
    if !given.is_ascii_digit() {
        return Err(r.diag(
            Severity::Error,
            l.number,
            field,
            format!(
                "{:?} is not a checksum digit; record skipped",
                char::from(given)
            ),
        ));
    }
    let computed = tle_checksum(l.text);
    if given - b'0' != computed {
        let severity = if r.options.lenient {
            Severity::Warning
        } else {
            Severity::Error
        };
        let tail = if r.options.lenient {
            "accepted (lenient mode)"
        } else {
            "record skipped (lenient mode accepts it with a warning)"
        };
        let d = r.diag(
            severity,
            l.number,
            field,
            format!(
                "checksum is {} but columns 1-68 sum to {computed} (mod 10); {tail}",
                char::from(given)
            ),
        );
        if r.options.lenient {
            r.push(d);
        } else {
            return Err(d);
        }
    }
    Ok(l)
}

/// Collects field errors so that one record reports all of them.
struct Fields<'r, 'a> {
    reader: &'r Reader<'a>,
    errors: Vec<Diagnostic>,
}

impl Fields<'_, '_> {
    fn get<T>(
        &mut self,
        l: ElementLine<'_>,
        first: usize,
        last: usize,
        name: &str,
        parse: impl FnOnce(&str) -> Result<T, String>,
    ) -> Option<T> {
        match parse(l.cols(first, last)) {
            Ok(v) => Some(v),
            Err(reason) => {
                let d = self.reader.diag(
                    Severity::Error,
                    l.number,
                    columns(first, last, name),
                    format!("{reason}; record skipped"),
                );
                self.errors.push(d);
                None
            }
        }
    }
}

fn read_record(
    r: &mut Reader<'_>,
    name: Option<(usize, String)>,
    (n1, text1): (usize, &[u8]),
    (n2, text2): (usize, &[u8]),
) {
    let l1 = check_line(
        r,
        ElementLine {
            number: n1,
            which: 1,
            text: text1,
        },
    );
    let l2 = check_line(
        r,
        ElementLine {
            number: n2,
            which: 2,
            text: text2,
        },
    );
    let (l1, l2) = match (l1, l2) {
        (Ok(a), Ok(b)) => (a, b),
        (a, b) => {
            for d in [a.err(), b.err()].into_iter().flatten() {
                r.push(d);
            }
            return;
        }
    };

    let mut f = Fields {
        reader: r,
        errors: Vec::new(),
    };
    let catalog1 = f.get(l1, 3, 7, "catalog number", parse_catalog);
    let classification = f.get(l1, 8, 8, "classification", |s| match s {
        " " => Ok('U'),
        _ => s
            .chars()
            .next()
            .filter(char::is_ascii_alphabetic)
            .ok_or_else(|| format!("{s:?} is not a classification letter")),
    });
    let designator = l1.cols(10, 17).trim().to_string();
    let epoch = f.get(l1, 19, 32, "epoch", parse_epoch);
    let ndot = f.get(l1, 34, 43, "mean motion derivative", parse_decimal);
    let nddot = f.get(
        l1,
        45,
        52,
        "mean motion second derivative",
        parse_exponent_form,
    );
    let bstar = f.get(l1, 54, 61, "BSTAR", parse_exponent_form);
    let ephemeris_type = f.get(l1, 63, 63, "ephemeris type", |s| {
        parse_count(s).and_then(|v| u8::try_from(v).map_err(|e| e.to_string()))
    });
    let element_set_number = f.get(l1, 65, 68, "element set number", parse_count);

    let catalog2 = f.get(l2, 3, 7, "catalog number", parse_catalog);
    let inclination = f.get(l2, 9, 16, "inclination", parse_decimal);
    let raan = f.get(l2, 18, 25, "RAAN", parse_decimal);
    let eccentricity = f.get(l2, 27, 33, "eccentricity", parse_assumed_point);
    let arg_perigee = f.get(l2, 35, 42, "argument of perigee", parse_decimal);
    let mean_anomaly = f.get(l2, 44, 51, "mean anomaly", parse_decimal);
    let mean_motion = f.get(l2, 53, 63, "mean motion", parse_decimal);
    let revolution_number = f.get(l2, 64, 68, "revolution number", parse_count);

    if let (Some(c1), Some(c2)) = (catalog1, catalog2)
        && c1 != c2
    {
        let d = f.reader.diag(
            Severity::Error,
            l2.number,
            columns(3, 7, "catalog number"),
            format!(
                "line 2 has catalog number {c2} but line 1 (line {n1}) has {c1}; record skipped"
            ),
        );
        f.errors.push(d);
    }
    let errors = std::mem::take(&mut f.errors);
    if !errors.is_empty() {
        for d in errors {
            r.push(d);
        }
        return;
    }
    let (
        Some(catalog_number),
        Some(classification),
        Some(epoch),
        Some(ndot),
        Some(nddot),
        Some(bstar),
        Some(ephemeris_type),
        Some(element_set_number),
        Some(inclination),
        Some(raan),
        Some(eccentricity),
        Some(arg_perigee),
        Some(mean_anomaly),
        Some(mean_motion),
        Some(revolution_number),
    ) = (
        catalog1,
        classification,
        epoch,
        ndot,
        nddot,
        bstar,
        ephemeris_type,
        element_set_number,
        inclination,
        raan,
        eccentricity,
        arg_perigee,
        mean_anomaly,
        mean_motion,
        revolution_number,
    )
    else {
        // Unreachable in practice: every `None` above pushed an error.
        return;
    };
    let record_line = name.as_ref().map_or(n1, |(n, _)| *n);
    let set = ElementSet {
        name: match name {
            Some((_, text)) if !text.is_empty() => text,
            _ => format!("CATALOG {catalog_number}"),
        },
        catalog_number,
        international_designator: designator,
        classification,
        epoch,
        mean_motion_dot_rev_day2: ndot,
        mean_motion_ddot_rev_day3: nddot,
        bstar_per_earth_radii: bstar,
        ephemeris_type,
        element_set_number,
        inclination_deg: inclination,
        raan_deg: raan,
        eccentricity,
        arg_perigee_deg: arg_perigee,
        mean_anomaly_deg: mean_anomaly,
        mean_motion_rev_day: mean_motion,
        revolution_number,
        source: SourceRef {
            file: r.file.to_string(),
            line: record_line,
        },
    };
    match set.validate() {
        Ok(()) => r.report.sets.push(set),
        Err((field, reason)) => {
            let (line, first, last) = field_columns(field, l1.number, l2.number);
            let d = r.diag(
                Severity::Error,
                line,
                columns(first, last, field),
                format!("{reason}; record skipped"),
            );
            r.push(d);
        }
    }
}

/// Line and columns of a field named by [`ElementSet::validate`].
fn field_columns(field: &str, line1: usize, line2: usize) -> (usize, usize, usize) {
    for (n, fields) in [(line1, LINE1_FIELDS), (line2, LINE2_FIELDS)] {
        if let Some((first, last, _)) = fields.iter().find(|(_, _, name)| *name == field) {
            return (n, *first, *last);
        }
    }
    (line1, 1, LINE_LEN)
}

/// Catalog number: up to five digits, or Alpha-5 (a letter A-Z other than I
/// and O standing for 10-33, then four digits: `A0001` = 100001; common
/// practice for numbers above 99999).
fn parse_catalog(s: &str) -> Result<u32, String> {
    let t = s.trim_start();
    let bad =
        || format!("{s:?} is not a catalog number (five digits, or a letter and four digits)");
    let mut chars = t.chars();
    match chars.next() {
        None => Err("the catalog number is blank".to_string()),
        Some(c) if c.is_ascii_uppercase() && c != 'I' && c != 'O' && t.len() == 5 => {
            let rest = chars.as_str();
            if !rest.bytes().all(|b| b.is_ascii_digit()) {
                return Err(bad());
            }
            let mut v = u32::from(c) - u32::from('A');
            if c > 'I' {
                v -= 1;
            }
            if c > 'O' {
                v -= 1;
            }
            let digits: u32 = rest.parse().map_err(|_| bad())?;
            Ok((10 + v) * 10_000 + digits)
        }
        Some(_) if t.bytes().all(|b| b.is_ascii_digit()) => t.parse().map_err(|_| bad()),
        Some(_) => Err(bad()),
    }
}

/// Unsigned count (element set number, revolution number, ephemeris type);
/// blank means 0.
fn parse_count(s: &str) -> Result<u32, String> {
    let t = s.trim();
    if t.is_empty() {
        return Ok(0);
    }
    if !t.bytes().all(|b| b.is_ascii_digit()) {
        return Err(format!("{s:?} is not a whole number"));
    }
    t.parse()
        .map_err(|_| format!("{s:?} is not a whole number"))
}

/// A plain decimal number: optional sign, digits, at most one point.
/// (Rust's own float parser would also take `inf` and `NaN`; a TLE never
/// holds those.)
fn parse_decimal(s: &str) -> Result<f64, String> {
    let t = s.trim();
    let body = t.strip_prefix(['-', '+']).unwrap_or(t);
    let digits = body.bytes().filter(u8::is_ascii_digit).count();
    let points = body.bytes().filter(|&b| b == b'.').count();
    if digits == 0 || points > 1 || digits + points != body.len() {
        return Err(format!("{s:?} is not a decimal number"));
    }
    t.parse()
        .map_err(|_| format!("{s:?} is not a decimal number"))
}

/// Eccentricity: digits with the leading decimal point assumed (`0010170` = 0.0010170).
fn parse_assumed_point(s: &str) -> Result<f64, String> {
    let t = s.trim();
    if t.is_empty() || !t.bytes().all(|b| b.is_ascii_digit()) {
        return Err(format!(
            "{s:?} is not an eccentricity (digits with an assumed leading decimal point)"
        ));
    }
    format!("0.{t}")
        .parse()
        .map_err(|_| format!("{s:?} is not a number"))
}

/// Assumed-decimal exponent form: `-11606-4` = -0.11606e-4; blank means 0.
fn parse_exponent_form(s: &str) -> Result<f64, String> {
    let t = s.trim();
    if t.is_empty() {
        return Ok(0.0);
    }
    let bad = || {
        format!(
            "{s:?} is not in the assumed-decimal exponent form (e.g. \" 12345-4\" = 0.12345e-4)"
        )
    };
    let b = t.as_bytes();
    if b.len() < 3 {
        return Err(bad());
    }
    let (mantissa, exponent) = t.split_at(b.len() - 2);
    let exp_sign = exponent.as_bytes()[0];
    let exp_digit = exponent.as_bytes()[1];
    if !matches!(exp_sign, b'+' | b'-' | b' ') || !exp_digit.is_ascii_digit() {
        return Err(bad());
    }
    let exp_sign = if exp_sign == b'-' { "-" } else { "" };
    let (sign, digits) = match mantissa.strip_prefix('-') {
        Some(rest) => ("-", rest),
        None => ("", mantissa.strip_prefix('+').unwrap_or(mantissa)),
    };
    let digits = digits.trim_start();
    let text = if let Some(frac) = digits.strip_prefix('.') {
        if frac.is_empty() || !frac.bytes().all(|b| b.is_ascii_digit()) {
            return Err(bad());
        }
        format!("{sign}0.{frac}e{exp_sign}{}", char::from(exp_digit))
    } else {
        if digits.is_empty() || !digits.bytes().all(|b| b.is_ascii_digit()) {
            return Err(bad());
        }
        format!("{sign}0.{digits}e{exp_sign}{}", char::from(exp_digit))
    };
    text.parse().map_err(|_| bad())
}

/// Epoch `YYDDD.DDDDDDDD`: two-digit year (57-99 → 19xx, else 20xx; common
/// practice) and day of year with fraction, day 1 = 1 January.
///
/// The fraction is turned into whole microseconds with integer arithmetic and
/// the instant is built through the same calendar path as ISO text, so an OMM
/// whose EPOCH carries the same instant to the microsecond gives the very same
/// [`UtcTime`]. (The field resolves 1e-8 day = 864 µs, so nothing is lost.)
fn parse_epoch(s: &str) -> Result<UtcTime, String> {
    let bad = |why: &str| format!("{s:?} is not an epoch YYDDD.DDDDDDDD: {why}");
    let (yy, day) = s.split_at(2.min(s.len()));
    if yy.len() != 2 || !yy.bytes().all(|b| b.is_ascii_digit()) {
        return Err(bad("the year (columns 19-20) must be two digits"));
    }
    let yy: i32 = yy.parse().map_err(|_| bad("year"))?;
    let year = if yy >= 57 { 1900 + yy } else { 2000 + yy };
    let day = day.trim();
    let (whole, frac) = day.split_once('.').unwrap_or((day, ""));
    if whole.is_empty()
        || !whole.bytes().all(|b| b.is_ascii_digit())
        || !frac.bytes().all(|b| b.is_ascii_digit())
        || frac.len() > 12
    {
        return Err(bad(
            "the day of year must be digits with an optional fraction",
        ));
    }
    let whole: u32 = whole.parse().map_err(|_| bad("day of year"))?;
    let date = NaiveDate::from_yo_opt(year, whole)
        .ok_or_else(|| bad(&format!("day {whole} does not exist in {year}")))?;
    let frac_value: u128 = if frac.is_empty() {
        0
    } else {
        frac.parse().map_err(|_| bad("fraction"))?
    };
    let scale = 10u128.pow(frac.len() as u32);
    let us = (frac_value * 86_400_000_000 + scale / 2) / scale;
    let us = i64::try_from(us).map_err(|_| bad("fraction"))?;
    let midnight = date.and_hms_opt(0, 0, 0).ok_or_else(|| bad("date"))?;
    Ok(UtcTime::from_naive(midnight + TimeDelta::microseconds(us)))
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    #[test]
    fn alpha5_catalog_numbers() {
        // Alpha-5 (common practice): A=10 ... H=17, J=18 (I skipped), P=23 (O skipped), Z=33.
        assert_eq!(parse_catalog("A0001"), Ok(100_001));
        assert_eq!(parse_catalog("J0000"), Ok(180_000));
        assert_eq!(parse_catalog("P1234"), Ok(231_234));
        assert_eq!(parse_catalog("Z9999"), Ok(339_999));
        assert_eq!(parse_catalog("90001"), Ok(90_001));
        assert_eq!(parse_catalog("  123"), Ok(123));
        assert!(parse_catalog("I0001").is_err());
        assert!(parse_catalog("O0001").is_err());
        assert!(parse_catalog("9x001").is_err());
    }

    #[test]
    fn exponent_form() {
        assert_eq!(parse_exponent_form(" 21000-3"), Ok(0.21e-3));
        assert_eq!(parse_exponent_form("-11606-4"), Ok(-0.11606e-4));
        assert_eq!(parse_exponent_form(" 00000-0"), Ok(0.0));
        assert_eq!(parse_exponent_form(" 00000+0"), Ok(0.0));
        assert_eq!(parse_exponent_form("        "), Ok(0.0));
        assert!(parse_exponent_form(" 2100x-3").is_err());
        assert!(parse_exponent_form("     inf").is_err());
    }

    #[test]
    fn decimals_reject_words() {
        assert_eq!(parse_decimal(" .00000876"), Ok(0.00000876));
        assert_eq!(parse_decimal("-.00000084"), Ok(-0.00000084));
        assert!(parse_decimal("     inf").is_err());
        assert!(parse_decimal("     NaN").is_err());
        assert!(parse_decimal("  1.2.3 ").is_err());
        assert!(parse_decimal("        ").is_err());
    }

    #[test]
    fn epoch_year_pivot_and_fraction() {
        // Two-digit year pivot 57 (common practice): 57 -> 1957, 56 -> 2056.
        assert_eq!(parse_epoch("57001.00000000").unwrap().year(), 1957);
        assert_eq!(parse_epoch("56001.00000000").unwrap().year(), 2056);
        // 26335.5 = 2026-12-01T12:00Z (1 December is day 335 of a common year).
        assert_eq!(
            parse_epoch("26335.50000000").unwrap().to_iso_ms(),
            "2026-12-01T12:00:00.000Z"
        );
        assert_eq!(
            parse_epoch("26335.21354167").unwrap(),
            UtcTime::parse_iso("2026-12-01T05:07:30.000288Z").unwrap()
        );
        assert!(parse_epoch("26366.00000000").is_err());
        assert!(parse_epoch("24366.00000000").is_ok()); // leap year
        assert!(parse_epoch("26000.50000000").is_err());
    }

    #[test]
    fn checksum_of_a_demo_line() {
        let l = b"1 90001U 26901A   26335.21354167  .00000876  00000-0  21000-3 0  9993";
        assert_eq!(tle_checksum(l), 3);
    }
}
