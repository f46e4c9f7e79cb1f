//! Avoidance what-if: what one burn does to a close approach, and which burn,
//! when, would move the spacecraft clear.
//!
//! # Model
//! The manoeuvred trajectory is the primary's usual trajectory (SGP4, or any
//! [`Motion`]) plus the difference between two numerical propagations from
//! the usual state at the burn time, one with the impulsive Δv and one
//! without ([`motion::Manoeuvred`]). The numerical propagation
//! (`passlane_orbit::numerical`) carries central gravity, the zonal
//! harmonics J2–J4 (WGS-72, SGP4's constants) and drag from the element set's
//! B* through a piecewise-exponential atmosphere, integrated with the
//! Dormand–Prince 5(4) pair (Dormand & Prince 1980) to a relative tolerance
//! of 1e-12; the J2 term carries the nodal and apsidal drift a burn changes.
//! Third bodies, radiation pressure and tesserals are left out: they change
//! where a spacecraft is over days, but enter the *difference* a burn of
//! centimetres to metres per second makes only at second order.
//!
//! For small in-track burns the difference follows the Clohessy–Wiltshire
//! (1960) linear solution for a near-circular orbit: in-track drift
//! −3·Δv·t plus the periodic terms; the tests check it.
//!
//! # What it computes
//! - [`burn_effect`]: the encounter before and after one burn: TCA (the local
//!   minimum of the distance nearest the given TCA), miss distance, RIC,
//!   relative speed, Pc with the same covariance model (for element sets the
//!   assumed covariance at the new TCA; for a CDM its covariances, which are
//!   attached to each object's RTN frame), and the maximum Pc.
//! - [`trade`]: the same for a grid of burn times (orbits before TCA) and
//!   in-track Δv values, and for each burn time the smallest |Δv| that brings
//!   Pc below a target and the miss above a target distance.
//!
//! Everything here is advisory: it starts from published elements (unless
//! the states come from a CDM) and plans, it does not command a spacecraft;
//! any manoeuvre is coordinated with the other operator and the responsible
//! screening service first.

pub mod consequences;
pub mod motion;

use passlane_orbit::frames::{dot, norm, sub};
use passlane_orbit::numerical::Drag;
use passlane_orbit::{ElementSet, StateTeme, UtcTime};
use rayon::prelude::*;
use serde::Serialize;

use crate::conjunction::AssumedCovariance;
use crate::encounter::{Mat3, StateKm, encounter_plane, relative_geometry};
use crate::numeric::brent_root;
use crate::pc::{pc, pc_max};

pub use consequences::{
    ConsequenceRequest, ContactShift, NewEvent, burn_consequences, consequences, manoeuvred_entry,
    motion_entry,
};
pub use motion::{Burn, FromState, Manoeuvred, Motion, MotionError};

/// Largest |Δv| accepted, m/s: far above any small satellite's avoidance
/// burn (common practice: centimetres to a metre per second), so a typo in
/// units (mm/s for m/s) is caught.
pub const MAX_DV_M_S: f64 = 50.0;

/// How far the TCA may move from the given one, s.
pub const MAX_TCA_SHIFT_S: f64 = 1_800.0;

/// Farthest "close approach" this module accepts near the given TCA, km: a
/// closest distance beyond this means the TCA or the objects are wrong.
pub const MAX_MISS_KM: f64 = 100.0;

/// Common-practice operator thresholds (cited as such, not from a standard).
pub const DEFAULT_TARGET_PC: f64 = 1e-4;

/// Where the covariance of each object comes from.
#[derive(Debug, Clone, Copy)]
pub enum CovarianceModel<'a> {
    /// Element sets: the operator's assumed covariance, grown with element
    /// age at the (new) TCA.
    Assumed {
        assumed: AssumedCovariance,
        primary: &'a ElementSet,
        secondary: &'a ElementSet,
    },
    /// Position covariances in each object's RTN frame, m² (e.g. from a CDM).
    Given {
        primary_rtn_m2: Mat3,
        secondary_rtn_m2: Mat3,
        source: &'a str,
    },
}

