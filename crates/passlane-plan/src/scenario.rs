//! The scenario file: one JSON document that holds an operator's fleet
//! (element files by path), stations, planning window, network demands and
//! screening settings.
//!
//! This module parses and writes text only; reading files, resolving paths
//! and atomic saves belong to the caller. Every scenario carries a
//! `format_version`: older versions are migrated on load, newer ones are
//! refused with a clear message.

use passlane_orbit::{EarthOrientation, UtcTime};
use serde::{Deserialize, Serialize};

use crate::scenario_keys::ScanError;
use crate::station::{Station, StationSet, same_station_name};

/// The format version this build writes.
pub const SCENARIO_FORMAT_VERSION: u32 = 1;

/// The planning window.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Window {
    pub start: UtcTime,
    pub end: UtcTime,
}

/// What one spacecraft needs from the network each day, and how much it matters.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SatelliteNeeds {
    pub catalog_number: u32,
    /// Larger is more important (weights the planner's objective). Default 1.
    #[serde(default = "one")]
    pub priority: f64,
    /// Shortest contact worth scheduling, s.
    #[serde(default)]
    pub min_contact_s: f64,
    /// Contacts wanted per day.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub contacts_per_day: Option<f64>,
    /// Data to bring down per day, megabytes.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub downlink_mb_per_day: Option<f64>,
    /// May two antennas serve this spacecraft at the same time?
    #[serde(default)]
    pub allow_simultaneous: bool,
    /// Hard-body radius for collision probability, m.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub hard_body_radius_m: Option<f64>,
}

fn one() -> f64 {
    1.0
}

/// One contact named by the user, for a pin (the planner must keep it) or an
/// exclusion (the planner must not use it).
///
/// A contact is identified by spacecraft, station, optionally antenna, and its
/// acquisition time: a reference matches a candidate contact when the given
/// `aos` lies within `tolerance_s` of either the pass's AOS (horizon crossing)
/// or the contact's usable AOS (after the antenna's minimum elevation), so that
/// a time copied from `passlane passes` or from a previous plan both work.
///
/// Without `antenna`, a pin keeps the pass on the first antenna of the station
/// (in the scenario's order) that can take it; an exclusion removes the pass
/// from every antenna of the station.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ContactRef {
    pub catalog_number: u32,
    /// Station name, as in `stations[].name`.
    pub station: String,
    /// Antenna name, as in `stations[].antennas[].name`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub antenna: Option<String>,
    pub aos: UtcTime,
    /// How far `aos` may be from the contact's AOS, s. Default 120.
    #[serde(default = "default_ref_tolerance")]
    pub tolerance_s: f64,
}

fn default_ref_tolerance() -> f64 {
    120.0
}

/// Settings for close-approach screening.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ScreeningDefaults {
    #[serde(default = "default_threshold")]
    pub threshold_km: f64,
    /// Hard-body radius used when an object has none of its own, m.
    #[serde(default = "default_hbr")]
    pub default_hard_body_radius_m: f64,
    /// Assumed 1-σ position uncertainty at element epoch, radial/in-track/cross-track, m.
    #[serde(default = "default_sigma_epoch")]
    pub assumed_sigma_at_epoch_m: [f64; 3],
    /// Assumed growth of that 1-σ per day of element age, m/day.
    #[serde(default = "default_sigma_growth")]
    pub assumed_sigma_growth_m_per_day: [f64; 3],
}

fn default_threshold() -> f64 {
    5.0
}
fn default_hbr() -> f64 {
    5.0
}
// Typical element-set uncertainties for LEO (common practice, order of
// magnitude only: ~100 m radial, ~1 km in-track, ~100 m cross-track at epoch,
// in-track growing by about a kilometre per day).
fn default_sigma_epoch() -> [f64; 3] {
    [100.0, 1000.0, 100.0]
}
fn default_sigma_growth() -> [f64; 3] {
    [50.0, 1000.0, 50.0]
}

impl Default for ScreeningDefaults {
    fn default() -> Self {
        ScreeningDefaults {
            threshold_km: default_threshold(),
            default_hard_body_radius_m: default_hbr(),
            assumed_sigma_at_epoch_m: default_sigma_epoch(),
            assumed_sigma_growth_m_per_day: default_sigma_growth(),
        }
    }
}

