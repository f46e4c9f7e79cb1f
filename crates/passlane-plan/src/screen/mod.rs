//! Close-approach screening: which pairs of objects come within a screening
//! volume of each other over a time window, when, and how close.
//!
//! # What it does
//! - Pairs: every pair within one set (a fleet, or a whole catalog all-vs-all),
//!   or every primary against every secondary (fleet vs catalog).
//! - Volume: a sphere, or a box or ellipsoid given by half-sizes in the
//!   primary's radial / in-track / cross-track (RIC) frame.
//! - Method, in stages that each only discard what cannot be an event:
//!   1. **Perigee/apogee filter** (Hoots, Crawford & Roehrich 1984): two orbits
//!      whose radius shells, padded, do not overlap never meet. Shells come
//!      from the mean elements and are padded by the volume's bounding radius
//!      plus [`ScreeningSettings::filter_margin_km`] (SGP4 short-period terms
//!      move the radius by ~10 km in LEO) plus the semi-major-axis decay the
//!      element set's mean-motion derivative implies over the window. In
//!      fleet-vs-catalog mode a catalog object outside every fleet shell is
//!      never propagated.
//!   2. **SGP4 samples and Hermite interpolation.** Each object is propagated
//!      once per sample step (60 s to half an hour, the longest power-of-two
//!      multiple of the hash step whose estimated cubic Hermite error stays
//!      under [`ScreeningSettings::interpolation_tolerance_km`]); everything
//!      before the final evaluation uses the interpolant. Time is processed in
//!      chunks so memory stays bounded whatever the window length.
//!   3. **Spatial hash per time step.** The window is cut into steps of
//!      [`ScreeningSettings::hash_step_s`]. At each step's midpoint every object
//!      is put in a cubic cell of side L = D + m + (v₁ + v₂ + a·h)·h/2, where D
//!      is the volume's bounding radius, m the interpolation margin, v₁, v₂ the
//!      two largest speeds at that instant, a a bound on acceleration and h the
//!      step. A pair closer than D at any time in the step is closer than L at
//!      the midpoint, so it sits in the same or a neighbouring cell; the 27
//!      neighbouring cells are searched.
//!   4. **Pair test and TCA.** Candidates pass a linear-motion bound, then the
//!      roots of Δr·Δv on the interpolant inside the step give the minima.
//!   5. **Final evaluation with direct SGP4**: Newton on Δr·Δv refines the TCA
//!      to well under 1 ms; miss distance, RIC and states come from SGP4 at the
//!      TCA, not from the interpolant; entry and exit of the volume are
//!      root-found with SGP4 too.
//!
//! An event is a local minimum of the distance whose relative position at TCA
//! lies inside the volume; a pair can have many over a window. Minima at the
//! very ends of the window (not local minima) are not events.
//!
//! # What it deliberately does not do
//! - No collision probability (no covariance here) and no manoeuvre planning.
//! - No file I/O and no printing: results and per-object diagnostics are values.
//! - An object whose propagation fails (decay, divergence) is reported once and
//!   screened no further from the chunk of samples where it failed; the rest go on.
//! - For a box or ellipsoid the test is made at the TCA only: a pair that grazes a
//!   corner of an elongated box away from its distance minimum is not reported.

mod geometry;
mod hermite;
mod reference;

use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};

use rayon::prelude::*;

use passlane_orbit::constants::{EARTH_RADIUS_WGS72_KM, MU_WGS72_KM3_S2};
use passlane_orbit::frames::{dot, norm, sub};
use passlane_orbit::summary::semi_major_axis_km;
use passlane_orbit::{Cursor, ElementSet, PropagationError, Propagator, StateTeme, UtcTime};

pub use geometry::{RelativeGeometry, relative_geometry, ric_components};
pub use reference::screen_brute_force;

use geometry::{ObjectId, build_event, refine_tca};
use hermite::{Sample, error_estimate_km, hermite};

/// The region around the primary that counts as "close".
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(tag = "shape", rename_all = "snake_case")]
pub enum ScreeningVolume {
    Sphere {
        radius_km: f64,
    },
    /// Half-sizes along the primary's radial, in-track and cross-track axes.
    Box {
        radial_km: f64,
        in_track_km: f64,
        cross_track_km: f64,
    },
    /// Semi-axes along the primary's radial, in-track and cross-track axes.
    Ellipsoid {
        radial_km: f64,
        in_track_km: f64,
        cross_track_km: f64,
    },
}