impl CovarianceModel<'_> {
    fn matrices(&self, tca: UtcTime) -> (Mat3, Mat3) {
        match self {
            CovarianceModel::Assumed {
                assumed,
                primary,
                secondary,
            } => (assumed.rtn_m2(primary, tca), assumed.rtn_m2(secondary, tca)),
            CovarianceModel::Given {
                primary_rtn_m2,
                secondary_rtn_m2,
                ..
            } => (*primary_rtn_m2, *secondary_rtn_m2),
        }
    }

    /// Where the covariance came from, for reports.
    pub fn label(&self) -> String {
        match self {
            CovarianceModel::Assumed { assumed, .. } => assumed.label(),
            CovarianceModel::Given { source, .. } => source.to_string(),
        }
    }
}

/// The two objects of a close approach and how to assess it.
pub struct Conjunction<'a> {
    pub primary: &'a dyn Motion,
    pub secondary: &'a dyn Motion,
    pub covariance: CovarianceModel<'a>,
    /// Combined hard-body radius, m.
    pub hard_body_radius_m: f64,
    /// The primary's drag (from its element set's B*), for the burn's propagation.
    pub primary_drag: Option<Drag>,
}

/// The figures of one encounter. The field names are a JSON contract.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct EncounterFigures {
    #[serde(serialize_with = "passlane_orbit::time::iso_us")]
    pub tca: UtcTime,
    pub miss_distance_km: f64,
    pub radial_km: f64,
    pub in_track_km: f64,
    pub cross_track_km: f64,
    pub relative_speed_km_s: f64,
    /// `None` when the encounter plane cannot be formed (no relative speed).
    pub pc: Option<f64>,
    pub pc_max: Option<f64>,
}

/// A burn and the encounter before and after it.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct BurnEffect {
    pub burn: Burn,
    pub before: EncounterFigures,
    pub after: EncounterFigures,
}

/// Why an avoidance question cannot be answered; `option` names the input
/// at fault (as the command line spells it).
#[derive(Debug, Clone, PartialEq)]
pub struct AvoidError {
    pub option: &'static str,
    pub message: String,
}

impl std::fmt::Display for AvoidError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}: {}", self.option, self.message)
    }
}

impl std::error::Error for AvoidError {}

fn err(option: &'static str, message: impl Into<String>) -> AvoidError {
    AvoidError {
        option,
        message: message.into(),
    }
}

fn motion_err(option: &'static str) -> impl Fn(MotionError) -> AvoidError {
    move |e| err(option, e.to_string())
}

fn km(s: &StateTeme) -> StateKm {
    StateKm {
        position_km: s.position_km,
        velocity_km_s: s.velocity_km_s,
    }
}

/// Range rate × range, Δr·Δv (km²/s), at `t`: zero at a distance extremum,
/// rising through zero at a minimum.
fn closing(p: &dyn Motion, s: &dyn Motion, t: UtcTime) -> Result<f64, MotionError> {
    let a = p.state_at(t)?;
    let b = s.state_at(t)?;
    Ok(dot(
        &sub(&b.position_km, &a.position_km),
        &sub(&b.velocity_km_s, &a.velocity_km_s),
    ))
}