/// One operator ephemeris of the scenario.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct EphemerisFile {
    /// The OEM file, relative to the scenario file.
    pub file: String,
    /// The spacecraft it is (an OEM names its object by OBJECT_ID, not by
    /// catalog number). Absent: the element set whose international
    /// designator is the OEM's OBJECT_ID, or whose name is its OBJECT_NAME.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub catalog_number: Option<u32>,
}

/// The most entries each list of a scenario may hold, as (parent, key,
/// cap). A scenario is a configuration document, and these are far above
/// any network or fleet it describes; they bound the reader's memory. A
/// list's entries in memory can be several times their text (a minimal
/// station of ~80 bytes of JSON is a 184-byte struct with its name on the
/// heap; a one-letter file name is a 24-byte string and a heap block), so
/// without a cap a 64 MB file of minimal entries took ~3× its size. With
/// them, the structs of the largest lists accepted take a few MB whatever
/// the file: stations 10,000 × ~220 B, antennas 10,000 × 32 × ~80 B.
/// The reader refuses a longer list before building it (`scenario_keys`),
/// naming the list and its line; `Scenario::validate` applies the same caps
/// to a scenario built in the window.
pub const MAX_ENTRIES: [(&str, &str, usize); 9] = [
    ("scenario", "stations", 10_000),
    ("scenario", "satellites", 10_000),
    ("scenario", "element_files", 1_000),
    ("scenario", "catalog_files", 1_000),
    ("scenario", "ephemeris_files", 1_000),
    ("scenario", "pins", 100_000),
    ("scenario", "exclusions", 100_000),
    ("station", "antennas", 32),
    ("station", "channels", 256),
];

/// The cap of `MAX_ENTRIES` for the list `key` of a `parent`
/// ("scenario" or "station"), if it has one.
pub fn max_entries(parent: &str, key: &str) -> Option<usize> {
    MAX_ENTRIES
        .iter()
        .find(|(p, k, _)| *p == parent && *k == key)
        .map(|(_, _, n)| *n)
}

fn too_many(cap: usize) -> String {
    format!("more than {cap} entries (the most a scenario may hold here)")
}

/// A whole scenario.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Scenario {
    pub format_version: u32,
    #[serde(default)]
    pub name: String,
    #[serde(default)]
    pub operator: String,
    /// The operator's own element files (TLE or OMM), relative to the scenario file.
    #[serde(default)]
    pub element_files: Vec<String>,
    /// Other objects to screen against (catalog files), relative to the scenario file.
    #[serde(default)]
    pub catalog_files: Vec<String>,
    /// The operator's own ephemerides (CCSDS OEM, KVN or XML), relative to
    /// the scenario file: each gives one spacecraft's motion in place of
    /// SGP4 on its element set (which, if present, serves outside the
    /// ephemeris's usable spans).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub ephemeris_files: Vec<EphemerisFile>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub window: Option<Window>,
    #[serde(default)]
    pub earth_orientation: EarthOrientation,
    #[serde(default)]
    pub stations: Vec<Station>,
    #[serde(default)]
    pub satellites: Vec<SatelliteNeeds>,
    /// Contacts the network plan must keep.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub pins: Vec<ContactRef>,
    /// Contacts the network plan must not use.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub exclusions: Vec<ContactRef>,
    #[serde(default)]
    pub screening: ScreeningDefaults,
}

impl Default for Scenario {
    fn default() -> Self {
        Scenario {
            format_version: SCENARIO_FORMAT_VERSION,
            name: String::new(),
            operator: String::new(),
            element_files: Vec::new(),
            catalog_files: Vec::new(),
            ephemeris_files: Vec::new(),
            window: None,
            earth_orientation: EarthOrientation::default(),
            stations: Vec::new(),
            satellites: Vec::new(),
            pins: Vec::new(),
            exclusions: Vec::new(),
            screening: ScreeningDefaults::default(),
        }
    }
}

/// Why a scenario could not be read.
#[derive(Debug, Clone, PartialEq)]
pub struct ScenarioError {
    pub file: String,
    pub line: usize,
    pub column: usize,
    /// The field at fault, when known (e.g. `stations[1].latitude_deg`).
    pub field: String,
    pub message: String,
}

