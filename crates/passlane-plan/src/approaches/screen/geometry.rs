//! Final evaluation of a close approach with direct SGP4 states: TCA refinement
//! (Newton on Δr·Δv), RIC components, approach angle, and the times the pair
//! enters and leaves the screening volume.

use passlane_orbit::constants::MU_WGS72_KM3_S2;
use passlane_orbit::frames::{Vec3, dot, norm, sub};
use passlane_orbit::{PropagationError, Propagator, StateTeme, UtcTime};

use super::{CloseApproach, ScreeningVolume};
use crate::encounter::{self, RelativeGeometry, StateKm};
use crate::numeric::bisect_boundary;

/// RIC components of `r2 − r1` in the frame of object 1, with the other
/// relative quantities (CCSDS convention: object 1 is the reference). The
/// arithmetic is [`crate::encounter::relative_geometry`]'s, shared with the
/// CDM and probability code.
pub fn relative_geometry(s1: &StateTeme, s2: &StateTeme) -> RelativeGeometry {
    let k = |s: &StateTeme| StateKm {
        position_km: s.position_km,
        velocity_km_s: s.velocity_km_s,
    };
    match encounter::relative_geometry(&k(s1), &k(s2)) {
        Ok(g) => g,
        // r × v = 0 (a radial trajectory) has no RIC frame: keep the distance
        // and speed, and say the components are unknown.
        Err(_) => RelativeGeometry {
            miss_distance_km: norm(&sub(&s2.position_km, &s1.position_km)),
            radial_km: f64::NAN,
            in_track_km: f64::NAN,
            cross_track_km: f64::NAN,
            relative_velocity_rtn_km_s: [f64::NAN; 3],
            relative_speed_km_s: norm(&sub(&s2.velocity_km_s, &s1.velocity_km_s)),
            approach_angle_deg: f64::NAN,
        },
    }
}

/// Components of `d` along the R, I, C axes of the orbit (r, v).
pub fn ric_components(r: &Vec3, v: &Vec3, d: &Vec3) -> [f64; 3] {
    let s = StateKm {
        position_km: *r,
        velocity_km_s: *v,
    };
    match encounter::rtn_basis(&s) {
        Some(m) => encounter::mat_vec(&m, d),
        None => [f64::NAN; 3],
    }
}

/// Two-body acceleration, km/s²: enough for the Newton derivative of Δr·Δv
/// (the J2 and drag parts change the derivative by ~0.1 %, not the root).
fn gravity(r: &Vec3) -> Vec3 {
    let rn = norm(r);
    let k = -MU_WGS72_KM3_S2 / (rn * rn * rn);
    [r[0] * k, r[1] * k, r[2] * k]
}

/// Newton iteration on f(t) = Δr·Δv with direct SGP4 states, from `guess`.
/// Returns the TCA and both states there, or `None` when the iteration finds a
/// maximum, leaves `[lo, hi]`, or propagation fails. Stops when the step is
/// below 10 µs, far inside the promised 1 ms.
pub(crate) fn refine_tca(
    p1: &Propagator,
    p2: &Propagator,
    guess: UtcTime,
    lo: UtcTime,
    hi: UtcTime,
) -> Result<Option<(UtcTime, StateTeme, StateTeme)>, PropagationError> {
    let mut t = guess;
    for _ in 0..30 {
        let s1 = p1.state_at(t)?;
        let s2 = p2.state_at(t)?;
        let dr = sub(&s2.position_km, &s1.position_km);
        let dv = sub(&s2.velocity_km_s, &s1.velocity_km_s);
        let da = sub(&gravity(&s2.position_km), &gravity(&s1.position_km));
        let f = dot(&dr, &dv);
        let fp = dot(&dv, &dv) + dot(&dr, &da);
        if fp.is_nan() || fp <= 0.0 {
            // Concave here: a distance maximum, or a pair at rest relative to each other.
            return Ok(None);
        }
        let mut dt = -f / fp;
        // A step larger than a few minutes means the guess was not near a minimum
        // the interpolant saw; damp it so the iteration stays on the same approach.
        dt = dt.clamp(-300.0, 300.0);
        t = t.add_s(dt);
        if t < lo.add_s(-600.0) || t > hi.add_s(600.0) {
            return Ok(None);
        }
        if dt.abs() < 1e-5 {
            let s1 = p1.state_at(t)?;
            let s2 = p2.state_at(t)?;
            return Ok(Some((t, s1, s2)));
        }
    }
    Ok(None)
}