impl ScreeningVolume {
    /// Radius of the smallest sphere around the primary that holds the volume.
    pub fn bounding_radius_km(&self) -> f64 {
        match *self {
            ScreeningVolume::Sphere { radius_km } => radius_km,
            ScreeningVolume::Box {
                radial_km,
                in_track_km,
                cross_track_km,
            } => (radial_km * radial_km
                + in_track_km * in_track_km
                + cross_track_km * cross_track_km)
                .sqrt(),
            ScreeningVolume::Ellipsoid {
                radial_km,
                in_track_km,
                cross_track_km,
            } => radial_km.max(in_track_km).max(cross_track_km),
        }
    }

    pub(crate) fn smallest_half_size_km(&self) -> f64 {
        match *self {
            ScreeningVolume::Sphere { radius_km } => radius_km,
            ScreeningVolume::Box {
                radial_km,
                in_track_km,
                cross_track_km,
            }
            | ScreeningVolume::Ellipsoid {
                radial_km,
                in_track_km,
                cross_track_km,
            } => radial_km.min(in_track_km).min(cross_track_km),
        }
    }

    /// Normalised size of a relative position given as RIC components (km):
    /// ≤ 1 inside the volume, > 1 outside.
    pub fn measure(&self, ric_km: &[f64; 3]) -> f64 {
        let [r, i, c] = *ric_km;
        match *self {
            ScreeningVolume::Sphere { radius_km } => (r * r + i * i + c * c).sqrt() / radius_km,
            ScreeningVolume::Box {
                radial_km,
                in_track_km,
                cross_track_km,
            } => (r.abs() / radial_km)
                .max(i.abs() / in_track_km)
                .max(c.abs() / cross_track_km),
            ScreeningVolume::Ellipsoid {
                radial_km,
                in_track_km,
                cross_track_km,
            } => {
                ((r / radial_km).powi(2) + (i / in_track_km).powi(2) + (c / cross_track_km).powi(2))
                    .sqrt()
            }
        }
    }

    pub fn contains(&self, ric_km: &[f64; 3]) -> bool {
        self.measure(ric_km) <= 1.0
    }

    fn is_valid(&self) -> bool {
        let ok = |x: f64| x.is_finite() && x > 0.0;
        match *self {
            ScreeningVolume::Sphere { radius_km } => ok(radius_km),
            ScreeningVolume::Box {
                radial_km,
                in_track_km,
                cross_track_km,
            }
            | ScreeningVolume::Ellipsoid {
                radial_km,
                in_track_km,
                cross_track_km,
            } => ok(radial_km) && ok(in_track_km) && ok(cross_track_km),
        }
    }
}

/// Tuning of the screening method; the defaults suit LEO-heavy catalogs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ScreeningSettings {
    pub volume: ScreeningVolume,
    /// Time step of the spatial hash, s. Shorter steps mean smaller cells and
    /// fewer candidate pairs, longer steps fewer hash builds; 30 s balances them.
    pub hash_step_s: f64,
    /// Largest estimated Hermite interpolation error allowed when choosing an
    /// object's SGP4 sample step, km. It only widens the search margin: final
    /// figures come from direct SGP4 states.
    pub interpolation_tolerance_km: f64,
    /// Padding of the perigee/apogee filter beyond the volume, km.
    pub filter_margin_km: f64,
}

impl Default for ScreeningSettings {
    fn default() -> Self {
        ScreeningSettings {
            volume: ScreeningVolume::Sphere { radius_km: 5.0 },
            hash_step_s: 30.0,
            interpolation_tolerance_km: 0.5,
            filter_margin_km: 50.0,
        }
    }
}

/// What to screen: `primaries` against each other when `secondaries` is `None`
/// (a fleet, or a catalog all-vs-all), else every primary against every secondary.
#[derive(Debug, Clone, Copy)]
pub struct ScreeningRequest<'a> {
    pub primaries: &'a [ElementSet],
    pub secondaries: Option<&'a [ElementSet]>,
    pub start: UtcTime,
    pub end: UtcTime,
    pub settings: ScreeningSettings,
}

/// One close approach. The field names are a JSON contract.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct CloseApproach {
    pub primary: String,
    pub secondary: String,
    pub primary_catalog_number: u32,
    pub secondary_catalog_number: u32,
    /// Time of closest approach (local minimum of the distance).
    pub tca: UtcTime,
    pub miss_distance_km: f64,
    /// Components of secondary − primary in the primary's RIC frame at TCA.
    pub radial_km: f64,
    pub in_track_km: f64,
    pub cross_track_km: f64,
    pub relative_speed_km_s: f64,
    /// Angle between the two velocity vectors at TCA, degrees.
    pub approach_angle_deg: f64,
    /// When the secondary enters the volume around this TCA (clamped to the window start).
    pub volume_entry: UtcTime,
    /// When it leaves the volume again (clamped to the window end).
    pub volume_exit: UtcTime,
    /// TEME states at TCA, direct from SGP4.
    pub primary_state: StateTeme,
    pub secondary_state: StateTeme,
}