impl std::fmt::Display for ScenarioError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}", self.file)?;
        if self.line > 0 {
            write!(f, ":{}:{}", self.line, self.column)?;
        }
        if !self.field.is_empty() {
            write!(f, ": {}", self.field)?;
        }
        write!(f, ": {}", self.message)
    }
}

impl std::error::Error for ScenarioError {}

impl Scenario {
    /// Parses, migrates and validates a scenario from JSON text.
    ///
    /// Unknown keys are ignored here; [`Scenario::from_json_with_warnings`]
    /// names them, and is what a reader of the user's files should call.
    pub fn from_json(text: &str, file: &str) -> Result<Scenario, ScenarioError> {
        Scenario::from_json_with_warnings(text, file).map(|(s, _)| s)
    }

    /// As [`Scenario::from_json`], and also returns one warning per key the
    /// reader does not know (with a "did you mean" where a known key is
    /// close), each prefixed by the file name.
    ///
    /// A leading UTF-8 byte-order mark (some editors on Windows write one) is
    /// accepted and skipped.
    pub fn from_json_with_warnings(
        text: &str,
        file: &str,
    ) -> Result<(Scenario, Vec<String>), ScenarioError> {
        let text = text.strip_prefix('\u{feff}').unwrap_or(text);
        let err = |line, column, field: &str, message: String| ScenarioError {
            file: file.to_string(),
            line,
            column,
            field: field.to_string(),
            message,
        };
        // One streaming pass for the syntax, the format version and the
        // unknown keys, then the typed read: no generic tree of the document
        // is built (one cost ~8× the text for a scenario of many small
        // stations).
        let scan = crate::scenario_keys::scan_keys(text).map_err(|e| match e {
            ScanError::Json(e) => err(e.line(), e.column(), "", format!("not valid JSON: {e}")),
            ScanError::TooMany {
                path,
                cap,
                line,
                column,
            } => err(line, column, &path, too_many(cap)),
        })?;
        let version = scan.format_version.ok_or_else(|| {
            err(
                0,
                0,
                "format_version",
                "missing or not a whole number".into(),
            )
        })?;
        if version > u64::from(SCENARIO_FORMAT_VERSION) {
            return Err(err(
                0,
                0,
                "format_version",
                format!(
                    "this scenario was written by a newer Passlane (format {version}); this build reads up to format {SCENARIO_FORMAT_VERSION}: please update"
                ),
            ));
        }
        if version == 0 {
            return Err(err(
                0,
                0,
                "format_version",
                "0 is not a valid format version".into(),
            ));
        }
        let unknown = scan.unknown;
        let mut scenario: Scenario = serde_path_from_str(text)
            .map_err(|(path, line, column, message)| err(line, column, &path, message))?;
        scenario.format_version = SCENARIO_FORMAT_VERSION;
        scenario.validate().map_err(|e| err(0, 0, &e.0, e.1))?;
        for s in &mut scenario.stations {
            s.normalise();
        }
        let warnings = unknown.iter().map(|k| format!("{file}: {k}")).collect();
        Ok((scenario, warnings))
    }

    /// Pretty JSON, ending with a newline.
    pub fn to_json(&self) -> String {
        let mut s = serde_json::to_string_pretty(self).unwrap_or_else(|_| "{}".to_string());
        s.push('\n');
        s
    }

    /// The name of the scenario's calendar (its name, or a default).
    pub fn calendar_name(&self) -> &str {
        if self.name.trim().is_empty() {
            "Passlane plan"
        } else {
            self.name.as_str()
        }
    }

    /// The originator of messages written for this scenario (its operator,
    /// or a default).
    pub fn originator(&self) -> &str {
        if self.operator.trim().is_empty() {
            "PASSLANE"
        } else {
            self.operator.as_str()
        }
    }

