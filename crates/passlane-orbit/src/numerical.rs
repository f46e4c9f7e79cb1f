//! Numerical orbit propagation with a simple force model, for what SGP4 cannot
//! do: follow a spacecraft after a manoeuvre.
//!
//! # Force model
//! - Central gravity and the zonal harmonics J2, J3 and J4 with the WGS-72
//!   constants SGP4 uses (so that the model's mean motion agrees with the
//!   element producers'). The accelerations are the gradient of the zonal
//!   potential U = μ/r·[1 − Σₙ Jₙ (R/r)ⁿ Pₙ(z/r)] (Vallado, *Fundamentals of
//!   Astrodynamics and Applications*, 4th ed., §8.7.1, where the same
//!   expressions are written out); the test
//!   `zonal_accelerations_are_the_gradient_of_the_potential` checks them
//!   against a numerical gradient.
//! - Optional atmospheric drag from an element set's B*: B* = ½·(C_D·A/m)·ρ₀
//!   with SGP4's reference value ρ₀ = 0.15696615 kg/m² per Earth radius
//!   (2.461·10⁻⁵ kg/m³ times the Earth radius in km; from memory of Hoots &
//!   Roehrich 1980, Spacetrack Report No. 3; a 3U cubesat with C_D·A/m ≈
//!   0.017 m²/kg then has B* ≈ 1.3·10⁻³, as element sets show), so
//!   C_D·A/m = 2B*/ρ₀;
//!   density from a piecewise-exponential atmosphere (the table below), air
//!   co-rotating with the Earth.
//! - The frame is TEME of the start time, held fixed: over the few days this
//!   is used for, the precession of the true equator moves it by well under
//!   an arcsecond.
//!
//! # Integrator
//! The Dormand–Prince 5(4) embedded Runge–Kutta pair (Dormand & Prince 1980,
//! J. Comp. Appl. Math. 6(1)) with the usual step-size control on the local
//! error estimate, to a relative tolerance of 1e-12 by default. Every accepted
//! step stores position, velocity and acceleration at its end, and states in
//! between come from the quintic Hermite polynomial through them (position,
//! velocity and acceleration at both ends), whose error at the step sizes the
//! tolerance gives (tens of seconds in LEO) is far below a millimetre.
//!
//! What it does not do: third bodies, solar radiation pressure, tesseral
//! harmonics. They matter for a spacecraft's absolute position over days,
//! not for the *difference* a burn makes, which is what this module serves
//! (see `passlane_plan::approaches::avoid`).

use crate::constants::{EARTH_RADIUS_WGS72_KM, EARTH_ROTATION_RAD_S, MU_WGS72_KM3_S2};
use crate::frames::{Vec3, norm};
use crate::time::UtcTime;

/// J2 of the WGS-72 model SGP4 uses (the `wgs72` constants of the SGP4
/// reference implementation, Vallado et al. 2006; also python `sgp4`'s
/// `earth_gravity.wgs72`).
pub const J2_WGS72: f64 = 0.001_082_616;
/// J3 of the same model.
pub const J3_WGS72: f64 = -0.000_002_538_81;
/// J4 of the same model.
pub const J4_WGS72: f64 = -0.000_001_655_97;

/// SGP4's reference density for B*, kg/m² per Earth radius (from memory of
/// Hoots & Roehrich 1980, Spacetrack Report No. 3; see the module docs).
pub const BSTAR_REFERENCE_DENSITY_KG_M2_ER: f64 = 0.156_966_15;

/// Atmospheric drag as the force model uses it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Drag {
    /// Ballistic coefficient C_D·A/m, m²/kg.
    pub cd_area_over_mass_m2_kg: f64,
}

impl Drag {
    /// The ballistic coefficient an element set's B* (1/Earth radii) implies:
    /// C_D·A/m = 2B*/ρ₀. A negative B* (a fitting artefact) gives no drag.
    pub fn from_bstar(bstar_per_earth_radii: f64) -> Option<Drag> {
        (bstar_per_earth_radii.is_finite() && bstar_per_earth_radii > 0.0).then(|| Drag {
            cd_area_over_mass_m2_kg: 2.0 * bstar_per_earth_radii / BSTAR_REFERENCE_DENSITY_KG_M2_ER,
        })
    }
}

/// The forces of the numerical propagation.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ForceModel {
    pub mu_km3_s2: f64,
    pub earth_radius_km: f64,
    /// Zonal coefficients J2, J3, J4 (set any to 0 to leave it out).
    pub j2: f64,
    pub j3: f64,
    pub j4: f64,
    pub drag: Option<Drag>,
}