/// An object that could not be screened (fully or from some time on).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ObjectDiagnostic {
    pub name: String,
    pub catalog_number: u32,
    /// First time propagation failed, if it got started at all.
    pub time: Option<UtcTime>,
    pub message: String,
}

/// Work counters, for benchmarks and for the curious.
#[derive(Debug, Clone, Copy, Default, PartialEq, serde::Serialize)]
pub struct ScreeningStats {
    pub objects: usize,
    /// Objects the perigee/apogee filter removed before propagation.
    pub objects_filtered: usize,
    pub sgp4_samples: u64,
    /// Pairs that passed the hash and linear-motion test.
    pub candidate_pairs: u64,
    /// Minima refined with direct SGP4.
    pub refinements: u64,
}

/// The outcome of a screening.
#[derive(Debug, Clone, Default, serde::Serialize)]
pub struct ScreeningResult {
    /// Sorted by TCA.
    pub events: Vec<CloseApproach>,
    pub diagnostics: Vec<ObjectDiagnostic>,
    /// True when the caller stopped the run; `events` covers the window up to `screened_until`.
    pub cancelled: bool,
    pub screened_until: UtcTime,
    pub stats: ScreeningStats,
}

/// Runs the screening without progress reports.
pub fn screen(request: &ScreeningRequest<'_>) -> ScreeningResult {
    screen_with_progress(request, &|_| true)
}

/// Runs the screening, calling `progress(fraction_done)` between time chunks;
/// when it returns `false` the run stops and returns what it has, with
/// `cancelled` set.
pub fn screen_with_progress(
    request: &ScreeningRequest<'_>,
    progress: &dyn Fn(f64) -> bool,
) -> ScreeningResult {
    let mut result = ScreeningResult {
        screened_until: request.start,
        ..Default::default()
    };
    let settings = request.settings;
    let span_s = request.end.s_since(request.start);
    if !settings.volume.is_valid()
        || !positive(settings.hash_step_s)
        || !positive(span_s)
        || !positive(settings.interpolation_tolerance_km)
    {
        return result;
    }
    let mut objects = prepare_objects(request, &mut result.diagnostics);
    result.stats.objects = objects.len();
    if request.secondaries.is_some() {
        let before = objects.len();
        drop_unreachable_secondaries(&mut objects);
        result.stats.objects_filtered = before - objects.len();
    }
    let mut cursors: Vec<ObjectCursor<'_>> = objects
        .iter()
        .map(|o| ObjectCursor {
            cursor: o.prop.cursor(),
            samples: Vec::new(),
            valid: 0,
            failed: false,
            error: None,
        })
        .collect();

    let h = settings.hash_step_s;
    let chunk_s = h * f64::from(CHUNK_HASH_STEPS);
    let n_chunks = (span_s / chunk_s).ceil().max(1.0) as usize;
    let margin_km = objects.iter().map(|o| o.margin_km).fold(0.0, f64::max) * 2.0;
    let mut candidates: Vec<Candidate> = Vec::new();
    for c in 0..n_chunks {
        let chunk_start = request.start.add_s(c as f64 * chunk_s);
        let chunk_end = chunk_start.add_s(chunk_s).min(request.end);
        // Samples for every object over the chunk, in parallel across objects.
        cursors
            .par_iter_mut()
            .zip(objects.par_iter())
            .for_each(|(oc, o)| {
                oc.fill(o, chunk_start, chunk_end);
            });
        for (oc, o) in cursors.iter_mut().zip(objects.iter()) {
            result.stats.sgp4_samples += oc.samples.len() as u64;
            if let Some(e) = oc.error.take() {
                result.diagnostics.push(diagnostic(o, &e));
            }
        }
        let n_steps = (chunk_end.s_since(chunk_start) / h).ceil() as usize;
        let ctx = ChunkContext {
            objects: &objects,
            cursors: &cursors,
            chunk_start,
            settings: &settings,
            margin_km,
            cross: request.secondaries.is_some(),
        };
        let found: Vec<Vec<Candidate>> = (0..n_steps)
            .into_par_iter()
            .map_init(Scratch::default, |scratch, k| {
                let a = chunk_start.add_s(k as f64 * h);
                let b = a.add_s(h).min(chunk_end);
                ctx.step(a, b, scratch)
            })
            .collect();
        for f in found {
            result.stats.candidate_pairs += f.len() as u64;
            candidates.extend(f.into_iter().filter(|c| {
                c.interpolated_miss_km <= settings.volume.bounding_radius_km() + margin_km
            }));
        }
        result.screened_until = chunk_end;
        if !progress((c + 1) as f64 / n_chunks as f64) && c + 1 < n_chunks {
            result.cancelled = true;
            break;
        }
    }
    result.stats.refinements = candidates.len() as u64;
    let window = (request.start, result.screened_until);
    let refined: Vec<Result<Option<CloseApproach>, PropagationError>> = candidates
        .par_iter()
        .map(|c| {
            let (o1, o2) = (&objects[c.i], &objects[c.j]);
            let lo = c.time.add_s(-settings.hash_step_s);
            let hi = c.time.add_s(settings.hash_step_s);
            match refine_tca(&o1.prop, &o2.prop, c.time, lo, hi)? {
                Some((tca, s1, s2)) if tca > window.0 && tca < window.1 => build_event(
                    &o1.id,
                    &o1.prop,
                    &o2.id,
                    &o2.prop,
                    &settings.volume,
                    tca,
                    s1,
                    s2,
                    window,
                ),
                _ => Ok(None),
            }
        })
        .collect();
    let mut events: Vec<CloseApproach> = refined
        .into_iter()
        .filter_map(|r| r.ok().flatten())
        .collect();
    sort_and_dedup(&mut events);
    result.events = events;
    result
}

