//! CCSDS 508.0-B-1 Conjunction Data Message (CDM), KVN and XML: read, write
//! and re-assess.
//!
//! A CDM has a header, relative metadata (TCA, miss distance and relative
//! state in object 1's RTN frame, screening volume, reported probability),
//! then one block per object (OBJECT1, OBJECT2): metadata, optional orbit
//! determination and physical parameters, the state (km, km/s) and the lower
//! triangle of the 6×6 RTN covariance (m², m²/s, m²/s²).
//!
//! - [`Cdm::parse`] reads either form (XML when the text starts with `<`)
//!   and returns a validated [`Cdm`] or a [`CdmError`] naming file, line,
//!   keyword and reason: unknown, misplaced or out-of-order keyword (6.3.1.9),
//!   missing mandatory keyword, value that is not a number, whole number or
//!   time, a unit that is not the standard's or sits before the value, a
//!   value outside the standard's enumeration (Tables 3-2, 3-3), objects in
//!   different frames, an incomplete optional covariance row (5.2.8), and a
//!   position covariance that is not positive semi-definite (a zero variance
//!   with a zero row is legal, 5.2.8).
//! - [`Cdm::write_kvn`] and [`Cdm::write_xml`] write the keywords in the
//!   standard's order, numbers with at most 16 significant digits
//!   ([`ccsds_number`]) and times without `Z` ([`ccsds_time`]).
//! - [`Cdm::recompute`] rebuilds the encounter from the two states and
//!   covariances and computes the probability by every method of
//!   [`crate::pc`]; [`Cdm::hard_body_radius`] says which radius to use and
//!   why (the command line's, the one this tool records in a header
//!   COMMENT, or a default).
//! - [`trend`] lines up several messages of one event.
//!
//! The keyword tables (`keywords.rs`) follow CCSDS 508.0-B-1 Tables 3-1 to
//! 3-4 and Annex A. COMMENT lines are accepted anywhere inside a section (the
//! standard allows them at the start of each section and logical block) and
//! are written back at the start of their section.
//!
//! This module does no file I/O: text comes in as `&str`, output goes to any
//! `io::Write`.

mod keywords;
mod kvn_read;
mod kvn_write;
mod read;
mod trend;
mod xml;
mod xml_checks;
mod xml_read;
#[cfg(test)]
mod xml_read_tests;

use passlane_orbit::UtcTime;
use serde::Serialize;

use crate::encounter::{EncounterError, Mat3, StateKm, encounter_plane, relative_geometry};
use crate::pc::{pc, pc_alfano, pc_chan, pc_max};

pub use keywords::{COVARIANCE_KEYS, keyword_tables, mandatory_keywords};
pub use kvn_write::{ccsds_number, ccsds_time};
pub use trend::{SAME_EVENT_TCA_S, TrendGroup, TrendRow, trend, trend_groups, trend_row};
pub use xml::{CDM_SCHEMA_LOCATION, xml_escape};

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
    /// Probability by [`crate::pc::pc`] (agrees with the 2-D reference
    /// integral to 1e-6 relative or better).
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
    /// Where that radius came from (command line, the message's own record,
    /// or the default).
    pub hard_body_radius_source: String,
    /// Encounter plane, principal axes of the combined covariance (m).
    pub sigma_x_m: f64,
    pub sigma_y_m: f64,
    pub miss_x_m: f64,
    pub miss_y_m: f64,
    /// Where the covariance came from; always "CDM" here.
    pub covariance_source: String,
    /// Each object's COVARIANCE_METHOD (CALCULATED or DEFAULT), and what the
    /// message's header says of its covariance when this tool wrote it.
    pub covariance_methods: [String; 2],
    #[serde(skip_serializing_if = "Option::is_none")]
    pub covariance_note: Option<String>,
    /// As reported in the CDM, for comparison.
    pub cdm_miss_distance_m: f64,
    pub cdm_collision_probability: Option<f64>,
}

// ---------------------------------------------------------------------------
// Reading
// ---------------------------------------------------------------------------

impl Cdm {
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
        self.recompute_with(&HardBodyRadius {
            radius_m: hard_body_radius_m,
            source: "given".to_string(),
        })
    }

    /// As [`Cdm::recompute`], with a radius and its source from
    /// [`Cdm::hard_body_radius`].
    pub fn recompute_with(&self, hbr: &HardBodyRadius) -> Result<CdmAssessment, EncounterError> {
        let hard_body_radius_m = hbr.radius_m;
        // RTN axes need inertial velocities: an Earth-fixed (ITRF) state gets
        // ω × r added back (see encounter::earth_fixed_to_aligned_inertial).
        let inertial = |o: &CdmObject| {
            if o.ref_frame.trim().to_ascii_uppercase().starts_with("ITRF") {
                crate::encounter::earth_fixed_to_aligned_inertial(&o.state)
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
            pc: pc(&e),
            pc_alfano: pc_alfano(&e),
            pc_chan: pc_chan(&e),
            pc_max: pc_max(&e).pc_max,
            radial_m: g.radial_km * 1000.0,
            in_track_m: g.in_track_km * 1000.0,
            cross_track_m: g.cross_track_km * 1000.0,
            approach_angle_deg: g.approach_angle_deg,
            hard_body_radius_m,
            hard_body_radius_source: hbr.source.clone(),
            sigma_x_m: e.sigma_x_m(),
            sigma_y_m: e.sigma_y_m(),
            miss_x_m: e.miss_x_m(),
            miss_y_m: e.miss_y_m(),
            covariance_source: "CDM".to_string(),
            covariance_methods: [
                self.object1.covariance_method.clone(),
                self.object2.covariance_method.clone(),
            ],
            covariance_note: self
                .header
                .comments
                .iter()
                .find_map(|c| c.strip_prefix(COVARIANCE_COMMENT))
                .map(|c| c.trim_start_matches([':', ' ']).to_string()),
            cdm_miss_distance_m: self.relative.miss_distance_m,
            cdm_collision_probability: self.relative.collision_probability,
        })
    }
}

