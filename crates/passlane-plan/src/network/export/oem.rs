//! CCSDS Orbit Ephemeris Message, KVN form, following CCSDS 502.0-B-2
//! ("Orbit Data Messages", Blue Book issue 2, November 2009; written from
//! memory of the standard, not checked against the document here).
//!
//! Layout: a header (`CCSDS_OEM_VERS = 2.0`, `CREATION_DATE`, `ORIGINATOR`),
//! one metadata block between `META_START` and `META_STOP` (`OBJECT_NAME`,
//! `OBJECT_ID`, `CENTER_NAME = EARTH`, `REF_FRAME = TEME`, `TIME_SYSTEM = UTC`,
//! `START_TIME`, `STOP_TIME`), then one data line per state:
//! `epoch x y z x_dot y_dot z_dot` in km and km/s. Epochs are written in the
//! standard's ASCII form `YYYY-MM-DDThh:mm:ss.sss` (UTC, no zone letter).
//!
//! The states are SGP4's, in TEME of date, exactly as `passlane ephemeris
//! --frame teme` gives them; the spacing is about 1/100 of an orbit (common
//! practice, so that an interpolating reader has dense enough points).
//! No covariance section and no acceleration columns are written.

use std::io::{self, Write};

use passlane_orbit::{ElementSet, PropagationError, Propagator, StateTeme, UtcTime};

/// Spacing of OEM points: the orbit's period / 100, whole seconds, 10–600 s.
pub fn oem_step_s(set: &ElementSet) -> f64 {
    let period_s = 86_400.0 / set.mean_motion_rev_day.max(1e-6);
    (period_s / 100.0).round().clamp(10.0, 600.0)
}

/// States from `start` to `end` every `step_s`, the last exactly at `end`.
pub fn oem_states(
    set: &ElementSet,
    start: UtcTime,
    end: UtcTime,
    step_s: f64,
) -> Result<Vec<StateTeme>, PropagationError> {
    let prop = Propagator::new(set)?;
    let mut cursor = prop.cursor();
    let span = end.s_since(start);
    let step_s = if step_s.is_finite() && step_s > 0.0 {
        step_s
    } else {
        60.0
    };
    let mut out = Vec::new();
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

/// `OBJECT_ID` in the international designator form `YYYY-NNNP{PP}`, from
/// the element set's `YYNNNP` (two-digit years 57–99 are 1900s, as in TLEs);
/// the catalog number when the designator is missing or unreadable.
pub fn object_id(set: &ElementSet) -> String {
    let d = set.international_designator.trim();
    if d.len() >= 3 && d.is_ascii() && d[..2].chars().all(|c| c.is_ascii_digit()) {
        let yy: u32 = d[..2].parse().unwrap_or(0);
        let year = if yy >= 57 { 1900 + yy } else { 2000 + yy };
        return format!("{year}-{}", &d[2..]);
    }
    set.catalog_number.to_string()
}

/// The ASCII epoch form of the standard, milliseconds, no zone letter.
pub fn oem_time(t: UtcTime) -> String {
    let s = t.to_iso_ms();
    s.trim_end_matches('Z').to_string()
}

/// Writes one OEM with one segment.
pub fn write_oem(
    w: &mut dyn Write,
    set: &ElementSet,
    states: &[StateTeme],
    created: UtcTime,
    originator: &str,
) -> io::Result<()> {
    let (Some(first), Some(last)) = (states.first(), states.last()) else {
        return Err(io::Error::new(
            io::ErrorKind::InvalidInput,
            "an OEM needs at least one state",
        ));
    };
    let originator = if originator.trim().is_empty() {
        "PASSLANE"
    } else {
        originator.trim()
    };
    writeln!(w, "CCSDS_OEM_VERS = 2.0")?;
    writeln!(
        w,
        "COMMENT SGP4 states from element set epoch {}",
        oem_time(set.epoch)
    )?;
    writeln!(w, "CREATION_DATE = {}", oem_time(created))?;
    writeln!(w, "ORIGINATOR = {originator}")?;
    writeln!(w)?;
    writeln!(w, "META_START")?;
    writeln!(w, "OBJECT_NAME = {}", set.name.trim())?;
    writeln!(w, "OBJECT_ID = {}", object_id(set))?;
    writeln!(w, "CENTER_NAME = EARTH")?;
    writeln!(w, "REF_FRAME = TEME")?;
    writeln!(w, "TIME_SYSTEM = UTC")?;
    writeln!(w, "START_TIME = {}", oem_time(first.time))?;
    writeln!(w, "STOP_TIME = {}", oem_time(last.time))?;
    writeln!(w, "META_STOP")?;
    writeln!(w)?;
    for s in states {
        let (p, v) = (&s.position_km, &s.velocity_km_s);
        writeln!(
            w,
            "{} {:.6} {:.6} {:.6} {:.9} {:.9} {:.9}",
            oem_time(s.time),
            p[0],
            p[1],
            p[2],
            v[0],
            v[1],
            v[2]
        )?;
    }
    Ok(())
}

/// A spacecraft name for a file name (ASCII letters, digits, dashes).
pub fn slug_name(name: &str) -> String {
    super::slug(name)
}