    /// Checks every field the library relies on; returns (field path, reason).
    /// Every list within its cap (`MAX_ENTRIES`).
    fn check_counts(&self) -> Result<(), (String, String)> {
        let cap = |parent: &str, key: &str| max_entries(parent, key).unwrap_or(usize::MAX);
        let lists = [
            ("stations", self.stations.len()),
            ("satellites", self.satellites.len()),
            ("element_files", self.element_files.len()),
            ("catalog_files", self.catalog_files.len()),
            ("ephemeris_files", self.ephemeris_files.len()),
            ("pins", self.pins.len()),
            ("exclusions", self.exclusions.len()),
        ];
        for (key, n) in lists {
            let c = cap("scenario", key);
            if n > c {
                return Err((key.to_string(), too_many(c)));
            }
        }
        for (i, st) in self.stations.iter().enumerate() {
            for (key, n) in [
                ("antennas", st.antennas.len()),
                ("channels", st.channels.len()),
            ] {
                let c = cap("station", key);
                if n > c {
                    return Err((format!("stations[{i}].{key}"), too_many(c)));
                }
            }
        }
        Ok(())
    }

    pub fn validate(&self) -> Result<(), (String, String)> {
        self.check_text()?;
        self.check_counts()?;
        if let Some(w) = &self.window
            && w.end <= w.start
        {
            return Err((
                "window.end".into(),
                format!("{} is not after window.start {}", w.end, w.start),
            ));
        }
        if !self.earth_orientation.ut1_utc_s.is_finite()
            || self.earth_orientation.ut1_utc_s.abs() > 1.0
        {
            return Err((
                "earth_orientation.ut1_utc_s".into(),
                format!("{} s is outside ±1 s", self.earth_orientation.ut1_utc_s),
            ));
        }
        // Polar motion stays within about 0.6 arcsec (IERS series since 1962,
        // value from memory); 1 arcsec leaves room and catches a value given
        // in milliarcseconds or radians by mistake.
        for (f, v) in [
            ("polar_x_arcsec", self.earth_orientation.polar_x_arcsec),
            ("polar_y_arcsec", self.earth_orientation.polar_y_arcsec),
        ] {
            if !(v.is_finite() && v.abs() <= 1.0) {
                return Err((
                    format!("earth_orientation.{f}"),
                    format!(
                        "{v} arcsec is outside ±1 arcsec (polar motion is a fraction of an arcsecond)"
                    ),
                ));
            }
        }
        StationSet::check(&self.stations)
            .map_err(|e| (format!("stations[{}].{}", e.index, e.field), e.message))?;
        for (i, e) in self.ephemeris_files.iter().enumerate() {
            if e.file.trim().is_empty() {
                return Err((
                    format!("ephemeris_files[{i}].file"),
                    "empty: give the OEM file's path".into(),
                ));
            }
            if let Some(n) = e.catalog_number
                && self.ephemeris_files[..i]
                    .iter()
                    .any(|o| o.catalog_number == Some(n))
            {
                return Err((
                    format!("ephemeris_files[{i}].catalog_number"),
                    format!("catalog {n} already has an ephemeris in this scenario"),
                ));
            }
        }
        for (i, n) in self.satellites.iter().enumerate() {
            let field = |f: &str| format!("satellites[{i}].{f}");
            if !(n.priority.is_finite() && n.priority > 0.0) {
                return Err((
                    field("priority"),
                    format!("{} must be positive", n.priority),
                ));
            }
            if !(n.min_contact_s.is_finite() && n.min_contact_s >= 0.0) {
                return Err((
                    field("min_contact_s"),
                    format!("{} must not be negative", n.min_contact_s),
                ));
            }
            for (f, v) in [
                ("contacts_per_day", n.contacts_per_day),
                ("downlink_mb_per_day", n.downlink_mb_per_day),
            ] {
                if let Some(v) = v
                    && !(v.is_finite() && v >= 0.0)
                {
                    return Err((field(f), format!("{v} must not be negative")));
                }
            }
            if let Some(r) = n.hard_body_radius_m
                && !(r.is_finite() && r > 0.0)
            {
                return Err((
                    field("hard_body_radius_m"),
                    format!("{r} m must be positive (a radius of 0 or less makes every Pc 0)"),
                ));
            }
        }
        let mut seen = std::collections::HashSet::new();
        for (i, n) in self.satellites.iter().enumerate() {
            if !seen.insert(n.catalog_number) {
                return Err((
                    format!("satellites[{i}].catalog_number"),
                    format!("{} is listed twice", n.catalog_number),
                ));
            }
        }
        for (list, refs) in [("pins", &self.pins), ("exclusions", &self.exclusions)] {
            for (i, r) in refs.iter().enumerate() {
                let field = |f: &str| format!("{list}[{i}].{f}");
                let Some(station) = self
                    .stations
                    .iter()
                    .find(|s| same_station_name(&s.name, &r.station))
                else {
                    return Err((
                        field("station"),
                        format!("{:?} is not one of the scenario's stations", r.station),
                    ));
                };
                if let Some(a) = &r.antenna
                    && !station.antennas.iter().any(|x| &x.name == a)
                {
                    return Err((
                        field("antenna"),
                        format!("{a:?} is not an antenna of station {:?}", station.name),
                    ));
                }
                if !(r.tolerance_s.is_finite() && r.tolerance_s >= 0.0) {
                    return Err((
                        field("tolerance_s"),
                        format!("{} must not be negative", r.tolerance_s),
                    ));
                }
                if !r.aos.is_finite() {
                    return Err((field("aos"), "is not a finite time".into()));
                }
            }
        }
        let sc = &self.screening;
        if !(sc.threshold_km.is_finite() && sc.threshold_km > 0.0) {
            return Err((
                "screening.threshold_km".into(),
                format!("{} must be positive", sc.threshold_km),
            ));
        }
        if !(sc.default_hard_body_radius_m.is_finite() && sc.default_hard_body_radius_m > 0.0) {
            return Err((
                "screening.default_hard_body_radius_m".into(),
                format!("{} must be positive", sc.default_hard_body_radius_m),
            ));
        }
        for (i, v) in sc.assumed_sigma_at_epoch_m.iter().enumerate() {
            if !(v.is_finite() && *v > 0.0) {
                return Err((
                    format!("screening.assumed_sigma_at_epoch_m[{i}]"),
                    format!("{v} m must be positive (a 1-sigma uncertainty)"),
                ));
            }
        }
        for (i, v) in sc.assumed_sigma_growth_m_per_day.iter().enumerate() {
            if !(v.is_finite() && *v >= 0.0) {
                return Err((
                    format!("screening.assumed_sigma_growth_m_per_day[{i}]"),
                    format!("{v} m/day must not be negative"),
                ));
            }
        }
        Ok(())
    }
}

