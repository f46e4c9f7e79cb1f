//! Hermite interpolation of a state between two samples.
//!
//! Through position and velocity at both ends of a step, the cubic Hermite
//! polynomial follows an orbit to well under a metre in LEO at 60 s steps
//! (error ≈ h⁴/384·|r⁗| with |r⁗| ≈ ω⁴r). With the acceleration at both
//! ends as well (from a gravity model:
//! [`crate::EarthFixed::model_acceleration_km_s2`]),
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

/// A sample for quintic Hermite interpolation: position (km), velocity
/// (km/s) and acceleration (km/s²).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Sample5 {
    pub position_km: Vec3,
    pub velocity_km_s: Vec3,
    pub acceleration_km_s2: Vec3,
}

/// The quintic Hermite polynomial through two [`Sample5`]s `step_s` seconds
/// apart, held as its power-series coefficients in s = (t − t_a)/step: a
/// search evaluates one step's polynomial many times (a root or an
/// extremum takes ten evaluations), and Horner's rule on six coefficients
/// is a third of the arithmetic of the six basis functions.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Quintic {
    coefficients: [Vec3; 6],
    step_s: f64,
}

impl Quintic {
    pub fn through(a: &Sample5, b: &Sample5, step_s: f64) -> Self {
        let h = step_s;
        let h2 = h * h;
        let per_axis: [[f64; 6]; 3] = std::array::from_fn(|k| {
            // The Hermite basis functions expanded in powers of s, with
            // D = p1 − p0 (the displacement, kept apart from the positions
            // for precision), V = h·v, A = h²·a.
            let d = b.position_km[k] - a.position_km[k];
            let (v0, v1) = (h * a.velocity_km_s[k], h * b.velocity_km_s[k]);
            let (a0, a1) = (h2 * a.acceleration_km_s2[k], h2 * b.acceleration_km_s2[k]);
            [
                a.position_km[k],
                v0,
                0.5 * a0,
                10.0 * d - 6.0 * v0 - 4.0 * v1 - 1.5 * a0 + 0.5 * a1,
                -15.0 * d + 8.0 * v0 + 7.0 * v1 + 1.5 * a0 - a1,
                6.0 * d - 3.0 * v0 - 3.0 * v1 - 0.5 * a0 + 0.5 * a1,
            ]
        });
        // Regroup from per-axis to per-power.
        Quintic {
            coefficients: std::array::from_fn(|j| std::array::from_fn(|k| per_axis[k][j])),
            step_s,
        }
    }

    /// Position at fraction `s` ∈ [0, 1] of the step.
    #[inline]
    pub fn position(&self, s: f64) -> Vec3 {
        let c = &self.coefficients;
        std::array::from_fn(|k| {
            ((((c[5][k] * s + c[4][k]) * s + c[3][k]) * s + c[2][k]) * s + c[1][k]) * s + c[0][k]
        })
    }

    /// Position and velocity (the polynomial's own derivative) at fraction
    /// `s` of the step.
    pub fn state(&self, s: f64) -> (Vec3, Vec3) {
        let c = &self.coefficients;
        let velocity = std::array::from_fn(|k| {
            ((((5.0 * c[5][k] * s + 4.0 * c[4][k]) * s + 3.0 * c[3][k]) * s + 2.0 * c[2][k]) * s
                + c[1][k])
                / self.step_s
        });
        (self.position(s), velocity)
    }
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
        let q = Quintic::through(&sample(a), &sample(b), b - a);
        for i in 0..=20 {
            let s = i as f64 / 20.0;
            let t = a + s * (b - a);
            let (p, v) = q.state(s);
            assert!((p[0] - x(t)).abs() < 1e-12 && (p[1] - 2.0 * x(t)).abs() < 1e-12);
            assert!((v[0] - dx(t)).abs() < 1e-11 && (v[1] - 2.0 * dx(t)).abs() < 1e-11);
            assert_eq!(q.position(s), p);
        }
    }
}
