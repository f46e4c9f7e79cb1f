//! CCSDS 508.0-B-1 Conjunction Data Message (CDM), KVN form: read, write and
//! re-assess.
//!
//! A CDM has a header, relative metadata (TCA, miss distance and relative
//! state in object 1's RTN frame, screening volume, reported probability),
//! then one block per object (OBJECT1, OBJECT2): metadata, optional orbit
//! determination and physical parameters, the state (km, km/s) and the lower
//! triangle of the 6×6 RTN covariance (m², m²/s, m²/s²).
//!
//! - [`Cdm::parse`] reads KVN text and returns a validated [`Cdm`] or a
//!   [`CdmError`] naming file, line, keyword and reason: unknown or misplaced
//!   keyword, missing mandatory keyword, value that is not a number or time,
//!   a unit that is not the standard's or sits before the value, and a
//!   position covariance that is not positive definite.
//! - [`Cdm::write_kvn`] writes the keywords in the standard's order.
//! - [`Cdm::recompute`] rebuilds the encounter from the two states and
//!   covariances and computes the probability by every method of
//!   [`crate::pc`].
//!
//! The keyword tables below follow CCSDS 508.0-B-1 (2013), sections 3.2–3.5,
//! as we recall them: keyword names, order and which are mandatory are from
//! memory of the standard's tables, as are the units of the optional
//! drag/SRP/thrust covariance rows (which we therefore pass through without
//! checking). COMMENT lines are accepted anywhere inside a section (the
//! standard allows them at the start of each section and logical block) and
//! are written back at the start of their section.
//!
//! This module does no file I/O: text comes in as `&str`, output goes to any
//! `io::Write`. It does not handle the XML form of the CDM.

use passlane_orbit::UtcTime;
use serde::Serialize;

use crate::encounter::{EncounterError, Mat3, StateKm, encounter_plane, relative_geometry};
use crate::pc::{pc_alfano, pc_chan, pc_foster, pc_max};

/// A CDM that could not be read, with where and why.
#[derive(Debug, Clone, PartialEq)]
pub struct CdmError {
    pub file: String,
    /// 1-based line; for a missing keyword, the line where its block ended
    /// (0 if the text is empty).
    pub line: usize,
    pub keyword: String,
    pub reason: String,
}

impl std::fmt::Display for CdmError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "{}:{}: {}: {}",
            self.file, self.line, self.keyword, self.reason
        )
    }
}

impl std::error::Error for CdmError {}

#[derive(Clone, Copy, PartialEq, Debug)]
enum Kind {
    Text,
    Time,
    Number,
}

