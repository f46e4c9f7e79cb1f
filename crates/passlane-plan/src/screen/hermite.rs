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
    let s2 = s * s;
    let s3 = s2 * s;
    let h00 = 2.0 * s3 - 3.0 * s2 + 1.0;
    let h10 = s3 - 2.0 * s2 + s;
    let h01 = -2.0 * s3 + 3.0 * s2;
    let h11 = s3 - s2;
    // Derivatives of the basis with respect to s.
    let d00 = 6.0 * s2 - 6.0 * s;
    let d10 = 3.0 * s2 - 4.0 * s + 1.0;
    let d01 = -d00;
    let d11 = 3.0 * s2 - 2.0 * s;
    let mut out = Sample::default();
    for k in 0..3 {
        out.pos_km[k] = h00 * a.pos_km[k]
            + h10 * step_s * a.vel_km_s[k]
            + h01 * b.pos_km[k]
            + h11 * step_s * b.vel_km_s[k];
        out.vel_km_s[k] = (d00 * a.pos_km[k] + d01 * b.pos_km[k]) / step_s
            + d10 * a.vel_km_s[k]
            + d11 * b.vel_km_s[k];
    }
    out
}

/// Estimated worst position error (km) of the Hermite interpolant over a step
/// of `step_s` for an orbit whose fastest angular rate is `rate_rad_s` at
/// radius `radius_km`: the classical bound h⁴/384 · max|r⁗| with |r⁗| ≈ ω⁴ r
/// for circular motion. Callers apply their own safety factor on ω.
pub(crate) fn error_estimate_km(step_s: f64, rate_rad_s: f64, radius_km: f64) -> f64 {
    let x = rate_rad_s * step_s;
    x * x * x * x * radius_km / 384.0
}
