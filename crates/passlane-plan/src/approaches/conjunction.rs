//! From a screening event to a decision aid: collision probability with the
//! covariance the operator assumes, and a CCSDS CDM for any event.
//!
//! Element sets carry no covariance. The probability computed here uses an
//! *assumed* one: per object, a radial/in-track/cross-track 1-σ at element
//! epoch plus a growth per day of element age (scenario settings), diagonal
//! in the object's RTN frame. It is labelled as assumed everywhere it goes.
//! The maximum probability over covariance size (Alfano 2005) does not depend
//! on that assumption's scale and is what a TLE-only screening can honestly
//! report.

use passlane_orbit::{EarthOrientation, ElementSet, StateTeme, TemeToEarthFixed, UtcTime};
use serde::Serialize;

use crate::cdm::{
    COVARIANCE_COMMENT, Cdm, CdmHeader, CdmObject, CdmRelative, ccsds_identifier, ccsds_text,
    hard_body_radius_comment,
};
use crate::encounter::{
    EncounterError, Mat3, StateKm, encounter_plane, relative_geometry, rtn_basis,
};
use crate::pc::{pc, pc_alfano, pc_chan, pc_max};
use crate::progress::Progress;
use crate::scenario::Scenario;
use crate::screen::{CloseApproach, ScreeningVolume};
use passlane_orbit::frames::{cross, unit};

/// The operator's assumption about element-set accuracy.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct AssumedCovariance {
    /// 1-σ radial, in-track, cross-track at element epoch, m.
    pub sigma_at_epoch_m: [f64; 3],
    /// Growth of each 1-σ per day of element age, m/day.
    pub growth_m_per_day: [f64; 3],
}

impl AssumedCovariance {
    /// The operator's assumption as the scenario states it.
    pub fn from_scenario(scenario: &Scenario) -> Self {
        AssumedCovariance {
            sigma_at_epoch_m: scenario.screening.assumed_sigma_at_epoch_m,
            growth_m_per_day: scenario.screening.assumed_sigma_growth_m_per_day,
        }
    }

    /// 1-σ (R, I, C) of an element set at `at`, m.
    pub fn sigmas_m(&self, set: &ElementSet, at: UtcTime) -> [f64; 3] {
        let age_days = at.s_since(set.epoch).abs() / 86_400.0;
        std::array::from_fn(|k| self.sigma_at_epoch_m[k] + self.growth_m_per_day[k] * age_days)
    }

    /// Diagonal RTN position covariance, m².
    pub fn rtn_m2(&self, set: &ElementSet, at: UtcTime) -> Mat3 {
        let s = self.sigmas_m(set, at);
        [
            [s[0] * s[0], 0.0, 0.0],
            [0.0, s[1] * s[1], 0.0],
            [0.0, 0.0, s[2] * s[2]],
        ]
    }

    /// A short label for reports: where the covariance came from.
    pub fn label(&self) -> String {
        format!(
            "assumed: RIC 1-sigma {:.0}/{:.0}/{:.0} m at epoch + {:.0}/{:.0}/{:.0} m per day of element age",
            self.sigma_at_epoch_m[0],
            self.sigma_at_epoch_m[1],
            self.sigma_at_epoch_m[2],
            self.growth_m_per_day[0],
            self.growth_m_per_day[1],
            self.growth_m_per_day[2]
        )
    }
}

/// Probability figures of one event.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EventRisk {
    /// Probability with the assumed covariance ([`crate::pc::pc`]; agrees
    /// with the 2-D reference integral to 1e-6 relative or better).
    pub pc: f64,
    pub pc_alfano: f64,
    pub pc_chan: f64,
    /// Largest probability over the covariance's size (shape kept).
    pub pc_max: f64,
    pub hard_body_radius_m: f64,
    /// Where the radius came from (the user's override, or the scenario's
    /// radii of the two objects).
    pub hard_body_radius_source: String,
    pub covariance_source: String,
    /// Combined covariance in the encounter plane, principal axes, m.
    pub sigma_x_m: f64,
    pub sigma_y_m: f64,
    pub miss_x_m: f64,
    pub miss_y_m: f64,
    /// Element ages at TCA, days.
    pub primary_element_age_days: f64,
    pub secondary_element_age_days: f64,
}