#[derive(Clone, Copy, PartialEq, Debug)]
enum Unit {
    /// The keyword takes no unit.
    None,
    /// The standard's unit; any other is an error.
    Exact(&'static str),
    /// A unit we are not sure of: accepted as given and written back as read.
    PassThrough,
}

#[derive(Clone, Copy, Debug)]
struct Spec {
    key: &'static str,
    kind: Kind,
    unit: Unit,
    mandatory: bool,
}

const fn spec(key: &'static str, kind: Kind, unit: Unit, mandatory: bool) -> Spec {
    Spec {
        key,
        kind,
        unit,
        mandatory,
    }
}

use Kind::{Number as N, Text as T, Time as TM};
const M: bool = true;
const O: bool = false;
const NO: Unit = Unit::None;
const PT: Unit = Unit::PassThrough;
const UM: Unit = Unit::Exact("m");
const UMS: Unit = Unit::Exact("m/s");
const UKM: Unit = Unit::Exact("km");
const UKMS: Unit = Unit::Exact("km/s");
const UM2: Unit = Unit::Exact("m**2");
const UM2S: Unit = Unit::Exact("m**2/s");
const UM2S2: Unit = Unit::Exact("m**2/s**2");

/// Header (CCSDS 508.0-B-1 Table 3-1, from memory).
const HEADER_KEYS: &[Spec] = &[
    spec("CCSDS_CDM_VERS", T, NO, M),
    spec("CREATION_DATE", TM, NO, M),
    spec("ORIGINATOR", T, NO, M),
    spec("MESSAGE_FOR", T, NO, O),
    spec("MESSAGE_ID", T, NO, M),
];

/// Relative metadata/data (Table 3-2, from memory).
const RELATIVE_KEYS: &[Spec] = &[
    spec("TCA", TM, NO, M),
    spec("MISS_DISTANCE", N, UM, M),
    spec("RELATIVE_SPEED", N, UMS, O),
    spec("RELATIVE_POSITION_R", N, UM, O),
    spec("RELATIVE_POSITION_T", N, UM, O),
    spec("RELATIVE_POSITION_N", N, UM, O),
    spec("RELATIVE_VELOCITY_R", N, UMS, O),
    spec("RELATIVE_VELOCITY_T", N, UMS, O),
    spec("RELATIVE_VELOCITY_N", N, UMS, O),
    spec("START_SCREEN_PERIOD", TM, NO, O),
    spec("STOP_SCREEN_PERIOD", TM, NO, O),
    spec("SCREEN_VOLUME_FRAME", T, NO, O),
    spec("SCREEN_VOLUME_SHAPE", T, NO, O),
    spec("SCREEN_VOLUME_X", N, UM, O),
    spec("SCREEN_VOLUME_Y", N, UM, O),
    spec("SCREEN_VOLUME_Z", N, UM, O),
    spec("SCREEN_ENTRY_TIME", TM, NO, O),
    spec("SCREEN_EXIT_TIME", TM, NO, O),
    spec("COLLISION_PROBABILITY", N, NO, O),
    spec("COLLISION_PROBABILITY_METHOD", T, NO, O),
];

/// Per-object metadata (Table 3-3) then data (Table 3-4: OD parameters,
/// additional parameters, state vector, covariance), from memory.
const OBJECT_KEYS: &[Spec] = &[
    spec("OBJECT", T, NO, M),
    spec("OBJECT_DESIGNATOR", T, NO, M),
    spec("CATALOG_NAME", T, NO, M),
    spec("OBJECT_NAME", T, NO, M),
    spec("INTERNATIONAL_DESIGNATOR", T, NO, M),
    spec("OBJECT_TYPE", T, NO, O),
    spec("OPERATOR_CONTACT_POSITION", T, NO, O),
    spec("OPERATOR_ORGANIZATION", T, NO, O),
    spec("OPERATOR_PHONE", T, NO, O),
    spec("OPERATOR_EMAIL", T, NO, O),
    spec("EPHEMERIS_NAME", T, NO, M),
    spec("COVARIANCE_METHOD", T, NO, M),
    spec("MANEUVERABLE", T, NO, M),
    spec("ORBIT_CENTER", T, NO, O),
    spec("REF_FRAME", T, NO, M),
    spec("GRAVITY_MODEL", T, NO, O),
    spec("ATMOSPHERIC_MODEL", T, NO, O),
    spec("N_BODY_PERTURBATIONS", T, NO, O),
    spec("SOLAR_RAD_PRESSURE", T, NO, O),
    spec("EARTH_TIDES", T, NO, O),
    spec("INTRACK_THRUST", T, NO, O),
    spec("TIME_LASTOB_START", TM, NO, O),
    spec("TIME_LASTOB_END", TM, NO, O),
    spec("RECOMMENDED_OD_SPAN", N, Unit::Exact("d"), O),
    spec("ACTUAL_OD_SPAN", N, Unit::Exact("d"), O),
    spec("OBS_AVAILABLE", N, NO, O),
    spec("OBS_USED", N, NO, O),
    spec("TRACKS_AVAILABLE", N, NO, O),
    spec("TRACKS_USED", N, NO, O),
    spec("RESIDUALS_ACCEPTED", N, Unit::Exact("%"), O),
    spec("WEIGHTED_RMS", N, NO, O),
    spec("AREA_PC", N, UM2, O),
    spec("AREA_DRG", N, UM2, O),
    spec("AREA_SRP", N, UM2, O),
    spec("MASS", N, Unit::Exact("kg"), O),
    spec("CD_AREA_OVER_MASS", N, Unit::Exact("m**2/kg"), O),
    spec("CR_AREA_OVER_MASS", N, Unit::Exact("m**2/kg"), O),
    spec("THRUST_ACCELERATION", N, Unit::Exact("m/s**2"), O),
    spec("SEDR", N, Unit::Exact("W/kg"), O),
    spec("X", N, UKM, M),
    spec("Y", N, UKM, M),
    spec("Z", N, UKM, M),
    spec("X_DOT", N, UKMS, M),
    spec("Y_DOT", N, UKMS, M),
    spec("Z_DOT", N, UKMS, M),
    spec("CR_R", N, UM2, M),
    spec("CT_R", N, UM2, M),
    spec("CT_T", N, UM2, M),
    spec("CN_R", N, UM2, M),
    spec("CN_T", N, UM2, M),
    spec("CN_N", N, UM2, M),
    spec("CRDOT_R", N, UM2S, M),
    spec("CRDOT_T", N, UM2S, M),
    spec("CRDOT_N", N, UM2S, M),
    spec("CRDOT_RDOT", N, UM2S2, M),
    spec("CTDOT_R", N, UM2S, M),
    spec("CTDOT_T", N, UM2S, M),
    spec("CTDOT_N", N, UM2S, M),
    spec("CTDOT_RDOT", N, UM2S2, M),
    spec("CTDOT_TDOT", N, UM2S2, M),
    spec("CNDOT_R", N, UM2S, M),
    spec("CNDOT_T", N, UM2S, M),
    spec("CNDOT_N", N, UM2S, M),
    spec("CNDOT_RDOT", N, UM2S2, M),
    spec("CNDOT_TDOT", N, UM2S2, M),
    spec("CNDOT_NDOT", N, UM2S2, M),
    spec("CDRG_R", N, PT, O),
    spec("CDRG_T", N, PT, O),
    spec("CDRG_N", N, PT, O),
    spec("CDRG_RDOT", N, PT, O),
    spec("CDRG_TDOT", N, PT, O),
    spec("CDRG_NDOT", N, PT, O),
    spec("CDRG_DRG", N, PT, O),
    spec("CSRP_R", N, PT, O),
    spec("CSRP_T", N, PT, O),
    spec("CSRP_N", N, PT, O),
    spec("CSRP_RDOT", N, PT, O),
    spec("CSRP_TDOT", N, PT, O),
    spec("CSRP_NDOT", N, PT, O),
    spec("CSRP_DRG", N, PT, O),
    spec("CSRP_SRP", N, PT, O),
    spec("CTHR_R", N, PT, O),
    spec("CTHR_T", N, PT, O),
    spec("CTHR_N", N, PT, O),
    spec("CTHR_RDOT", N, PT, O),
    spec("CTHR_TDOT", N, PT, O),
    spec("CTHR_NDOT", N, PT, O),
    spec("CTHR_DRG", N, PT, O),
    spec("CTHR_SRP", N, PT, O),
    spec("CTHR_THR", N, PT, O),
];

/// The 21 mandatory covariance keywords, lower triangle of the 6×6 RTN
/// covariance row by row (R, T, N, RDOT, TDOT, NDOT).
pub const COVARIANCE_KEYS: [&str; 21] = [
    "CR_R",
    "CT_R",
    "CT_T",
    "CN_R",
    "CN_T",
    "CN_N",
    "CRDOT_R",
    "CRDOT_T",
    "CRDOT_N",
    "CRDOT_RDOT",
    "CTDOT_R",
    "CTDOT_T",
    "CTDOT_N",
    "CTDOT_RDOT",
    "CTDOT_TDOT",
    "CNDOT_R",
    "CNDOT_T",
    "CNDOT_N",
    "CNDOT_RDOT",
    "CNDOT_TDOT",
    "CNDOT_NDOT",
];

/// The mandatory keywords of a CDM in the order [`Cdm::write_kvn`] writes
/// them (header, relative metadata, then each object's block).
pub fn mandatory_keywords() -> Vec<&'static str> {
    let pick = |t: &[Spec]| -> Vec<&'static str> {
        t.iter().filter(|s| s.mandatory).map(|s| s.key).collect()
    };
    let mut v = pick(HEADER_KEYS);
    v.extend(pick(RELATIVE_KEYS));
    let obj = pick(OBJECT_KEYS);
    v.extend(obj.iter().copied());
    v.extend(obj);
    v
}

