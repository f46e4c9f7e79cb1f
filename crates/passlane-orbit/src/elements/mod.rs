//! Element sets in: TLE (2- and 3-line) and CCSDS OMM (KVN, XML, JSON), one loader.
//!
//! The loader never stops at the first bad record: it returns every good
//! [`ElementSet`] plus a [`Diagnostic`] for every problem, each naming the file,
//! line, field and reason. It does no file I/O; callers pass the bytes and a
//! display name for the source.

use std::fmt;

use crate::time::UtcTime;

/// Where a record came from.
#[derive(Debug, Clone, PartialEq, Eq, Default, serde::Serialize)]
pub struct SourceRef {
    /// Display name of the source (usually the file path as the user gave it).
    pub file: String,
    /// 1-based line of the record's first line.
    pub line: usize,
}

/// Mean elements for SGP4, validated (see [`ElementSet::validate`]).
///
/// Angles in degrees, mean motion in revolutions per day (Kozai mean motion, as
/// published), `bstar_per_earth_radii` in 1/Earth radii.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ElementSet {
    pub name: String,
    pub catalog_number: u32,
    /// In the TLE form `26901A` (two-digit year, launch number, piece); an OMM
    /// `OBJECT_ID` such as `2026-901A` is converted to it.
    pub international_designator: String,
    pub classification: char,
    pub epoch: UtcTime,
    /// First time derivative of mean motion divided by two, rev/day² (TLE convention).
    pub mean_motion_dot_rev_day2: f64,
    /// Second time derivative of mean motion divided by six, rev/day³ (TLE convention).
    pub mean_motion_ddot_rev_day3: f64,
    pub bstar_per_earth_radii: f64,
    pub ephemeris_type: u8,
    pub element_set_number: u32,
    pub inclination_deg: f64,
    pub raan_deg: f64,
    pub eccentricity: f64,
    pub arg_perigee_deg: f64,
    pub mean_anomaly_deg: f64,
    pub mean_motion_rev_day: f64,
    pub revolution_number: u32,
    pub source: SourceRef,
    /// When set, this spacecraft moves by the operator's ephemeris (OEM)
    /// instead of SGP4 on these elements, and the elements above are the
    /// *bounding* elements of that ephemeris (see [`crate::ephemeris`]).
    #[serde(skip)]
    pub ephemeris: Option<std::sync::Arc<crate::ephemeris::EphemerisSource>>,
}

/// Severity of a loader finding.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Severity {
    /// The record was skipped.
    Error,
    /// The record loaded, but something deserves attention (lenient checksum,
    /// duplicate replaced, ...).
    Warning,
}

/// One problem found while loading, with its place.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Diagnostic {
    pub severity: Severity,
    pub file: String,
    /// 1-based line number (0 when the problem concerns the whole file).
    pub line: usize,
    /// Column range or field/keyword name, e.g. `columns 64-68` or `ECCENTRICITY`.
    pub field: String,
    pub message: String,
}

impl fmt::Display for Diagnostic {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let sev = match self.severity {
            Severity::Error => "error",
            Severity::Warning => "warning",
        };
        write!(f, "{}:{}: {sev}: ", self.file, self.line)?;
        if !self.field.is_empty() {
            write!(f, "{}: ", self.field)?;
        }
        f.write_str(&self.message)
    }
}

/// Loader settings.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct LoadOptions {
    /// Accept TLE lines whose checksum digit is wrong (a warning instead of an error),
    /// and ignore characters after column 69.
    pub lenient: bool,
}

/// How many findings a [`LoadReport`] keeps in full; the rest are counted
/// only. A file of junk can hold millions of bad lines: keeping each finding
/// (~500 bytes) would make memory grow with the junk instead of the good
/// records, and nobody reads past the first screenful anyway.
pub const MAX_DIAGNOSTICS_KEPT: usize = 100;

/// What a load produced: the good records and the findings.
///
/// The first [`MAX_DIAGNOSTICS_KEPT`] findings of each file are kept in full
/// in `diagnostics`; later ones are only counted (`omitted_errors`,
/// `omitted_warnings`), so memory stays bounded by the good records whatever
/// the file holds. Add findings with [`LoadReport::push`].
#[derive(Debug, Clone, Default)]
pub struct LoadReport {
    pub sets: Vec<ElementSet>,
    pub diagnostics: Vec<Diagnostic>,
    /// Errors found beyond the ones kept in `diagnostics`.
    pub omitted_errors: usize,
    /// Warnings found beyond the ones kept in `diagnostics`.
    pub omitted_warnings: usize,
    /// Records skipped, one per record however many problems it had (lines
    /// that belong to no record are errors but not records).
    pub rejected_records: usize,
}