impl ForceModel {
    /// Central gravity only (Kepler's problem).
    pub fn two_body() -> Self {
        ForceModel {
            mu_km3_s2: MU_WGS72_KM3_S2,
            earth_radius_km: EARTH_RADIUS_WGS72_KM,
            j2: 0.0,
            j3: 0.0,
            j4: 0.0,
            drag: None,
        }
    }

    /// Central gravity with J2, J3 and J4 (WGS-72), and the given drag.
    pub fn zonal(drag: Option<Drag>) -> Self {
        ForceModel {
            j2: J2_WGS72,
            j3: J3_WGS72,
            j4: J4_WGS72,
            drag,
            ..ForceModel::two_body()
        }
    }

    /// Acceleration, km/s², at position `r` (km) with velocity `v` (km/s).
    pub fn acceleration(&self, r: &Vec3, v: &Vec3) -> Vec3 {
        let mut a = self.gravity(r);
        if let Some(d) = self.drag {
            let ad = drag_acceleration(r, v, d.cd_area_over_mass_m2_kg, self.earth_radius_km);
            for k in 0..3 {
                a[k] += ad[k];
            }
        }
        a
    }

    /// Gravitational acceleration (central term and zonals), km/s².
    pub fn gravity(&self, r: &Vec3) -> Vec3 {
        let [x, y, z] = *r;
        let r2 = x * x + y * y + z * z;
        let rn = r2.sqrt();
        let mu = self.mu_km3_s2;
        let re = self.earth_radius_km;
        let zr2 = z * z / r2;
        let k0 = -mu / (r2 * rn);
        let mut a = [k0 * x, k0 * y, k0 * z];
        if self.j2 != 0.0 {
            let k = -1.5 * self.j2 * mu * re * re / (r2 * r2 * rn);
            a[0] += k * x * (1.0 - 5.0 * zr2);
            a[1] += k * y * (1.0 - 5.0 * zr2);
            a[2] += k * z * (3.0 - 5.0 * zr2);
        }
        if self.j3 != 0.0 {
            let k = -2.5 * self.j3 * mu * re.powi(3) / (r2 * r2 * r2 * rn);
            a[0] += k * x * (3.0 * z - 7.0 * z * zr2);
            a[1] += k * y * (3.0 * z - 7.0 * z * zr2);
            a[2] += k * (6.0 * z * z - 7.0 * z * z * zr2 - 0.6 * r2);
        }
        if self.j4 != 0.0 {
            let k = 1.875 * self.j4 * mu * re.powi(4) / (r2 * r2 * r2 * rn);
            let common = 1.0 - 14.0 * zr2 + 21.0 * zr2 * zr2;
            a[0] += k * x * common;
            a[1] += k * y * common;
            a[2] += k * z * (5.0 - 70.0 / 3.0 * zr2 + 21.0 * zr2 * zr2);
        }
        a
    }

    /// Potential energy per unit mass of the gravity terms, km²/s² (negative
    /// of the potential U), for energy checks and the gradient test.
    pub fn potential_energy(&self, r: &Vec3) -> f64 {
        let rn = norm(r);
        let s = r[2] / rn;
        let q = self.earth_radius_km / rn;
        let p2 = 0.5 * (3.0 * s * s - 1.0);
        let p3 = 0.5 * (5.0 * s * s * s - 3.0 * s);
        let p4 = 0.125 * (35.0 * s.powi(4) - 30.0 * s * s + 3.0);
        let u = self.mu_km3_s2 / rn
            * (1.0 - self.j2 * q * q * p2 - self.j3 * q.powi(3) * p3 - self.j4 * q.powi(4) * p4);
        -u
    }
}