/// A keyword kept as read (optional keywords without a typed field).
#[derive(Debug, Clone, PartialEq)]
pub struct KvnField {
    pub keyword: String,
    pub value: String,
    pub unit: Option<String>,
}

#[derive(Debug, Clone, PartialEq)]
pub struct CdmHeader {
    pub comments: Vec<String>,
    pub ccsds_cdm_vers: String,
    pub creation_date: UtcTime,
    pub originator: String,
    pub message_for: Option<String>,
    pub message_id: String,
}

/// Relative metadata; positions and velocities are object 2 relative to
/// object 1 in object 1's RTN frame.
#[derive(Debug, Clone, PartialEq)]
pub struct CdmRelative {
    pub comments: Vec<String>,
    pub tca: UtcTime,
    pub miss_distance_m: f64,
    pub relative_speed_m_s: Option<f64>,
    pub relative_position_rtn_m: [Option<f64>; 3],
    pub relative_velocity_rtn_m_s: [Option<f64>; 3],
    pub start_screen_period: Option<UtcTime>,
    pub stop_screen_period: Option<UtcTime>,
    pub screen_volume_frame: Option<String>,
    pub screen_volume_shape: Option<String>,
    pub screen_volume_xyz_m: [Option<f64>; 3],
    pub screen_entry_time: Option<UtcTime>,
    pub screen_exit_time: Option<UtcTime>,
    pub collision_probability: Option<f64>,
    pub collision_probability_method: Option<String>,
}

/// One object's block.
#[derive(Debug, Clone, PartialEq)]
pub struct CdmObject {
    pub comments: Vec<String>,
    /// `OBJECT1` or `OBJECT2`.
    pub object: String,
    pub object_designator: String,
    pub catalog_name: String,
    pub object_name: String,
    pub international_designator: String,
    pub ephemeris_name: String,
    pub covariance_method: String,
    pub maneuverable: String,
    pub ref_frame: String,
    /// State in REF_FRAME (km, km/s).
    pub state: StateKm,
    /// The 21 covariance terms in the order of [`COVARIANCE_KEYS`]
    /// (m², m²/s, m²/s²).
    pub covariance_rtn: [f64; 21],
    /// Every other keyword present, as read, in the order read.
    pub other: Vec<KvnField>,
}

impl CdmObject {
    /// The 3×3 position block of the RTN covariance (m²).
    pub fn position_covariance_rtn_m2(&self) -> Mat3 {
        let c = &self.covariance_rtn;
        [[c[0], c[1], c[3]], [c[1], c[2], c[4]], [c[3], c[4], c[5]]]
    }
}

#[derive(Debug, Clone, PartialEq)]
pub struct Cdm {
    pub header: CdmHeader,
    pub relative: CdmRelative,
    pub object1: CdmObject,
    pub object2: CdmObject,
}