/// True for a positive number (false for NaN).
pub(crate) fn positive(x: f64) -> bool {
    x > 0.0
}

/// Sorts by TCA and drops the same minimum found twice (two neighbouring steps
/// can converge on one approach when a pair moves slowly relative to each other).
pub(crate) fn sort_and_dedup(events: &mut Vec<CloseApproach>) {
    events.sort_by(|a, b| {
        (a.primary_catalog_number, a.secondary_catalog_number)
            .cmp(&(b.primary_catalog_number, b.secondary_catalog_number))
            .then(a.tca.s_since_j2000().total_cmp(&b.tca.s_since_j2000()))
    });
    events.dedup_by(|b, a| {
        a.primary_catalog_number == b.primary_catalog_number
            && a.secondary_catalog_number == b.secondary_catalog_number
            && b.tca.s_since(a.tca).abs() < 0.01
    });
    events.sort_by(|a, b| {
        a.tca
            .s_since_j2000()
            .total_cmp(&b.tca.s_since_j2000())
            .then(
                (a.primary_catalog_number, a.secondary_catalog_number)
                    .cmp(&(b.primary_catalog_number, b.secondary_catalog_number)),
            )
    });
}

/// Hash steps per time chunk: with 30 s steps a chunk is 2 h 8 min, a multiple
/// of the longest sample step (64 hash steps), and 30,000 LEO objects need
/// about 100 MB of samples in it.
const CHUNK_HASH_STEPS: u32 = 256;
/// Longest sample step, in hash steps (a power of two dividing the chunk).
const MAX_SAMPLE_STEP_FACTOR: u32 = 64;
/// Bound on the gravitational acceleration anywhere above the surface, km/s².
const MAX_ACCELERATION_KM_S2: f64 =
    MU_WGS72_KM3_S2 / (EARTH_RADIUS_WGS72_KM * EARTH_RADIUS_WGS72_KM);

/// An object ready to screen.
pub(crate) struct Object {
    pub id: ObjectId,
    pub prop: Propagator,
    /// 0 = primary set, 1 = secondary set.
    pub group: u8,
    pub shell_min_km: f64,
    pub shell_max_km: f64,
    pub sample_step_s: f64,
    /// Position error allowance of this object's interpolant over a hash step, km.
    pub margin_km: f64,
}

/// Builds propagators, shells and sample steps; objects that cannot start SGP4
/// become diagnostics.
pub(crate) fn prepare_objects(
    request: &ScreeningRequest<'_>,
    diagnostics: &mut Vec<ObjectDiagnostic>,
) -> Vec<Object> {
    let settings = &request.settings;
    let groups = [Some(request.primaries), request.secondaries];
    let mut out = Vec::new();
    for (g, sets) in groups.iter().enumerate() {
        let Some(sets) = sets else { continue };
        for set in sets.iter() {
            let id = ObjectId {
                name: set.name.clone(),
                catalog_number: set.catalog_number,
            };
            let prop = match Propagator::new(set) {
                Ok(p) => p,
                Err(e) => {
                    diagnostics.push(ObjectDiagnostic {
                        name: id.name,
                        catalog_number: id.catalog_number,
                        time: None,
                        message: e.to_string(),
                    });
                    continue;
                }
            };
            let (shell_min_km, shell_max_km) =
                padded_shell_km(set, request.start, request.end, settings);
            let (sample_step_s, margin_km) = sample_step(set, settings);
            out.push(Object {
                id,
                prop,
                group: g as u8,
                shell_min_km,
                shell_max_km,
                sample_step_s,
                margin_km,
            });
        }
    }
    out
}