/// Piecewise-exponential density: base altitude (km), density there (kg/m³),
/// scale height (km). Values from memory of the table published by Vallado
/// (*Fundamentals of Astrodynamics and Applications*, Table 8-4, after the
/// U.S. Standard Atmosphere 1976 and CIRA-72); drag only enters the
/// difference a burn makes, at second order, so their exactness does not
/// matter here.
const ATMOSPHERE: [(f64, f64, f64); 28] = [
    (0.0, 1.225, 7.249),
    (25.0, 3.899e-2, 6.349),
    (30.0, 1.774e-2, 6.682),
    (40.0, 3.972e-3, 7.554),
    (50.0, 1.057e-3, 8.382),
    (60.0, 3.206e-4, 7.714),
    (70.0, 8.770e-5, 6.549),
    (80.0, 1.905e-5, 5.799),
    (90.0, 3.396e-6, 5.382),
    (100.0, 5.297e-7, 5.877),
    (110.0, 9.661e-8, 7.263),
    (120.0, 2.438e-8, 9.473),
    (130.0, 8.484e-9, 12.636),
    (140.0, 3.845e-9, 16.149),
    (150.0, 2.070e-9, 22.523),
    (180.0, 5.464e-10, 29.740),
    (200.0, 2.789e-10, 37.105),
    (250.0, 7.248e-11, 45.546),
    (300.0, 2.418e-11, 53.628),
    (350.0, 9.518e-12, 53.298),
    (400.0, 3.725e-12, 58.515),
    (450.0, 1.585e-12, 60.828),
    (500.0, 6.967e-13, 63.822),
    (600.0, 1.454e-13, 71.835),
    (700.0, 3.614e-14, 88.667),
    (800.0, 1.170e-14, 124.64),
    (900.0, 5.245e-15, 181.05),
    (1000.0, 3.019e-15, 268.00),
];

/// Atmospheric density at a height above the spherical Earth, kg/m³.
pub fn density_kg_m3(height_km: f64) -> f64 {
    let h = height_km.max(0.0);
    let i = ATMOSPHERE.partition_point(|b| b.0 <= h).saturating_sub(1);
    let (h0, rho0, scale) = ATMOSPHERE[i];
    rho0 * (-(h - h0) / scale).exp()
}

/// Drag acceleration, km/s², with the air co-rotating with the Earth.
fn drag_acceleration(r: &Vec3, v: &Vec3, cd_a_m: f64, earth_radius_km: f64) -> Vec3 {
    let w = EARTH_ROTATION_RAD_S;
    // Velocity relative to the air, km/s → m/s.
    let vr = [v[0] + w * r[1], v[1] - w * r[0], v[2]];
    let speed_m_s = norm(&vr) * 1000.0;
    let rho = density_kg_m3(norm(r) - earth_radius_km);
    // a = −½ρ(C_D A/m)|v|v in m/s², then to km/s².
    let k = -0.5 * rho * cd_a_m * speed_m_s; // 1/s
    [k * vr[0], k * vr[1], k * vr[2]]
}

/// A state for the integrator: position (km) and velocity (km/s).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Cartesian {
    pub position_km: Vec3,
    pub velocity_km_s: Vec3,
}

/// Tolerances of the step-size control.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Tolerance {
    pub relative: f64,
    /// Absolute tolerance on position (km) and velocity (km/s) components.
    pub absolute: f64,
}

impl Default for Tolerance {
    fn default() -> Self {
        Tolerance {
            relative: 1e-12,
            absolute: 1e-12,
        }
    }
}

/// One stored node of the dense output.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Node {
    /// Seconds from the start.
    t_s: f64,
    r: Vec3,
    v: Vec3,
    a: Vec3,
}

/// A numerically propagated trajectory with states at any time inside it.
#[derive(Debug, Clone, PartialEq)]
pub struct NumericalTrajectory {
    start: UtcTime,
    model: ForceModel,
    /// Nodes in time order (ascending `t_s`, whichever way it was integrated).
    nodes: Vec<Node>,
}

/// Why a numerical propagation stopped.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum IntegrationError {
    /// The step size collapsed (a singular force, e.g. a state at the centre).
    StepTooSmall { at_s: f64 },
    /// The trajectory reached the Earth's surface.
    Impact { at_s: f64 },
    /// A start state or span that is not finite.
    BadInput,
}

impl std::fmt::Display for IntegrationError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            IntegrationError::StepTooSmall { at_s } => {
                write!(
                    f,
                    "the integration step collapsed {at_s:.1} s from the start"
                )
            }
            IntegrationError::Impact { at_s } => {
                write!(
                    f,
                    "the trajectory reaches the surface {at_s:.1} s from the start"
                )
            }
            IntegrationError::BadInput => write!(f, "the start state or span is not finite"),
        }
    }
}

impl std::error::Error for IntegrationError {}