/// Normalised volume measure of `r2 − r1` at `t`: ≤ 1 inside.
fn volume_measure(
    p1: &Propagator,
    p2: &Propagator,
    volume: &ScreeningVolume,
    t: UtcTime,
) -> Result<f64, PropagationError> {
    let s1 = p1.state_at(t)?;
    let s2 = p2.state_at(t)?;
    let dr = sub(&s2.position_km, &s1.position_km);
    Ok(volume.measure(&ric_components(&s1.position_km, &s1.velocity_km_s, &dr)))
}

/// Time the pair crosses the volume boundary on the side `direction` (−1:
/// entry, before TCA; +1: exit) of `tca`, to 1 ms. Steps outward in steps
/// short enough not to jump over a brief passage (a fifth of the time to cross
/// the volume at the TCA speed, at most 60 s), then bisects. Clamped to `limit`.
pub(crate) fn volume_crossing(
    p1: &Propagator,
    p2: &Propagator,
    volume: &ScreeningVolume,
    tca: UtcTime,
    relative_speed_km_s: f64,
    direction: f64,
    limit: UtcTime,
) -> Result<UtcTime, PropagationError> {
    let step_s =
        (0.2 * volume.smallest_half_size_km() / relative_speed_km_s.max(1e-9)).clamp(1e-3, 60.0);
    let mut inside = tca;
    loop {
        let next = inside.add_s(direction * step_s);
        let past_limit = if direction < 0.0 {
            next <= limit
        } else {
            next >= limit
        };
        if past_limit {
            if volume_measure(p1, p2, volume, limit)? <= 1.0 {
                return Ok(limit);
            }
            return bisect(p1, p2, volume, inside, limit);
        }
        if volume_measure(p1, p2, volume, next)? > 1.0 {
            return bisect(p1, p2, volume, inside, next);
        }
        inside = next;
    }
}

fn bisect(
    p1: &Propagator,
    p2: &Propagator,
    volume: &ScreeningVolume,
    inside: UtcTime,
    outside: UtcTime,
) -> Result<UtcTime, PropagationError> {
    let s = bisect_boundary(
        |t_s| Ok(volume_measure(p1, p2, volume, UtcTime::from_s_since_j2000(t_s))? <= 1.0),
        inside.s_since_j2000(),
        outside.s_since_j2000(),
        5e-4,
    )?;
    Ok(UtcTime::from_s_since_j2000(s))
}

/// Identity of one screened object, as the event reports it.
#[derive(Debug, Clone)]
pub(crate) struct ObjectId {
    pub name: String,
    pub catalog_number: u32,
}

/// Builds the event from refined states, or `None` when the TCA lies outside
/// the volume. Entry and exit are clamped to the screening window.
#[allow(clippy::too_many_arguments)]
pub(crate) fn build_event(
    id1: &ObjectId,
    p1: &Propagator,
    id2: &ObjectId,
    p2: &Propagator,
    volume: &ScreeningVolume,
    tca: UtcTime,
    s1: StateTeme,
    s2: StateTeme,
    window: (UtcTime, UtcTime),
) -> Result<Option<CloseApproach>, PropagationError> {
    let g = relative_geometry(&s1, &s2);
    if volume.measure(&[g.radial_km, g.in_track_km, g.cross_track_km]) > 1.0 {
        return Ok(None);
    }
    let entry = volume_crossing(p1, p2, volume, tca, g.relative_speed_km_s, -1.0, window.0)?;
    let exit = volume_crossing(p1, p2, volume, tca, g.relative_speed_km_s, 1.0, window.1)?;
    Ok(Some(CloseApproach {
        primary: id1.name.clone(),
        secondary: id2.name.clone(),
        primary_catalog_number: id1.catalog_number,
        secondary_catalog_number: id2.catalog_number,
        tca,
        miss_distance_km: g.miss_distance_km,
        radial_km: g.radial_km,
        in_track_km: g.in_track_km,
        cross_track_km: g.cross_track_km,
        relative_speed_km_s: g.relative_speed_km_s,
        approach_angle_deg: g.approach_angle_deg,
        volume_entry: entry,
        volume_exit: exit,
        primary_state: s1,
        secondary_state: s2,
    }))
}
