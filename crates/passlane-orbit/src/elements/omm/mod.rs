//! CCSDS OMM readers (CCSDS 502.0, Orbit Mean-elements Message): KVN, XML and
//! the flat JSON rendering of the same keywords.
//!
//! Each front end only finds `KEYWORD → (text, line)` pairs per message; the
//! shared [`Record::build`] turns them into a validated [`ElementSet`], so the
//! three encodings behave identically (same defaults, same checks, same
//! messages). Numbers are read from their text with one strict grammar, so
//! `NaN`, `inf` or an overflowing `1e309` are errors naming the keyword.

mod json;
mod kvn;
mod xml;

pub(super) use json::load_json;
pub(super) use kvn::load_kvn;
pub(super) use xml::load_xml;

use std::collections::HashMap;

use super::{Diagnostic, ElementSet, LoadReport, Severity, SourceRef};
use crate::time::UtcTime;

/// Keywords read from an OMM (CCSDS 502.0 names). Others are ignored.
pub(super) const KEYWORDS: &[&str] = &[
    "OBJECT_NAME",
    "OBJECT_ID",
    "CENTER_NAME",
    "REF_FRAME",
    "TIME_SYSTEM",
    "MEAN_ELEMENT_THEORY",
    "EPOCH",
    "MEAN_MOTION",
    "ECCENTRICITY",
    "INCLINATION",
    "RA_OF_ASC_NODE",
    "ARG_OF_PERICENTER",
    "MEAN_ANOMALY",
    "EPHEMERIS_TYPE",
    "CLASSIFICATION_TYPE",
    "NORAD_CAT_ID",
    "ELEMENT_SET_NO",
    "REV_AT_EPOCH",
    "BSTAR",
    "MEAN_MOTION_DOT",
    "MEAN_MOTION_DDOT",
];

/// One OMM being collected by a front end.
pub(super) struct Record<'f> {
    file: &'f str,
    /// 1-based line where the message starts.
    line: usize,
    values: HashMap<String, (String, usize)>,
    /// Errors already found while collecting; the record will be skipped.
    errors: Vec<Diagnostic>,
}

impl<'f> Record<'f> {
    pub(super) fn new(file: &'f str, line: usize) -> Self {
        Record {
            file,
            line,
            values: HashMap::new(),
            errors: Vec::new(),
        }
    }

    pub(super) fn error(&mut self, line: usize, field: &str, message: String) {
        self.errors
            .push(diag(self.file, Severity::Error, line, field, message));
    }

    /// Adds a keyword; a repeated keyword is an error (which value would be meant?).
    pub(super) fn insert(&mut self, key: &str, value: String, line: usize) {
        let key = key.to_ascii_uppercase();
        if !KEYWORDS.contains(&key.as_str()) {
            return;
        }
        if let Some((_, first)) = self.values.get(&key) {
            let message = format!(
                "{key} appears twice in this message (lines {first} and {line}); record skipped"
            );
            self.error(line, &key, message);
            return;
        }
        self.values.insert(key, (value, line));
    }

    /// Validates the collected keywords and adds the element set, or the
    /// diagnostics, to `report`.
    pub(super) fn finish(self, report: &mut LoadReport) {
        match self.build() {
            Ok((set, warnings)) => {
                report.sets.push(set);
                warnings.into_iter().for_each(|d| report.push(d));
            }
            Err(diags) => {
                report.rejected_records += 1;
                diags.into_iter().for_each(|d| report.push(d));
            }
        }
    }

    /// Gives up on the record: only the errors found so far are reported.
    pub(super) fn abandon(self, report: &mut LoadReport) {
        report.rejected_records += 1;
        self.errors.into_iter().for_each(|d| report.push(d));
    }

    fn get(&self, key: &str) -> Option<(&str, usize)> {
        self.values.get(key).map(|(v, l)| (v.trim(), *l))
    }