/// The distance minimum nearest `guess`, within [`MAX_TCA_SHIFT_S`]: steps
/// outward in 10 s until Δr·Δv changes sign from − to +, then Brent's method
/// to a microsecond. (Two extrema of the distance are much more than 10 s
/// apart unless the objects fly in formation, where "the" TCA is ill-posed.)
pub fn find_tca(
    primary: &dyn Motion,
    secondary: &dyn Motion,
    guess: UtcTime,
) -> Result<UtcTime, AvoidError> {
    let f = |dt: f64| closing(primary, secondary, guess.add_s(dt));
    let f0 = f(0.0).map_err(motion_err("--tca"))?;
    const STEP_S: f64 = 10.0;
    // f < 0: still closing, the minimum is later; f > 0: it was earlier.
    let dir = if f0 < 0.0 { 1.0 } else { -1.0 };
    let (mut a, mut fa) = (0.0, f0);
    let mut bracket = None;
    let mut dt = 0.0;
    while dt < MAX_TCA_SHIFT_S {
        dt += STEP_S;
        let b = dir * dt;
        let fb = f(b).map_err(motion_err("--tca"))?;
        if (fa < 0.0) != (fb < 0.0) {
            bracket = Some(if dir > 0.0 {
                (a, b, fa, fb)
            } else {
                (b, a, fb, fa)
            });
            break;
        }
        a = b;
        fa = fb;
    }
    let Some((lo, hi, flo, fhi)) = bracket else {
        return Err(err(
            "--tca",
            format!("no close approach of these objects within {MAX_TCA_SHIFT_S} s of {guess}"),
        ));
    };
    if f0 == 0.0 {
        return Ok(guess);
    }
    let root = brent_root(|x| f(x).unwrap_or(f64::NAN), lo, hi, flo, fhi, 1e-6);
    Ok(guess.add_s(root))
}

/// The encounter's figures at its TCA near `guess`.
pub fn encounter_figures(
    conj: &Conjunction<'_>,
    primary: &dyn Motion,
    guess: UtcTime,
) -> Result<EncounterFigures, AvoidError> {
    let tca = find_tca(primary, conj.secondary, guess)?;
    let s1 = primary.state_at(tca).map_err(motion_err("--tca"))?;
    let s2 = conj.secondary.state_at(tca).map_err(motion_err("--tca"))?;
    let g = relative_geometry(&km(&s1), &km(&s2)).map_err(|e| err("--tca", e.to_string()))?;
    let (c1, c2) = conj.covariance.matrices(tca);
    let probability = encounter_plane(&km(&s1), &c1, &km(&s2), &c2)
        .ok()
        .and_then(|plane| plane.encounter_2d(conj.hard_body_radius_m).ok());
    Ok(EncounterFigures {
        tca,
        miss_distance_km: g.miss_distance_km,
        radial_km: g.radial_km,
        in_track_km: g.in_track_km,
        cross_track_km: g.cross_track_km,
        relative_speed_km_s: g.relative_speed_km_s,
        pc: probability.as_ref().map(pc),
        pc_max: probability.as_ref().map(|e| pc_max(e).pc_max),
    })
}

fn check_burn(burn: &Burn, tca: UtcTime) -> Result<(), AvoidError> {
    if !burn.time.is_finite() || burn.time >= tca {
        return Err(err(
            "--burn-time",
            format!("{} is not before the TCA {tca}", burn.time),
        ));
    }
    let dv = norm(&burn.dv_ric_m_s);
    if !dv.is_finite() || dv > MAX_DV_M_S {
        return Err(err(
            "--dv-ric-m-s",
            format!("|dv| = {dv} m/s is above the {MAX_DV_M_S} m/s sanity limit (units are m/s)"),
        ));
    }
    Ok(())
}

/// The encounter near `tca` before and after `burn`.
pub fn burn_effect(
    conj: &Conjunction<'_>,
    tca: UtcTime,
    burn: Burn,
) -> Result<BurnEffect, AvoidError> {
    let before = encounter_figures(conj, conj.primary, tca)?;
    if before.miss_distance_km > MAX_MISS_KM {
        return Err(err(
            "--tca",
            format!(
                "the objects come no closer than {:.1} km near {tca} (at {}): no close approach there",
                before.miss_distance_km, before.tca
            ),
        ));
    }
    check_burn(&burn, before.tca)?;
    let until = before.tca.add_s(MAX_TCA_SHIFT_S + 60.0);
    let moved = Manoeuvred::new(conj.primary, burn, conj.primary_drag, until)
        .map_err(motion_err("--burn-time"))?;
    let after = encounter_figures(conj, &moved, before.tca)?;
    Ok(BurnEffect {
        burn,
        before,
        after,
    })
}

