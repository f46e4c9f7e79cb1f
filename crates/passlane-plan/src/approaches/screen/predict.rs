//! Predicted positions of near-circular LEO catalog objects, so that a
//! fleet-vs-catalog screening propagates a catalog object with SGP4 only in
//! the activity slots where it can come near the fleet (stage 2b of the
//! module docs of [`super`]).
//!
//! # The model
//! The element set's mean elements move with the first-order J2 secular rates
//! (node, argument of perigee, mean anomaly: the textbook Brouwer–Kozai
//! first-order terms), and the position is the two-body ellipse to first order
//! in the eccentricity: true anomaly ν ≈ M + 2e·sin M, radius a(1 − e·cos M).
//! Drag and everything else that moves the object along its track is taken
//! from SGP4 itself: in every time chunk the object's SGP4 positions at the
//! chunk's start and end fix a phase offset on the mean anomaly (the model
//! then matches SGP4's argument of latitude there exactly), and the offset is
//! interpolated linearly in between.
//!
//! # Its error, and how it is held
//! What the model leaves out are SGP4's periodic terms (short-period J2: about
//! 10 km in radius and 5 km along the track in LEO; long-period J3 terms on
//! the eccentricity vector: up to ~7 km in radius and ~14 km along the track),
//! second-order eccentricity terms (5/4·e²·a: under 4 km at e = 0.02), and
//! the periodic part of the two anchors that the interpolated offset carries.
//! Added up that is about 50 km; the screening allows
//! [`PREDICTION_ALLOWANCE_KM`] = 75 km. This is an estimate made from the
//! size of those terms, not a proof, so it is held two ways:
//! - **Measured:** the test `prediction_error_stays_inside_the_allowance`
//!   compares the model with SGP4 every 30 s over 7 days for every
//!   eligible object of the realistic catalog's dense subset (the largest
//!   deviation is in that test's output and in `scripts/bench/screening-figures.md`).
//! - **Checked in every run:** in each chunk the model is also compared with
//!   SGP4 at the chunk's start, middle and end; if any of the three is off by
//!   more than [`PREDICTION_CHECK_KM`], the object is sampled throughout
//!   that chunk as if there were no prediction.
//!
//! Objects outside the model's reach are never predicted: deep-space orbits
//! (period ≥ 225 min, where SGP4 adds lunar-solar terms), eccentricity above
//! [`MAX_ECCENTRICITY`], ephemeris-driven objects, and chunks more than
//! [`PREDICTION_MAX_AGE_DAYS`] from the element set's epoch.

use passlane_orbit::constants::{EARTH_RADIUS_WGS72_KM, MU_WGS72_KM3_S2};
use passlane_orbit::frames::{Vec3, dot, sub};
use passlane_orbit::summary::semi_major_axis_km;
use passlane_orbit::{ElementSet, UtcTime};

use super::grid::Flat;

/// Allowance between the model and SGP4, km (see the module docs).
pub(crate) const PREDICTION_ALLOWANCE_KM: f64 = 75.0;
/// A chunk whose anchors or midpoint are farther than this from the model is
/// sampled throughout, km: two thirds of the allowance, so a chunk is
/// predicted only when the model is well inside it where it is checked.
pub(crate) const PREDICTION_CHECK_KM: f64 = 50.0;
/// Farthest a chunk may be from the element set's epoch for the model to be
/// used, days: the plane's secular drift is not re-anchored, so this bounds
/// what an error in the first-order rates can add (measured no growth up to
/// here: 30.3 km over days 0–7, 30.7 km over days 23–30). The same as the
/// command's refusal of stale elements without `--allow-stale`.
pub(crate) const PREDICTION_MAX_AGE_DAYS: f64 = 30.0;
/// Largest eccentricity the first-order model is used for.
pub(crate) const MAX_ECCENTRICITY: f64 = 0.02;
/// Mean motion below which SGP4 takes its deep-space branch (225 min period),
/// with a little room, rev/day.
const DEEP_SPACE_REV_DAY: f64 = 6.5;
/// J2 of WGS-72 (the SGP4 constants).
const J2: f64 = 0.001_082_616;