    fn build(mut self) -> Result<(ElementSet, Vec<Diagnostic>), Vec<Diagnostic>> {
        let mut errors = std::mem::take(&mut self.errors);
        let mut warnings = Vec::new();
        let file = self.file;
        let record_line = self.line;
        let skipped = "record skipped";

        let values = &self.values;
        let mut field = |key: &str, required: bool| {
            lookup(values, &mut errors, file, record_line, key, required)
        };
        let epoch_text = field("EPOCH", true);
        let raw: Vec<(&str, Option<(&str, usize)>)> = [
            ("MEAN_MOTION", true),
            ("ECCENTRICITY", true),
            ("INCLINATION", true),
            ("RA_OF_ASC_NODE", true),
            ("ARG_OF_PERICENTER", true),
            ("MEAN_ANOMALY", true),
            ("BSTAR", true),
            ("MEAN_MOTION_DOT", false),
            ("MEAN_MOTION_DDOT", false),
        ]
        .into_iter()
        .map(|(k, req)| (k, field(k, req)))
        .collect();
        let catalog_text = field("NORAD_CAT_ID", true);
        let ints: Vec<(&str, Option<(&str, usize)>)> =
            ["EPHEMERIS_TYPE", "ELEMENT_SET_NO", "REV_AT_EPOCH"]
                .into_iter()
                .map(|k| (k, field(k, false)))
                .collect();
        let name = field("OBJECT_NAME", false).map(|(v, l)| (v.to_string(), l));
        let object_id = field("OBJECT_ID", false).map(|(v, l)| (v.to_string(), l));
        let classification = field("CLASSIFICATION_TYPE", false);
        let time_system = field("TIME_SYSTEM", false);
        let ref_frame = field("REF_FRAME", false);
        let theory = field("MEAN_ELEMENT_THEORY", false);

        let mut push_err = |line: usize, key: &str, msg: String| {
            errors.push(diag(
                file,
                Severity::Error,
                line,
                key,
                format!("{msg}; {skipped}"),
            ));
        };

        let epoch = epoch_text.and_then(|(v, l)| match UtcTime::parse_iso(v) {
            Ok(t) => Some(t),
            Err(e) => {
                push_err(l, "EPOCH", e.to_string());
                None
            }
        });
        let mut reals: HashMap<&str, f64> = HashMap::new();
        for (key, value) in raw {
            match value {
                None => {
                    reals.insert(key, 0.0);
                }
                Some((v, l)) => match parse_real(v) {
                    Ok(x) => {
                        reals.insert(key, x);
                    }
                    Err(e) => push_err(l, key, e),
                },
            }
        }
        let catalog_number = catalog_text.and_then(|(v, l)| match parse_whole(v) {
            Ok(n) => Some(n),
            Err(e) => {
                push_err(l, "NORAD_CAT_ID", e);
                None
            }
        });
        let mut whole: HashMap<&str, u32> = HashMap::new();
        for (key, value) in ints {
            match value {
                None => {
                    whole.insert(key, 0);
                }
                Some((v, l)) => match parse_whole(v) {
                    Ok(n) => {
                        whole.insert(key, n);
                    }
                    Err(e) => push_err(l, key, e),
                },
            }
        }
        let ephemeris_type = match u8::try_from(whole.get("EPHEMERIS_TYPE").copied().unwrap_or(0)) {
            Ok(t) => t,
            Err(_) => {
                let l = self.get("EPHEMERIS_TYPE").map_or(record_line, |(_, l)| l);
                push_err(
                    l,
                    "EPHEMERIS_TYPE",
                    "is not a small whole number".to_string(),
                );
                0
            }
        };
        let classification = match classification {
            None => 'U',
            Some((v, l)) => match v.chars().next() {
                Some(c) if c.is_ascii_alphabetic() && v.len() == 1 => c,
                _ => {
                    push_err(
                        l,
                        "CLASSIFICATION_TYPE",
                        format!("{v:?} is not a classification letter"),
                    );
                    'U'
                }
            },
        };
        if let Some((v, l)) = time_system
            && !v.eq_ignore_ascii_case("UTC")
        {
            push_err(
                l,
                "TIME_SYSTEM",
                format!("{v:?} is not supported: SGP4 elements have UTC epochs"),
            );
        }
        if let Some((v, l)) = theory {
            let v_up = v.to_ascii_uppercase();
            if v_up.contains("XP") {
                push_err(
                    l,
                    "MEAN_ELEMENT_THEORY",
                    format!(
                        "{v:?} elements are not SGP4 mean elements and would propagate wrongly"
                    ),
                );
            } else if v_up != "SGP4" && v_up != "SGP/SGP4" && v_up != "SGP" {
                warnings.push(diag(
                    file,
                    Severity::Warning,
                    l,
                    "MEAN_ELEMENT_THEORY",
                    format!("{v:?} is not SGP4; the elements are used as SGP4 mean elements"),
                ));
            }
        }
        if let Some((v, l)) = ref_frame
            && !v.eq_ignore_ascii_case("TEME")
        {
            warnings.push(diag(
                    file,
                    Severity::Warning,
                    l,
                    "REF_FRAME",
                    format!("{v:?} is not TEME; SGP4 mean elements are TEME by definition, so they are used as TEME"),
                ));
        }

        // Names go to terminals, tables and other files: a line break, NUL
        // or escape sequence in one is replaced, and said so.
        let mut safe = |key: &str, value: Option<(String, usize)>| {
            value.map(|(v, l)| match crate::text::first_unsafe_char(&v) {
                None => v,
                Some(c) => {
                    warnings.push(diag(
                        file,
                        Severity::Warning,
                        l,
                        key,
                        format!(
                            "holds {}; such characters are replaced by '?'",
                            crate::text::describe_char(c)
                        ),
                    ));
                    crate::text::clean(&v, false).into_owned()
                }
            })
        };
        let name = safe("OBJECT_NAME", name);
        let object_id = safe("OBJECT_ID", object_id);
        if !errors.is_empty() {
            return Err(errors);
        }
        let (Some(epoch), Some(catalog_number)) = (epoch, catalog_number) else {
            return Err(errors);
        };
        let r = |k: &str| reals.get(k).copied().unwrap_or(0.0);
        let w = |k: &str| whole.get(k).copied().unwrap_or(0);
        let set = ElementSet {
            name: name.unwrap_or_else(|| format!("CATALOG {catalog_number}")),
            catalog_number,
            international_designator: object_id
                .map(|id| designator_short_form(&id))
                .unwrap_or_default(),
            classification,
            epoch,
            mean_motion_dot_rev_day2: r("MEAN_MOTION_DOT"),
            mean_motion_ddot_rev_day3: r("MEAN_MOTION_DDOT"),
            bstar_per_earth_radii: r("BSTAR"),
            ephemeris_type,
            element_set_number: w("ELEMENT_SET_NO"),
            inclination_deg: r("INCLINATION"),
            raan_deg: r("RA_OF_ASC_NODE"),
            eccentricity: r("ECCENTRICITY"),
            arg_perigee_deg: r("ARG_OF_PERICENTER"),
            mean_anomaly_deg: r("MEAN_ANOMALY"),
            mean_motion_rev_day: r("MEAN_MOTION"),
            revolution_number: w("REV_AT_EPOCH"),
            ephemeris: None,
            source: SourceRef {
                file: file.to_string(),
                line: record_line,
            },
        };
        match set.validate() {
            Ok(()) => Ok((set, warnings)),
            Err((what, reason)) => {
                let key = keyword_of(what);
                let line = self.get(key).map_or(record_line, |(_, l)| l);
                Err(vec![diag(
                    file,
                    Severity::Error,
                    line,
                    key,
                    format!("{reason}; {skipped}"),
                )])
            }
        }
    }
}