/// Largest conjunction message the shells read, bytes (a CDM is a few KB;
/// this only stops a wrong path to a huge file).
pub const MAX_MESSAGE_BYTES: u64 = 16 * 1024 * 1024;

/// Combined hard-body radius when neither the command line nor the message
/// gives one, m (this tool's default; no standard fixes one).
pub const DEFAULT_HARD_BODY_RADIUS_M: f64 = 10.0;

/// Start of the header COMMENT in which this tool records the combined
/// hard-body radius behind COLLISION_PROBABILITY. CCSDS 508.0-B-1 has no
/// keyword for it, so without the record a re-assessment would have to guess.
pub const HARD_BODY_RADIUS_COMMENT: &str = "Hard-body radius";

/// Start of the header COMMENT that says where the covariances came from.
pub const COVARIANCE_COMMENT: &str = "Covariance";

/// The header COMMENT recording a combined hard-body radius and its origin.
pub fn hard_body_radius_comment(radius_m: f64, origin: &str) -> String {
    format!(
        "{HARD_BODY_RADIUS_COMMENT} {} m, combined, used for COLLISION_PROBABILITY ({origin})",
        ccsds_number(radius_m)
    )
}

/// A combined hard-body radius and where it came from.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct HardBodyRadius {
    pub radius_m: f64,
    /// In words: "command line", "recorded in the message (...)", "default".
    pub source: String,
}

impl Cdm {
    /// The combined hard-body radius this tool recorded in a header COMMENT
    /// when it wrote the message, if any, with the origin stated there.
    pub fn recorded_hard_body_radius(&self) -> Option<(f64, String)> {
        self.header.comments.iter().find_map(|c| {
            let rest = c.strip_prefix(HARD_BODY_RADIUS_COMMENT)?.trim_start();
            let (number, rest) = rest.split_once(' ')?;
            let r: f64 = number.parse().ok()?;
            let rest = rest.strip_prefix('m')?;
            let origin = rest
                .split_once('(')
                .and_then(|(_, o)| o.rsplit_once(')'))
                .map(|(o, _)| o.to_string())
                .unwrap_or_default();
            (r.is_finite() && r > 0.0).then_some((r, origin))
        })
    }

    /// The radius to re-assess with: `override_m` (the command line's) when
    /// given, else the one recorded in the message, else
    /// [`DEFAULT_HARD_BODY_RADIUS_M`]; the source says which.
    pub fn hard_body_radius(&self, override_m: Option<f64>) -> HardBodyRadius {
        if let Some(r) = override_m {
            return HardBodyRadius {
                radius_m: r,
                source: "given by the user, overriding any in the message".to_string(),
            };
        }
        match self.recorded_hard_body_radius() {
            Some((r, origin)) => HardBodyRadius {
                radius_m: r,
                source: if origin.is_empty() {
                    "recorded in the message's header COMMENT".to_string()
                } else {
                    format!("recorded in the message's header COMMENT ({origin})")
                },
            },
            None => HardBodyRadius {
                radius_m: DEFAULT_HARD_BODY_RADIUS_M,
                source: "default: the message records none (CCSDS 508.0-B-1 has no keyword for it)"
                    .to_string(),
            },
        }
    }
}

/// An identifier as CCSDS 508.0-B-1 5.2.9 wants it (ORIGINATOR, MESSAGE_ID,
/// designators: letters, digits, `_` and `-`) and 6.2.3.3 (text values in
/// uppercase): letters uppercased, every run of other characters one `_`.
/// `fallback` when nothing is left.
pub fn ccsds_identifier(text: &str, fallback: &str) -> String {
    let mut out = String::new();
    for c in text.trim().chars() {
        if c.is_ascii_alphanumeric() || c == '-' || c == '_' {
            out.push(c.to_ascii_uppercase());
        } else if !out.ends_with('_') && !out.is_empty() {
            out.push('_');
        }
    }
    let out = out.trim_end_matches('_').to_string();
    if out.is_empty() {
        fallback.to_string()
    } else {
        out
    }
}

/// A value or comment as it goes onto one KVN line (CDM, OEM): line breaks
/// and every other control character become blanks, so no value can start
/// a line of its own (a name holding `\nCOLLISION_PROBABILITY = 0` would
/// otherwise forge a keyword). The writers apply it to every value.
pub fn kvn_safe(text: &str) -> String {
    text.chars()
        .map(|c| if c.is_control() { ' ' } else { c })
        .collect()
}

/// A free text value (names) in uppercase printable ASCII (6.2.3.3,
/// 6.2.2.2); other characters become blanks.
pub fn ccsds_text(text: &str, fallback: &str) -> String {
    let t: String = text
        .chars()
        .map(|c| {
            if c.is_ascii_graphic() || c == ' ' {
                c.to_ascii_uppercase()
            } else {
                ' '
            }
        })
        .collect();
    let t = t.split_whitespace().collect::<Vec<_>>().join(" ");
    if t.is_empty() {
        fallback.to_string()
    } else {
        t
    }
}