/// The re-assessment of a CDM; field names are part of the command-line and
/// JSON output.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CdmAssessment {
    /// TCA as given in the CDM, ISO 8601 UTC with milliseconds.
    pub tca: String,
    /// Recomputed from the two states (m).
    pub miss_distance_m: f64,
    /// Recomputed from the two states (m/s).
    pub relative_speed_m_s: f64,
    /// Foster-style 2-D numerical integration.
    pub pc: f64,
    pub pc_alfano: f64,
    pub pc_chan: f64,
    /// Maximum over the scale of the CDM's combined covariance, shape kept.
    pub pc_max: f64,
    /// Miss of object 2 relative to object 1 in object 1's RTN frame (m).
    pub radial_m: f64,
    pub in_track_m: f64,
    pub cross_track_m: f64,
    pub approach_angle_deg: f64,
    pub hard_body_radius_m: f64,
    /// Encounter plane, principal axes of the combined covariance (m).
    pub sigma_x_m: f64,
    pub sigma_y_m: f64,
    pub miss_x_m: f64,
    pub miss_y_m: f64,
    /// Where the covariance came from; always "CDM" here.
    pub covariance_source: String,
    /// As reported in the CDM, for comparison.
    pub cdm_miss_distance_m: f64,
    pub cdm_collision_probability: Option<f64>,
}

// ---------------------------------------------------------------------------
// Reading
// ---------------------------------------------------------------------------

#[derive(Debug, Clone)]
struct RawKv {
    key: String,
    value: String,
    line: usize,
}

#[derive(Default, Debug)]
struct RawSection {
    comments: Vec<String>,
    items: Vec<RawKv>,
    first_line: usize,
}

#[derive(Clone, Copy, PartialEq, PartialOrd, Debug)]
enum Section {
    Header,
    Relative,
    Object1,
    Object2,
}

fn table_of(key: &str) -> Option<(Section, Spec)> {
    for (sec, table) in [
        (Section::Header, HEADER_KEYS),
        (Section::Relative, RELATIVE_KEYS),
        (Section::Object1, OBJECT_KEYS),
    ] {
        if let Some(s) = table.iter().find(|s| s.key == key) {
            return Some((sec, *s));
        }
    }
    None
}

/// A value with its unit split off, after checking the unit's place and name.
struct Value {
    text: String,
    unit: Option<String>,
}

struct Ctx<'a> {
    file: &'a str,
}

/// At most `MAX` characters of `text` for an error message, so that a
/// hostile line (megabytes without `=`, a giant value) is quoted, not copied.
fn excerpt(text: &str) -> String {
    const MAX: usize = 60;
    match text.char_indices().nth(MAX) {
        None => text.to_string(),
        Some((cut, _)) => format!("{}…", &text[..cut]),
    }
}

impl Ctx<'_> {
    fn err(&self, line: usize, keyword: &str, reason: impl Into<String>) -> CdmError {
        CdmError {
            file: self.file.to_string(),
            line,
            keyword: excerpt(keyword),
            reason: reason.into(),
        }
    }

    fn split_value(&self, kv: &RawKv, spec: &Spec) -> Result<Value, CdmError> {
        let v = kv.value.trim();
        if spec.kind == Kind::Text {
            return Ok(Value {
                text: v.to_string(),
                unit: None,
            });
        }
        if v.starts_with('[') {
            return Err(self.err(
                kv.line,
                &kv.key,
                "unit bracket before the value (write `KEYWORD = value [unit]`)",
            ));
        }
        let (text, unit) = match v.find('[') {
            None => (v, None),
            Some(i) => {
                let rest = &v[i + 1..];
                let Some(j) = rest.find(']') else {
                    return Err(self.err(kv.line, &kv.key, "unit bracket not closed"));
                };
                if !rest[j + 1..].trim().is_empty() {
                    return Err(self.err(kv.line, &kv.key, "text after the unit bracket"));
                }
                (v[..i].trim(), Some(rest[..j].trim().to_string()))
            }
        };
        match (spec.unit, &unit) {
            (Unit::None, Some(u)) => {
                return Err(self.err(
                    kv.line,
                    &kv.key,
                    format!(
                        "unit [{}] given, but the standard gives this keyword no unit",
                        excerpt(u)
                    ),
                ));
            }
            (Unit::Exact(want), Some(u)) if u != want => {
                return Err(self.err(
                    kv.line,
                    &kv.key,
                    format!("unit [{}] where CCSDS 508.0-B-1 has [{want}]", excerpt(u)),
                ));
            }
            _ => {}
        }
        Ok(Value {
            text: text.to_string(),
            unit,
        })
    }
}

/// The keywords of one section, looked up by name.
struct Fields<'a> {
    ctx: &'a Ctx<'a>,
    section: &'a RawSection,
    end_line: usize,
    table: &'static [Spec],
    what: &'static str,
}