/// The secular mean-element model of one element set.
#[derive(Debug, Clone)]
pub(crate) struct MeanModel {
    epoch: UtcTime,
    a_km: f64,
    e: f64,
    cos_i: f64,
    sin_i: f64,
    raan0_rad: f64,
    raan_dot_rad_s: f64,
    argp0_rad: f64,
    argp_dot_rad_s: f64,
    m0_rad: f64,
    m_dot_rad_s: f64,
}

/// The model's orbit plane over one chunk: its in-plane axes at the chunk's
/// middle and their derivatives with respect to the node, for a linear node
/// drift (over half a chunk the node moves < 0.012 rad, so the neglected
/// second-order term is < 0.5 km).
#[derive(Debug, Clone, Copy)]
pub(crate) struct ChunkPlane {
    t_mid_s: f64,
    p: Vec3,
    q: Vec3,
    dp: Vec3,
    dq: Vec3,
}

impl MeanModel {
    /// The model of `set`, or `None` when it is outside the model's reach.
    pub(crate) fn new(set: &ElementSet) -> Option<MeanModel> {
        let n_rev_day = set.mean_motion_rev_day;
        let e = set.eccentricity;
        if set.ephemeris.is_some()
            || n_rev_day.is_nan()
            || n_rev_day < DEEP_SPACE_REV_DAY
            || !(0.0..=MAX_ECCENTRICITY).contains(&e)
        {
            return None;
        }
        let n = n_rev_day * std::f64::consts::TAU / 86_400.0;
        let a_km = semi_major_axis_km(n_rev_day, MU_WGS72_KM3_S2);
        let (sin_i, cos_i) = set.inclination_deg.to_radians().sin_cos();
        let p_km = a_km * (1.0 - e * e);
        let k = J2 * (EARTH_RADIUS_WGS72_KM / p_km).powi(2);
        let model = MeanModel {
            epoch: set.epoch,
            a_km,
            e,
            cos_i,
            sin_i,
            raan0_rad: set.raan_deg.to_radians(),
            raan_dot_rad_s: -1.5 * n * k * cos_i,
            argp0_rad: set.arg_perigee_deg.to_radians(),
            argp_dot_rad_s: 0.75 * n * k * (5.0 * cos_i * cos_i - 1.0),
            m0_rad: set.mean_anomaly_deg.to_radians(),
            m_dot_rad_s: n * (1.0 + 0.75 * k * (1.0 - e * e).sqrt() * (3.0 * cos_i * cos_i - 1.0)),
        };
        let finite = [
            model.a_km,
            model.raan0_rad,
            model.argp0_rad,
            model.m0_rad,
            model.m_dot_rad_s,
        ]
        .iter()
        .all(|x| x.is_finite());
        finite.then_some(model)
    }

    /// Seconds from the element set's epoch.
    pub(crate) fn t_s(&self, t: UtcTime) -> f64 {
        t.s_since(self.epoch)
    }

    fn axes(&self, t_s: f64) -> (Vec3, Vec3, Vec3, Vec3) {
        let (s, c) = (self.raan0_rad + self.raan_dot_rad_s * t_s).sin_cos();
        let (ci, si) = (self.cos_i, self.sin_i);
        (
            [c, s, 0.0],
            [-ci * s, ci * c, si],
            [-s, c, 0.0],
            [-ci * c, -ci * s, 0.0],
        )
    }

    /// The plane for a chunk centred on `t_mid_s`.
    pub(crate) fn plane(&self, t_mid_s: f64) -> ChunkPlane {
        let (p, q, dp, dq) = self.axes(t_mid_s);
        ChunkPlane {
            t_mid_s,
            p,
            q,
            dp,
            dq,
        }
    }

