//! Hermite interpolation of a state between two samples.
//!
//! Through position and velocity at both ends of a step, the cubic Hermite
//! polynomial follows an orbit to well under a metre in LEO at 60 s steps
//! (error ≈ h⁴/384·|r⁗| with |r⁗| ≈ ω⁴r). With the acceleration at both
//! ends as well (from a gravity model: [`crate::EarthFixed::model_acceleration_km_s2`]),
//! the quintic Hermite polynomial's own error is h⁶/46080·|r⁽⁶⁾|, centimetres
//! at 240 s; what is left is the model's and SGP4's own mismatch between its
//! positions, velocities and accelerations. Planners sample SGP4 coarsely and
//! interpolate between samples instead of calling SGP4 at every trial time.

use crate::frames::Vec3;

/// Position (km) and velocity (km/s) at fraction `s` ∈ [0, 1] of a step of
/// `step_s` seconds from (`p0`, `v0`) to (`p1`, `v1`). The velocity is the
/// interpolant's own derivative.
#[inline]
pub fn hermite(p0: &Vec3, v0: &Vec3, p1: &Vec3, v1: &Vec3, step_s: f64, s: f64) -> (Vec3, Vec3) {
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
    let mut p = [0.0; 3];
    let mut v = [0.0; 3];
    for k in 0..3 {
        p[k] = h00 * p0[k] + h10 * step_s * v0[k] + h01 * p1[k] + h11 * step_s * v1[k];
        v[k] = (d00 * p0[k] + d01 * p1[k]) / step_s + d10 * v0[k] + d11 * v1[k];
    }
    (p, v)
}

/// The position part of [`hermite`] alone (half the arithmetic), for
/// searches that only look at where the object is.
pub fn hermite_position(p0: &Vec3, v0: &Vec3, p1: &Vec3, v1: &Vec3, step_s: f64, s: f64) -> Vec3 {
    let s2 = s * s;
    let s3 = s2 * s;
    let h00 = 2.0 * s3 - 3.0 * s2 + 1.0;
    let h10 = (s3 - 2.0 * s2 + s) * step_s;
    let h01 = -2.0 * s3 + 3.0 * s2;
    let h11 = (s3 - s2) * step_s;
    std::array::from_fn(|k| h00 * p0[k] + h10 * v0[k] + h01 * p1[k] + h11 * v1[k])
}

/// A sample for quintic Hermite interpolation: position (km), velocity
/// (km/s) and acceleration (km/s²).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Sample5 {
    pub position_km: Vec3,
    pub velocity_km_s: Vec3,
    pub acceleration_km_s2: Vec3,
}

/// The quintic Hermite basis at `s` ∈ [0, 1] for a step of `h` seconds:
/// weights of p0, v0, a0, p1, v1, a1 (the step's powers included).
#[inline]
fn quintic_weights(h: f64, s: f64) -> [f64; 6] {
    let s2 = s * s;
    let s3 = s2 * s;
    let s4 = s3 * s;
    let s5 = s4 * s;
    [
        1.0 - 10.0 * s3 + 15.0 * s4 - 6.0 * s5,
        (s - 6.0 * s3 + 8.0 * s4 - 3.0 * s5) * h,
        0.5 * (s2 - 3.0 * s3 + 3.0 * s4 - s5) * h * h,
        10.0 * s3 - 15.0 * s4 + 6.0 * s5,
        (-4.0 * s3 + 7.0 * s4 - 3.0 * s5) * h,
        0.5 * (s3 - 2.0 * s4 + s5) * h * h,
    ]
}

/// The derivative with respect to time of [`quintic_weights`].
#[inline]
fn quintic_rate_weights(h: f64, s: f64) -> [f64; 6] {
    let s2 = s * s;
    let s3 = s2 * s;
    let s4 = s3 * s;
    [
        (-30.0 * s2 + 60.0 * s3 - 30.0 * s4) / h,
        1.0 - 18.0 * s2 + 32.0 * s3 - 15.0 * s4,
        0.5 * (2.0 * s - 9.0 * s2 + 12.0 * s3 - 5.0 * s4) * h,
        (30.0 * s2 - 60.0 * s3 + 30.0 * s4) / h,
        -12.0 * s2 + 28.0 * s3 - 15.0 * s4,
        0.5 * (3.0 * s2 - 8.0 * s3 + 5.0 * s4) * h,
    ]
}

