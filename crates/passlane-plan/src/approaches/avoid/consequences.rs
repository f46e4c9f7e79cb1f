//! What else a burn changes: close approaches it creates or worsens over the
//! days after it, and how it moves the next contact windows.
//!
//! The manoeuvred trajectory is sampled from the burn to the horizon and
//! given to the planners as an operator ephemeris of the primary (Lagrange
//! interpolation of degree 9 on 30 s nodes, the OEM writer's choice, which
//! reproduces SGP4 to well under a millimetre at that spacing; before the
//! burn the primary's element set is the stated fallback, which is exactly
//! the unmanoeuvred trajectory). The screening and the pass finder then run
//! unchanged, once for the usual trajectory and once for the manoeuvred one,
//! and the two results are compared.

use passlane_orbit::elements::SourceRef;
use passlane_orbit::ephemeris::{
    Ephemeris, EphemerisInput, Interpolation, OemFormat, Segment, SourceFrame, attach_to_fleet,
};
use passlane_orbit::numerical::Drag;
use passlane_orbit::{ElementSet, Propagator, UtcTime};
use serde::Serialize;

use super::motion::{Burn, Manoeuvred, Motion, MotionError};
use crate::conjunction::EventRisk;
use crate::job::{ScreeningJob, screen_and_assess};
use crate::passes::{Pass, PassOptions, find_passes};
use crate::progress::{Progress, Stage};
use crate::scenario::Scenario;
use crate::screen::{CloseApproach, ScreeningVolume};
use crate::station::Station;

/// Node spacing of the sampled manoeuvred trajectory, s.
const NODE_STEP_S: f64 = 30.0;
/// Two events of the same pair are the same approach when their TCAs are
/// this close (a burn of up to a metre per second moves a TCA by seconds to
/// a minute over a week).
const SAME_EVENT_S: f64 = 300.0;

/// The primary as a fleet entry moving by `moved` from `from` to `to` (its
/// element set before and after, stated as the fallback).
pub fn manoeuvred_entry(
    primary: &ElementSet,
    moved: &Manoeuvred<'_>,
    from: UtcTime,
    to: UtcTime,
) -> Result<ElementSet, MotionError> {
    motion_entry(
        &primary.name,
        primary.catalog_number,
        Some(primary),
        moved,
        from,
        to,
    )
}

/// Any [`Motion`] as a fleet or catalog entry over `from..to`, sampled as an
/// operator ephemeris; `fallback` (an element set of the same object) is used
/// outside that span.
pub fn motion_entry(
    name: &str,
    catalog_number: u32,
    fallback: Option<&ElementSet>,
    moved: &dyn Motion,
    from: UtcTime,
    to: UtcTime,
) -> Result<ElementSet, MotionError> {
    let n = (to.s_since(from) / NODE_STEP_S).ceil().max(10.0) as usize;
    let mut times_s = Vec::with_capacity(n + 1);
    let mut states = Vec::with_capacity(n + 1);
    for k in 0..=n {
        let t = from.add_s((k as f64 * NODE_STEP_S).min(to.s_since(from).max(0.0)));
        let s = moved.state_at(t)?;
        times_s.push(t.s_since(from));
        states.push([
            s.position_km[0],
            s.position_km[1],
            s.position_km[2],
            s.velocity_km_s[0],
            s.velocity_km_s[1],
            s.velocity_km_s[2],
        ]);
    }
    times_s.dedup_by(|a, b| a == b);
    states.truncate(times_s.len());
    let source = SourceRef {
        file: format!("{name} (computed trajectory)"),
        line: 0,
    };
    let ephemeris = Ephemeris {
        source: source.clone(),
        format: OemFormat::Kvn,
        version: "3.0".into(),
        originator: "PASSLANE".into(),
        creation_date: UtcTime::now(),
        message_id: None,
        segments: vec![Segment {
            line: 0,
            object_name: name.to_string(),
            object_id: catalog_number.to_string(),
            ref_frame: SourceFrame::Teme,
            ref_frame_text: "TEME".into(),
            interpolation: Interpolation::Lagrange { degree: 9 },
            interpolation_defaulted: false,
            usable_start: from,
            usable_stop: to,
            times_s,
            t0: from,
            states,
            covariances: Vec::new(),
        }],
    };
    let mut fleet: Vec<ElementSet> = fallback.into_iter().cloned().collect();
    // The only diagnostic possible here is the fallback's, which the module
    // docs state once for all.
    let _fallback_note = attach_to_fleet(
        &mut fleet,
        vec![EphemerisInput {
            ephemeris,
            catalog_number: Some(catalog_number),
        }],
    );
    fleet
        .pop()
        .filter(|s| s.ephemeris.is_some())
        .ok_or(MotionError::OutsideSpan { time: from })
}