/// The trimmed text and line of `key`, or an error if it is required and
/// missing or empty.
fn lookup<'v>(
    values: &'v HashMap<String, (String, usize)>,
    errors: &mut Vec<Diagnostic>,
    file: &str,
    record_line: usize,
    key: &str,
    required: bool,
) -> Option<(&'v str, usize)> {
    match values.get(key).map(|(v, l)| (v.trim(), *l)) {
        Some((v, l)) if !v.is_empty() => Some((v, l)),
        Some((_, l)) if required => {
            errors.push(diag(
                file,
                Severity::Error,
                l,
                key,
                format!("{key} is empty; record skipped"),
            ));
            None
        }
        None if required => {
            let why = if key == "BSTAR" {
                " (SGP4 needs the drag term)"
            } else {
                ""
            };
            errors.push(diag(
                file,
                Severity::Error,
                record_line,
                key,
                format!("mandatory keyword {key} is missing{why}; record skipped"),
            ));
            None
        }
        _ => None,
    }
}

pub(super) fn diag(
    file: &str,
    severity: Severity,
    line: usize,
    field: &str,
    message: String,
) -> Diagnostic {
    Diagnostic {
        severity,
        file: file.to_string(),
        line,
        field: field.to_string(),
        message,
    }
}

/// Adds "no OMM found" when a front end produced neither records nor errors.
pub(super) fn note_if_empty(
    report: &mut LoadReport,
    file: &str,
    sets_before: usize,
    diags_before: usize,
) {
    if report.sets.len() == sets_before && report.finding_count() == diags_before {
        report.push(diag(
            file,
            Severity::Error,
            0,
            "",
            "no OMM messages found".to_string(),
        ));
    }
}

