//! Reading an OEM (CCSDS 502.0-B-3, also versions 1.0 and 2.0), KVN or XML,
//! into an [`Ephemeris`]: header (Table 5-2), segments of metadata (Table
//! 5-3), data lines (5.2.4) and covariance blocks (5.2.5, Table 5-4). Both
//! forms are first read into the same raw structure, then checked and
//! converted by one piece of code.

use super::oem_raw::{Kv, RawCov, RawOem, RawSegment, Sink, excerpt, read_kvn, read_xml};
use super::{Ephemeris, Interpolation, OemCovariance, Segment, SourceFrame};
use crate::elements::{Diagnostic, Severity, SourceRef};
use crate::frames::{EarthOrientation, TemeToEarthFixed, Vec3};
use crate::inertial::{eme2000_to_teme, gcrf_to_teme, tai_minus_utc_s};
use crate::time::UtcTime;

/// The form an OEM was written in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub enum OemFormat {
    Kvn,
    Xml,
}

/// Header keywords in the order of 502.0-B-3 Table 5-2.
const HEADER_KEYS: [&str; 5] = [
    "CCSDS_OEM_VERS",
    "CLASSIFICATION",
    "CREATION_DATE",
    "ORIGINATOR",
    "MESSAGE_ID",
];

/// Metadata keywords in the order of 502.0-B-3 Table 5-3, with whether
/// each is mandatory.
const META_KEYS: [(&str, bool); 12] = [
    ("OBJECT_NAME", true),
    ("OBJECT_ID", true),
    ("CENTER_NAME", true),
    ("REF_FRAME", true),
    ("REF_FRAME_EPOCH", false),
    ("TIME_SYSTEM", true),
    ("START_TIME", true),
    ("USEABLE_START_TIME", false),
    ("USEABLE_STOP_TIME", false),
    ("STOP_TIME", true),
    ("INTERPOLATION", false),
    ("INTERPOLATION_DEGREE", false),
];

/// The 21 covariance terms in the order of 502.0-B-3 5.2.5.4 (lower
/// triangle row by row), as the XML form names them.
pub(super) const COV_XML_KEYS: [&str; 21] = [
    "CX_X",
    "CY_X",
    "CY_Y",
    "CZ_X",
    "CZ_Y",
    "CZ_Z",
    "CX_DOT_X",
    "CX_DOT_Y",
    "CX_DOT_Z",
    "CX_DOT_X_DOT",
    "CY_DOT_X",
    "CY_DOT_Y",
    "CY_DOT_Z",
    "CY_DOT_X_DOT",
    "CY_DOT_Y_DOT",
    "CZ_DOT_X",
    "CZ_DOT_Y",
    "CZ_DOT_Z",
    "CZ_DOT_X_DOT",
    "CZ_DOT_Y_DOT",
    "CZ_DOT_Z_DOT",
];

/// When the message recommends no interpolation: Lagrange of degree 7
/// (this tool's choice, stated in a warning; common practice for states
/// about a hundredth of an orbit apart).
const DEFAULT_INTERPOLATION: Interpolation = Interpolation::Lagrange { degree: 7 };

/// Reads one OEM from `bytes` (KVN, or XML when the text starts with `<`).
/// `file` names the source in diagnostics; `eop` is the Earth orientation
/// used to turn Earth-fixed states into TEME. Returns the ephemeris when at
/// least one segment loaded, and every diagnostic.
pub fn load_oem(
    bytes: &[u8],
    file: &str,
    eop: &EarthOrientation,
) -> (Option<Ephemeris>, Vec<Diagnostic>) {
    let mut sink = Sink::new(file);
    let bytes = bytes.strip_prefix(&[0xEF, 0xBB, 0xBF]).unwrap_or(bytes);
    let text = match std::str::from_utf8(bytes) {
        Ok(t) => t,
        Err(e) => {
            let line = bytes[..e.valid_up_to()]
                .iter()
                .filter(|&&b| b == b'\n')
                .count()
                + 1;
            sink.error(line, "", "not valid UTF-8 text; nothing loaded from it");
            return (None, sink.finish());
        }
    };
    let raw = if text.trim_start().starts_with('<') {
        read_xml(text, &mut sink)
    } else {
        read_kvn(text, &mut sink)
    };
    let eph = raw.and_then(|raw| build(raw, &mut sink, eop));
    if eph.is_none() && !sink.has_errors() {
        sink.error(0, "", "no ephemeris in this file");
    }
    (eph, sink.finish())
}