/// One cell of the trade: a burn time and an in-track Δv. The field names
/// are a JSON contract.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct TradeRow {
    pub orbits_before: f64,
    pub burn_time: UtcTime,
    pub dv_in_track_m_s: f64,
    pub miss_distance_km: f64,
    pub pc: Option<f64>,
    pub pc_max: Option<f64>,
}

/// The smallest in-track |Δv| at one burn time that meets both targets.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Smallest {
    pub orbits_before: f64,
    pub burn_time: UtcTime,
    /// Signed (prograde positive); `None` when no Δv up to the largest of
    /// the grid meets the targets.
    pub dv_in_track_m_s: Option<f64>,
    pub miss_distance_km: Option<f64>,
    pub pc: Option<f64>,
}

/// What the trade asks for.
#[derive(Debug, Clone, PartialEq)]
pub struct TradeRequest {
    pub orbits_before: Vec<f64>,
    /// In-track Δv values, m/s (signed; both signs are useful).
    pub dv_m_s: Vec<f64>,
    pub target_pc: f64,
    pub target_miss_km: f64,
}

impl Default for TradeRequest {
    fn default() -> Self {
        let mags = [0.001, 0.002, 0.005, 0.01, 0.02, 0.05, 0.1, 0.2, 0.5, 1.0];
        TradeRequest {
            orbits_before: vec![0.5, 1.0, 1.5, 2.0, 2.5, 3.0],
            dv_m_s: mags
                .iter()
                .rev()
                .map(|m| -m)
                .chain(mags.iter().copied())
                .collect(),
            target_pc: DEFAULT_TARGET_PC,
            target_miss_km: 1.0,
        }
    }
}

/// The trade's answer. The field names are a JSON contract.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Trade {
    pub before: EncounterFigures,
    pub trade: Vec<TradeRow>,
    pub smallest: Vec<Smallest>,
    pub target_pc: f64,
    pub target_miss_km: f64,
}

/// Orbital period at a state, s (Kepler's third law with the vis-viva
/// semi-major axis).
fn period_s(s: &StateTeme) -> f64 {
    let r = norm(&s.position_km);
    let v2 = dot(&s.velocity_km_s, &s.velocity_km_s);
    let mu = passlane_orbit::constants::MU_WGS72_KM3_S2;
    let a = 1.0 / (2.0 / r - v2 / mu);
    std::f64::consts::TAU * (a.max(1.0).powi(3) / mu).sqrt()
}

fn meets(f: &EncounterFigures, req: &TradeRequest) -> bool {
    f.miss_distance_km > req.target_miss_km && f.pc.is_some_and(|p| p < req.target_pc)
}