impl Scenario {
    /// Every name and path of the scenario is free of line breaks, NUL and
    /// terminal escapes: they go into hand-off files (KVN, CSV, iCalendar)
    /// and onto terminals.
    fn check_text(&self) -> Result<(), (String, String)> {
        // The path is written only for a text at fault: a scenario of many
        // stations costs no string per name.
        let check =
            |text: &str, path: &dyn Fn() -> String| match passlane_orbit::text::first_unsafe_char(
                text,
            ) {
                None => Ok(()),
                Some(c) => Err((
                    path(),
                    format!(
                        "holds {}: names may not carry line breaks, NUL or terminal escapes",
                        passlane_orbit::text::describe_char(c)
                    ),
                )),
            };
        check(&self.name, &|| "name".into())?;
        check(&self.operator, &|| "operator".into())?;
        for (list, files) in [
            ("element_files", &self.element_files),
            ("catalog_files", &self.catalog_files),
        ] {
            for (i, f) in files.iter().enumerate() {
                check(f, &|| format!("{list}[{i}]"))?;
            }
        }
        for (i, e) in self.ephemeris_files.iter().enumerate() {
            check(&e.file, &|| format!("ephemeris_files[{i}].file"))?;
        }
        for (i, st) in self.stations.iter().enumerate() {
            check(&st.name, &|| format!("stations[{i}].name"))?;
            for (j, a) in st.antennas.iter().enumerate() {
                check(&a.name, &|| format!("stations[{i}].antennas[{j}].name"))?;
            }
            for (j, c) in st.channels.iter().enumerate() {
                check(&c.name, &|| format!("stations[{i}].channels[{j}].name"))?;
            }
        }
        for (list, refs) in [("pins", &self.pins), ("exclusions", &self.exclusions)] {
            for (i, r) in refs.iter().enumerate() {
                check(&r.station, &|| format!("{list}[{i}].station"))?;
                if let Some(a) = &r.antenna {
                    check(a, &|| format!("{list}[{i}].antenna"))?;
                }
            }
        }
        Ok(())
    }
}