fn km_state(s: &StateTeme) -> StateKm {
    StateKm {
        position_km: s.position_km,
        velocity_km_s: s.velocity_km_s,
    }
}

/// Probability of one screening event with the assumed covariance and the
/// combined hard-body radius `hard_body_radius_m` (sum of both objects').
pub fn assess(
    event: &CloseApproach,
    primary: &ElementSet,
    secondary: &ElementSet,
    covariance: &AssumedCovariance,
    hard_body_radius_m: f64,
) -> Result<EventRisk, EncounterError> {
    assess_with_source(
        event,
        primary,
        secondary,
        covariance,
        hard_body_radius_m,
        "given".to_string(),
    )
}

/// One object's RTN position covariance at TCA (m²) and its origin: the
/// covariance of the object's own ephemeris (OEM COVARIANCE block) nearest
/// in time to TCA, when it has one (rotated to the object's RTN frame at
/// TCA, not propagated), else the assumed one.
pub fn object_covariance_rtn_m2(
    set: &ElementSet,
    state: &StateTeme,
    covariance: &AssumedCovariance,
    eop: &EarthOrientation,
) -> (Mat3, CovarianceOrigin) {
    if let Some(src) = &set.ephemeris
        && let Some(c) = src.ephemeris.covariance_near(state.time)
        && let Some(m) = oem_covariance_rtn_m2(c, state, eop)
    {
        {
            return (
                m,
                CovarianceOrigin::Ephemeris(format!(
                    "OEM covariance of {} at {} (COV_REF_FRAME {}; the one nearest TCA, not propagated)",
                    src.ephemeris.source.file, c.epoch, c.frame
                )),
            );
        }
    }
    (
        covariance.rtn_m2(set, state.time),
        CovarianceOrigin::Assumed,
    )
}

/// Where a covariance came from.
#[derive(Debug, Clone, PartialEq)]
pub enum CovarianceOrigin {
    /// The operator's assumption ([`AssumedCovariance`]).
    Assumed,
    /// An ephemeris's own covariance, described.
    Ephemeris(String),
}

/// The position block of an OEM covariance in the RTN frame of `state`, m².
/// `None` for a COV_REF_FRAME this tool does not know.
fn oem_covariance_rtn_m2(
    c: &passlane_orbit::ephemeris::OemCovariance,
    state: &StateTeme,
    eop: &EarthOrientation,
) -> Option<Mat3> {
    use passlane_orbit::inertial::{Eme2000ToTeme, frame_bias, mul, transpose};
    let l = &c.lower_triangle;
    // Position block of the lower triangle (x, y, z rows), km².
    let p: Mat3 = [[l[0], l[1], l[3]], [l[1], l[2], l[4]], [l[3], l[4], l[5]]];
    let s = km_state(state);
    let rtn = rtn_basis(&s)?;
    let rotate = |m: &Mat3, cov: &Mat3| mul(&mul(m, cov), &transpose(m));
    let frame = c.frame.trim().to_ascii_uppercase();
    // `to_teme`: the rotation taking the covariance's frame to TEME.
    let to_teme: Mat3 = match frame.as_str() {
        "RTN" | "RSW" | "RIC" => transpose(&rtn),
        "TNW" => {
            let w = unit(&cross(&s.position_km, &s.velocity_km_s));
            let t = unit(&s.velocity_km_s);
            let n = cross(&w, &t);
            transpose(&[t, n, w])
        }
        "TEME" => [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]],
        "EME2000" | "J2000" => Eme2000ToTeme::at(c.epoch).matrix(),
        "GCRF" | "ICRF" => mul(&Eme2000ToTeme::at(c.epoch).matrix(), &frame_bias()),
        f if f.starts_with("ITRF") => {
            let r = TemeToEarthFixed::at(c.epoch, eop);
            let cols =
                [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]].map(|e| r.position_to_teme(&e));
            std::array::from_fn(|i| std::array::from_fn(|j| cols[j][i]))
        }
        _ => return None,
    };
    let teme = rotate(&to_teme, &p);
    let out = rotate(&rtn, &teme);
    Some(out.map(|row| row.map(|x| x * 1e6)))
}