    /// Model position at `t_s` with `phase_rad` added to the mean anomaly, km.
    #[inline]
    pub(crate) fn position_km(&self, plane: &ChunkPlane, t_s: f64, phase_rad: f64) -> Vec3 {
        let m = self.m0_rad + self.m_dot_rad_s * t_s + phase_rad;
        let (sm, cm) = m.sin_cos();
        let u = self.argp0_rad + self.argp_dot_rad_s * t_s + m + 2.0 * self.e * sm;
        let r = self.a_km * (1.0 - self.e * cm);
        let (su, cu) = u.sin_cos();
        let dn = self.raan_dot_rad_s * (t_s - plane.t_mid_s);
        std::array::from_fn(|k| {
            r * (cu * (plane.p[k] + dn * plane.dp[k]) + su * (plane.q[k] + dn * plane.dq[k]))
        })
    }

    /// The phase on the mean anomaly that puts the model's argument of
    /// latitude at `t_s` on that of `pos_km`, in (−π, π].
    pub(crate) fn phase_of(&self, t_s: f64, pos_km: &Vec3) -> f64 {
        let (p, q, _, _) = self.axes(t_s);
        let u = dot(pos_km, &q).atan2(dot(pos_km, &p));
        let x = u - (self.argp0_rad + self.argp_dot_rad_s * t_s);
        // Invert u − ω = M + 2e·sin M (a contraction: 2e ≤ 0.04).
        let mut m = x;
        for _ in 0..4 {
            m = x - 2.0 * self.e * m.sin();
        }
        wrap_pi(m - (self.m0_rad + self.m_dot_rad_s * t_s))
    }

    /// Bound on the model's speed over a chunk whose phase changes at
    /// `phase_rate_rad_s`, km/s.
    pub(crate) fn speed_bound_km_s(&self, phase_rate_rad_s: f64) -> f64 {
        let m_rate = (self.m_dot_rad_s + phase_rate_rad_s).abs();
        let u_rate = self.argp_dot_rad_s.abs() + m_rate * (1.0 + 2.0 * self.e);
        let r_max = self.a_km * (1.0 + self.e);
        // Along the track, radially, and the plane's turn (node drift).
        r_max * u_rate + self.a_km * self.e * m_rate + r_max * self.raan_dot_rad_s.abs()
    }
}

/// The model at the midpoints of a chunk's hash steps, t_k = t_first + k·h,
/// evaluated by rotating the two angles it needs (the mean anomaly M and
/// ω + M) from one step to the next instead of calling sine and cosine:
/// a move of up to [`Self::TABLE`] steps multiplies by a precomputed
/// rotation, a longer one evaluates afresh. Over a chunk's 256 steps the
/// rounding this accumulates is ~1e-13 of the radius.
pub(crate) struct StepTrack<'a> {
    model: &'a MeanModel,
    plane: ChunkPlane,
    t_first_s: f64,
    h_s: f64,
    m_first: f64,
    b_first: f64,
    dm: f64,
    db: f64,
    /// (cos, sin) of j·ΔM and j·ΔB for j = 1..=TABLE.
    rot_m: [(f64, f64); StepTrack::TABLE],
    rot_b: [(f64, f64); StepTrack::TABLE],
    k: usize,
    cm: f64,
    sm: f64,
    cb: f64,
    sb: f64,
}

impl<'a> StepTrack<'a> {
    pub(crate) const TABLE: usize = 32;

    /// The track of `model` with the phase φ(t) = `phase0` + `phase_rate`·(t − `t_first_s`).
    pub(crate) fn new(
        model: &'a MeanModel,
        plane: ChunkPlane,
        t_first_s: f64,
        h_s: f64,
        phase0: f64,
        phase_rate: f64,
    ) -> Self {
        let m_first = model.m0_rad + model.m_dot_rad_s * t_first_s + phase0;
        let b_first = model.argp0_rad + model.argp_dot_rad_s * t_first_s + m_first;
        let dm = (model.m_dot_rad_s + phase_rate) * h_s;
        let db = dm + model.argp_dot_rad_s * h_s;
        let table = |d: f64| {
            let mut t = [(1.0, 0.0); StepTrack::TABLE];
            let (s, c) = d.sin_cos();
            let mut acc = (1.0, 0.0);
            for slot in &mut t {
                acc = (acc.0 * c - acc.1 * s, acc.1 * c + acc.0 * s);
                *slot = acc;
            }
            t
        };
        let (sm, cm) = m_first.sin_cos();
        let (sb, cb) = b_first.sin_cos();
        StepTrack {
            model,
            plane,
            t_first_s,
            h_s,
            m_first,
            b_first,
            dm,
            db,
            rot_m: table(dm),
            rot_b: table(db),
            k: 0,
            cm,
            sm,
            cb,
            sb,
        }
    }