/// Deserialises with the path of the failing field in the error, by walking
/// the value: serde_json reports line/column, and we add the field path.
fn serde_path_from_str(text: &str) -> Result<Scenario, (String, usize, usize, String)> {
    let mut de = serde_json::Deserializer::from_str(text);
    match Scenario::deserialize(&mut de) {
        Ok(s) => Ok(s),
        Err(e) => {
            let msg = e.to_string();
            // serde_json's message ends in " at line L column C"; keep its reason.
            let reason = msg.split(" at line ").next().unwrap_or(&msg).to_string();
            let path = field_path_at(text, e.line(), e.column());
            Err((path, e.line(), e.column(), reason))
        }
    }
}

/// Best-effort JSON path (e.g. `stations[1].latitude_deg`) of the position
/// `line:column` in `text`, by scanning the text up to it.
fn field_path_at(text: &str, line: usize, column: usize) -> String {
    let mut offset = 0usize;
    for (i, l) in text.split_inclusive('\n').enumerate() {
        if i + 1 == line {
            offset += column.min(l.len());
            break;
        }
        offset += l.len();
    }
    let bytes = &text.as_bytes()[..offset.min(text.len())];
    enum Frame {
        Obj(Option<String>),
        Arr(usize),
    }
    let mut stack: Vec<Frame> = Vec::new();
    let mut i = 0;
    let mut last_string: Option<String> = None;
    while i < bytes.len() {
        match bytes[i] {
            b'"' => {
                let start = i + 1;
                i += 1;
                while i < bytes.len() && bytes[i] != b'"' {
                    if bytes[i] == b'\\' {
                        i += 1;
                    }
                    i += 1;
                }
                last_string =
                    Some(String::from_utf8_lossy(&bytes[start..i.min(bytes.len())]).into_owned());
            }
            b':' => {
                if let Some(Frame::Obj(key)) = stack.last_mut() {
                    *key = last_string.take();
                }
            }
            b'{' => stack.push(Frame::Obj(None)),
            b'[' => stack.push(Frame::Arr(0)),
            b'}' | b']' => {
                stack.pop();
            }
            b',' => match stack.last_mut() {
                Some(Frame::Arr(n)) => *n += 1,
                Some(Frame::Obj(key)) => *key = None,
                None => {}
            },
            _ => {}
        }
        i += 1;
    }
    let mut path = String::new();
    for f in &stack {
        match f {
            Frame::Obj(Some(k)) => {
                if !path.is_empty() {
                    path.push('.');
                }
                path.push_str(k);
            }
            Frame::Obj(None) => {}
            Frame::Arr(n) => path.push_str(&format!("[{n}]")),
        }
    }
    path
}

#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::field_reassign_with_default)]
mod tests {
    use super::*;

    #[test]
    fn errors_name_the_field() {
        let text = r#"{
  "format_version": 1,
  "stations": [
    {"name": "A", "latitude_deg": 10, "longitude_deg": 0},
    {"name": "B", "latitude_deg": "north", "longitude_deg": 0}
  ]
}"#;
        let e = Scenario::from_json(text, "s.json").unwrap_err();
        assert_eq!(e.field, "stations[1].latitude_deg", "{e}");
        assert_eq!(e.line, 5);
        let text = r#"{"format_version": 1, "stations": [{"name": "A", "latitude_deg": 95, "longitude_deg": 0}]}"#;
        let e = Scenario::from_json(text, "s.json").unwrap_err();
        assert_eq!(e.field, "stations[0].latitude_deg", "{e}");
    }

    #[test]
    fn newer_format_is_refused_clearly() {
        let e = Scenario::from_json(r#"{"format_version": 99}"#, "s.json").unwrap_err();
        assert_eq!(e.field, "format_version");
        assert!(e.message.contains("newer"), "{e}");
    }

    #[test]
    fn round_trip() {
        let mut s = Scenario::default();
        s.name = "t".into();
        s.stations.push(Station::new("A", 1.0, 2.0, 3.0));
        let back = Scenario::from_json(&s.to_json(), "x").unwrap();
        assert_eq!(back, s);
    }
}