/// The OMM keyword for a field named by [`ElementSet::validate`].
fn keyword_of(field: &str) -> &'static str {
    match field {
        "inclination" => "INCLINATION",
        "RAAN" => "RA_OF_ASC_NODE",
        "eccentricity" => "ECCENTRICITY",
        "argument of perigee" => "ARG_OF_PERICENTER",
        "mean anomaly" => "MEAN_ANOMALY",
        "mean motion" => "MEAN_MOTION",
        "BSTAR" => "BSTAR",
        "mean motion derivative" => "MEAN_MOTION_DOT",
        "mean motion second derivative" => "MEAN_MOTION_DDOT",
        _ => "EPOCH",
    }
}

/// A real number in plain or exponent notation: `-1.5`, `.5`, `2.1e-4`.
/// Words (`NaN`, `inf`) and values that overflow (`1e309`) are refused.
pub(super) fn parse_real(text: &str) -> Result<f64, String> {
    let t = text.trim();
    let bad = || format!("{t:?} is not a number");
    let body = t.strip_prefix(['-', '+']).unwrap_or(t);
    let (mantissa, exponent) = match body.find(['e', 'E']) {
        Some(i) => (&body[..i], Some(&body[i + 1..])),
        None => (body, None),
    };
    let digits = mantissa.bytes().filter(u8::is_ascii_digit).count();
    let points = mantissa.bytes().filter(|&b| b == b'.').count();
    if digits == 0 || points > 1 || digits + points != mantissa.len() {
        return Err(bad());
    }
    if let Some(e) = exponent {
        let e = e.strip_prefix(['-', '+']).unwrap_or(e);
        if e.is_empty() || !e.bytes().all(|b| b.is_ascii_digit()) {
            return Err(bad());
        }
    }
    let v: f64 = t.parse().map_err(|_| bad())?;
    if !v.is_finite() {
        return Err(format!(
            "{t:?} is out of the range of a double-precision number"
        ));
    }
    Ok(v)
}

/// A whole non-negative number (`90001`; `90001.0` is accepted, as some
/// producers write integers as reals).
pub(super) fn parse_whole(text: &str) -> Result<u32, String> {
    let t = text.trim();
    let bad = || format!("{t:?} is not a whole number");
    let int = t.strip_suffix(".0").unwrap_or(t);
    let int = int.strip_prefix('+').unwrap_or(int);
    if int.is_empty() || !int.bytes().all(|b| b.is_ascii_digit()) {
        return Err(bad());
    }
    int.parse().map_err(|_| bad())
}

/// OMM `OBJECT_ID` `2026-901A` → the TLE form `26901A` used in
/// [`ElementSet::international_designator`]; other text is kept as is.
fn designator_short_form(id: &str) -> String {
    let id = id.trim();
    let b = id.as_bytes();
    let ok = b.len() >= 9
        && b[..4].iter().all(u8::is_ascii_digit)
        && b[4] == b'-'
        && b[5..8].iter().all(u8::is_ascii_digit)
        && b[8..].iter().all(u8::is_ascii_alphabetic);
    if ok {
        format!("{}{}", &id[2..4], &id[5..])
    } else {
        id.to_string()
    }
}

/// 1-based line of byte `offset` in `text`, counting from a known
/// `(offset, line)` pair at or before it (so that walking forwards through a
/// file counts each newline once).
pub(super) fn line_at(text: &[u8], from: (usize, usize), offset: usize) -> usize {
    let (start, line) = from;
    let end = offset.min(text.len());
    if end <= start {
        return line;
    }
    line + text[start..end].iter().filter(|&&b| b == b'\n').count()
}

/// Checks that `bytes` is UTF-8; otherwise reports the line of the first bad byte.
pub(super) fn utf8<'a>(bytes: &'a [u8], file: &str, report: &mut LoadReport) -> Option<&'a str> {
    match std::str::from_utf8(bytes) {
        Ok(s) => Some(s),
        Err(e) => {
            let line = line_at(bytes, (0, 1), e.valid_up_to());
            report.push(diag(
                file,
                Severity::Error,
                line,
                "",
                "the file is not valid UTF-8 text (binary data?); nothing loaded from it"
                    .to_string(),
            ));
            None
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reals_refuse_words_and_overflow() {
        assert_eq!(parse_real("2.1e-4"), Ok(2.1e-4));
        assert_eq!(parse_real(" -.5 "), Ok(-0.5));
        assert_eq!(parse_real("15"), Ok(15.0));
        for bad in [
            "NaN", "inf", "-inf", "infinity", "1e309", "1.2.3", "", "e5", "1e", "0x10",
        ] {
            assert!(parse_real(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn designators() {
        assert_eq!(designator_short_form("2026-901A"), "26901A");
        assert_eq!(designator_short_form("1998-067ABC"), "98067ABC");
        assert_eq!(designator_short_form("UNKNOWN"), "UNKNOWN");
    }
}