/// Perigee and apogee radii from the mean elements, padded (see the module docs).
pub(crate) fn padded_shell_km(
    set: &ElementSet,
    start: UtcTime,
    end: UtcTime,
    settings: &ScreeningSettings,
) -> (f64, f64) {
    let a = semi_major_axis_km(set.mean_motion_rev_day, MU_WGS72_KM3_S2);
    let e = set.eccentricity;
    // Mean-motion change over the window from the TLE's ṅ/2 term: Δn = 2·(ṅ/2)·Δt,
    // and Δa/a = −(2/3)·Δn/n; the larger distance from epoch is the worst case.
    let days = start
        .s_since(set.epoch)
        .abs()
        .max(end.s_since(set.epoch).abs())
        / 86_400.0;
    let dn = 2.0 * set.mean_motion_dot_rev_day2.abs() * days;
    let decay_km = 2.0 / 3.0 * a * dn / set.mean_motion_rev_day;
    let pad = settings.volume.bounding_radius_km() + settings.filter_margin_km + decay_km;
    (a * (1.0 - e) - pad, a * (1.0 + e) + pad)
}

/// The object's SGP4 sample step (a power-of-two multiple of the hash step,
/// at most 64 of them) and its position error allowance, km.
fn sample_step(set: &ElementSet, settings: &ScreeningSettings) -> (f64, f64) {
    let a = semi_major_axis_km(set.mean_motion_rev_day, MU_WGS72_KM3_S2);
    let rp = a * (1.0 - set.eccentricity).max(0.0);
    let vp = (MU_WGS72_KM3_S2 * (2.0 / rp - 1.0 / a)).max(0.0).sqrt();
    // Fastest angular rate is at perigee; 1.5× on the rate (5× on the error)
    // covers eccentric orbits, where r⁗ exceeds ω⁴r near perigee.
    let rate = 1.5 * vp / rp;
    let h = settings.hash_step_s;
    let mut step = h;
    for k in 1..=MAX_SAMPLE_STEP_FACTOR.trailing_zeros() {
        let next = h * f64::from(1u32 << k);
        if error_estimate_km(next, rate, rp) > settings.interpolation_tolerance_km {
            break;
        }
        step = next;
    }
    let pos_err = error_estimate_km(step, rate, rp).max(1e-4);
    // The interpolant's velocity error is about 9·ε/step; over half a hash step
    // it adds that much again to the position the linear test extrapolates.
    let vel_err = 10.0 * pos_err / step;
    (step, pos_err + vel_err * h / 2.0)
}

/// How one object is sampled: its SGP4 sample step, s, and the position error
/// allowance (interpolant position error plus velocity error over half a hash
/// step), km, that widens the search.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct InterpolationPlan {
    pub sample_step_s: f64,
    pub margin_km: f64,
}

/// The sample step and error allowance the screening uses for `set`.
pub fn interpolation_plan(set: &ElementSet, settings: &ScreeningSettings) -> InterpolationPlan {
    let (sample_step_s, margin_km) = sample_step(set, settings);
    InterpolationPlan {
        sample_step_s,
        margin_km,
    }
}

/// Cubic Hermite interpolation between two states (position and velocity at
/// both ends) at time `t`, which should lie between them. The screening uses
/// this between SGP4 samples; it is public so that its accuracy can be checked.
pub fn hermite_state(a: &StateTeme, b: &StateTeme, t: UtcTime) -> StateTeme {
    let step_s = b.time.s_since(a.time);
    let sa = Sample {
        pos_km: a.position_km,
        vel_km_s: a.velocity_km_s,
    };
    let sb = Sample {
        pos_km: b.position_km,
        vel_km_s: b.velocity_km_s,
    };
    let s = hermite(&sa, &sb, step_s, t.s_since(a.time) / step_s);
    StateTeme {
        time: t,
        position_km: s.pos_km,
        velocity_km_s: s.vel_km_s,
    }
}