/// Keyword values of one block, with checks of order and presence.
fn check_order(sink: &mut Sink<'_>, kvs: &[Kv], order: &[&str], table: &str) -> bool {
    let mut last = 0;
    for kv in kvs {
        match order.iter().position(|k| *k == kv.key) {
            None => {
                sink.error(
                    kv.line,
                    &kv.key,
                    format!("not a keyword of CCSDS 502.0-B-3 {table}"),
                );
                return false;
            }
            Some(p) if p < last => {
                sink.error(
                    kv.line,
                    &kv.key,
                    format!("out of order: CCSDS 502.0-B-3 7.4.8 fixes the order of {table}, where {} comes before {}", kv.key, order[last]),
                );
                return false;
            }
            Some(p) => last = p,
        }
        if kvs.iter().filter(|o| o.key == kv.key).count() > 1 {
            sink.error(kv.line, &kv.key, "keyword repeated in the same block");
            return false;
        }
    }
    true
}

fn find<'a>(kvs: &'a [Kv], key: &str) -> Option<&'a Kv> {
    kvs.iter().find(|k| k.key == key)
}

/// A time in the segment's time system, as UTC.
fn to_utc(kv: &Kv, system: &str) -> Result<UtcTime, String> {
    let t = UtcTime::parse_iso(&kv.value).map_err(|e| e.to_string())?;
    // Offsets from the leap-second table: TAI = UTC + ΔAT, TT = TAI + 32.184 s,
    // GPS = TAI − 19 s. ΔAT is looked up at the UTC time, found by one step
    // of iteration.
    let shift = |offset: f64| {
        let guess = t.add_s(-offset - tai_minus_utc_s(t));
        t.add_s(-offset - tai_minus_utc_s(guess))
    };
    Ok(match system {
        "UTC" => t,
        "TAI" => shift(0.0),
        "TT" => shift(32.184),
        "GPS" => shift(-19.0),
        _ => t,
    })
}

fn number(s: &str) -> Option<f64> {
    s.parse::<f64>().ok().filter(|x| x.is_finite())
}

fn build(raw: RawOem, sink: &mut Sink<'_>, eop: &EarthOrientation) -> Option<Ephemeris> {
    let file = sink.file.to_string();
    if !check_order(sink, &raw.header, &HEADER_KEYS, "Table 5-2") {
        sink.error(0, "", "the header is not readable; nothing loaded");
        return None;
    }
    let version = find(&raw.header, "CCSDS_OEM_VERS")
        .map(|k| k.value.clone())
        .unwrap_or_default();
    if !matches!(version.as_str(), "1.0" | "2.0" | "3.0") {
        let line = find(&raw.header, "CCSDS_OEM_VERS").map_or(0, |k| k.line);
        sink.error(
            line,
            "CCSDS_OEM_VERS",
            format!(
                "version {:?}: expected 1.0, 2.0 or 3.0 (CCSDS 502.0-B-3 7.9.1); nothing loaded",
                excerpt(&version)
            ),
        );
        return None;
    }
    let creation = match find(&raw.header, "CREATION_DATE") {
        None => {
            sink.error(
                0,
                "CREATION_DATE",
                "mandatory header keyword missing (Table 5-2); nothing loaded",
            );
            return None;
        }
        Some(kv) => match UtcTime::parse_iso(&kv.value) {
            Ok(t) => t,
            Err(e) => {
                sink.error(kv.line, "CREATION_DATE", format!("{e}; nothing loaded"));
                return None;
            }
        },
    };
    let Some(originator) = find(&raw.header, "ORIGINATOR").map(|k| k.value.clone()) else {
        sink.error(
            0,
            "ORIGINATOR",
            "mandatory header keyword missing (Table 5-2); nothing loaded",
        );
        return None;
    };
    let message_id = find(&raw.header, "MESSAGE_ID").map(|k| k.value.clone());
    let mut segments = Vec::new();
    for rs in raw.segments {
        if let Some(s) = build_segment(rs, sink, eop) {
            segments.push(s);
        }
    }
    // 5.2.4.4: usable spans of consecutive segments may share an endpoint
    // but not overlap; an overlap is reported, the earlier segment keeps
    // its span up to where the later one starts.
    for k in 1..segments.len() {
        let (a, b) = (segments[k - 1].usable_stop, segments[k].usable_start);
        if b < segments[k - 1].usable_start {
            sink.push(
                Severity::Warning,
                segments[k].line,
                "START_TIME",
                "segment starts before the previous one: segments should come in time order",
            );
        } else if b < a {
            sink.push(
                Severity::Warning,
                segments[k].line,
                "USEABLE_START_TIME",
                format!("usable span overlaps the previous segment's by {:.3} s (502.0-B-3 5.2.4.4); the later segment is used in the overlap", a.s_since(b)),
            );
        }
    }
    segments.sort_by(|a, b| {
        a.usable_start
            .s_since_j2000()
            .total_cmp(&b.usable_start.s_since_j2000())
    });
    if segments.is_empty() {
        return None;
    }
    Some(Ephemeris {
        source: SourceRef {
            file,
            line: segments[0].line,
        },
        format: raw.format,
        version,
        originator,
        creation_date: creation,
        message_id,
        segments,
    })
}

