//! Putting operator ephemerides into a fleet: which catalog number each one
//! is, which element set (if any) it replaces and falls back to, and the
//! bounding elements the planners' shells and steps are computed from.

use std::sync::Arc;

use super::{Ephemeris, EphemerisSource};
use crate::constants::MU_WGS72_KM3_S2;
use crate::elements::{Diagnostic, ElementSet, Severity};
use crate::frames::{cross, norm};

/// One ephemeris to put into the fleet, with the catalog number the user
/// gave it (an OEM names its object by OBJECT_ID, not by catalog number).
#[derive(Debug, Clone)]
pub struct EphemerisInput {
    pub ephemeris: Ephemeris,
    pub catalog_number: Option<u32>,
}

/// Replaces or adds fleet entries for `inputs`. The catalog number is the
/// one given; else the fleet entry whose international designator equals
/// the OEM's OBJECT_ID, or whose name equals its OBJECT_NAME; else OBJECT_ID
/// itself when it is a number. An ephemeris whose number cannot be told is
/// refused with an error. A fleet entry with the same number becomes the
/// ephemeris's fallback outside its usable spans (a warning says so).
pub fn attach_to_fleet(
    fleet: &mut Vec<ElementSet>,
    inputs: Vec<EphemerisInput>,
) -> Vec<Diagnostic> {
    let mut diagnostics = Vec::new();
    let mut done: Vec<u32> = Vec::new();
    for input in inputs {
        let eph = input.ephemeris;
        let file = eph.source.file.clone();
        let line = eph.source.line;
        let id = eph.object_id().trim().to_ascii_uppercase();
        let name = eph.object_name().trim().to_ascii_uppercase();
        let number = input
            .catalog_number
            .or_else(|| {
                fleet
                    .iter()
                    .find(|s| {
                        s.ephemeris.is_none()
                            && s.international_designator_ccsds().is_some_and(|d| d == id)
                    })
                    .map(|s| s.catalog_number)
            })
            .or_else(|| {
                fleet
                    .iter()
                    .find(|s| s.ephemeris.is_none() && s.name.trim().eq_ignore_ascii_case(&name))
                    .map(|s| s.catalog_number)
            })
            .or_else(|| id.parse::<u32>().ok());
        let Some(number) = number else {
            diagnostics.push(Diagnostic {
                severity: Severity::Error,
                file,
                line,
                field: "OBJECT_ID".to_string(),
                message: format!(
                    "cannot tell which catalog number this ephemeris is: OBJECT_ID {id:?} and OBJECT_NAME {name:?} match no element set; give the number (CATALOG=FILE on the command line, catalog_number in the scenario)"
                ),
            });
            continue;
        };
        if done.contains(&number) {
            diagnostics.push(Diagnostic {
                severity: Severity::Error,
                file,
                line,
                field: "catalog number".to_string(),
                message: format!("catalog {number} already has an ephemeris; this one is ignored"),
            });
            continue;
        }
        done.push(number);
        let existing = fleet.iter().position(|s| s.catalog_number == number);
        let fallback = existing.map(|i| {
            let mut s = fleet[i].clone();
            s.ephemeris = None;
            s
        });
        if let Some(f) = &fallback {
            let spans: Vec<String> = eph
                .spans()
                .iter()
                .map(|s| format!("{} - {}", s.start, s.stop))
                .collect();
            diagnostics.push(Diagnostic {
                severity: Severity::Warning,
                file: file.clone(),
                line,
                field: "catalog number".to_string(),
                message: format!(
                    "{} ({number}) moves by this ephemeris within {}; outside, it falls back to SGP4 on its element set of epoch {} ({}:{})",
                    f.name,
                    spans.join(", "),
                    f.epoch,
                    f.source.file,
                    f.source.line
                ),
            });
        }
        let set = element_set_for(eph, number, fallback);
        match existing {
            Some(i) => fleet[i] = set,
            None => fleet.push(set),
        }
    }
    diagnostics
}

/// The fleet entry of an ephemeris: its identity, and bounding elements
/// whose perigee and apogee radii are the smallest and largest radius of the
/// ephemeris (and of the fallback element set's mean orbit); inclination and
/// node from the middle state; everything the planners read from mean
/// elements then bounds the ephemeris honestly.
fn element_set_for(eph: Ephemeris, number: u32, fallback: Option<ElementSet>) -> ElementSet {
    let (mut r_lo, mut r_hi) = eph.radius_range_km();
    if let Some(f) = &fallback {
        let n = f.mean_motion_rev_day * std::f64::consts::TAU / 86_400.0;
        let a = (MU_WGS72_KM3_S2 / (n * n)).cbrt();
        r_lo = r_lo.min(a * (1.0 - f.eccentricity));
        r_hi = r_hi.max(a * (1.0 + f.eccentricity));
    }
    let a = 0.5 * (r_lo + r_hi);
    let e = ((r_hi - r_lo) / (r_hi + r_lo)).clamp(0.0, 0.999);
    let n_rad_s = (MU_WGS72_KM3_S2 / (a * a * a)).sqrt();
    let spans = eph.spans();
    let start = spans.first().map(|s| s.start).unwrap_or_default();
    let stop = spans.last().map(|s| s.stop).unwrap_or_default();
    let mid = start.add_s(0.5 * stop.s_since(start));
    let (inclination_deg, raan_deg) = match eph.state_at(mid).or_else(|| eph.state_at(start)) {
        Some((r, v)) => {
            let h = cross(&r, &v);
            let i = (h[2] / norm(&h)).clamp(-1.0, 1.0).acos().to_degrees();
            let node = (h[0]).atan2(-h[1]).to_degrees().rem_euclid(360.0);
            (i, node)
        }
        None => (0.0, 0.0),
    };
    let designator = {
        let id = eph.object_id().trim();
        let b = id.as_bytes();
        if b.len() >= 9 && b[4] == b'-' && id.is_ascii() {
            format!("{}{}", &id[2..4], &id[5..])
        } else {
            String::new()
        }
    };
    let base = fallback.clone();
    ElementSet {
        name: base
            .as_ref()
            .map(|f| f.name.clone())
            .unwrap_or_else(|| eph.object_name().to_string()),
        catalog_number: number,
        international_designator: base
            .as_ref()
            .map(|f| f.international_designator.clone())
            .unwrap_or(designator),
        classification: 'U',
        epoch: base.as_ref().map_or(start, |f| f.epoch),
        mean_motion_dot_rev_day2: base.as_ref().map_or(0.0, |f| f.mean_motion_dot_rev_day2),
        mean_motion_ddot_rev_day3: 0.0,
        bstar_per_earth_radii: base.as_ref().map_or(0.0, |f| f.bstar_per_earth_radii),
        ephemeris_type: 0,
        element_set_number: 0,
        inclination_deg,
        raan_deg,
        eccentricity: e,
        arg_perigee_deg: 0.0,
        mean_anomaly_deg: 0.0,
        mean_motion_rev_day: n_rad_s * 86_400.0 / std::f64::consts::TAU,
        revolution_number: 0,
        source: eph.source.clone(),
        ephemeris: Some(Arc::new(EphemerisSource {
            ephemeris: eph,
            fallback,
        })),
    }
}