/// A close approach the burn creates, or makes worse.
#[derive(Debug, Clone, Serialize)]
pub struct NewEvent {
    /// `created` (none of this pair near this time before the burn) or
    /// `worsened` (closer, or more probable, than before).
    pub change: &'static str,
    pub event: CloseApproach,
    #[serde(skip)]
    pub risk: Result<EventRisk, String>,
    /// Before the burn, when the pair already met near this time.
    pub before_miss_distance_km: Option<f64>,
    pub before_pc: Option<f64>,
}

/// How a contact window moved.
#[derive(Debug, Clone, Serialize)]
pub struct ContactShift {
    pub station: String,
    /// Before and after the burn; `None` when the pass is gone or new.
    #[serde(serialize_with = "opt_us")]
    pub aos_before: Option<UtcTime>,
    #[serde(serialize_with = "opt_us")]
    pub aos_after: Option<UtcTime>,
    pub aos_shift_s: Option<f64>,
    pub los_shift_s: Option<f64>,
    pub max_elevation_before_deg: Option<f64>,
    pub max_elevation_after_deg: Option<f64>,
}

fn opt_us<S: serde::Serializer>(t: &Option<UtcTime>, s: S) -> Result<S::Ok, S::Error> {
    match t {
        Some(t) => passlane_orbit::time::iso_us(t, s),
        None => s.serialize_none(),
    }
}

/// What the consequences are computed over.
pub struct ConsequenceRequest<'a> {
    pub primary: &'a ElementSet,
    /// Everything the primary may meet: the catalog and the rest of the fleet.
    pub others: &'a [ElementSet],
    pub scenario: &'a Scenario,
    pub volume: ScreeningVolume,
    pub from: UtcTime,
    pub to: UtcTime,
    /// The encounter being avoided (secondary, TCA): reported as before and
    /// after, not as a new event.
    pub avoided: Option<(u32, UtcTime)>,
    pub stations: &'a [Station],
    /// Contacts compared up to this time.
    pub contacts_until: UtcTime,
}

/// What else a burn changes, as the shells ask it: the manoeuvred trajectory
/// (the primary's own motion plus the burn's numerical effect, with the
/// spacecraft's `drag`) from the burn to `req.to`, sampled as an ephemeris
/// entry ([`manoeuvred_entry`]), then [`consequences`].
pub fn burn_consequences(
    req: &ConsequenceRequest<'_>,
    burn: Burn,
    drag: Option<Drag>,
    progress: &dyn Progress,
) -> Result<(Vec<NewEvent>, Vec<ContactShift>), MotionError> {
    let prop = Propagator::new(req.primary).map_err(MotionError::Propagation)?;
    let moved = Manoeuvred::new(&prop, burn, drag, req.to)?;
    let entry = manoeuvred_entry(req.primary, &moved, burn.time, req.to)?;
    Ok(consequences(req, &entry, progress))
}