/// Fleet-vs-catalog: keep catalog objects whose shell overlaps some fleet shell.
fn drop_unreachable_secondaries(objects: &mut Vec<Object>) {
    let mut shells: Vec<(f64, f64)> = objects
        .iter()
        .filter(|o| o.group == 0)
        .map(|o| (o.shell_min_km, o.shell_max_km))
        .collect();
    shells.sort_by(|a, b| a.0.total_cmp(&b.0));
    // Prefix maximum of shell tops, so one binary search answers "does any
    // primary shell starting below my top reach up to my bottom?".
    let mut prefix_max = Vec::with_capacity(shells.len());
    let mut m = f64::NEG_INFINITY;
    for s in &shells {
        m = m.max(s.1);
        prefix_max.push(m);
    }
    objects.retain(|o| {
        if o.group == 0 {
            return true;
        }
        let n = shells.partition_point(|s| s.0 <= o.shell_max_km);
        n > 0 && prefix_max[n - 1] >= o.shell_min_km
    });
}

fn diagnostic(o: &Object, e: &PropagationError) -> ObjectDiagnostic {
    let time = match *e {
        PropagationError::BadElements { .. } => None,
        PropagationError::Diverged { time, .. } | PropagationError::Decayed { time, .. } => {
            Some(time)
        }
    };
    ObjectDiagnostic {
        name: o.id.name.clone(),
        catalog_number: o.id.catalog_number,
        time,
        message: e.to_string(),
    }
}

/// One object's samples over the current chunk.
struct ObjectCursor<'a> {
    cursor: Cursor<'a>,
    samples: Vec<Sample>,
    /// Samples before the first failure.
    valid: usize,
    failed: bool,
    error: Option<PropagationError>,
}

impl ObjectCursor<'_> {
    fn fill(&mut self, o: &Object, chunk_start: UtcTime, chunk_end: UtcTime) {
        self.samples.clear();
        self.valid = 0;
        if self.failed {
            return;
        }
        let n = (chunk_end.s_since(chunk_start) / o.sample_step_s - 1e-9)
            .ceil()
            .max(1.0) as usize
            + 1;
        for m in 0..n {
            match self
                .cursor
                .state_at(chunk_start.add_s(m as f64 * o.sample_step_s))
            {
                Ok(s) => self.samples.push(Sample {
                    pos_km: s.position_km,
                    vel_km_s: s.velocity_km_s,
                }),
                Err(e) => {
                    self.failed = true;
                    self.error = Some(e);
                    break;
                }
            }
        }
        self.valid = self.samples.len();
    }

    /// Interpolated state `dt_s` after the chunk start, if covered by valid samples.
    #[inline]
    fn at(&self, o: &Object, dt_s: f64) -> Option<Sample> {
        let x = dt_s / o.sample_step_s;
        let m = (x.floor().max(0.0) as usize).min(self.valid.saturating_sub(2));
        if m + 1 >= self.valid {
            return None;
        }
        Some(hermite(
            &self.samples[m],
            &self.samples[m + 1],
            o.sample_step_s,
            x - m as f64,
        ))
    }
}

/// A local minimum of the interpolated distance, to be refined with SGP4.
#[derive(Debug, Clone, Copy)]
struct Candidate {
    i: usize,
    j: usize,
    time: UtcTime,
    interpolated_miss_km: f64,
}

#[derive(Default)]
struct Scratch {
    states: Vec<Option<Sample>>,
    keys: Vec<(u64, u32)>,
    cells: HashMap<u64, (u32, u32), BuildHasherDefault<CellHasher>>,
    cell_lists: HashMap<u64, Vec<u32>, BuildHasherDefault<CellHasher>>,
}

/// A fast multiplicative hasher for packed cell keys (not for untrusted input).
#[derive(Default)]
struct CellHasher(u64);

impl Hasher for CellHasher {
    fn finish(&self) -> u64 {
        self.0
    }
    fn write(&mut self, bytes: &[u8]) {
        for &b in bytes {
            self.write_u64(u64::from(b));
        }
    }
    fn write_u64(&mut self, x: u64) {
        let y = (self.0 ^ x).wrapping_mul(0x9E37_79B9_7F4A_7C15);
        self.0 = y ^ (y >> 29);
    }
}

const KEY_BITS: u32 = 21;
const KEY_OFFSET: i64 = 1 << (KEY_BITS - 1);
const KEY_MASK: u64 = (1 << KEY_BITS) - 1;

fn cell_of(p: &[f64; 3], inv_cell_km: f64) -> [i64; 3] {
    let c = |x: f64| ((x * inv_cell_km).floor() as i64).clamp(-KEY_OFFSET + 2, KEY_OFFSET - 2);
    [c(p[0]), c(p[1]), c(p[2])]
}

