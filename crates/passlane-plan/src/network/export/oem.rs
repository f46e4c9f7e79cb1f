//! CCSDS Orbit Ephemeris Message (CCSDS 502.0-B-3, April 2023), KVN or XML.
//!
//! KVN layout (Tables 5-2, 5-3; 5.2.4): the header (`CCSDS_OEM_VERS = 3.0`,
//! COMMENT lines, `CREATION_DATE`, `ORIGINATOR`, `MESSAGE_ID`), one metadata
//! block between `META_START` and `META_STOP` (`OBJECT_NAME`, `OBJECT_ID`,
//! `CENTER_NAME = EARTH`, `REF_FRAME`, `TIME_SYSTEM = UTC`, `START_TIME`,
//! `STOP_TIME`, `INTERPOLATION = LAGRANGE`, `INTERPOLATION_DEGREE`), then
//! one data line per state: `epoch x y z x_dot y_dot z_dot` in km and km/s.
//! The XML form (502.0-B-3 §8, NDM/XML schema) holds the same content in
//! `<oem>`/`<header>`/`<body>`/`<segment>`/`<metadata>`/`<data>`/
//! `<stateVector>` elements. Epochs are UTC without the zone letter; values
//! have at most 16 significant digits (7.5.6-7.5.7).
//!
//! States: the spacecraft's propagator (SGP4 on its elements, or its own
//! ephemeris), TEME rotated to EME2000 by the IAU 1976/1980 models
//! ([`passlane_orbit::inertial`]) unless TEME is asked for (502.0-B-3
//! 4.2.4.9 reserves TEME for element sets; some recipients take it). The
//! spacing is about 1/100 of an orbit; Lagrange interpolation of degree
//! [`OEM_INTERPOLATION_DEGREE`] through such states reproduces the
//! propagator to 1 mm (checked in `tests/ccsds_reference.rs`), and every
//! file holds at least degree + 1 states (5.2.4.7). No covariance is
//! written; a COMMENT states the expected accuracy instead (7.8.12).

use std::io::{self, Write};

use passlane_orbit::ephemeris::OemFormat;
use passlane_orbit::inertial::teme_to_eme2000;
use passlane_orbit::{ElementSet, Propagator, StateTeme, UtcTime};

use crate::cdm::{ccsds_identifier, ccsds_text, kvn_safe, xml_escape};
use crate::sampling::{TableError, row_count};

/// Degree of the Lagrange interpolation the files recommend: with states a
/// hundredth of an orbit apart it reproduces SGP4 to 1 mm in LEO, eccentric
/// orbits included (measured in `tests/ccsds_reference.rs`).
pub const OEM_INTERPOLATION_DEGREE: usize = 9;

/// Schema location written on the XML root (502.0-B-3 §8, 505.0-B-3).
pub const OEM_SCHEMA_LOCATION: &str =
    "https://sanaregistry.org/r/ndmxml_unqualified/ndmxml-3.0.0-master-3.0.xsd";

/// The frame the states are written in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum OemFrame {
    /// Mean equator and equinox of J2000, by IAU 1976/1980 from TEME.
    #[default]
    Eme2000,
    /// SGP4's own frame, as propagated.
    Teme,
}

impl OemFrame {
    pub fn keyword(self) -> &'static str {
        match self {
            OemFrame::Eme2000 => "EME2000",
            OemFrame::Teme => "TEME",
        }
    }
}

/// What goes into an OEM besides the states.
#[derive(Debug, Clone)]
pub struct OemOptions<'a> {
    pub created: UtcTime,
    /// ORIGINATOR (uppercased; letters, digits, `-` and `_`).
    pub originator: &'a str,
    /// MESSAGE_ID; empty: made from the catalog number and the first epoch.
    pub message_id: String,
    pub frame: OemFrame,
    pub format: OemFormat,
}

impl Default for OemOptions<'_> {
    fn default() -> Self {
        OemOptions {
            created: UtcTime::J2000,
            originator: "PASSLANE",
            message_id: String::new(),
            frame: OemFrame::Eme2000,
            format: OemFormat::Kvn,
        }
    }
}

/// Spacing of OEM points: the orbit's period / 100, whole seconds, 10–600 s.
pub fn oem_step_s(set: &ElementSet) -> f64 {
    let period_s = 86_400.0 / set.mean_motion_rev_day.max(1e-6);
    (period_s / 100.0).round().clamp(10.0, 600.0)
}