impl Fields<'_> {
    fn find(&self, key: &str) -> Option<&RawKv> {
        self.section.items.iter().find(|kv| kv.key == key)
    }

    fn spec(&self, key: &str) -> Spec {
        self.table
            .iter()
            .find(|s| s.key == key)
            .copied()
            .unwrap_or(spec("", Kind::Text, Unit::None, false))
    }

    fn missing(&self, key: &str) -> CdmError {
        self.ctx.err(
            self.end_line,
            key,
            format!("mandatory keyword missing from the {}", self.what),
        )
    }

    fn opt_text(&self, key: &str) -> Option<String> {
        self.find(key).map(|kv| kv.value.trim().to_string())
    }

    fn text(&self, key: &str) -> Result<String, CdmError> {
        let kv = self.find(key).ok_or_else(|| self.missing(key))?;
        let t = kv.value.trim();
        if t.is_empty() {
            return Err(self.ctx.err(kv.line, key, "empty value"));
        }
        Ok(t.to_string())
    }

    fn opt_num(&self, key: &str) -> Result<Option<f64>, CdmError> {
        let Some(kv) = self.find(key) else {
            return Ok(None);
        };
        let v = self.ctx.split_value(kv, &self.spec(key))?;
        match v.text.parse::<f64>() {
            Ok(x) if x.is_finite() => Ok(Some(x)),
            _ => Err(self.ctx.err(
                kv.line,
                key,
                format!("value {:?} is not a number", excerpt(&v.text)),
            )),
        }
    }

    fn num(&self, key: &str) -> Result<f64, CdmError> {
        self.opt_num(key)?.ok_or_else(|| self.missing(key))
    }

    fn opt_time(&self, key: &str) -> Result<Option<UtcTime>, CdmError> {
        let Some(kv) = self.find(key) else {
            return Ok(None);
        };
        UtcTime::parse_iso(kv.value.trim())
            .map(Some)
            .map_err(|e| self.ctx.err(kv.line, key, e.to_string()))
    }

    fn time(&self, key: &str) -> Result<UtcTime, CdmError> {
        self.opt_time(key)?.ok_or_else(|| self.missing(key))
    }

    /// Checks units and numbers of every keyword, and that mandatory ones are
    /// present, so that errors come in line order and none is skipped.
    fn check_all(&self) -> Result<(), CdmError> {
        for kv in &self.section.items {
            let s = self.spec(&kv.key);
            match s.kind {
                Kind::Number => {
                    self.opt_num(&kv.key)?;
                }
                Kind::Time => {
                    self.opt_time(&kv.key)?;
                }
                Kind::Text => {}
            }
        }
        for s in self.table.iter().filter(|s| s.mandatory) {
            if self.find(s.key).is_none() {
                return Err(self.missing(s.key));
            }
        }
        Ok(())
    }
}

impl Cdm {
    /// Reads a KVN CDM. `file` is used only in error messages.
    pub fn parse(text: &str, file: &str) -> Result<Cdm, CdmError> {
        let ctx = Ctx { file };
        let mut sections: [RawSection; 4] = Default::default();
        let mut current = Section::Header;
        let mut last_line = 0;
        let mut pending_comments = Vec::new();
        for (i, raw) in text.lines().enumerate() {
            let line_no = i + 1;
            last_line = line_no;
            let line = raw.trim();
            if line.is_empty() {
                continue;
            }
            if line == "COMMENT" || line.starts_with("COMMENT ") || line.starts_with("COMMENT\t") {
                // A comment belongs to the block of the keyword that follows it,
                // so one written just before `OBJECT = OBJECT1` goes with OBJECT1.
                pending_comments.push(line["COMMENT".len()..].trim().to_string());
                continue;
            }
            let Some((key, value)) = line.split_once('=') else {
                return Err(ctx.err(line_no, line, "expected `KEYWORD = value`"));
            };
            let key = key.trim().to_string();
            let Some((home, _)) = table_of(&key) else {
                return Err(ctx.err(line_no, &key, "not a CCSDS 508.0-B-1 CDM keyword"));
            };
            let target = match home {
                Section::Header | Section::Relative => home,
                _ if key == "OBJECT" => match current {
                    Section::Header | Section::Relative => Section::Object1,
                    Section::Object1 => Section::Object2,
                    Section::Object2 => {
                        return Err(ctx.err(line_no, &key, "a CDM has only two objects"));
                    }
                },
                _ if current >= Section::Object1 => current,
                _ => {
                    return Err(ctx.err(
                        line_no,
                        &key,
                        "object keyword before `OBJECT = OBJECT1` opened an object block",
                    ));
                }
            };
            if target < current {
                return Err(ctx.err(
                    line_no,
                    &key,
                    format!("{home:?} keyword after the {current:?} section began"),
                ));
            }
            current = target;
            let sec = &mut sections[target as usize];
            sec.comments.append(&mut pending_comments);
            if sec.items.is_empty() {
                sec.first_line = line_no;
            }
            if sec.items.iter().any(|kv| kv.key == key) {
                return Err(ctx.err(line_no, &key, "keyword repeated in the same block"));
            }
            sec.items.push(RawKv {
                key,
                value: value.to_string(),
                line: line_no,
            });
        }
        sections[current as usize]
            .comments
            .append(&mut pending_comments);
        // A block ends where the next non-empty one begins, or at the end of the text.
        let end_of = |idx: usize| -> usize {
            sections[idx + 1..]
                .iter()
                .find(|s| !s.items.is_empty())
                .map(|s| s.first_line)
                .unwrap_or(last_line)
        };
        let fields = |idx: usize, table: &'static [Spec], what: &'static str| Fields {
            ctx: &ctx,
            section: &sections[idx],
            end_line: end_of(idx),
            table,
            what,
        };

        let h = fields(0, HEADER_KEYS, "header");
        h.check_all()?;
        let header = CdmHeader {
            comments: sections[0].comments.clone(),
            ccsds_cdm_vers: h.text("CCSDS_CDM_VERS")?,
            creation_date: h.time("CREATION_DATE")?,
            originator: h.text("ORIGINATOR")?,
            message_for: h.opt_text("MESSAGE_FOR"),
            message_id: h.text("MESSAGE_ID")?,
        };

        let r = fields(1, RELATIVE_KEYS, "relative metadata");
        r.check_all()?;
        let relative = CdmRelative {
            comments: sections[1].comments.clone(),
            tca: r.time("TCA")?,
            miss_distance_m: r.num("MISS_DISTANCE")?,
            relative_speed_m_s: r.opt_num("RELATIVE_SPEED")?,
            relative_position_rtn_m: [
                r.opt_num("RELATIVE_POSITION_R")?,
                r.opt_num("RELATIVE_POSITION_T")?,
                r.opt_num("RELATIVE_POSITION_N")?,
            ],
            relative_velocity_rtn_m_s: [
                r.opt_num("RELATIVE_VELOCITY_R")?,
                r.opt_num("RELATIVE_VELOCITY_T")?,
                r.opt_num("RELATIVE_VELOCITY_N")?,
            ],
            start_screen_period: r.opt_time("START_SCREEN_PERIOD")?,
            stop_screen_period: r.opt_time("STOP_SCREEN_PERIOD")?,
            screen_volume_frame: r.opt_text("SCREEN_VOLUME_FRAME"),
            screen_volume_shape: r.opt_text("SCREEN_VOLUME_SHAPE"),
            screen_volume_xyz_m: [
                r.opt_num("SCREEN_VOLUME_X")?,
                r.opt_num("SCREEN_VOLUME_Y")?,
                r.opt_num("SCREEN_VOLUME_Z")?,
            ],
            screen_entry_time: r.opt_time("SCREEN_ENTRY_TIME")?,
            screen_exit_time: r.opt_time("SCREEN_EXIT_TIME")?,
            collision_probability: r.opt_num("COLLISION_PROBABILITY")?,
            collision_probability_method: r.opt_text("COLLISION_PROBABILITY_METHOD"),
        };

        let mut objects = Vec::with_capacity(2);
        for (idx, name) in [(2usize, "OBJECT1"), (3, "OBJECT2")] {
            if sections[idx].items.is_empty() {
                return Err(ctx.err(
                    last_line,
                    "OBJECT",
                    format!("no `OBJECT = {name}` block in the message"),
                ));
            }
            let f = fields(
                idx,
                OBJECT_KEYS,
                if idx == 2 {
                    "OBJECT1 block"
                } else {
                    "OBJECT2 block"
                },
            );
            f.check_all()?;
            objects.push(read_object(&ctx, &f, &sections[idx], name)?);
        }
        let [object1, object2]: [CdmObject; 2] = objects
            .try_into()
            .map_err(|_| ctx.err(last_line, "OBJECT", "expected two object blocks"))?;
        Ok(Cdm {
            header,
            relative,
            object1,
            object2,
        })
    }
}