fn key_of(c: [i64; 3]) -> u64 {
    let k = |x: i64| ((x + KEY_OFFSET) as u64) & KEY_MASK;
    (k(c[0]) << (2 * KEY_BITS)) | (k(c[1]) << KEY_BITS) | k(c[2])
}

/// The 13 neighbour offsets "after" a cell (plus the cell itself, handled
/// apart), so that every unordered pair of cells is visited once.
fn forward_offsets() -> impl Iterator<Item = [i64; 3]> {
    (-1..=1)
        .flat_map(|dx| (-1..=1).flat_map(move |dy| (-1..=1).map(move |dz| [dx, dy, dz])))
        .filter(|d| (d[0], d[1], d[2]) > (0, 0, 0))
}

struct ChunkContext<'a, 'b> {
    objects: &'a [Object],
    cursors: &'a [ObjectCursor<'b>],
    chunk_start: UtcTime,
    settings: &'a ScreeningSettings,
    margin_km: f64,
    cross: bool,
}

impl ChunkContext<'_, '_> {
    /// All candidate minima of the hash step [a, b].
    fn step(&self, a: UtcTime, b: UtcTime, scratch: &mut Scratch) -> Vec<Candidate> {
        let half_s = 0.5 * b.s_since(a);
        let mid_dt = a.s_since(self.chunk_start) + half_s;
        scratch.states.clear();
        let (mut v_top1, mut v_top2) = ([0.0f64; 2], [0.0f64; 2]);
        for (o, oc) in self.objects.iter().zip(self.cursors) {
            let s = oc.at(o, mid_dt);
            if let Some(s) = &s {
                let v = norm(&s.vel_km_s);
                let g = usize::from(self.cross && o.group == 1);
                if v > v_top1[g] {
                    v_top2[g] = v_top1[g];
                    v_top1[g] = v;
                } else if v > v_top2[g] {
                    v_top2[g] = v;
                }
            }
            scratch.states.push(s);
        }
        // Fastest possible closing speed of any pair over the step.
        let v_pair = if self.cross {
            v_top1[0] + v_top1[1]
        } else {
            v_top1[0] + v_top2[0]
        };
        let a_pair = 2.0 * MAX_ACCELERATION_KM_S2;
        let d = self.settings.volume.bounding_radius_km() + self.margin_km;
        let cell_km = d + (v_pair + a_pair * half_s) * half_s + 1e-3;
        let inv = 1.0 / cell_km;
        // Curvature allowance of the linear test: |Δa|·τ²/2 with τ ≤ half a step.
        let reach_km = d + 0.5 * a_pair * half_s * half_s;
        let mut out = Vec::new();
        let states = &scratch.states;
        if self.cross {
            let lists = &mut scratch.cell_lists;
            lists.values_mut().for_each(Vec::clear);
            for (i, o) in self.objects.iter().enumerate() {
                let (0, Some(s)) = (o.group, &states[i]) else {
                    continue;
                };
                let c = cell_of(&s.pos_km, inv);
                for dx in -1..=1 {
                    for dy in -1..=1 {
                        for dz in -1..=1 {
                            let k = key_of([c[0] + dx, c[1] + dy, c[2] + dz]);
                            lists.entry(k).or_default().push(i as u32);
                        }
                    }
                }
            }
            for (j, o) in self.objects.iter().enumerate() {
                let (1, Some(s)) = (o.group, &states[j]) else {
                    continue;
                };
                if let Some(list) = lists.get(&key_of(cell_of(&s.pos_km, inv))) {
                    for &i in list {
                        self.pair(i as usize, j, a, b, reach_km, states, &mut out);
                    }
                }
            }
        } else {
            let keys = &mut scratch.keys;
            keys.clear();
            for (i, s) in states.iter().enumerate() {
                if let Some(s) = s {
                    keys.push((key_of(cell_of(&s.pos_km, inv)), i as u32));
                }
            }
            keys.sort_unstable();
            // Runs of equal keys are the occupied cells.
            let cells = &mut scratch.cells;
            cells.clear();
            let mut runs = Vec::new();
            let mut start = 0;
            while start < keys.len() {
                let mut end = start + 1;
                while end < keys.len() && keys[end].0 == keys[start].0 {
                    end += 1;
                }
                cells.insert(keys[start].0, (start as u32, end as u32));
                runs.push((start, end));
                start = end;
            }
            let offsets: Vec<[i64; 3]> = forward_offsets().collect();
            for &(s0, e0) in &runs {
                let here = keys[s0].1 as usize;
                let Some(sh) = &states[here] else { continue };
                let cell = cell_of(&sh.pos_km, inv);
                for x in s0..e0 {
                    for y in x + 1..e0 {
                        self.pair(
                            keys[x].1 as usize,
                            keys[y].1 as usize,
                            a,
                            b,
                            reach_km,
                            states,
                            &mut out,
                        );
                    }
                }
                for off in &offsets {
                    let nk = key_of([cell[0] + off[0], cell[1] + off[1], cell[2] + off[2]]);
                    if let Some(&(s1, e1)) = cells.get(&nk) {
                        for x in s0..e0 {
                            for y in s1 as usize..e1 as usize {
                                self.pair(
                                    keys[x].1 as usize,
                                    keys[y].1 as usize,
                                    a,
                                    b,
                                    reach_km,
                                    states,
                                    &mut out,
                                );
                            }
                        }
                    }
                }
            }
        }
        out
    }