// Dormand–Prince 5(4) coefficients (Dormand & Prince 1980, Table 2). The
// force model does not depend on time, so the stage times (the c column) are
// not needed.
const A: [[f64; 6]; 7] = [
    [0.0; 6],
    [0.2, 0.0, 0.0, 0.0, 0.0, 0.0],
    [3.0 / 40.0, 9.0 / 40.0, 0.0, 0.0, 0.0, 0.0],
    [44.0 / 45.0, -56.0 / 15.0, 32.0 / 9.0, 0.0, 0.0, 0.0],
    [
        19372.0 / 6561.0,
        -25360.0 / 2187.0,
        64448.0 / 6561.0,
        -212.0 / 729.0,
        0.0,
        0.0,
    ],
    [
        9017.0 / 3168.0,
        -355.0 / 33.0,
        46732.0 / 5247.0,
        49.0 / 176.0,
        -5103.0 / 18656.0,
        0.0,
    ],
    [
        35.0 / 384.0,
        0.0,
        500.0 / 1113.0,
        125.0 / 192.0,
        -2187.0 / 6784.0,
        11.0 / 84.0,
    ],
];
/// Fifth-order weights (the last row of A: first-same-as-last).
const B5: [f64; 7] = [
    35.0 / 384.0,
    0.0,
    500.0 / 1113.0,
    125.0 / 192.0,
    -2187.0 / 6784.0,
    11.0 / 84.0,
    0.0,
];
/// Fourth-order weights of the embedded error estimate.
const B4: [f64; 7] = [
    5179.0 / 57600.0,
    0.0,
    7571.0 / 16695.0,
    393.0 / 640.0,
    -92097.0 / 339200.0,
    187.0 / 2100.0,
    1.0 / 40.0,
];

type Y = [f64; 6];

fn derivative(model: &ForceModel, y: &Y) -> Y {
    let r = [y[0], y[1], y[2]];
    let v = [y[3], y[4], y[5]];
    let a = model.acceleration(&r, &v);
    [v[0], v[1], v[2], a[0], a[1], a[2]]
}

impl NumericalTrajectory {
    /// Integrates from `initial` at `start` to `end` (which may be earlier:
    /// the integration then runs backwards).
    pub fn propagate(
        model: ForceModel,
        start: UtcTime,
        initial: Cartesian,
        end: UtcTime,
        tolerance: Tolerance,
    ) -> Result<Self, IntegrationError> {
        let span_s = end.s_since(start);
        let y0: Y = [
            initial.position_km[0],
            initial.position_km[1],
            initial.position_km[2],
            initial.velocity_km_s[0],
            initial.velocity_km_s[1],
            initial.velocity_km_s[2],
        ];
        if !span_s.is_finite() || y0.iter().any(|x| !x.is_finite()) {
            return Err(IntegrationError::BadInput);
        }
        let node = |t_s: f64, y: &Y, f: &Y| Node {
            t_s,
            r: [y[0], y[1], y[2]],
            v: [y[3], y[4], y[5]],
            a: [f[3], f[4], f[5]],
        };
        let dir = if span_s < 0.0 { -1.0 } else { 1.0 };
        let mut t = 0.0f64;
        let mut y = y0;
        let mut f = derivative(&model, &y);
        let mut nodes = vec![node(0.0, &y, &f)];
        // First step: a small fraction of the orbit's time scale r/v.
        let scale_s = norm(&initial.position_km) / norm(&initial.velocity_km_s).max(1e-9);
        let mut h = dir * (1e-3 * scale_s).clamp(1e-3, 60.0);
        let mut k = [[0.0f64; 6]; 7];
        while dir * (span_s - t) > 1e-9 {
            if dir * (t + h - span_s) > 0.0 {
                h = span_s - t;
            }
            k[0] = f;
            for s in 1..7 {
                let mut ys = y;
                for (j, kj) in k.iter().enumerate().take(s) {
                    let aij = A[s][j];
                    if aij != 0.0 {
                        for m in 0..6 {
                            ys[m] += h * aij * kj[m];
                        }
                    }
                }
                k[s] = derivative(&model, &ys);
            }
            let mut y5 = y;
            let mut err = 0.0f64;
            for m in 0..6 {
                let mut d5 = 0.0;
                let mut d4 = 0.0;
                for s in 0..7 {
                    d5 += B5[s] * k[s][m];
                    d4 += B4[s] * k[s][m];
                }
                y5[m] += h * d5;
                let sc = tolerance.absolute + tolerance.relative * y[m].abs().max(y5[m].abs());
                err = err.max((h * (d5 - d4)).abs() / sc);
            }
            if !err.is_finite() {
                return Err(IntegrationError::StepTooSmall { at_s: t });
            }
            if err <= 1.0 {
                t += h;
                y = y5;
                // First same as last: the seventh stage is f at the new point.
                f = k[6];
                if norm(&[y[0], y[1], y[2]]) < model.earth_radius_km {
                    return Err(IntegrationError::Impact { at_s: t });
                }
                nodes.push(node(t, &y, &f));
            }
            // Standard controller with safety factor 0.9 and growth limits.
            let factor = if err == 0.0 {
                5.0
            } else {
                (0.9 * err.powf(-0.2)).clamp(0.2, 5.0)
            };
            h *= factor;
            if h.abs() < 1e-9 * scale_s.max(1.0) {
                return Err(IntegrationError::StepTooSmall { at_s: t });
            }
        }
        if dir < 0.0 {
            nodes.reverse();
        }
        Ok(NumericalTrajectory {
            start,
            model,
            nodes,
        })
    }