fn read_object(
    ctx: &Ctx<'_>,
    f: &Fields<'_>,
    raw: &RawSection,
    expected: &str,
) -> Result<CdmObject, CdmError> {
    let object = f.text("OBJECT")?;
    if object != expected {
        let line = f.find("OBJECT").map(|kv| kv.line).unwrap_or(0);
        return Err(ctx.err(
            line,
            "OBJECT",
            format!("expected {expected}, found {object}"),
        ));
    }
    let mut covariance_rtn = [0.0; 21];
    for (c, key) in covariance_rtn.iter_mut().zip(COVARIANCE_KEYS) {
        *c = f.num(key)?;
    }
    // Keywords with a typed field: the metadata and state, then the covariance.
    let typed: Vec<&str> = [
        "OBJECT",
        "OBJECT_DESIGNATOR",
        "CATALOG_NAME",
        "OBJECT_NAME",
        "INTERNATIONAL_DESIGNATOR",
        "EPHEMERIS_NAME",
        "COVARIANCE_METHOD",
        "MANEUVERABLE",
        "REF_FRAME",
        "X",
        "Y",
        "Z",
        "X_DOT",
        "Y_DOT",
        "Z_DOT",
    ]
    .into_iter()
    .chain(COVARIANCE_KEYS)
    .collect();
    let mut other = Vec::new();
    for kv in raw
        .items
        .iter()
        .filter(|kv| !typed.contains(&kv.key.as_str()))
    {
        let v = ctx.split_value(kv, &f.spec(&kv.key))?;
        other.push(KvnField {
            keyword: kv.key.clone(),
            value: v.text,
            unit: v.unit,
        });
    }
    let obj = CdmObject {
        comments: raw.comments.clone(),
        object,
        object_designator: f.text("OBJECT_DESIGNATOR")?,
        catalog_name: f.text("CATALOG_NAME")?,
        object_name: f.text("OBJECT_NAME")?,
        international_designator: f.text("INTERNATIONAL_DESIGNATOR")?,
        ephemeris_name: f.text("EPHEMERIS_NAME")?,
        covariance_method: f.text("COVARIANCE_METHOD")?,
        maneuverable: f.text("MANEUVERABLE")?,
        ref_frame: f.text("REF_FRAME")?,
        state: StateKm {
            position_km: [f.num("X")?, f.num("Y")?, f.num("Z")?],
            velocity_km_s: [f.num("X_DOT")?, f.num("Y_DOT")?, f.num("Z_DOT")?],
        },
        covariance_rtn,
        other,
    };
    // The probability needs a positive-definite position covariance; a
    // Cholesky factorisation of the 3×3 block finds the first failing pivot.
    if let Err(pivot) = cholesky3(&obj.position_covariance_rtn_m2()) {
        let key = ["CR_R", "CT_T", "CN_N"][pivot.index];
        let line = f.find(key).map(|kv| kv.line).unwrap_or(f.end_line);
        return Err(ctx.err(
            line,
            key,
            format!(
                "{expected} position covariance (CR_R … CN_N) is not positive definite \
                 (Cholesky pivot {} is {:.6e} m²)",
                pivot.index + 1,
                pivot.value
            ),
        ));
    }
    Ok(obj)
}