fn assess_with_source(
    event: &CloseApproach,
    primary: &ElementSet,
    secondary: &ElementSet,
    covariance: &AssumedCovariance,
    hard_body_radius_m: f64,
    hard_body_radius_source: String,
) -> Result<EventRisk, EncounterError> {
    assess_full(
        event,
        primary,
        secondary,
        covariance,
        hard_body_radius_m,
        hard_body_radius_source,
        &EarthOrientation::default(),
    )
}

fn assess_full(
    event: &CloseApproach,
    primary: &ElementSet,
    secondary: &ElementSet,
    covariance: &AssumedCovariance,
    hard_body_radius_m: f64,
    hard_body_radius_source: String,
    eop: &EarthOrientation,
) -> Result<EventRisk, EncounterError> {
    let s1 = km_state(&event.primary_state);
    let s2 = km_state(&event.secondary_state);
    let (c1, o1) = object_covariance_rtn_m2(primary, &event.primary_state, covariance, eop);
    let (c2, o2) = object_covariance_rtn_m2(secondary, &event.secondary_state, covariance, eop);
    let covariance_source = match (&o1, &o2) {
        (CovarianceOrigin::Assumed, CovarianceOrigin::Assumed) => covariance.label(),
        _ => {
            let d = |o: &CovarianceOrigin| match o {
                CovarianceOrigin::Assumed => covariance.label(),
                CovarianceOrigin::Ephemeris(s) => s.clone(),
            };
            format!("primary: {}; secondary: {}", d(&o1), d(&o2))
        }
    };
    let plane = encounter_plane(&s1, &c1, &s2, &c2)?;
    let e = plane
        .encounter_2d(hard_body_radius_m)
        .map_err(EncounterError::Covariance)?;
    Ok(EventRisk {
        pc: pc(&e),
        pc_alfano: pc_alfano(&e),
        pc_chan: pc_chan(&e),
        pc_max: pc_max(&e).pc_max,
        hard_body_radius_m,
        hard_body_radius_source,
        covariance_source,
        sigma_x_m: e.sigma_x_m(),
        sigma_y_m: e.sigma_y_m(),
        miss_x_m: e.miss_x_m(),
        miss_y_m: e.miss_y_m(),
        primary_element_age_days: event.tca.s_since(primary.epoch) / 86_400.0,
        secondary_element_age_days: event.tca.s_since(secondary.epoch) / 86_400.0,
    })
}

/// Hard-body radius of one object: its own from the scenario, else the
/// scenario's default.
pub fn hard_body_radius_m(scenario: &Scenario, catalog_number: u32) -> f64 {
    scenario
        .satellites
        .iter()
        .find(|x| x.catalog_number == catalog_number)
        .and_then(|x| x.hard_body_radius_m)
        .unwrap_or(scenario.screening.default_hard_body_radius_m)
}

/// Assesses every event of a screening: the element sets are looked up by
/// catalog number in `sets`, the combined hard-body radius is the sum of the
/// two objects' (or `hard_body_radius_override_m`). The command line and the
/// window both call this, so their figures agree.
pub fn assess_events<'a>(
    events: &[CloseApproach],
    sets: impl IntoIterator<Item = &'a ElementSet>,
    scenario: &Scenario,
    hard_body_radius_override_m: Option<f64>,
) -> Vec<Result<EventRisk, String>> {
    assess_events_with_progress(
        events,
        sets,
        scenario,
        hard_body_radius_override_m,
        &crate::progress::Silent,
    )
}