    /// Model position at step k's midpoint, km.
    #[inline]
    pub(crate) fn at(&mut self, k: usize) -> Vec3 {
        if k != self.k {
            let j = k.wrapping_sub(self.k);
            if k > self.k && j <= Self::TABLE {
                let (c, s) = self.rot_m[j - 1];
                (self.cm, self.sm) = (self.cm * c - self.sm * s, self.sm * c + self.cm * s);
                let (c, s) = self.rot_b[j - 1];
                (self.cb, self.sb) = (self.cb * c - self.sb * s, self.sb * c + self.cb * s);
            } else {
                (self.sm, self.cm) = (self.m_first + k as f64 * self.dm).sin_cos();
                (self.sb, self.cb) = (self.b_first + k as f64 * self.db).sin_cos();
            }
            self.k = k;
        }
        let e = self.model.e;
        // u = (ω + M) + δ with δ = 2e·sin M ≤ 0.04: sin and cos of δ by their
        // series to δ⁵ (error < 1e-10).
        let d = 2.0 * e * self.sm;
        let d2 = d * d;
        let (cd, sd) = (1.0 - d2 * (0.5 - d2 / 24.0), d * (1.0 - d2 / 6.0));
        let (cu, su) = (self.cb * cd - self.sb * sd, self.sb * cd + self.cb * sd);
        let r = self.model.a_km * (1.0 - e * self.cm);
        let t = self.t_first_s + k as f64 * self.h_s;
        let dn = self.model.raan_dot_rad_s * (t - self.plane.t_mid_s);
        let pl = &self.plane;
        std::array::from_fn(|i| {
            r * (cu * (pl.p[i] + dn * pl.dp[i]) + su * (pl.q[i] + dn * pl.dq[i]))
        })
    }
}

/// The fleet's interpolated positions at each hash step's midpoint of a
/// chunk, for the predicted catalog objects' activity slots.
pub(super) struct FleetMidpoints {
    pub(super) n_fleet: usize,
    /// Each step's midpoint and half length, s from the chunk start.
    pub(super) steps: Vec<(f64, f64)>,
    /// Fleet positions at step k's midpoint, by axis: x of fleet object f
    /// at `positions[(3k + 0)·n_fleet + f]`, then y, then z (1e30 km where
    /// it has no state, so it is never near).
    pub(super) positions: Vec<f64>,
    /// `velocities[k * n_fleet + f]`, km/s (zero where it has no state).
    pub(super) velocities: Vec<[f64; 3]>,
    /// Largest speed bound of the fleet's interpolants in the chunk, km/s.
    pub(super) speed_max_km_s: f64,
}