struct FailedPivot {
    index: usize,
    value: f64,
}

/// Cholesky factorisation of a symmetric 3×3 matrix; fails at the first
/// pivot that is not positive.
fn cholesky3(a: &Mat3) -> Result<Mat3, FailedPivot> {
    let mut l = [[0.0; 3]; 3];
    for i in 0..3 {
        for j in 0..=i {
            let s: f64 = (0..j).map(|k| l[i][k] * l[j][k]).sum();
            if i == j {
                let d = a[i][i] - s;
                if !(d > 0.0 && d.is_finite()) {
                    return Err(FailedPivot { index: i, value: d });
                }
                l[i][i] = d.sqrt();
            } else {
                l[i][j] = (a[i][j] - s) / l[j][j];
            }
        }
    }
    Ok(l)
}

// ---------------------------------------------------------------------------
// Writing
// ---------------------------------------------------------------------------

/// Numbers in the shortest form that reads back to the same f64: plain
/// decimals in the everyday range, `1.234E-7` style outside it (KVN accepts
/// both).
fn fmt_num(v: f64) -> String {
    let a = v.abs();
    if a == 0.0 || (1e-4..1e9).contains(&a) {
        format!("{v}")
    } else {
        format!("{v:E}")
    }
}

fn fmt_time(t: UtcTime) -> String {
    // CCSDS time code "YYYY-MM-DDThh:mm:ss.sss"; the trailing Z is allowed.
    t.to_iso_ms()
}

struct KvnWriter<'a, W: std::io::Write> {
    w: &'a mut W,
}

impl<W: std::io::Write> KvnWriter<'_, W> {
    fn comments(&mut self, c: &[String]) -> std::io::Result<()> {
        for line in c {
            writeln!(self.w, "COMMENT {line}")?;
        }
        Ok(())
    }

    fn put(
        &mut self,
        table: &[Spec],
        key: &str,
        value: &str,
        unit: Option<&str>,
    ) -> std::io::Result<()> {
        let unit = unit.map(str::to_string).or_else(|| {
            table
                .iter()
                .find(|s| s.key == key)
                .and_then(|s| match s.unit {
                    Unit::Exact(u) => Some(u.to_string()),
                    _ => None,
                })
        });
        match unit {
            Some(u) => writeln!(self.w, "{key:<28} = {value} [{u}]"),
            None => writeln!(self.w, "{key:<28} = {value}"),
        }
    }
}