/// Why an event has no figures when the assessment was cancelled before it.
pub const NOT_ASSESSED_CANCELLED: &str = "not assessed: cancelled";

/// [`assess_events`] on all cores, reporting the fraction of events done.
/// The results are in the order of `events` whatever the threads do. When
/// `progress` is cancelled during the assessment, the events not yet
/// assessed get [`NOT_ASSESSED_CANCELLED`]; a cancel that was already set
/// when the call began (a cancelled screening) does not stop it, so what a
/// screening found is always assessed.
pub fn assess_events_with_progress<'a>(
    events: &[CloseApproach],
    sets: impl IntoIterator<Item = &'a ElementSet>,
    scenario: &Scenario,
    hard_body_radius_override_m: Option<f64>,
    progress: &dyn Progress,
) -> Vec<Result<EventRisk, String>> {
    use rayon::prelude::*;
    use std::sync::atomic::{AtomicUsize, Ordering};
    let by_number: std::collections::HashMap<u32, &ElementSet> =
        sets.into_iter().map(|s| (s.catalog_number, s)).collect();
    let covariance = AssumedCovariance::from_scenario(scenario);
    let honour_cancel = !progress.cancelled();
    let done = AtomicUsize::new(0);
    let total = events.len().max(1) as f64;
    // Progress every 512 events: a few per second of work at the slowest.
    const REPORT_EVERY: usize = 512;
    events
        .par_iter()
        .map(|e| {
            if honour_cancel && progress.cancelled() {
                return Err(NOT_ASSESSED_CANCELLED.to_string());
            }
            let n = done.fetch_add(1, Ordering::Relaxed) + 1;
            if n.is_multiple_of(REPORT_EVERY) {
                progress.report(n as f64 / total);
            }
            assess_one(
                e,
                &by_number,
                &covariance,
                scenario,
                hard_body_radius_override_m,
            )
        })
        .collect()
}

fn assess_one(
    e: &CloseApproach,
    by_number: &std::collections::HashMap<u32, &ElementSet>,
    covariance: &AssumedCovariance,
    scenario: &Scenario,
    hard_body_radius_override_m: Option<f64>,
) -> Result<EventRisk, String> {
    let (Some(p), Some(s)) = (
        by_number.get(&e.primary_catalog_number),
        by_number.get(&e.secondary_catalog_number),
    ) else {
        return Err("element set not found".to_string());
    };
    let (hbr, source) = match hard_body_radius_override_m {
        Some(r) => (r, "given by the user for every event".to_string()),
        None => {
            let (a, b) = (
                hard_body_radius_m(scenario, e.primary_catalog_number),
                hard_body_radius_m(scenario, e.secondary_catalog_number),
            );
            (
                a + b,
                format!(
                    "scenario: {} m for {} + {} m for {}",
                    crate::cdm::ccsds_number(a),
                    e.primary_catalog_number,
                    crate::cdm::ccsds_number(b),
                    e.secondary_catalog_number
                ),
            )
        }
    };
    assess_full(
        e,
        p,
        s,
        covariance,
        hbr,
        source,
        &scenario.earth_orientation,
    )
    .map_err(|err| err.to_string())
}

/// Settings for writing a CDM from a screening event.
pub struct CdmContext<'a> {
    pub originator: &'a str,
    pub message_id: String,
    pub creation_date: UtcTime,
    pub screen_start: UtcTime,
    pub screen_stop: UtcTime,
    pub volume: ScreeningVolume,
    pub earth_orientation: EarthOrientation,
}

