//! Cubic Hermite interpolation between two SGP4 samples (position and velocity
//! at both ends), and the error estimate used to pick each object's sample step.

use passlane_orbit::frames::Vec3;

/// One sample: position (km) and velocity (km/s), TEME.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub(crate) struct Sample {
    pub pos_km: Vec3,
    pub vel_km_s: Vec3,
}

/// Position and velocity at fraction `s` ∈ [0, 1] of a step of `step_s`
/// seconds between samples `a` and `b`.
#[inline]
pub(crate) fn hermite(a: &Sample, b: &Sample, step_s: f64, s: f64) -> Sample {
    let (pos_km, vel_km_s) = passlane_orbit::interpolate::hermite(
        &a.pos_km,
        &a.vel_km_s,
        &b.pos_km,
        &b.vel_km_s,
        step_s,
        s,
    );
    Sample { pos_km, vel_km_s }
}

/// Estimated worst position error (km) of the Hermite interpolant over a step
/// of `step_s` for an orbit whose fastest angular rate is `rate_rad_s` at
/// radius `radius_km`: the classical bound h⁴/384 · max|r⁗| with |r⁗| ≈ ω⁴ r
/// for circular motion. Callers apply their own safety factor on ω.
pub(crate) fn error_estimate_km(step_s: f64, rate_rad_s: f64, radius_km: f64) -> f64 {
    let x = rate_rad_s * step_s;
    x * x * x * x * radius_km / 384.0
}