    /// Tests one pair over the step [a, b]: the linear-motion bound at the
    /// midpoint, then the roots of Δr·Δv on the interpolant.
    #[allow(clippy::too_many_arguments)]
    fn pair(
        &self,
        i: usize,
        j: usize,
        a: UtcTime,
        b: UtcTime,
        reach_km: f64,
        states: &[Option<Sample>],
        out: &mut Vec<Candidate>,
    ) {
        // Within one set the earlier object in the input is the primary.
        let (i, j) = if self.cross || i < j { (i, j) } else { (j, i) };
        let (oi, oj) = (&self.objects[i], &self.objects[j]);
        if oi.id.catalog_number == oj.id.catalog_number
            || oi.shell_max_km < oj.shell_min_km
            || oj.shell_max_km < oi.shell_min_km
        {
            return;
        }
        let (Some(si), Some(sj)) = (&states[i], &states[j]) else {
            return;
        };
        let half_s = 0.5 * b.s_since(a);
        let dr = sub(&sj.pos_km, &si.pos_km);
        let dv = sub(&sj.vel_km_s, &si.vel_km_s);
        let vv = dot(&dv, &dv);
        let tau = if vv > 0.0 {
            (-dot(&dr, &dv) / vv).clamp(-half_s, half_s)
        } else {
            0.0
        };
        let closest = [
            dr[0] + dv[0] * tau,
            dr[1] + dv[1] * tau,
            dr[2] + dv[2] * tau,
        ];
        if norm(&closest) > reach_km {
            return;
        }
        // Sign changes of f = Δr·Δv from − to + are distance minima. Four
        // sub-intervals: a minimum and a maximum of the distance are at least
        // a good fraction of an orbit apart, never inside one of them.
        let (ci, cj) = (&self.cursors[i], &self.cursors[j]);
        let t0 = a.s_since(self.chunk_start);
        let f_at = |dt: f64| -> Option<(f64, f64)> {
            let p = ci.at(oi, dt)?;
            let q = cj.at(oj, dt)?;
            let dr = sub(&q.pos_km, &p.pos_km);
            let dv = sub(&q.vel_km_s, &p.vel_km_s);
            Some((dot(&dr, &dv), norm(&dr)))
        };
        const SUB: usize = 4;
        let dt_sub = 2.0 * half_s / SUB as f64;
        let Some((mut f_lo, _)) = f_at(t0) else {
            return;
        };
        for k in 0..SUB {
            let lo = t0 + k as f64 * dt_sub;
            let hi = lo + dt_sub;
            let Some((f_hi, _)) = f_at(hi) else { return };
            if f_lo < 0.0 && f_hi >= 0.0 {
                let (mut x0, mut x1) = (lo, hi);
                let (mut g0, mut g1) = (f_lo, f_hi);
                // Regula falsi with bisection safeguard, to 0.1 ms on the interpolant.
                for _ in 0..60 {
                    if x1 - x0 < 1e-4 {
                        break;
                    }
                    let mut x = x0 - g0 * (x1 - x0) / (g1 - g0);
                    if !(x > x0 + 0.1 * (x1 - x0) && x < x1 - 0.1 * (x1 - x0)) {
                        x = 0.5 * (x0 + x1);
                    }
                    let Some((g, _)) = f_at(x) else { return };
                    if g < 0.0 {
                        x0 = x;
                        g0 = g;
                    } else {
                        x1 = x;
                        g1 = g;
                    }
                }
                let x = 0.5 * (x0 + x1);
                if let Some((_, dist)) = f_at(x) {
                    out.push(Candidate {
                        i,
                        j,
                        time: self.chunk_start.add_s(x),
                        interpolated_miss_km: dist,
                    });
                }
            }
            f_lo = f_hi;
        }
    }
}