    pub fn model(&self) -> &ForceModel {
        &self.model
    }

    /// The times the trajectory covers.
    pub fn span(&self) -> (UtcTime, UtcTime) {
        let first = self.nodes.first().map_or(0.0, |n| n.t_s);
        let last = self.nodes.last().map_or(0.0, |n| n.t_s);
        (self.start.add_s(first), self.start.add_s(last))
    }

    /// Steps the integrator took.
    pub fn steps(&self) -> usize {
        self.nodes.len().saturating_sub(1)
    }

    /// The state at `t`, from the quintic Hermite polynomial through the two
    /// nodes around it; `None` outside the integrated span.
    pub fn state_at(&self, t: UtcTime) -> Option<Cartesian> {
        let ts = t.s_since(self.start);
        let n = self.nodes.len();
        let (first, last) = (self.nodes.first()?, self.nodes.last()?);
        if !(ts >= first.t_s - 1e-9 && ts <= last.t_s + 1e-9) {
            return None;
        }
        if n == 1 {
            return Some(Cartesian {
                position_km: first.r,
                velocity_km_s: first.v,
            });
        }
        let i = self
            .nodes
            .partition_point(|nd| nd.t_s <= ts)
            .clamp(1, n - 1);
        let (a, b) = (&self.nodes[i - 1], &self.nodes[i]);
        Some(quintic(a, b, ts))
    }
}

