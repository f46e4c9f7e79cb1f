//! The CDM keyword tables: every keyword with its kind, unit and whether it
//! is mandatory, in the standard's order.
//!
//! Source: CCSDS 508.0-B-1 (June 2013, with Technical Corrigenda 1 and 2),
//! Tables 3-1 (header), 3-2 (relative metadata/data), 3-3 (metadata) and 3-4
//! (data); mandatory status as in Annex A (ICS items 1-68). Checked against
//! the document's text (keyword names, order, units, obligatory column) and
//! against the NDM/XML schema's element order as carried by the PyPI package
//! `ccsds-ndm` 3.1.1 (see `scripts/fixtures/check_ccsds.py`).

#[derive(Clone, Copy, PartialEq, Debug)]
pub(super) enum Kind {
    Text,
    Time,
    Number,
    /// A number that must be a whole number (508.0-B-1 6.3.2.1).
    Integer,
}

#[derive(Clone, Copy, PartialEq, Debug)]
pub(super) enum Unit {
    /// The keyword takes no unit.
    None,
    /// The standard's unit; any other is an error.
    Exact(&'static str),
}

#[derive(Clone, Copy, Debug)]
pub(super) struct Spec {
    pub(super) key: &'static str,
    pub(super) kind: Kind,
    pub(super) unit: Unit,
    pub(super) mandatory: bool,
}

pub(super) const fn spec(key: &'static str, kind: Kind, unit: Unit, mandatory: bool) -> Spec {
    Spec {
        key,
        kind,
        unit,
        mandatory,
    }
}

use Kind::{Integer as I, Number as N, Text as T, Time as TM};
const M: bool = true;
const O: bool = false;
const NO: Unit = Unit::None;
const UM: Unit = Unit::Exact("m");
const UMS: Unit = Unit::Exact("m/s");
const UKM: Unit = Unit::Exact("km");
const UKMS: Unit = Unit::Exact("km/s");
const UM2: Unit = Unit::Exact("m**2");
const UM2S: Unit = Unit::Exact("m**2/s");
const UM2S2: Unit = Unit::Exact("m**2/s**2");
const UM3KG: Unit = Unit::Exact("m**3/kg");
const UM3KGS: Unit = Unit::Exact("m**3/(kg*s)");
const UM4KG2: Unit = Unit::Exact("m**4/kg**2");
const UM2S3: Unit = Unit::Exact("m**2/s**3");
const UM3KGS2: Unit = Unit::Exact("m**3/(kg*s**2)");
const UM2S4: Unit = Unit::Exact("m**2/s**4");

/// Header, CCSDS 508.0-B-1 Table 3-1 (`COMMENT` may follow the version line).
pub(super) const HEADER_KEYS: &[Spec] = &[
    spec("CCSDS_CDM_VERS", T, NO, M),
    spec("CREATION_DATE", TM, NO, M),
    spec("ORIGINATOR", T, NO, M),
    spec("MESSAGE_FOR", T, NO, O),
    spec("MESSAGE_ID", T, NO, M),
];

/// Relative metadata/data, CCSDS 508.0-B-1 Table 3-2.
pub(super) const RELATIVE_KEYS: &[Spec] = &[
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

/// Per-object metadata (CCSDS 508.0-B-1 Table 3-3) then data (Table 3-4: OD
/// parameters, additional parameters, state vector, covariance; rows 7-9 of
/// the covariance are optional, 5.2.8).
pub(super) const OBJECT_KEYS: &[Spec] = &[
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
    spec("OBS_AVAILABLE", I, NO, O),
    spec("OBS_USED", I, NO, O),
    spec("TRACKS_AVAILABLE", I, NO, O),
    spec("TRACKS_USED", I, NO, O),
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
    spec("CDRG_R", N, UM3KG, O),
    spec("CDRG_T", N, UM3KG, O),
    spec("CDRG_N", N, UM3KG, O),
    spec("CDRG_RDOT", N, UM3KGS, O),
    spec("CDRG_TDOT", N, UM3KGS, O),
    spec("CDRG_NDOT", N, UM3KGS, O),
    spec("CDRG_DRG", N, UM4KG2, O),
    spec("CSRP_R", N, UM3KG, O),
    spec("CSRP_T", N, UM3KG, O),
    spec("CSRP_N", N, UM3KG, O),
    spec("CSRP_RDOT", N, UM3KGS, O),
    spec("CSRP_TDOT", N, UM3KGS, O),
    spec("CSRP_NDOT", N, UM3KGS, O),
    spec("CSRP_DRG", N, UM4KG2, O),
    spec("CSRP_SRP", N, UM4KG2, O),
    spec("CTHR_R", N, UM2S2, O),
    spec("CTHR_T", N, UM2S2, O),
    spec("CTHR_N", N, UM2S2, O),
    spec("CTHR_RDOT", N, UM2S3, O),
    spec("CTHR_TDOT", N, UM2S3, O),
    spec("CTHR_NDOT", N, UM2S3, O),
    spec("CTHR_DRG", N, UM3KGS2, O),
    spec("CTHR_SRP", N, UM3KGS2, O),
    spec("CTHR_THR", N, UM2S4, O),
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

/// Keywords whose values CCSDS 508.0-B-1 enumerates (the "N" = normative
/// values of Tables 3-2 and 3-3). Compared ignoring case, with `_` read as a
/// blank (6.3.2.5), since the NDM/XML schema also lists lowercase variants.
pub(super) const ENUMERATED: &[(&str, &[&str])] = &[
    ("SCREEN_VOLUME_FRAME", &["RTN", "TVN"]),
    ("SCREEN_VOLUME_SHAPE", &["ELLIPSOID", "BOX"]),
    ("OBJECT", &["OBJECT1", "OBJECT2"]),
    (
        "OBJECT_TYPE",
        &["PAYLOAD", "ROCKET BODY", "DEBRIS", "UNKNOWN", "OTHER"],
    ),
    ("COVARIANCE_METHOD", &["CALCULATED", "DEFAULT"]),
    ("MANEUVERABLE", &["YES", "NO", "N/A"]),
    ("REF_FRAME", &["EME2000", "GCRF", "ITRF"]),
    ("SOLAR_RAD_PRESSURE", &["YES", "NO"]),
    ("EARTH_TIDES", &["YES", "NO"]),
    ("INTRACK_THRUST", &["YES", "NO"]),
];

/// Rows 7, 8 and 9 of the covariance (drag, solar radiation pressure,
/// thrust), each complete or absent, and a row only with all rows before it
/// (CCSDS 508.0-B-1 5.2.8).
pub(super) const OPTIONAL_COVARIANCE_ROWS: [&[&str]; 3] = [
    &[
        "CDRG_R",
        "CDRG_T",
        "CDRG_N",
        "CDRG_RDOT",
        "CDRG_TDOT",
        "CDRG_NDOT",
        "CDRG_DRG",
    ],
    &[
        "CSRP_R",
        "CSRP_T",
        "CSRP_N",
        "CSRP_RDOT",
        "CSRP_TDOT",
        "CSRP_NDOT",
        "CSRP_DRG",
        "CSRP_SRP",
    ],
    &[
        "CTHR_R",
        "CTHR_T",
        "CTHR_N",
        "CTHR_RDOT",
        "CTHR_TDOT",
        "CTHR_NDOT",
        "CTHR_DRG",
        "CTHR_SRP",
        "CTHR_THR",
    ],
];

/// The logical blocks of an object's data section (Table 3-4) and the
/// first keyword of each, as the XML form groups them (508.0-B-1 Table 4-1).
pub(super) const OBJECT_BLOCKS: [(&str, &str, &str); 4] = [
    ("odParameters", "TIME_LASTOB_START", "WEIGHTED_RMS"),
    ("additionalParameters", "AREA_PC", "SEDR"),
    ("stateVector", "X", "Z_DOT"),
    ("covarianceMatrix", "CR_R", "CTHR_THR"),
];

/// Every keyword of a CDM in the standard's order: header (Table 3-1),
/// relative metadata/data (Table 3-2), then the object table (Tables 3-3 and
/// 3-4) once, with whether each is mandatory (Annex A).
pub fn keyword_tables() -> [Vec<(&'static str, bool)>; 3] {
    let f = |t: &[Spec]| t.iter().map(|s| (s.key, s.mandatory)).collect();
    [f(HEADER_KEYS), f(RELATIVE_KEYS), f(OBJECT_KEYS)]
}