impl LoadReport {
    /// The errors kept in full (see [`LoadReport::error_count`] for all).
    pub fn errors(&self) -> impl Iterator<Item = &Diagnostic> {
        self.diagnostics
            .iter()
            .filter(|d| d.severity == Severity::Error)
    }

    /// Records a finding: kept in full while fewer than
    /// [`MAX_DIAGNOSTICS_KEPT`] are, counted otherwise.
    pub fn push(&mut self, d: Diagnostic) {
        if self.diagnostics.len() < MAX_DIAGNOSTICS_KEPT {
            self.diagnostics.push(d);
        } else if d.severity == Severity::Error {
            self.omitted_errors += 1;
        } else {
            self.omitted_warnings += 1;
        }
    }

    /// Every error found, kept or only counted.
    pub fn error_count(&self) -> usize {
        self.errors().count() + self.omitted_errors
    }

    /// Every warning found, kept or only counted.
    pub fn warning_count(&self) -> usize {
        self.diagnostics.len() - self.errors().count() + self.omitted_warnings
    }

    /// Every finding, kept or only counted.
    pub fn finding_count(&self) -> usize {
        self.diagnostics.len() + self.omitted()
    }

    /// Findings counted but not kept.
    pub fn omitted(&self) -> usize {
        self.omitted_errors + self.omitted_warnings
    }

    /// `… and 12,345 more (…)` for the findings not kept, or `None`.
    pub fn omitted_note(&self) -> Option<String> {
        (self.omitted() > 0).then(|| {
            format!(
                "… and {} more problem(s) not listed ({} error(s), {} warning(s))",
                thousands(self.omitted()),
                thousands(self.omitted_errors),
                thousands(self.omitted_warnings)
            )
        })
    }

    /// Appends another report, then keeps one record per catalog number (the
    /// newest epoch), with a warning for each record dropped. Each file keeps
    /// its own first findings.
    pub fn merge(&mut self, other: LoadReport) {
        self.sets.extend(other.sets);
        self.diagnostics.extend(other.diagnostics);
        self.omitted_errors += other.omitted_errors;
        self.omitted_warnings += other.omitted_warnings;
        self.rejected_records += other.rejected_records;
        dedup_newest(self);
    }
}

/// `12345` → `12,345`.
pub fn thousands(n: usize) -> String {
    let digits = n.to_string();
    let mut out = String::new();
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(c);
    }
    out
}

mod lines;
mod omm;
mod tle;

pub use tle::tle_checksum;

/// Loads element sets from `bytes`, detecting the format from the content:
/// XML (`<`), JSON (`[` or `{`), OMM KVN (`CCSDS_OMM_VERS`), else TLE.
/// `file` is the name used in diagnostics and in each record's [`SourceRef`].
pub fn load(bytes: &[u8], file: &str, options: LoadOptions) -> LoadReport {
    let mut report = load_records(bytes, file, options);
    dedup_newest(&mut report);
    report
}

/// As [`load`], but keeps every good record even when catalog numbers repeat
/// (for verification files, where the same object appears with different
/// elements on purpose).
pub fn load_records(bytes: &[u8], file: &str, options: LoadOptions) -> LoadReport {
    let mut report = LoadReport::default();
    let first = bytes
        .iter()
        .copied()
        .find(|b| !b.is_ascii_whitespace() && *b != 0xEF && *b != 0xBB && *b != 0xBF);
    match first {
        None => report.push(Diagnostic {
            severity: Severity::Error,
            file: file.to_string(),
            line: 0,
            field: String::new(),
            message: "the file is empty: no element sets".to_string(),
        }),
        Some(b'<') => omm::load_xml(bytes, file, &mut report),
        Some(b'[') | Some(b'{') => omm::load_json(bytes, file, &mut report),
        Some(_) if contains(bytes, b"CCSDS_OMM_VERS") => omm::load_kvn(bytes, file, &mut report),
        Some(_) => tle::load_tle(bytes, file, options, &mut report),
    }
    warn_perigee_below_surface(&mut report);
    report
}

/// A set whose perigee (from its Kozai mean motion and eccentricity) lies
/// below the Earth's equatorial radius describes an orbit that meets the
/// ground: a re-entered object or a wrong set. It still loads (SGP4 may
/// propagate it, and the user may want to see it), with a warning.
fn warn_perigee_below_surface(report: &mut LoadReport) {
    let low: Vec<Diagnostic> = report
        .sets
        .iter()
        .filter_map(|s| {
            let perigee_km = crate::summary::OrbitSummary::of(s).perigee_altitude_km;
            (perigee_km < 0.0).then(|| Diagnostic {
                severity: Severity::Warning,
                file: s.source.file.clone(),
                line: s.source.line,
                field: "perigee".to_string(),
                message: format!(
                    "{} ({}): perigee altitude {perigee_km:.0} km, below the Earth's surface: re-entered or a wrong element set; results for it are not physical",
                    s.catalog_number, s.name
                ),
            })
        })
        .collect();
    low.into_iter().for_each(|d| report.push(d));
}