impl Cdm {
    /// Writes the message as KVN: keywords in the standard's order, units in
    /// brackets as the standard shows them, states in km and km/s and the
    /// covariance in m², m²/s, m²/s².
    pub fn write_kvn(&self, w: &mut impl std::io::Write) -> std::io::Result<()> {
        let mut k = KvnWriter { w };
        let h = &self.header;
        k.comments(&h.comments)?;
        let hdr: Vec<(&str, Option<String>)> = vec![
            ("CCSDS_CDM_VERS", Some(h.ccsds_cdm_vers.clone())),
            ("CREATION_DATE", Some(fmt_time(h.creation_date))),
            ("ORIGINATOR", Some(h.originator.clone())),
            ("MESSAGE_FOR", h.message_for.clone()),
            ("MESSAGE_ID", Some(h.message_id.clone())),
        ];
        for (key, v) in hdr {
            if let Some(v) = v {
                k.put(HEADER_KEYS, key, &v, None)?;
            }
        }

        let r = &self.relative;
        k.comments(&r.comments)?;
        let n = |x: Option<f64>| x.map(fmt_num);
        let t = |x: Option<UtcTime>| x.map(fmt_time);
        let rel: Vec<(&str, Option<String>)> = vec![
            ("TCA", Some(fmt_time(r.tca))),
            ("MISS_DISTANCE", Some(fmt_num(r.miss_distance_m))),
            ("RELATIVE_SPEED", n(r.relative_speed_m_s)),
            ("RELATIVE_POSITION_R", n(r.relative_position_rtn_m[0])),
            ("RELATIVE_POSITION_T", n(r.relative_position_rtn_m[1])),
            ("RELATIVE_POSITION_N", n(r.relative_position_rtn_m[2])),
            ("RELATIVE_VELOCITY_R", n(r.relative_velocity_rtn_m_s[0])),
            ("RELATIVE_VELOCITY_T", n(r.relative_velocity_rtn_m_s[1])),
            ("RELATIVE_VELOCITY_N", n(r.relative_velocity_rtn_m_s[2])),
            ("START_SCREEN_PERIOD", t(r.start_screen_period)),
            ("STOP_SCREEN_PERIOD", t(r.stop_screen_period)),
            ("SCREEN_VOLUME_FRAME", r.screen_volume_frame.clone()),
            ("SCREEN_VOLUME_SHAPE", r.screen_volume_shape.clone()),
            ("SCREEN_VOLUME_X", n(r.screen_volume_xyz_m[0])),
            ("SCREEN_VOLUME_Y", n(r.screen_volume_xyz_m[1])),
            ("SCREEN_VOLUME_Z", n(r.screen_volume_xyz_m[2])),
            ("SCREEN_ENTRY_TIME", t(r.screen_entry_time)),
            ("SCREEN_EXIT_TIME", t(r.screen_exit_time)),
            ("COLLISION_PROBABILITY", n(r.collision_probability)),
            (
                "COLLISION_PROBABILITY_METHOD",
                r.collision_probability_method.clone(),
            ),
        ];
        for (key, v) in rel {
            if let Some(v) = v {
                k.put(RELATIVE_KEYS, key, &v, None)?;
            }
        }

        for o in [&self.object1, &self.object2] {
            k.comments(&o.comments)?;
            for s in OBJECT_KEYS {
                let typed: Option<String> = match s.key {
                    "OBJECT" => Some(o.object.clone()),
                    "OBJECT_DESIGNATOR" => Some(o.object_designator.clone()),
                    "CATALOG_NAME" => Some(o.catalog_name.clone()),
                    "OBJECT_NAME" => Some(o.object_name.clone()),
                    "INTERNATIONAL_DESIGNATOR" => Some(o.international_designator.clone()),
                    "EPHEMERIS_NAME" => Some(o.ephemeris_name.clone()),
                    "COVARIANCE_METHOD" => Some(o.covariance_method.clone()),
                    "MANEUVERABLE" => Some(o.maneuverable.clone()),
                    "REF_FRAME" => Some(o.ref_frame.clone()),
                    "X" => Some(fmt_num(o.state.position_km[0])),
                    "Y" => Some(fmt_num(o.state.position_km[1])),
                    "Z" => Some(fmt_num(o.state.position_km[2])),
                    "X_DOT" => Some(fmt_num(o.state.velocity_km_s[0])),
                    "Y_DOT" => Some(fmt_num(o.state.velocity_km_s[1])),
                    "Z_DOT" => Some(fmt_num(o.state.velocity_km_s[2])),
                    key => COVARIANCE_KEYS
                        .iter()
                        .position(|c| *c == key)
                        .map(|i| fmt_num(o.covariance_rtn[i])),
                };
                if let Some(v) = typed {
                    k.put(OBJECT_KEYS, s.key, &v, None)?;
                } else if let Some(f) = o.other.iter().find(|f| f.keyword == s.key) {
                    k.put(OBJECT_KEYS, s.key, &f.value, f.unit.as_deref())?;
                }
            }
        }
        Ok(())
    }

    /// Rebuilds the encounter from the two states and covariances and computes
    /// the probability by every method, for a combined hard-body radius (m).
    ///
    /// Inertial states (EME2000, GCRF) are used as given. Earth-fixed (ITRF)
    /// states get the Earth-rotation term ω × r added back to their velocity
    /// first, because each object's RTN axes (in which its covariance is
    /// given) are defined by its inertial velocity; the frames' orientation
    /// does not matter for the encounter geometry as long as both states share
    /// it. Both states must be in the same frame.
    pub fn recompute(&self, hard_body_radius_m: f64) -> Result<CdmAssessment, EncounterError> {
        // RTN axes need inertial velocities: an Earth-fixed (ITRF) state gets
        // ω × r added back (see conjunction::earth_fixed_to_aligned_inertial).
        let inertial = |o: &CdmObject| {
            if o.ref_frame.trim().to_ascii_uppercase().starts_with("ITRF") {
                crate::conjunction::earth_fixed_to_aligned_inertial(&o.state)
            } else {
                o.state
            }
        };
        let (s1, s2) = (&inertial(&self.object1), &inertial(&self.object2));
        let g = relative_geometry(s1, s2)?;
        let plane = encounter_plane(
            s1,
            &self.object1.position_covariance_rtn_m2(),
            s2,
            &self.object2.position_covariance_rtn_m2(),
        )?;
        let e = plane
            .encounter_2d(hard_body_radius_m)
            .map_err(EncounterError::Covariance)?;
        Ok(CdmAssessment {
            tca: self.relative.tca.to_iso_ms(),
            miss_distance_m: g.miss_distance_km * 1000.0,
            relative_speed_m_s: g.relative_speed_km_s * 1000.0,
            pc: pc_foster(&e),
            pc_alfano: pc_alfano(&e),
            pc_chan: pc_chan(&e),
            pc_max: pc_max(&e).pc_max,
            radial_m: g.radial_km * 1000.0,
            in_track_m: g.in_track_km * 1000.0,
            cross_track_m: g.cross_track_km * 1000.0,
            approach_angle_deg: g.approach_angle_deg,
            hard_body_radius_m,
            sigma_x_m: e.sigma_x_m(),
            sigma_y_m: e.sigma_y_m(),
            miss_x_m: e.miss_x_m(),
            miss_y_m: e.miss_y_m(),
            covariance_source: "CDM".to_string(),
            cdm_miss_distance_m: self.relative.miss_distance_m,
            cdm_collision_probability: self.relative.collision_probability,
        })
    }
}