/// Builds a CDM (states in ITRF, as CCSDS 508.0-B-1 allows ITRF, EME2000 and
/// GCRF, and TEME → ITRF needs only the GMST rotation) for a screening event.
pub fn event_to_cdm(
    event: &CloseApproach,
    primary: &ElementSet,
    secondary: &ElementSet,
    risk: Option<&EventRisk>,
    covariance: &AssumedCovariance,
    ctx: &CdmContext<'_>,
) -> Result<Cdm, EncounterError> {
    let g = relative_geometry(
        &km_state(&event.primary_state),
        &km_state(&event.secondary_state),
    )?;
    let rot = TemeToEarthFixed::at(event.tca, &ctx.earth_orientation);
    // 508.0-B-1 Table 3-2 knows ELLIPSOID and BOX; a sphere is an ellipsoid
    // with three equal semi-axes. The sizes are semi-axes (half-widths for a
    // box); the standard does not say, so a COMMENT does.
    let (shape, xyz_m) = match ctx.volume {
        ScreeningVolume::Sphere { radius_km } => ("ELLIPSOID", [radius_km * 1000.0; 3]),
        ScreeningVolume::Box {
            radial_km,
            in_track_km,
            cross_track_km,
        } => (
            "BOX",
            [
                radial_km * 1000.0,
                in_track_km * 1000.0,
                cross_track_km * 1000.0,
            ],
        ),
        ScreeningVolume::Ellipsoid {
            radial_km,
            in_track_km,
            cross_track_km,
        } => (
            "ELLIPSOID",
            [
                radial_km * 1000.0,
                in_track_km * 1000.0,
                cross_track_km * 1000.0,
            ],
        ),
    };
    let object = |which: &str, set: &ElementSet, s: &StateTeme| -> CdmObject {
        let ef = rot.state(&s.position_km, &s.velocity_km_s);
        let (p, origin) = object_covariance_rtn_m2(set, s, covariance, &ctx.earth_orientation);
        // Velocity variances: position σ times the mean motion, a rough but
        // consistent order of magnitude (the assumed covariance has none, and
        // only the position block enters the probability).
        let n_rad_s = set.mean_motion_rev_day * std::f64::consts::TAU / 86_400.0;
        let mut cov = [0.0; 21];
        cov[0] = p[0][0];
        cov[1] = p[1][0];
        cov[2] = p[1][1];
        cov[3] = p[2][0];
        cov[4] = p[2][1];
        cov[5] = p[2][2];
        cov[9] = p[0][0].max(0.0) * n_rad_s * n_rad_s;
        cov[14] = p[1][1].max(0.0) * n_rad_s * n_rad_s;
        cov[20] = p[2][2].max(0.0) * n_rad_s * n_rad_s;
        let state_note = match &set.ephemeris {
            Some(src) => format!("State from the operator's {}", src.ephemeris.describe()),
            None => format!("State from SGP4 on element set epoch {}", set.epoch),
        };
        let (cov_note, method) = match &origin {
            CovarianceOrigin::Assumed => (covariance.label(), "DEFAULT"),
            CovarianceOrigin::Ephemeris(d) => (d.clone(), "CALCULATED"),
        };
        CdmObject {
            comments: vec![format!("{state_note}; covariance {cov_note}")],
            object: which.to_string(),
            object_designator: format!("{:05}", set.catalog_number),
            catalog_name: "SATCAT".to_string(),
            object_name: ccsds_text(&set.name, "UNKNOWN"),
            international_designator: set
                .international_designator_ccsds()
                .unwrap_or_else(|| "UNKNOWN".to_string()),
            ephemeris_name: match &set.ephemeris {
                Some(src) => {
                    let file = &src.ephemeris.source.file;
                    let base = file.rsplit(['/', '\\']).next().unwrap_or(file);
                    ccsds_identifier(base, "NONE")
                }
                None => "NONE".to_string(),
            },
            covariance_method: method.to_string(),
            maneuverable: "N/A".to_string(),
            ref_frame: "ITRF".to_string(),
            state: StateKm {
                position_km: ef.position_km,
                velocity_km_s: ef.velocity_km_s,
            },
            covariance_rtn: cov,
            other: Vec::new(),
        }
    };
    let own_ephemeris: Vec<&str> = [primary, secondary]
        .iter()
        .filter(|s| s.ephemeris.is_some())
        .map(|s| s.name.as_str())
        .collect();
    Ok(Cdm {
        header: CdmHeader {
            comments: {
                let mut c = vec![
                    if own_ephemeris.is_empty() {
                        "Screening on published mean elements (SGP4): advisory only.".to_string()
                    } else {
                        format!(
                            "Screening with the operator's own ephemeris for {} and published mean elements (SGP4) otherwise: advisory only.",
                            own_ephemeris.join(", ")
                        )
                    },
                    "Defer to official conjunction messages and coordinate with the other operator."
                        .to_string(),
                ];
                if let Some(r) = risk {
                    c.push(hard_body_radius_comment(
                        r.hard_body_radius_m,
                        &r.hard_body_radius_source,
                    ));
                }
                c.push(match risk {
                    Some(r) if r.covariance_source != covariance.label() => {
                        format!("{COVARIANCE_COMMENT}: {}", r.covariance_source)
                    }
                    _ => format!(
                        "{COVARIANCE_COMMENT}: {} (both objects, COVARIANCE_METHOD = DEFAULT)",
                        covariance.label()
                    ),
                });
                c
            },
            ccsds_cdm_vers: "1.0".to_string(),
            creation_date: ctx.creation_date,
            originator: ccsds_identifier(ctx.originator, "PASSLANE"),
            message_for: Some(ccsds_text(&primary.name, "UNKNOWN")),
            message_id: ccsds_identifier(&ctx.message_id, "PASSLANE"),
        },
        relative: CdmRelative {
            comments: vec![format!(
                "Screening volume {} in the primary's RTN frame; SCREEN_VOLUME_X/Y/Z are semi-axes{}",
                match ctx.volume {
                    ScreeningVolume::Sphere { .. } => "a sphere (an ellipsoid with equal axes)",
                    ScreeningVolume::Box { .. } => "a box",
                    ScreeningVolume::Ellipsoid { .. } => "an ellipsoid",
                },
                if matches!(ctx.volume, ScreeningVolume::Box { .. }) {
                    " (half-widths)"
                } else {
                    ""
                }
            )],
            tca: event.tca,
            miss_distance_m: g.miss_distance_km * 1000.0,
            relative_speed_m_s: Some(g.relative_speed_km_s * 1000.0),
            relative_position_rtn_m: [
                Some(g.radial_km * 1000.0),
                Some(g.in_track_km * 1000.0),
                Some(g.cross_track_km * 1000.0),
            ],
            relative_velocity_rtn_m_s: [
                Some(g.relative_velocity_rtn_km_s[0] * 1000.0),
                Some(g.relative_velocity_rtn_km_s[1] * 1000.0),
                Some(g.relative_velocity_rtn_km_s[2] * 1000.0),
            ],
            start_screen_period: Some(ctx.screen_start),
            stop_screen_period: Some(ctx.screen_stop),
            screen_volume_frame: Some("RTN".to_string()),
            screen_volume_shape: Some(shape.to_string()),
            screen_volume_xyz_m: [Some(xyz_m[0]), Some(xyz_m[1]), Some(xyz_m[2])],
            screen_entry_time: Some(event.volume_entry),
            screen_exit_time: Some(event.volume_exit),
            collision_probability: risk.map(|r| r.pc),
            collision_probability_method: risk.map(|_| "FOSTER-1992".to_string()),
        },
        object1: object("OBJECT1", primary, &event.primary_state),
        object2: object("OBJECT2", secondary, &event.secondary_state),
    })
}
