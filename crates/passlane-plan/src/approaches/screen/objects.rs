//! The objects of one screening: propagators, padded radius shells and SGP4
//! sample steps; the perigee/apogee filter of fleet-vs-catalog runs; and the
//! per-chunk SGP4 samples of each object.

use passlane_orbit::constants::{EARTH_RADIUS_WGS72_KM, MU_WGS72_KM3_S2};
use passlane_orbit::frames::{cross, dot, norm, sub};
use passlane_orbit::summary::semi_major_axis_km;
use passlane_orbit::{Cursor, ElementSet, PropagationError, Propagator, UtcTime};

use super::MAX_ACCELERATION_KM_S2;
use super::geometry::ObjectId;
use super::grid::linear_closest_km;
use super::hermite::{Sample, error_estimate_km};
use super::predict::{
    ChunkPlane, FleetMidpoints, MeanModel, PREDICTION_ALLOWANCE_KM, PREDICTION_CHECK_KM,
    PREDICTION_MAX_AGE_DAYS, StepTrack, wrap_pi,
};
use super::{MAX_SAMPLE_STEP_FACTOR, ObjectDiagnostic, ScreeningRequest, ScreeningSettings};

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
    /// The mean-element model of a catalog object within its reach
    /// ([`super::predict`]); used when the fleet is small enough.
    pub model: Option<MeanModel>,
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
                model: if g == 1 { MeanModel::new(set) } else { None },
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
pub(super) fn sample_step(set: &ElementSet, settings: &ScreeningSettings) -> (f64, f64) {
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

/// Fleet-vs-catalog: keep catalog objects whose shell overlaps some fleet shell.
pub(super) fn drop_unreachable_secondaries(objects: &mut Vec<Object>) {
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

pub(crate) fn diagnostic(o: &Object, e: &PropagationError) -> ObjectDiagnostic {
    let time = e.time();
    ObjectDiagnostic {
        name: o.id.name.clone(),
        catalog_number: o.id.catalog_number,
        time,
        message: e.to_string(),
    }
}

/// Length of one activity slot of a chunk, in hash steps (16 × 30 s = 8 min
/// by default): a catalog object on an eccentric orbit is sampled only in
/// the slots where it can be inside the fleet's radius band. Chosen, not
/// tuned: short enough that a 12-hour orbit's or a transfer stage's pass
/// through LEO (10–20 minutes) takes two or three slots, long enough that the
/// one SGP4 state per slot costs little; it divides the chunk (256 hash
/// steps) and every sample step up to 16 hash steps.
pub(super) const SLOT_HASH_STEPS: u32 = 16;

/// The fleet's radius band for the radial time windows: the highest top of
/// the fleet's padded shells plus a 10 km allowance for the interpolants
/// (fleet-vs-catalog runs only), km.
pub(super) fn fleet_band_top_km(objects: &[Object]) -> Option<f64> {
    objects
        .iter()
        .filter(|o| o.group == 0)
        .map(|o| o.shell_max_km)
        .reduce(f64::max)
        .map(|top| top + 10.0)
}

/// A lower bound on the time (s) an object at radius `r0_km` with specific
/// orbital energy at most `energy_max` (km²/s²) and angular momentum at least
/// `h_min` (km²/s) needs to come down to `r1_km` < `r0_km`. Its radial speed
/// obeys ṙ² = 2ε + 2μ/r − h²/r² ≤ g(r) = 2ε_max + 2μ/r − h_min²/r², so on
/// every sub-interval of [r1, r0] the time is at least its length over the
/// square root of g's largest value there (g peaks at r = h²/μ). Where g < 0
/// everywhere on a sub-interval the radius is out of reach: infinite time.
pub(super) fn fall_time_lower_bound_s(r0_km: f64, r1_km: f64, energy_max: f64, h_min: f64) -> f64 {
    if r0_km <= r1_km {
        return 0.0;
    }
    let mu = MU_WGS72_KM3_S2;
    let g = |r: f64| 2.0 * energy_max + 2.0 * mu / r - h_min * h_min / (r * r);
    let r_peak = h_min * h_min / mu;
    const N: usize = 32;
    let dr = (r0_km - r1_km) / N as f64;
    let mut t = 0.0;
    for k in 0..N {
        let (a, b) = (r1_km + k as f64 * dr, r1_km + (k + 1) as f64 * dr);
        let g_max = g(r_peak.clamp(a, b)).max(g(a)).max(g(b));
        if g_max <= 0.0 {
            return f64::INFINITY;
        }
        t += dr / g_max.sqrt();
    }
    t
}

/// Whether an object whose SGP4 state is (r, v) can come down to
/// `band_top_km` within `horizon_s`. The energy and angular momentum of the
/// state are widened for what SGP4 adds to two-body motion over a slot: the
/// J2 potential at the lowest radius in question (three times its size) plus
/// 1 % of the energy, and 2 % less angular momentum (J2 short-period terms
/// move both by ~0.1 %; drag only lowers the energy).
fn can_reach_band(
    pos_km: &[f64; 3],
    vel_km_s: &[f64; 3],
    band_top_km: f64,
    horizon_s: f64,
) -> bool {
    let r = norm(pos_km);
    if r <= band_top_km {
        return true;
    }
    let mu = MU_WGS72_KM3_S2;
    let v2 = vel_km_s.iter().map(|x| x * x).sum::<f64>();
    let energy = 0.5 * v2 - mu / r;
    let h = norm(&cross(pos_km, vel_km_s));
    let j2_km2_s2 = 3.0 * mu * J2 * EARTH_RADIUS_WGS72_KM.powi(2) / band_top_km.powi(3);
    let energy_max = energy + j2_km2_s2 + 0.01 * energy.abs();
    fall_time_lower_bound_s(r, band_top_km, energy_max, 0.98 * h) < horizon_s
}

/// J2 of WGS-72 (the SGP4 constants).
const J2: f64 = 0.001_082_616;

/// One object's samples over the current chunk.
pub(super) struct ObjectCursor<'a> {
    pub(super) cursor: Cursor<'a>,
    /// Samples of the chunk; in the slots the object skips, placeholders.
    pub(super) samples: Vec<Sample>,
    /// Samples before the first failure.
    pub(super) valid: usize,
    /// SGP4 samples actually computed in the chunk.
    pub(super) computed: usize,
    /// Activity slots of the chunk (bit k: slot k sampled); all ones for an
    /// object sampled throughout.
    pub(super) mask: u32,
    /// Samples per activity slot (0: the object is sampled throughout).
    pub(super) per_slot: usize,
    pub(super) failed: bool,
    pub(super) error: Option<PropagationError>,
    /// A predicted object's SGP4 position at the end of the last chunk.
    end_anchor: Option<(UtcTime, [f64; 3])>,
}

impl<'a> ObjectCursor<'a> {
    pub(super) fn new(o: &'a Object) -> Self {
        ObjectCursor {
            cursor: o.prop.cursor(),
            samples: Vec::new(),
            valid: 0,
            computed: 0,
            mask: u32::MAX,
            per_slot: 0,
            failed: false,
            error: None,
            end_anchor: None,
        }
    }

    /// Samples over [chunk_start, chunk_end]. With `band_top_km` (a catalog
    /// object of a fleet-vs-catalog run whose orbit reaches above the fleet's
    /// band), only in the activity slots where the object can be inside the
    /// band: a slot is skipped when, from the SGP4 state at its start, the
    /// object cannot come down to the band before the slot ends. With
    /// `allowed` other than all ones (a predicted catalog object, see
    /// [`super::predict`]), only in the slots whose bit is set.
    pub(super) fn fill(
        &mut self,
        o: &Object,
        chunk_start: UtcTime,
        chunk_end: UtcTime,
        band_top_km: Option<f64>,
        slot_s: f64,
        allowed: u32,
    ) {
        self.samples.clear();
        self.valid = 0;
        self.computed = 0;
        self.mask = u32::MAX;
        self.per_slot = 0;
        if self.failed {
            return;
        }
        let n = (chunk_end.s_since(chunk_start) / o.sample_step_s - 1e-9)
            .ceil()
            .max(1.0) as usize
            + 1;
        let per_slot = slot_s / o.sample_step_s;
        let slotted = per_slot.fract() == 0.0;
        let band =
            band_top_km.filter(|&top| o.group == 1 && o.shell_max_km > top + 100.0 && slotted);
        let restricted = allowed != u32::MAX && slotted;
        if band.is_none() && !restricted {
            for m in 0..n {
                if !self.push_sample(chunk_start.add_s(m as f64 * o.sample_step_s)) {
                    break;
                }
            }
            self.valid = self.samples.len();
            self.computed = self.valid;
            return;
        }
        let per_slot = per_slot as usize;
        self.per_slot = per_slot;
        self.mask = 0;
        self.samples.resize(n, Sample::default());
        let mut k = 0;
        while k * per_slot < n - 1 {
            let (s0, s1) = (k * per_slot, ((k + 1) * per_slot).min(n - 1));
            if allowed & (1 << k) == 0 {
                k += 1;
                continue;
            }
            // The slot before, when sampled, ends with this slot's first sample.
            let first = if k > 0 && self.mask & (1 << (k - 1)) != 0 {
                self.samples[s0]
            } else {
                let t0 = chunk_start.add_s(s0 as f64 * o.sample_step_s);
                match self.cursor.state_at(t0) {
                    Ok(s) => {
                        self.computed += 1;
                        Sample {
                            pos_km: s.position_km,
                            vel_km_s: s.velocity_km_s,
                        }
                    }
                    Err(e) => return self.fail(s0, e),
                }
            };
            let horizon_s = (s1 - s0) as f64 * o.sample_step_s;
            let reachable = band
                .is_none_or(|top| can_reach_band(&first.pos_km, &first.vel_km_s, top, horizon_s));
            if reachable {
                self.mask |= 1 << k;
                self.samples[s0] = first;
                for m in s0 + 1..=s1 {
                    match self
                        .cursor
                        .state_at(chunk_start.add_s(m as f64 * o.sample_step_s))
                    {
                        Ok(s) => {
                            self.computed += 1;
                            self.samples[m] = Sample {
                                pos_km: s.position_km,
                                vel_km_s: s.velocity_km_s,
                            };
                        }
                        Err(e) => return self.fail(m, e),
                    }
                }
            }
            k += 1;
        }
        self.valid = n;
    }

    /// Samples over [chunk_start, chunk_end] of a catalog object with a
    /// prediction (fleet vs catalog, [`super::predict`]): SGP4 at the chunk's
    /// start, middle and end anchors the model's phase and checks it; then
    /// only the activity slots where the model comes within `reach_km` plus
    /// the allowance of the fleet (at a step's midpoint, plus what the pair
    /// can close in half a step) are sampled. `reach_km` is the volume's
    /// bounding radius plus the interpolation margin. A chunk where the
    /// check fails is sampled throughout.
    ///
    /// Steps are skipped by the closing-speed bound of the direct scan: the
    /// model and a fleet object at distance d at one midpoint are farther
    /// than d − v·Δt a time Δt later, v the model's speed bound plus the
    /// fleet's.
    #[allow(clippy::too_many_arguments)]
    pub(super) fn fill_predicted(
        &mut self,
        o: &Object,
        model: &MeanModel,
        chunk_start: UtcTime,
        chunk_end: UtcTime,
        slot_s: f64,
        fleet: &FleetMidpoints,
        reach_km: f64,
    ) {
        let age_s = model.t_s(chunk_start).abs().max(model.t_s(chunk_end).abs());
        if self.failed || age_s > PREDICTION_MAX_AGE_DAYS * 86_400.0 {
            return self.fill(o, chunk_start, chunk_end, None, slot_s, u32::MAX);
        }
        let chunk_s = chunk_end.s_since(chunk_start);
        let chunk_mid = chunk_start.add_s(0.5 * chunk_s);
        let mut anchors = [[0.0; 3]; 3];
        let mut computed = 0;
        for (a, t) in anchors.iter_mut().zip([chunk_start, chunk_mid, chunk_end]) {
            // The previous chunk's end anchor is this chunk's start.
            if let Some((t_prev, r_prev)) = self.end_anchor
                && t_prev.s_since(t).abs() < 1e-6
            {
                *a = r_prev;
                continue;
            }
            computed += 1;
            match self.cursor.state_at(t) {
                Ok(s) => *a = s.position_km,
                // Propagation fails somewhere in this chunk (decay): sample
                // it throughout, which screens it up to the failure and
                // reports it there.
                Err(_) => {
                    self.end_anchor = None;
                    return self.fill(o, chunk_start, chunk_end, None, slot_s, u32::MAX);
                }
            }
        }
        self.end_anchor = Some((chunk_end, anchors[2]));
        let (t0, t1) = (model.t_s(chunk_start), model.t_s(chunk_end));
        let phi0 = model.phase_of(t0, &anchors[0]);
        let phi1 = phi0 + wrap_pi(model.phase_of(t1, &anchors[2]) - phi0);
        let phase_rate = (phi1 - phi0) / chunk_s.max(1e-9);
        let phase = |t_s: f64| phi0 + phase_rate * (t_s - t0);
        let plane = model.plane(0.5 * (t0 + t1));
        let holds = [t0, 0.5 * (t0 + t1), t1]
            .iter()
            .zip(&anchors)
            .all(|(&t, r)| {
                let p = model.position_km(&plane, t, phase(t));
                norm(&sub(&p, r)) <= PREDICTION_CHECK_KM
            });
        let mut allowed = u32::MAX;
        if holds {
            allowed = 0;
            let h = fleet.steps.first().map_or(chunk_s, |s| 2.0 * s.1);
            let steps_per_slot = (slot_s / h).round().max(1.0) as usize;
            let v_close = model.speed_bound_km_s(phase_rate) + fleet.speed_max_km_s;
            let reach = reach_km + PREDICTION_ALLOWANCE_KM;
            let reach_full = reach + v_close * 0.5 * h;
            let nf = fleet.n_fleet;
            let t_first = t0 + 0.5 * h;
            let mut track = StepTrack::new(model, plane, t_first, h, phase(t_first), phase_rate);
            let mut k = 0;
            while k < fleet.steps.len() {
                let (mid_s, half_s) = fleet.steps[k];
                let t = t0 + mid_s;
                // The last step of a window can be shorter: its midpoint is
                // off the regular grid.
                let p = if (t - t_first - k as f64 * h).abs() < 1e-6 {
                    track.at(k)
                } else {
                    model.position_km(&plane, t, phase(t))
                };
                let row = &fleet.positions[3 * k * nf..3 * (k + 1) * nf];
                let (xs, rest) = row.split_at(nf);
                let (ys, zs) = rest.split_at(nf);
                let mut nearest2 = f64::INFINITY;
                for f in 0..nf {
                    let (dx, dy, dz) = (p[0] - xs[f], p[1] - ys[f], p[2] - zs[f]);
                    let d2 = dx * dx + dy * dy + dz * dz;
                    if d2 < nearest2 {
                        nearest2 = d2;
                    }
                }
                let nearest_km = nearest2.sqrt();
                let cut_km = reach + v_close * half_s;
                if nearest_km <= cut_km {
                    // Within reach at the midpoint: the linear-motion test of
                    // the grid's pair test (closest approach over the step
                    // on the two velocities, padded by what the relative
                    // acceleration can add in half a step) on each fleet
                    // object within the cut.
                    let v = model_velocity_km_s(model, &plane, t, &phase);
                    let pad_km = 0.5 * 2.0 * MAX_ACCELERATION_KM_S2 * half_s * half_s;
                    let near = (0..nf).any(|f| {
                        let dr = [p[0] - xs[f], p[1] - ys[f], p[2] - zs[f]];
                        if dot(&dr, &dr) > cut_km * cut_km {
                            return false;
                        }
                        let vf = fleet.velocities[k * nf + f];
                        let dv = [v[0] - vf[0], v[1] - vf[1], v[2] - vf[2]];
                        linear_closest_km(&dr, &dv, half_s) <= reach + pad_km
                    });
                    if near {
                        // Active: the rest of this slot needs no test.
                        allowed |= 1 << (k / steps_per_slot);
                        k = (k / steps_per_slot + 1) * steps_per_slot;
                    } else {
                        k += 1;
                    }
                    continue;
                }
                // Positive here, so truncation is the floor (and no libm call).
                let skip = ((nearest_km - reach_full) / (v_close * h).max(1e-9)).min(1e6) as usize;
                k += skip.max(1);
            }
        }
        self.fill(o, chunk_start, chunk_end, None, slot_s, allowed);
        self.computed += computed;
    }

    fn push_sample(&mut self, t: UtcTime) -> bool {
        match self.cursor.state_at(t) {
            Ok(s) => {
                self.samples.push(Sample {
                    pos_km: s.position_km,
                    vel_km_s: s.velocity_km_s,
                });
                true
            }
            Err(e) => {
                self.failed = true;
                self.error = Some(e);
                false
            }
        }
    }

    fn fail(&mut self, at: usize, e: PropagationError) {
        self.failed = true;
        self.error = Some(e);
        self.valid = at;
    }

    /// Whether the interval between samples m and m + 1 was sampled.
    #[inline]
    pub(super) fn covers(&self, m: usize) -> bool {
        self.per_slot == 0 || self.mask & (1 << (m / self.per_slot)) != 0
    }
}

/// The model's velocity at `t_s` (a central difference over ±0.5 s: its
/// error, ~(0.5 s)²/6 times the jerk, is below 1e-6 km/s in LEO), km/s.
fn model_velocity_km_s(
    model: &MeanModel,
    plane: &ChunkPlane,
    t_s: f64,
    phase: &impl Fn(f64) -> f64,
) -> [f64; 3] {
    let a = model.position_km(plane, t_s - 0.5, phase(t_s - 0.5));
    let b = model.position_km(plane, t_s + 0.5, phase(t_s + 0.5));
    sub(&b, &a)
}