fn frame_of(text: &str) -> Option<SourceFrame> {
    let t = text.trim().to_ascii_uppercase();
    match t.as_str() {
        "TEME" => Some(SourceFrame::Teme),
        "EME2000" | "J2000" => Some(SourceFrame::Eme2000),
        "GCRF" | "ICRF" => Some(SourceFrame::Gcrf),
        _ if t.starts_with("ITRF") => Some(SourceFrame::EarthFixed(t)),
        _ => None,
    }
}

fn to_teme(
    frame: &SourceFrame,
    t: UtcTime,
    r: &Vec3,
    v: &Vec3,
    eop: &EarthOrientation,
) -> (Vec3, Vec3) {
    match frame {
        SourceFrame::Teme => (*r, *v),
        SourceFrame::Eme2000 => eme2000_to_teme(t, r, v),
        SourceFrame::Gcrf => gcrf_to_teme(t, r, v),
        SourceFrame::EarthFixed(_) => TemeToEarthFixed::at(t, eop).state_to_teme(r, v),
    }
}

fn build_segment(rs: RawSegment, sink: &mut Sink<'_>, eop: &EarthOrientation) -> Option<Segment> {
    let order: Vec<&str> = META_KEYS.iter().map(|k| k.0).collect();
    let skip = |sink: &mut Sink<'_>, line: usize, key: &str, why: String| {
        sink.error(line, key, format!("{why}; this segment is skipped"));
        None
    };
    if !check_order(sink, &rs.meta, &order, "Table 5-3") {
        return skip(
            sink,
            rs.line,
            "META_START",
            "the metadata is not readable".into(),
        );
    }
    for (key, mandatory) in META_KEYS {
        if mandatory && find(&rs.meta, key).is_none_or(|k| k.value.is_empty()) {
            return skip(
                sink,
                rs.line,
                key,
                "mandatory metadata keyword missing (502.0-B-3 Table 5-3)".into(),
            );
        }
    }
    let get = |k: &str| {
        find(&rs.meta, k).cloned().unwrap_or(Kv {
            key: k.into(),
            value: String::new(),
            line: rs.line,
        })
    };
    let center = get("CENTER_NAME");
    if !center.value.eq_ignore_ascii_case("EARTH") {
        return skip(
            sink,
            center.line,
            "CENTER_NAME",
            format!(
                "{:?}: only Earth-centred ephemerides are handled",
                excerpt(&center.value)
            ),
        );
    }
    let frame_kv = get("REF_FRAME");
    let Some(frame) = frame_of(&frame_kv.value) else {
        return skip(
            sink,
            frame_kv.line,
            "REF_FRAME",
            format!(
                "{:?}: handled frames are TEME, EME2000, GCRF (ICRF) and the ITRF family",
                excerpt(&frame_kv.value)
            ),
        );
    };
    let ts_kv = get("TIME_SYSTEM");
    let system = ts_kv.value.to_ascii_uppercase();
    if !matches!(system.as_str(), "UTC" | "TAI" | "TT" | "GPS") {
        return skip(
            sink,
            ts_kv.line,
            "TIME_SYSTEM",
            format!(
                "{:?}: handled time systems are UTC, TAI, TT and GPS",
                excerpt(&ts_kv.value)
            ),
        );
    }
    let time = |sink: &mut Sink<'_>, key: &str| -> Result<Option<UtcTime>, ()> {
        match find(&rs.meta, key) {
            None => Ok(None),
            Some(kv) => to_utc(kv, &system)
                .map(Some)
                .map_err(|e| sink.error(kv.line, key, format!("{e}; this segment is skipped"))),
        }
    };
    let (Ok(Some(start)), Ok(Some(stop)), Ok(us), Ok(ue)) = (
        time(sink, "START_TIME"),
        time(sink, "STOP_TIME"),
        time(sink, "USEABLE_START_TIME"),
        time(sink, "USEABLE_STOP_TIME"),
    ) else {
        return None;
    };
    let (interpolation, defaulted) = match (
        find(&rs.meta, "INTERPOLATION"),
        find(&rs.meta, "INTERPOLATION_DEGREE"),
    ) {
        (None, None) => {
            sink.push(
                Severity::Warning,
                rs.line,
                "INTERPOLATION",
                format!(
                    "not given: {} degree {} is used (this tool's default)",
                    DEFAULT_INTERPOLATION.keyword().0,
                    DEFAULT_INTERPOLATION.keyword().1
                ),
            );
            (DEFAULT_INTERPOLATION, true)
        }
        (Some(m), None) => {
            return skip(
                sink,
                m.line,
                "INTERPOLATION_DEGREE",
                "must be given with INTERPOLATION (502.0-B-3 Table 5-3)".into(),
            );
        }
        (None, Some(d)) => {
            return skip(
                sink,
                d.line,
                "INTERPOLATION",
                "INTERPOLATION_DEGREE without INTERPOLATION".into(),
            );
        }
        (Some(m), Some(d)) => {
            let Some(degree) = d
                .value
                .parse::<usize>()
                .ok()
                .filter(|&n| (1..=32).contains(&n))
            else {
                return skip(
                    sink,
                    d.line,
                    "INTERPOLATION_DEGREE",
                    format!("{:?} is not a whole number from 1 to 32", excerpt(&d.value)),
                );
            };
            match m.value.to_ascii_uppercase().as_str() {
                "LAGRANGE" => (Interpolation::Lagrange { degree }, false),
                "LINEAR" => (Interpolation::Lagrange { degree: 1 }, false),
                "HERMITE" => (Interpolation::Hermite { degree }, false),
                other => {
                    return skip(
                        sink,
                        m.line,
                        "INTERPOLATION",
                        format!(
                            "{:?}: handled methods are LAGRANGE, HERMITE and LINEAR",
                            excerpt(other)
                        ),
                    );
                }
            }
        }
    };
    // Data lines: epoch and six numbers (nine with accelerations, which are
    // not used). A bad line is skipped with its own diagnostic.
    let mut times = Vec::with_capacity(rs.data.len());
    let mut states: Vec<[f64; 6]> = Vec::with_capacity(rs.data.len());
    let margin_s = 1e-3;
    for (line, text) in &rs.data {
        let fields: Vec<&str> = text.split_whitespace().collect();
        if fields.len() != 7 && fields.len() != 10 {
            sink.error(*line, "data line", format!("{} fields, expected the epoch and 6 numbers (or 9 with accelerations), 502.0-B-3 5.2.4.1; line skipped", fields.len()));
            continue;
        }
        let t = match to_utc(
            &Kv {
                key: "EPOCH".into(),
                value: fields[0].to_string(),
                line: *line,
            },
            &system,
        ) {
            Ok(t) => t,
            Err(e) => {
                sink.error(*line, "EPOCH", format!("{e}; line skipped"));
                continue;
            }
        };
        let Some(nums) = fields[1..7]
            .iter()
            .map(|f| number(f))
            .collect::<Option<Vec<f64>>>()
        else {
            sink.error(
                *line,
                "data line",
                "a state value is not a finite number; line skipped",
            );
            continue;
        };
        if t.s_since(start) < -margin_s || t.s_since(stop) > margin_s {
            sink.error(
                *line,
                "EPOCH",
                format!("{t} lies outside START_TIME-STOP_TIME of its segment; line skipped"),
            );
            continue;
        }
        if times.last().is_some_and(|&p: &UtcTime| t <= p) {
            sink.error(
                *line,
                "EPOCH",
                format!("{t} is not after the previous state's epoch; line skipped"),
            );
            continue;
        }
        let (r, v) = to_teme(
            &frame,
            t,
            &[nums[0], nums[1], nums[2]],
            &[nums[3], nums[4], nums[5]],
            eop,
        );
        times.push(t);
        states.push([r[0], r[1], r[2], v[0], v[1], v[2]]);
    }
    let need = interpolation.nodes();
    if times.len() < need {
        return skip(
            sink,
            rs.line,
            "META_START",
            format!(
                "{} usable states, fewer than the {need} the interpolation needs (502.0-B-3 5.2.4.7)",
                times.len()
            ),
        );
    }
    let (first, last) = (times[0], times[times.len() - 1]);
    let mut usable_start = us.unwrap_or(start).max(first);
    let mut usable_stop = ue.unwrap_or(stop).min(last);
    if us.unwrap_or(start) < first || ue.unwrap_or(stop) > last {
        sink.push(
            Severity::Warning,
            rs.line,
            "USEABLE_START_TIME",
            format!(
                "the usable span is cut to the states' span {first} - {last}: no extrapolation"
            ),
        );
    }
    if usable_stop < usable_start {
        usable_start = first;
        usable_stop = first;
    }
    let t0 = first;
    let times_s: Vec<f64> = times.iter().map(|t| t.s_since(t0)).collect();
    let covariances = rs
        .covs
        .into_iter()
        .filter_map(|c| covariance(c, sink, &system, &frame_kv.value))
        .collect();
    Some(Segment {
        line: rs.line,
        object_name: safe_name(sink, get("OBJECT_NAME")),
        object_id: safe_name(sink, get("OBJECT_ID")),
        ref_frame: frame,
        ref_frame_text: frame_kv.value,
        interpolation,
        interpolation_defaulted: defaulted,
        usable_start,
        usable_stop,
        times_s,
        t0,
        states,
        covariances,
    })
}