/// Close approaches the burn creates or worsens, and the shifts of the
/// contact windows; the screening takes most of the progress.
pub fn consequences(
    req: &ConsequenceRequest<'_>,
    moved_entry: &ElementSet,
    progress: &dyn Progress,
) -> (Vec<NewEvent>, Vec<ContactShift>) {
    fn job<'a>(req: &'a ConsequenceRequest<'a>, fleet: &'a [ElementSet]) -> ScreeningJob<'a> {
        ScreeningJob {
            fleet,
            catalog: req.others,
            all_vs_all: false,
            start: req.from,
            end: req.to,
            volume: req.volume,
            scenario: req.scenario,
            hard_body_radius_override_m: None,
        }
    }
    let before_fleet = [req.primary.clone()];
    let after_fleet = [moved_entry.clone()];
    let before = screen_and_assess(&job(req, &before_fleet), &Stage::new(progress, 0.0, 0.45));
    let after = screen_and_assess(&job(req, &after_fleet), &Stage::new(progress, 0.45, 0.45));
    let mut new_events = Vec::new();
    for (e, risk) in after.result.events.iter().zip(&after.risks) {
        let other = if e.primary_catalog_number == req.primary.catalog_number {
            e.secondary_catalog_number
        } else {
            e.primary_catalog_number
        };
        if req
            .avoided
            .is_some_and(|(s, t)| s == other && e.tca.s_since(t).abs() < SAME_EVENT_S)
        {
            continue;
        }
        let earlier = before
            .result
            .events
            .iter()
            .zip(&before.risks)
            .filter(|(b, _)| {
                (b.primary_catalog_number, b.secondary_catalog_number)
                    == (e.primary_catalog_number, e.secondary_catalog_number)
                    && b.tca.s_since(e.tca).abs() < SAME_EVENT_S
            })
            .min_by(|a, b| {
                a.0.tca
                    .s_since(e.tca)
                    .abs()
                    .total_cmp(&b.0.tca.s_since(e.tca).abs())
            });
        let pc_after = risk.as_ref().ok().map(|r| r.pc);
        let (change, before_miss, before_pc) = match earlier {
            None => ("created", None, None),
            Some((b, br)) => {
                let pc_before = br.as_ref().ok().map(|r| r.pc);
                let closer = e.miss_distance_km < b.miss_distance_km;
                let likelier = matches!((pc_after, pc_before), (Some(a), Some(p)) if a > p);
                if !(closer || likelier) {
                    continue;
                }
                ("worsened", Some(b.miss_distance_km), pc_before)
            }
        };
        new_events.push(NewEvent {
            change,
            event: e.clone(),
            risk: risk.clone(),
            before_miss_distance_km: before_miss,
            before_pc,
        });
    }
    let options = PassOptions {
        earth_orientation: req.scenario.earth_orientation,
        ..PassOptions::new(req.from, req.contacts_until)
    };
    let passes_before = find_passes(
        std::slice::from_ref(req.primary),
        req.stations,
        &options,
        &Stage::new(progress, 0.9, 0.05),
    );
    let passes_after = find_passes(
        std::slice::from_ref(moved_entry),
        req.stations,
        &options,
        &Stage::new(progress, 0.95, 0.05),
    );
    let shifts = pair_passes(&passes_before.passes, &passes_after.passes);
    (new_events, shifts)
}

/// Each pass before the burn with the pass after it at the same station
/// whose AOS is nearest (within 10 minutes), and the passes left over.
fn pair_passes(before: &[Pass], after: &[Pass]) -> Vec<ContactShift> {
    let mut used = vec![false; after.len()];
    let mut out = Vec::new();
    for b in before {
        let best = after
            .iter()
            .enumerate()
            .filter(|(i, a)| {
                !used[*i]
                    && a.station_index == b.station_index
                    && a.aos.s_since(b.aos).abs() < 600.0
            })
            .min_by(|x, y| {
                x.1.aos
                    .s_since(b.aos)
                    .abs()
                    .total_cmp(&y.1.aos.s_since(b.aos).abs())
            })
            .map(|(i, _)| i);
        let a = best.map(|i| {
            used[i] = true;
            &after[i]
        });
        out.push(ContactShift {
            station: b.station.clone(),
            aos_before: Some(b.aos),
            aos_after: a.map(|a| a.aos),
            aos_shift_s: a.map(|a| a.aos.s_since(b.aos)),
            los_shift_s: a.map(|a| a.los.s_since(b.los)),
            max_elevation_before_deg: Some(b.max_elevation_deg),
            max_elevation_after_deg: a.map(|a| a.max_elevation_deg),
        });
    }
    for (i, a) in after.iter().enumerate() {
        if !used[i] {
            out.push(ContactShift {
                station: a.station.clone(),
                aos_before: None,
                aos_after: Some(a.aos),
                aos_shift_s: None,
                los_shift_s: None,
                max_elevation_before_deg: None,
                max_elevation_after_deg: Some(a.max_elevation_deg),
            });
        }
    }
    out.sort_by(|x, y| {
        let t = |c: &ContactShift| {
            c.aos_before
                .or(c.aos_after)
                .map_or(0.0, |t| t.s_since_j2000())
        };
        t(x).total_cmp(&t(y))
    });
    out
}
