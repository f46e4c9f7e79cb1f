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

mod fields;

use fields::{
    parse_assumed_point, parse_catalog, parse_count, parse_decimal, parse_epoch,
    parse_exponent_form,
};

use super::lines::{excerpt, lines, trim_end};
use super::{Diagnostic, ElementSet, LoadOptions, LoadReport, Severity, SourceRef};

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
        self.report.push(d);
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
            self.report.push(d);
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
    let before_errors = report.error_count();
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
                        r.report.rejected_records += 1;
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
                r.report.rejected_records += 1;
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
    if r.report.sets.len() == before_sets && r.report.error_count() == before_errors {
        let d = r.diag(
            Severity::Error,
            0,
            String::new(),
            "no TLE records found".to_string(),
        );
        r.report.push(d);
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
            r.report.rejected_records += 1;
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
        r.report.rejected_records += 1;
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
        ephemeris: None,
        source: SourceRef {
            file: r.file.to_string(),
            line: record_line,
        },
    };
    match set.validate() {
        Ok(()) => r.report.sets.push(set),
        Err((field, reason)) => {
            r.report.rejected_records += 1;
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