#[inline]
fn combine(w: &[f64; 6], a: &Sample5, b: &Sample5) -> Vec3 {
    std::array::from_fn(|k| {
        w[0] * a.position_km[k]
            + w[1] * a.velocity_km_s[k]
            + w[2] * a.acceleration_km_s2[k]
            + w[3] * b.position_km[k]
            + w[4] * b.velocity_km_s[k]
            + w[5] * b.acceleration_km_s2[k]
    })
}

/// Position at fraction `s` ∈ [0, 1] of a step of `step_s` seconds from `a`
/// to `b`, by quintic Hermite interpolation.
#[inline]
pub fn quintic_position(a: &Sample5, b: &Sample5, step_s: f64, s: f64) -> Vec3 {
    combine(&quintic_weights(step_s, s), a, b)
}

/// Position and velocity (the interpolant's own derivative) at fraction `s`
/// of a step, as [`quintic_position`].
pub fn quintic(a: &Sample5, b: &Sample5, step_s: f64, s: f64) -> (Vec3, Vec3) {
    (
        combine(&quintic_weights(step_s, s), a, b),
        combine(&quintic_rate_weights(step_s, s), a, b),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reproduces_a_cubic_exactly() {
        // x(t) = t³ − 2t² + 3t + 1 on [0, 2]: Hermite interpolation is exact for cubics.
        let x = |t: f64| t * t * t - 2.0 * t * t + 3.0 * t + 1.0;
        let dx = |t: f64| 3.0 * t * t - 4.0 * t + 3.0;
        let (a, b) = (0.0, 2.0);
        for i in 0..=10 {
            let s = i as f64 / 10.0;
            let t = a + s * (b - a);
            let (p, v) = hermite(
                &[x(a), 0.0, 0.0],
                &[dx(a), 0.0, 0.0],
                &[x(b), 0.0, 0.0],
                &[dx(b), 0.0, 0.0],
                b - a,
                s,
            );
            assert!((p[0] - x(t)).abs() < 1e-12);
            assert!((v[0] - dx(t)).abs() < 1e-12);
        }
    }

    #[test]
    fn quintic_reproduces_a_quintic_exactly() {
        // x(t) = t⁵ − 3t⁴ + 2t³ − t² + 4t − 1 on [−1, 1.5]: exact for quintics.
        let x = |t: f64| ((((t - 3.0) * t + 2.0) * t - 1.0) * t + 4.0) * t - 1.0;
        let dx = |t: f64| (((5.0 * t - 12.0) * t + 6.0) * t - 2.0) * t + 4.0;
        let ddx = |t: f64| ((20.0 * t - 36.0) * t + 12.0) * t - 2.0;
        let (a, b) = (-1.0, 1.5);
        let sample = |t: f64| Sample5 {
            position_km: [x(t), 2.0 * x(t), 0.0],
            velocity_km_s: [dx(t), 2.0 * dx(t), 0.0],
            acceleration_km_s2: [ddx(t), 2.0 * ddx(t), 0.0],
        };
        let (sa, sb) = (sample(a), sample(b));
        for i in 0..=20 {
            let s = i as f64 / 20.0;
            let t = a + s * (b - a);
            let (p, v) = quintic(&sa, &sb, b - a, s);
            assert!((p[0] - x(t)).abs() < 1e-12 && (p[1] - 2.0 * x(t)).abs() < 1e-12);
            assert!((v[0] - dx(t)).abs() < 1e-11 && (v[1] - 2.0 * dx(t)).abs() < 1e-11);
            assert_eq!(quintic_position(&sa, &sb, b - a, s), p);
        }
    }
}