/// States from `start` to `end` every `step_s`, the last exactly at `end`;
/// at least [`OEM_INTERPOLATION_DEGREE`] + 1 of them (the step shrinks for a
/// short span). A step below 1 ms or more states than the row cap is an
/// error ([`crate::sampling`]).
pub fn oem_states(
    set: &ElementSet,
    start: UtcTime,
    end: UtcTime,
    step_s: f64,
) -> Result<Vec<StateTeme>, TableError> {
    let span = end.s_since(start);
    let rows = row_count(span, step_s)?;
    let prop = Propagator::new(set)?;
    let mut cursor = prop.cursor();
    let mut step_s = step_s;
    let min_points = OEM_INTERPOLATION_DEGREE + 1;
    if span > 0.0 && span / step_s + 1.0 < min_points as f64 {
        step_s = span / (min_points - 1) as f64;
    }
    let mut out = Vec::with_capacity(rows.max(min_points));
    let mut k = 0usize;
    loop {
        let dt = k as f64 * step_s;
        if dt >= span - 1e-6 {
            break;
        }
        out.push(cursor.state_at(start.add_s(dt))?);
        k += 1;
    }
    out.push(cursor.state_at(end)?);
    Ok(out)
}

/// `OBJECT_ID`: the international designator `YYYY-NNNP{PP}`, or `UNKNOWN`
/// (502.0-B-3 Table 5-3) when the element set has none.
pub fn object_id(set: &ElementSet) -> String {
    set.international_designator_ccsds()
        .unwrap_or_else(|| "UNKNOWN".to_string())
}

/// The ASCII epoch form of the standard, milliseconds, no zone letter.
pub fn oem_time(t: UtcTime) -> String {
    let s = t.to_iso_ms();
    s.trim_end_matches('Z').to_string()
}

/// The states in the file's frame, as `[x, y, z, ẋ, ẏ, ż]`.
fn framed(states: &[StateTeme], frame: OemFrame) -> Vec<(UtcTime, [f64; 6])> {
    states
        .iter()
        .map(|s| {
            let (r, v) = match frame {
                OemFrame::Teme => (s.position_km, s.velocity_km_s),
                OemFrame::Eme2000 => teme_to_eme2000(s.time, &s.position_km, &s.velocity_km_s),
            };
            (s.time, [r[0], r[1], r[2], v[0], v[1], v[2]])
        })
        .collect()
}

fn comments(set: &ElementSet, frame: OemFrame) -> Vec<String> {
    let source = match &set.ephemeris {
        Some(src) => format!(
            "States resampled from the operator's {}",
            src.ephemeris.describe()
        ),
        None => format!(
            "States from SGP4 on the published element set of epoch {}; such states are typically off by a kilometre or more (no covariance given)",
            oem_time(set.epoch)
        ),
    };
    let frame_note = match frame {
        OemFrame::Eme2000 => {
            "Frame EME2000 from SGP4's TEME by IAU 1976 precession and IAU 1980 nutation, no pole offsets"
        }
        OemFrame::Teme => {
            "Frame TEME of date, as SGP4 gives it (502.0-B-3 4.2.4.9 reserves TEME for element sets)"
        }
    };
    vec![
        source,
        frame_note.to_string(),
        format!(
            "Lagrange interpolation of degree {OEM_INTERPOLATION_DEGREE} through these states reproduces the propagator to 1 mm"
        ),
    ]
}