fn contains(hay: &[u8], needle: &[u8]) -> bool {
    hay.windows(needle.len()).any(|w| w == needle)
}

/// Keeps one record per catalog number, the newest epoch, and says so.
fn dedup_newest(report: &mut LoadReport) {
    use std::collections::HashMap;
    let mut best: HashMap<u32, usize> = HashMap::new();
    for (i, s) in report.sets.iter().enumerate() {
        match best.get(&s.catalog_number) {
            Some(&j) if report.sets[j].epoch >= s.epoch => {}
            _ => {
                best.insert(s.catalog_number, i);
            }
        }
    }
    if best.len() == report.sets.len() {
        return;
    }
    let sets = std::mem::take(&mut report.sets);
    for (i, s) in sets.into_iter().enumerate() {
        if best.get(&s.catalog_number) == Some(&i) {
            report.sets.push(s);
        } else {
            report.push(Diagnostic {
                severity: Severity::Warning,
                file: s.source.file.clone(),
                line: s.source.line,
                field: "catalog number".to_string(),
                message: format!(
                    "duplicate catalog number {}: this record (epoch {}) is older and was dropped; the newest epoch is kept",
                    s.catalog_number, s.epoch
                ),
            });
        }
    }
    // Keep the original order of the survivors (stable for users and tests).
    report
        .sets
        .sort_by_key(|s| (s.source.file.clone(), s.source.line));
}

impl ElementSet {
    /// The international designator in the CCSDS form `YYYY-NNNP{PP}` (four-
    /// digit launch year, three-digit launch number, one to three capital
    /// letters for the piece; CCSDS 508.0-B-1 Table 3-3, 502.0-B-3 Table 5-3),
    /// from the TLE form `YYNNNP{PP}` (two-digit years 57-99 are 1900s, as in
    /// TLEs). `None` when the set has none or it does not have that shape.
    pub fn international_designator_ccsds(&self) -> Option<String> {
        let d = self.international_designator.trim();
        let b = d.as_bytes();
        if b.len() < 6 || b.len() > 8 || !d.is_ascii() {
            return None;
        }
        let digits = |r: std::ops::Range<usize>| b[r].iter().all(u8::is_ascii_digit);
        let piece = &d[5..];
        if !digits(0..5) || !piece.bytes().all(|c| c.is_ascii_uppercase()) {
            return None;
        }
        let yy: u32 = d[..2].parse().ok()?;
        let year = if yy >= 57 { 1900 + yy } else { 2000 + yy };
        Some(format!("{year}-{}{piece}", &d[2..5]))
    }

    /// Range checks shared by every format. Returns the field and reason of the
    /// first violation.
    pub fn validate(&self) -> Result<(), (&'static str, String)> {
        let finite = [
            ("inclination", self.inclination_deg),
            ("RAAN", self.raan_deg),
            ("eccentricity", self.eccentricity),
            ("argument of perigee", self.arg_perigee_deg),
            ("mean anomaly", self.mean_anomaly_deg),
            ("mean motion", self.mean_motion_rev_day),
            ("BSTAR", self.bstar_per_earth_radii),
            ("mean motion derivative", self.mean_motion_dot_rev_day2),
            (
                "mean motion second derivative",
                self.mean_motion_ddot_rev_day3,
            ),
        ];
        for (name, v) in finite {
            if !v.is_finite() {
                return Err((name, format!("{v} is not a finite number")));
            }
        }
        if !self.epoch.is_finite() {
            return Err(("epoch", "not a valid time".to_string()));
        }
        if !(0.0..1.0).contains(&self.eccentricity) {
            return Err((
                "eccentricity",
                format!(
                    "{} is outside [0, 1): SGP4 needs a closed orbit",
                    self.eccentricity
                ),
            ));
        }
        if !(0.0..=180.0).contains(&self.inclination_deg) {
            return Err((
                "inclination",
                format!("{} deg is outside 0-180", self.inclination_deg),
            ));
        }
        if self.mean_motion_rev_day <= 0.0 {
            return Err((
                "mean motion",
                format!("{} rev/day must be positive", self.mean_motion_rev_day),
            ));
        }
        if self.mean_motion_rev_day > 20.0 {
            return Err((
                "mean motion",
                format!(
                    "{} rev/day is faster than any orbit above the Earth's surface (about 17.5)",
                    self.mean_motion_rev_day
                ),
            ));
        }
        for (name, v) in [
            ("RAAN", self.raan_deg),
            ("argument of perigee", self.arg_perigee_deg),
            ("mean anomaly", self.mean_anomaly_deg),
        ] {
            if !(0.0..=360.0).contains(&v) {
                return Err((name, format!("{v} deg is outside 0-360")));
            }
        }
        Ok(())
    }
}