/// The burn-time × Δv grid, and the smallest |Δv| per burn time.
pub fn trade(
    conj: &Conjunction<'_>,
    tca: UtcTime,
    req: &TradeRequest,
) -> Result<Trade, AvoidError> {
    if req
        .orbits_before
        .iter()
        .any(|o| !(o.is_finite() && *o > 0.0))
    {
        return Err(err(
            "--orbits-before",
            "values must be positive numbers of orbits",
        ));
    }
    if req
        .dv_m_s
        .iter()
        .any(|d| !d.is_finite() || d.abs() > MAX_DV_M_S)
    {
        return Err(err(
            "--dv-m-s",
            format!("values must be finite and at most {MAX_DV_M_S} m/s in size"),
        ));
    }
    if !(req.target_pc > 0.0 && req.target_pc < 1.0) {
        return Err(err("--target-pc", "must be between 0 and 1"));
    }
    if !(req.target_miss_km.is_finite() && req.target_miss_km >= 0.0) {
        return Err(err("--target-miss-km", "must not be negative"));
    }
    let before = encounter_figures(conj, conj.primary, tca)?;
    if before.miss_distance_km > MAX_MISS_KM {
        return Err(err(
            "--tca",
            format!(
                "the objects come no closer than {:.1} km near {tca}: no close approach there",
                before.miss_distance_km
            ),
        ));
    }
    let s_tca = conj
        .primary
        .state_at(before.tca)
        .map_err(motion_err("--tca"))?;
    let period = period_s(&s_tca);
    let after = |orbits: f64, dv: f64| -> Result<EncounterFigures, AvoidError> {
        let burn = Burn {
            time: before.tca.add_s(-orbits * period),
            dv_ric_m_s: [0.0, dv, 0.0],
        };
        let until = before.tca.add_s(MAX_TCA_SHIFT_S + 60.0);
        let moved = Manoeuvred::new(conj.primary, burn, conj.primary_drag, until)
            .map_err(motion_err("--orbits-before"))?;
        encounter_figures(conj, &moved, before.tca)
    };
    let cells: Vec<(f64, f64)> = req
        .orbits_before
        .iter()
        .flat_map(|&o| req.dv_m_s.iter().map(move |&d| (o, d)))
        .collect();
    let rows: Vec<TradeRow> = cells
        .par_iter()
        .map(|&(o, d)| {
            let f = after(o, d)?;
            Ok(TradeRow {
                orbits_before: o,
                burn_time: before.tca.add_s(-o * period),
                dv_in_track_m_s: d,
                miss_distance_km: f.miss_distance_km,
                pc: f.pc,
                pc_max: f.pc_max,
            })
        })
        .collect::<Result<_, AvoidError>>()?;
    let smallest = req
        .orbits_before
        .par_iter()
        .map(|&o| smallest_dv(o, before.tca.add_s(-o * period), req, &after))
        .collect::<Result<_, AvoidError>>()?;
    Ok(Trade {
        before,
        trade: rows,
        smallest,
        target_pc: req.target_pc,
        target_miss_km: req.target_miss_km,
    })
}

/// For each sign, the first grid magnitude that meets the targets, then
/// bisection between it and the magnitude below (to 1 % of it); the smaller
/// of the two signs wins. Assumes that between two neighbouring grid values
/// the figures change monotonically (true for the small in-track burns this
/// is for: the in-track displacement grows linearly with Δv).
fn smallest_dv(
    orbits: f64,
    burn_time: UtcTime,
    req: &TradeRequest,
    after: &(dyn Fn(f64, f64) -> Result<EncounterFigures, AvoidError> + Sync),
) -> Result<Smallest, AvoidError> {
    let mut mags: Vec<f64> = req
        .dv_m_s
        .iter()
        .map(|d| d.abs())
        .filter(|m| *m > 0.0)
        .collect();
    mags.sort_by(f64::total_cmp);
    mags.dedup();
    let mut best: Option<(f64, EncounterFigures)> = None;
    for sign in [1.0, -1.0] {
        let mut below = 0.0;
        for &m in &mags {
            if best.is_some_and(|(b, _)| b.abs() <= m) {
                break;
            }
            let f = after(orbits, sign * m)?;
            if meets(&f, req) {
                let (mut lo, mut hi, mut hi_f) = (below, m, f);
                while hi - lo > 0.01 * hi {
                    let mid = 0.5 * (lo + hi);
                    let fm = after(orbits, sign * mid)?;
                    if meets(&fm, req) {
                        hi = mid;
                        hi_f = fm;
                    } else {
                        lo = mid;
                    }
                }
                if best.is_none_or(|(b, _)| hi < b.abs()) {
                    best = Some((sign * hi, hi_f));
                }
                break;
            }
            below = m;
        }
    }
    Ok(Smallest {
        orbits_before: orbits,
        burn_time,
        dv_in_track_m_s: best.map(|b| b.0),
        miss_distance_km: best.map(|b| b.1.miss_distance_km),
        pc: best.and_then(|b| b.1.pc),
    })
}