/// Writes one OEM with one segment in the form `opts.format` asks for.
pub fn write_oem(
    w: &mut dyn Write,
    set: &ElementSet,
    states: &[StateTeme],
    opts: &OemOptions<'_>,
) -> io::Result<()> {
    let (Some(first), Some(last)) = (states.first(), states.last()) else {
        return Err(io::Error::new(
            io::ErrorKind::InvalidInput,
            "an OEM needs at least one state",
        ));
    };
    let originator = ccsds_identifier(opts.originator, "PASSLANE");
    let message_id = if opts.message_id.trim().is_empty() {
        let stamp: String = first
            .time
            .to_iso_s()
            .chars()
            .filter(char::is_ascii_digit)
            .collect();
        format!("{}_{stamp}", set.catalog_number)
    } else {
        ccsds_identifier(&opts.message_id, "PASSLANE")
    };
    let meta: Vec<(&str, String)> = vec![
        ("OBJECT_NAME", ccsds_text(&set.name, "UNKNOWN")),
        ("OBJECT_ID", object_id(set)),
        ("CENTER_NAME", "EARTH".to_string()),
        ("REF_FRAME", opts.frame.keyword().to_string()),
        ("TIME_SYSTEM", "UTC".to_string()),
        ("START_TIME", oem_time(first.time)),
        ("STOP_TIME", oem_time(last.time)),
        ("INTERPOLATION", "LAGRANGE".to_string()),
        ("INTERPOLATION_DEGREE", OEM_INTERPOLATION_DEGREE.to_string()),
    ];
    let rows = framed(states, opts.frame);
    let notes = comments(set, opts.frame);
    // Positions to the micrometre, velocities to the nanometre per second:
    // at most 14 significant digits, well inside the 16 allowed.
    let p = |x: f64| format!("{x:.9}");
    let v = |x: f64| format!("{x:.12}");
    match opts.format {
        OemFormat::Kvn => {
            writeln!(w, "CCSDS_OEM_VERS = 3.0")?;
            for c in &notes {
                writeln!(w, "COMMENT {}", kvn_safe(c))?;
            }
            writeln!(w, "CREATION_DATE = {}", oem_time(opts.created))?;
            writeln!(w, "ORIGINATOR = {originator}")?;
            writeln!(w, "MESSAGE_ID = {message_id}")?;
            writeln!(w)?;
            writeln!(w, "META_START")?;
            for (k, val) in &meta {
                writeln!(w, "{k} = {}", kvn_safe(val))?;
            }
            writeln!(w, "META_STOP")?;
            writeln!(w)?;
            for (t, s) in &rows {
                writeln!(
                    w,
                    "{} {} {} {} {} {} {}",
                    oem_time(*t),
                    p(s[0]),
                    p(s[1]),
                    p(s[2]),
                    v(s[3]),
                    v(s[4]),
                    v(s[5])
                )?;
            }
        }
        OemFormat::Xml => {
            writeln!(w, "<?xml version=\"1.0\" encoding=\"UTF-8\"?>")?;
            writeln!(
                w,
                "<oem xmlns:xsi=\"http://www.w3.org/2001/XMLSchema-instance\" xsi:noNamespaceSchemaLocation=\"{OEM_SCHEMA_LOCATION}\" id=\"CCSDS_OEM_VERS\" version=\"3.0\">"
            )?;
            writeln!(w, "  <header>")?;
            for c in &notes {
                writeln!(w, "    <COMMENT>{}</COMMENT>", xml_escape(c))?;
            }
            writeln!(
                w,
                "    <CREATION_DATE>{}</CREATION_DATE>",
                oem_time(opts.created)
            )?;
            writeln!(
                w,
                "    <ORIGINATOR>{}</ORIGINATOR>",
                xml_escape(&originator)
            )?;
            writeln!(
                w,
                "    <MESSAGE_ID>{}</MESSAGE_ID>",
                xml_escape(&message_id)
            )?;
            writeln!(w, "  </header>")?;
            writeln!(w, "  <body>")?;
            writeln!(w, "    <segment>")?;
            writeln!(w, "      <metadata>")?;
            for (k, val) in &meta {
                writeln!(w, "        <{k}>{}</{k}>", xml_escape(val))?;
            }
            writeln!(w, "      </metadata>")?;
            writeln!(w, "      <data>")?;
            for (t, s) in &rows {
                writeln!(
                    w,
                    "        <stateVector><EPOCH>{}</EPOCH><X units=\"km\">{}</X><Y units=\"km\">{}</Y><Z units=\"km\">{}</Z><X_DOT units=\"km/s\">{}</X_DOT><Y_DOT units=\"km/s\">{}</Y_DOT><Z_DOT units=\"km/s\">{}</Z_DOT></stateVector>",
                    oem_time(*t),
                    p(s[0]),
                    p(s[1]),
                    p(s[2]),
                    v(s[3]),
                    v(s[4]),
                    v(s[5])
                )?;
            }
            writeln!(w, "      </data>")?;
            writeln!(w, "    </segment>")?;
            writeln!(w, "  </body>")?;
            writeln!(w, "</oem>")?;
        }
    }
    Ok(())
}

/// File name extension for a format.
pub fn oem_extension(format: OemFormat) -> &'static str {
    match format {
        OemFormat::Kvn => "oem",
        OemFormat::Xml => "xml",
    }
}

/// A spacecraft name for a file name (ASCII letters, digits, dashes).
pub fn slug_name(name: &str) -> String {
    super::slug(name)
}