impl FleetMidpoints {
    /// From a `Flat` of the fleet alone (`n_fleet` objects): its midpoints
    /// over a chunk of `chunk_s` seconds cut into hash steps of `h_s`.
    pub(super) fn new(flat: &Flat, n_fleet: usize, chunk_s: f64, h_s: f64) -> FleetMidpoints {
        let n_steps = (chunk_s / h_s).ceil() as usize;
        let steps: Vec<(f64, f64)> = (0..n_steps)
            .map(|k| {
                let a = k as f64 * h_s;
                let b = (a + h_s).min(chunk_s);
                (0.5 * (a + b), 0.5 * (b - a))
            })
            .collect();
        let mut positions = vec![0.0; 3 * n_fleet * steps.len()];
        let mut velocities = vec![[0.0; 3]; n_fleet * steps.len()];
        for (k, &(mid, _)) in steps.iter().enumerate() {
            for i in 0..n_fleet {
                let s = flat.at(i, mid);
                let p = s.map_or([1e30; 3], |s| s.pos_km);
                for (axis, x) in p.iter().enumerate() {
                    positions[(3 * k + axis) * n_fleet + i] = *x;
                }
                velocities[k * n_fleet + i] = s.map_or([0.0; 3], |s| s.vel_km_s);
            }
        }
        let speed_max_km_s = (0..n_fleet)
            .filter_map(|i| flat.speed_max_km_s(i))
            .fold(0.0, f64::max);
        FleetMidpoints {
            n_fleet,
            steps,
            positions,
            velocities,
            speed_max_km_s,
        }
    }
}

/// `x` wrapped into (−π, π].
pub(crate) fn wrap_pi(x: f64) -> f64 {
    let tau = std::f64::consts::TAU;
    let y = x - tau * (x / tau).round();
    if y <= -std::f64::consts::PI {
        y + tau
    } else {
        y
    }
}

/// The model's largest distance from SGP4 over [start, end], sampled every
/// `step_s`, with the phase anchored as a screening does it (at the start
/// and end of each chunk of `chunk_s`), km; `None` when the object is not
/// predicted or SGP4 fails. For the tests and the benchmark.
pub fn prediction_error_km(
    set: &ElementSet,
    start: UtcTime,
    end: UtcTime,
    chunk_s: f64,
    step_s: f64,
) -> Option<f64> {
    let model = MeanModel::new(set)?;
    let prop = passlane_orbit::Propagator::new(set).ok()?;
    let mut worst: f64 = 0.0;
    let mut c0 = start;
    while c0 < end {
        let c1 = c0.add_s(chunk_s).min(end);
        let (t0, t1) = (model.t_s(c0), model.t_s(c1));
        let r0 = prop.state_at(c0).ok()?.position_km;
        let r1 = prop.state_at(c1).ok()?.position_km;
        let phi0 = model.phase_of(t0, &r0);
        let phi1 = phi0 + wrap_pi(model.phase_of(t1, &r1) - phi0);
        let plane = model.plane(0.5 * (t0 + t1));
        let mut t = c0;
        while t <= c1 {
            let ts = model.t_s(t);
            let phi = phi0 + (phi1 - phi0) * (ts - t0) / (t1 - t0).max(1e-9);
            let p = model.position_km(&plane, ts, phi);
            let s = prop.state_at(t).ok()?.position_km;
            let d = sub(&p, &s);
            worst = worst.max(dot(&d, &d).sqrt());
            t = t.add_s(step_s);
        }
        c0 = c1;
    }
    Some(worst)
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn the_rotating_track_equals_direct_evaluation() {
        // A demo spacecraft, made eccentric (e = 0.015) to exercise the
        // eccentricity terms.
        let tle = include_str!(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/../../scenarios/demo-fleet.tle"
        ));
        let mut sets = passlane_orbit::elements::load(tle.as_bytes(), "t", Default::default()).sets;
        sets[0].eccentricity = 0.015;
        let model = MeanModel::new(&sets[0]).unwrap();
        let (t_first, h, phi0, rate) = (3600.0 + 30.0, 60.0, 0.01, 2e-7);
        let plane = model.plane(3600.0 + 7680.0);
        let mut track = StepTrack::new(&model, plane, t_first, h, phi0, rate);
        for k in [0usize, 1, 2, 6, 7, 39, 40, 72, 73, 200, 255, 3, 4] {
            let t = t_first + k as f64 * h;
            let direct = model.position_km(&plane, t, phi0 + rate * (t - t_first));
            let rotated = track.at(k);
            let d = (0..3)
                .map(|i| (direct[i] - rotated[i]).powi(2))
                .sum::<f64>()
                .sqrt();
            assert!(d < 1e-6, "step {k}: {d} km");
        }
    }
}