/// A name with line breaks, NUL or terminal escapes replaced by `?`, with a
/// warning naming the line and keyword (names reach terminals and files).
fn safe_name(sink: &mut Sink<'_>, kv: Kv) -> String {
    match crate::text::first_unsafe_char(&kv.value) {
        None => kv.value,
        Some(c) => {
            sink.push(
                crate::elements::Severity::Warning,
                kv.line,
                &kv.key,
                format!(
                    "holds {}; such characters are replaced by '?'",
                    crate::text::describe_char(c)
                ),
            );
            crate::text::clean(&kv.value, false).into_owned()
        }
    }
}

fn covariance(
    c: RawCov,
    sink: &mut Sink<'_>,
    system: &str,
    ref_frame: &str,
) -> Option<OemCovariance> {
    let Some(epoch_kv) = c.epoch else {
        sink.error(
            c.line,
            "EPOCH",
            "covariance matrix without EPOCH (502.0-B-3 5.2.5.3); matrix skipped",
        );
        return None;
    };
    let epoch = match to_utc(&epoch_kv, system) {
        Ok(t) => t,
        Err(e) => {
            sink.error(epoch_kv.line, "EPOCH", format!("{e}; matrix skipped"));
            return None;
        }
    };
    if c.values.len() != 21 {
        sink.error(c.line, "COVARIANCE", format!("{} values, expected the 21 of the lower triangle (502.0-B-3 5.2.5.4); matrix skipped", c.values.len()));
        return None;
    }
    let mut lower = [0.0; 21];
    for (k, (line, v)) in c.values.iter().enumerate() {
        match number(v) {
            Some(x) => lower[k] = x,
            None => {
                sink.error(
                    *line,
                    COV_XML_KEYS[k],
                    format!("{:?} is not a finite number; matrix skipped", excerpt(v)),
                );
                return None;
            }
        }
    }
    let frame = c
        .frame
        .map(|f| f.value)
        .unwrap_or_else(|| ref_frame.to_string());
    Some(OemCovariance {
        epoch,
        frame,
        lower_triangle: lower,
        line: c.line,
    })
}