/// Quintic Hermite interpolation through position, velocity and acceleration
/// at both ends of a step; returns position and velocity at `t_s`.
fn quintic(a: &Node, b: &Node, t_s: f64) -> Cartesian {
    let h = b.t_s - a.t_s;
    let s = ((t_s - a.t_s) / h).clamp(0.0, 1.0);
    let (s2, s3) = (s * s, s * s * s);
    let (s4, s5) = (s3 * s, s3 * s2);
    // Basis functions and their derivatives in s.
    let h0 = 1.0 - 10.0 * s3 + 15.0 * s4 - 6.0 * s5;
    let h1 = s - 6.0 * s3 + 8.0 * s4 - 3.0 * s5;
    let h2 = 0.5 * (s2 - 3.0 * s3 + 3.0 * s4 - s5);
    let h3 = 0.5 * (s3 - 2.0 * s4 + s5);
    let h4 = -4.0 * s3 + 7.0 * s4 - 3.0 * s5;
    let h5 = 10.0 * s3 - 15.0 * s4 + 6.0 * s5;
    let d0 = -30.0 * s2 + 60.0 * s3 - 30.0 * s4;
    let d1 = 1.0 - 18.0 * s2 + 32.0 * s3 - 15.0 * s4;
    let d2 = 0.5 * (2.0 * s - 9.0 * s2 + 12.0 * s3 - 5.0 * s4);
    let d3 = 0.5 * (3.0 * s2 - 8.0 * s3 + 5.0 * s4);
    let d4 = -12.0 * s2 + 28.0 * s3 - 15.0 * s4;
    let d5 = -d0;
    let mut r = [0.0; 3];
    let mut v = [0.0; 3];
    for k in 0..3 {
        r[k] = h0 * a.r[k]
            + h1 * h * a.v[k]
            + h2 * h * h * a.a[k]
            + h3 * h * h * b.a[k]
            + h4 * h * b.v[k]
            + h5 * b.r[k];
        v[k] = (d0 * a.r[k]
            + d1 * h * a.v[k]
            + d2 * h * h * a.a[k]
            + d3 * h * h * b.a[k]
            + d4 * h * b.v[k]
            + d5 * b.r[k])
            / h;
    }
    Cartesian {
        position_km: r,
        velocity_km_s: v,
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    #[test]
    fn quintic_basis_reproduces_a_quintic_exactly() {
        // p(t) = t⁵ − 2t³ + t on [1, 3], with its derivatives at both ends.
        let p = |t: f64| t.powi(5) - 2.0 * t.powi(3) + t;
        let dp = |t: f64| 5.0 * t.powi(4) - 6.0 * t * t + 1.0;
        let ddp = |t: f64| 20.0 * t.powi(3) - 12.0 * t;
        let node = |t: f64| Node {
            t_s: t,
            r: [p(t), 0.0, 0.0],
            v: [dp(t), 0.0, 0.0],
            a: [ddp(t), 0.0, 0.0],
        };
        let (a, b) = (node(1.0), node(3.0));
        for t in [1.0, 1.3, 2.0, 2.71, 3.0] {
            let c = quintic(&a, &b, t);
            assert!((c.position_km[0] - p(t)).abs() < 1e-9, "{t}");
            assert!((c.velocity_km_s[0] - dp(t)).abs() < 1e-9, "{t}");
        }
    }

    #[test]
    fn zonal_accelerations_are_the_gradient_of_the_potential() {
        // First principles: a = −∇(potential energy), by central differences.
        let m = ForceModel::zonal(None);
        for r in [
            [6_800.0, 1_200.0, 2_500.0],
            [-3_000.0, 5_000.0, -4_200.0],
            [100.0, -200.0, 7_000.0],
        ] {
            let a = m.gravity(&r);
            let hstep = 1e-3;
            for k in 0..3 {
                let mut rp = r;
                let mut rm = r;
                rp[k] += hstep;
                rm[k] -= hstep;
                let g = -(m.potential_energy(&rp) - m.potential_energy(&rm)) / (2.0 * hstep);
                assert!(
                    (g - a[k]).abs() < 1e-12 + 1e-8 * a[k].abs(),
                    "component {k} at {r:?}: {g} vs {}",
                    a[k]
                );
            }
        }
    }

    #[test]
    fn two_body_energy_and_angular_momentum_are_conserved_over_three_days() {
        let m = ForceModel::two_body();
        let s0 = Cartesian {
            position_km: [7_000.0, 0.0, 0.0],
            velocity_km_s: [0.0, 5.2, 5.3],
        };
        let t0 = UtcTime::from_s_since_j2000(0.0);
        let tr = NumericalTrajectory::propagate(
            m,
            t0,
            s0,
            t0.add_s(3.0 * 86_400.0),
            Tolerance::default(),
        )
        .unwrap();
        let energy = |c: &Cartesian| {
            0.5 * crate::frames::dot(&c.velocity_km_s, &c.velocity_km_s)
                + m.potential_energy(&c.position_km)
        };
        let e0 = energy(&s0);
        for k in 0..=72 {
            let c = tr.state_at(t0.add_s(k as f64 * 3_600.0)).unwrap();
            assert!(((energy(&c) - e0) / e0).abs() < 1e-10, "hour {k}");
        }
    }

    #[test]
    fn backwards_integration_returns_to_the_start() {
        let m = ForceModel::zonal(Drag::from_bstar(2e-4));
        let s0 = Cartesian {
            position_km: [6_878.0, 0.0, 0.0],
            velocity_km_s: [0.0, 1.0, 7.54],
        };
        let t0 = UtcTime::from_s_since_j2000(1e8);
        let t1 = t0.add_s(-20_000.0);
        let back = NumericalTrajectory::propagate(m, t0, s0, t1, Tolerance::default()).unwrap();
        let s1 = back.state_at(t1).unwrap();
        let fwd = NumericalTrajectory::propagate(m, t1, s1, t0, Tolerance::default()).unwrap();
        let again = fwd.state_at(t0).unwrap();
        for k in 0..3 {
            assert!((again.position_km[k] - s0.position_km[k]).abs() < 1e-6);
        }
        assert!(back.state_at(t0.add_s(1.0)).is_none());
    }

    #[test]
    fn density_is_continuous_enough_and_falls_with_height() {
        assert!((density_kg_m3(0.0) - 1.225).abs() < 1e-12);
        let mut prev = f64::INFINITY;
        for h in (0..1200).step_by(5) {
            let d = density_kg_m3(f64::from(h));
            assert!(d < prev && d > 0.0, "{h}");
            prev = d;
        }
        assert!(Drag::from_bstar(-1e-4).is_none());
    }
}
