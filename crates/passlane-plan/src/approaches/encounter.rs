//! Relative geometry of two objects at the time of closest approach.
//!
//! From the states of object 1 (the primary) and object 2 in one inertial (or,
//! over the seconds of an encounter, near enough inertial) frame, in km and
//! km/s, this module gives:
//! - the RTN (radial, transverse, normal; also called RIC) frame of an object:
//!   R = r̂, N = (r × v)̂, T = N × R;
//! - the miss vector of object 2 relative to object 1 in object 1's RTN frame,
//!   the relative speed and the approach angle ([`relative_geometry`]);
//! - the rotation of a 3×3 position covariance from an object's RTN frame to
//!   the inertial frame ([`rtn_to_inertial_cov`]);
//! - the encounter plane ([`encounter_plane`]): ŷ along the relative velocity
//!   Δv = v₂ − v₁, ẑ along Δr × Δv, x̂ = ŷ × ẑ; the combined covariance (the sum
//!   of both inertial covariances) and the miss vector projected onto (x̂, ẑ)
//!   and diagonalised, ready for [`crate::pc`].
//!
//! Units: states in km and km/s as in element sets and CDMs, covariances in m²
//! as in CDMs, encounter-plane results in m (every name carries its unit).
//!
//! This module does not find the time of closest approach (the states are
//! taken to be at TCA; any component of the miss along Δv is dropped by the
//! projection) and does not propagate covariances.

use passlane_orbit::constants::EARTH_ROTATION_RAD_S;
use passlane_orbit::frames::{Vec3, cross, dot, norm, scale, sub, unit};

use crate::pc::{Encounter2d, PcInputError, PrincipalAxes, principal_axes};

/// A 3×3 matrix, row-major.
pub type Mat3 = [[f64; 3]; 3];

/// Position and velocity of one object (km, km/s) in a common frame.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StateKm {
    pub position_km: Vec3,
    pub velocity_km_s: Vec3,
}

/// Why the encounter geometry could not be formed.
#[derive(Debug, Clone, PartialEq)]
pub enum EncounterError {
    /// r × v vanishes, so the object's RTN frame is undefined.
    NoRtnFrame { object: u8 },
    /// The two objects have the same velocity: there is no encounter plane
    /// (and the short-term encounter model does not apply).
    ZeroRelativeVelocity,
    /// The projected combined covariance is not positive definite.
    Covariance(PcInputError),
}

impl std::fmt::Display for EncounterError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            EncounterError::NoRtnFrame { object } => write!(
                f,
                "object {object}: position and velocity are parallel, no RTN frame"
            ),
            EncounterError::ZeroRelativeVelocity => {
                write!(f, "relative velocity is zero: no encounter plane")
            }
            EncounterError::Covariance(e) => write!(f, "encounter-plane covariance: {e}"),
        }
    }
}

impl std::error::Error for EncounterError {}

/// The RTN unit vectors of a state as the rows of a matrix, so that
/// `mat_vec(&m, v_inertial)` gives the RTN components.
pub fn rtn_basis(s: &StateKm) -> Option<Mat3> {
    let h = cross(&s.position_km, &s.velocity_km_s);
    if norm(&h) == 0.0 || norm(&s.position_km) == 0.0 {
        return None;
    }
    let r_hat = unit(&s.position_km);
    let n_hat = unit(&h);
    let t_hat = cross(&n_hat, &r_hat);
    Some([r_hat, t_hat, n_hat])
}

pub fn mat_vec(m: &Mat3, v: &Vec3) -> Vec3 {
    [dot(&m[0], v), dot(&m[1], v), dot(&m[2], v)]
}

fn transpose(m: &Mat3) -> Mat3 {
    let mut t = [[0.0; 3]; 3];
    for (i, row) in m.iter().enumerate() {
        for (j, x) in row.iter().enumerate() {
            t[j][i] = *x;
        }
    }
    t
}

fn mat_mul(a: &Mat3, b: &Mat3) -> Mat3 {
    let mut c = [[0.0; 3]; 3];
    for (i, row) in c.iter_mut().enumerate() {
        for (j, x) in row.iter_mut().enumerate() {
            *x = (0..3).map(|k| a[i][k] * b[k][j]).sum();
        }
    }
    c
}

/// Rotates a position covariance (any unit, e.g. m²) from the RTN frame of
/// `s` to the frame of the state: C_inertial = Mᵀ C_rtn M with M the rows of
/// [`rtn_basis`].
pub fn rtn_to_inertial_cov(cov_rtn: &Mat3, s: &StateKm) -> Option<Mat3> {
    let m = rtn_basis(s)?;
    Some(mat_mul(&mat_mul(&transpose(&m), cov_rtn), &m))
}

/// Miss of object 2 relative to object 1 in object 1's RTN frame, with speed
/// and angle.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RelativeGeometry {
    pub radial_km: f64,
    pub in_track_km: f64,
    pub cross_track_km: f64,
    pub miss_distance_km: f64,
    /// Relative velocity v₂ − v₁ in object 1's RTN frame (km/s).
    pub relative_velocity_rtn_km_s: Vec3,
    pub relative_speed_km_s: f64,
    /// Angle between the two velocity vectors (deg, 0–180).
    pub approach_angle_deg: f64,
}

/// Relative geometry of object 2 about object 1 (both states at TCA).
///
/// The relative velocity is expressed in the rotating RTN axes' orientation at
/// TCA without the frame-rotation term ω × Δr; that term is below 1e-3 of a
/// typical LEO closing speed for misses of a few km, and it is how relative
/// velocities are commonly reported in RTN (common practice; the CDM standard
/// does not spell it out as far as we recall).
pub fn relative_geometry(s1: &StateKm, s2: &StateKm) -> Result<RelativeGeometry, EncounterError> {
    let m = rtn_basis(s1).ok_or(EncounterError::NoRtnFrame { object: 1 })?;
    let dr = sub(&s2.position_km, &s1.position_km);
    let dv = sub(&s2.velocity_km_s, &s1.velocity_km_s);
    let rtn = mat_vec(&m, &dr);
    let (v1, v2) = (norm(&s1.velocity_km_s), norm(&s2.velocity_km_s));
    let cos_angle = if v1 > 0.0 && v2 > 0.0 {
        (dot(&s1.velocity_km_s, &s2.velocity_km_s) / (v1 * v2)).clamp(-1.0, 1.0)
    } else {
        1.0
    };
    Ok(RelativeGeometry {
        radial_km: rtn[0],
        in_track_km: rtn[1],
        cross_track_km: rtn[2],
        miss_distance_km: norm(&dr),
        relative_velocity_rtn_km_s: mat_vec(&m, &dv),
        relative_speed_km_s: norm(&dv),
        approach_angle_deg: cos_angle.acos().to_degrees(),
    })
}

/// Converts an Earth-fixed (ITRF) state to the instantaneous inertial frame
/// aligned with it, by adding back ω × r to the velocity. RTN frames and
/// relative velocities must be formed from inertial velocities: with
/// Earth-fixed ones the in-track axis tilts by up to ~3.5° in LEO.
pub fn earth_fixed_to_aligned_inertial(s: &StateKm) -> StateKm {
    let w = [0.0, 0.0, EARTH_ROTATION_RAD_S];
    let wr = cross(&w, &s.position_km);
    StateKm {
        position_km: s.position_km,
        velocity_km_s: [
            s.velocity_km_s[0] + wr[0],
            s.velocity_km_s[1] + wr[1],
            s.velocity_km_s[2] + wr[2],
        ],
    }
}

/// The encounter plane with the projected miss and covariance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EncounterPlane {
    /// Plane axes in the frame of the states: ŷ along Δv is the plane normal.
    pub x_hat: Vec3,
    pub y_hat: Vec3,
    pub z_hat: Vec3,
    /// Miss vector (object 2 − object 1) on (x̂, ẑ), m.
    pub miss_xz_m: [f64; 2],
    /// Combined position covariance on (x̂, ẑ), m².
    pub cov_xz_m2: [[f64; 2]; 2],
    /// The same in the covariance's principal axes.
    pub principal: PrincipalAxes,
}

impl EncounterPlane {
    /// The short-term encounter for [`crate::pc`] with a hard-body radius.
    pub fn encounter_2d(&self, hard_body_radius_m: f64) -> Result<Encounter2d, PcInputError> {
        Encounter2d::new(
            self.principal.miss_m[0],
            self.principal.miss_m[1],
            self.principal.sigma_m[0],
            self.principal.sigma_m[1],
            hard_body_radius_m,
        )
    }
}

/// Any unit vector perpendicular to `a` (for the degenerate plane orientation).
fn any_perpendicular(a: &Vec3) -> Vec3 {
    let trial = if a[0].abs() < 0.9 {
        [1.0, 0.0, 0.0]
    } else {
        [0.0, 1.0, 0.0]
    };
    unit(&cross(a, &trial))
}

/// Builds the encounter plane from the two states (km, km/s) and each
/// object's 3×3 position covariance in its own RTN frame (m²).
///
/// When the miss is zero or parallel to Δv, ẑ is not defined by Δr × Δv; any
/// direction perpendicular to Δv is then used, which is harmless because the
/// miss in the plane is zero and the probability does not depend on how the
/// in-plane axes are turned.
pub fn encounter_plane(
    s1: &StateKm,
    cov1_rtn_m2: &Mat3,
    s2: &StateKm,
    cov2_rtn_m2: &Mat3,
) -> Result<EncounterPlane, EncounterError> {
    let dr_m = scale(&sub(&s2.position_km, &s1.position_km), 1000.0);
    let dv = sub(&s2.velocity_km_s, &s1.velocity_km_s);
    if norm(&dv) == 0.0 {
        return Err(EncounterError::ZeroRelativeVelocity);
    }
    let y_hat = unit(&dv);
    let h = cross(&dr_m, &dv);
    // 1e-12 of |Δr||Δv| is far below any physical miss, so this only catches
    // exact (or rounding-level) degeneracy.
    let z_hat = if norm(&h) > 1e-12 * norm(&dr_m) * norm(&dv) {
        unit(&h)
    } else {
        any_perpendicular(&y_hat)
    };
    let x_hat = cross(&y_hat, &z_hat);

    let c1 =
        rtn_to_inertial_cov(cov1_rtn_m2, s1).ok_or(EncounterError::NoRtnFrame { object: 1 })?;
    let c2 =
        rtn_to_inertial_cov(cov2_rtn_m2, s2).ok_or(EncounterError::NoRtnFrame { object: 2 })?;
    let mut c = [[0.0; 3]; 3];
    for i in 0..3 {
        for j in 0..3 {
            c[i][j] = c1[i][j] + c2[i][j];
        }
    }
    let proj = |a: &Vec3, b: &Vec3| dot(a, &mat_vec(&c, b));
    let cov_xz_m2 = [
        [proj(&x_hat, &x_hat), proj(&x_hat, &z_hat)],
        [proj(&z_hat, &x_hat), proj(&z_hat, &z_hat)],
    ];
    let miss_xz_m = [dot(&dr_m, &x_hat), dot(&dr_m, &z_hat)];
    let principal = principal_axes(miss_xz_m, cov_xz_m2).map_err(EncounterError::Covariance)?;
    Ok(EncounterPlane {
        x_hat,
        y_hat,
        z_hat,
        miss_xz_m,
        cov_xz_m2,
        principal,
    })
}

#[cfg(test)]
#[allow(clippy::panic)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol
    }

    #[test]
    fn rtn_of_an_equatorial_orbit() {
        // r along +x, v along +y: R = x, N = z, T = y (definition of RTN).
        let s = StateKm {
            position_km: [7000.0, 0.0, 0.0],
            velocity_km_s: [0.0, 7.5, 0.0],
        };
        let Some(m) = rtn_basis(&s) else {
            panic!("frame exists")
        };
        let want = [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]];
        for i in 0..3 {
            for j in 0..3 {
                assert!(close(m[i][j], want[i][j], 1e-15), "{m:?}");
            }
        }
    }

    #[test]
    fn crossing_geometry_in_rtn() {
        // Object 2 1 km above object 1, moving +z while object 1 moves +y:
        // a 90° crossing at 7.5·√2 km/s (geometry by construction).
        let s1 = StateKm {
            position_km: [7000.0, 0.0, 0.0],
            velocity_km_s: [0.0, 7.5, 0.0],
        };
        let s2 = StateKm {
            position_km: [7001.0, 0.0, 0.0],
            velocity_km_s: [0.0, 0.0, 7.5],
        };
        let Ok(g) = relative_geometry(&s1, &s2) else {
            panic!("geometry exists")
        };
        assert!(close(g.radial_km, 1.0, 1e-12));
        assert!(close(g.in_track_km, 0.0, 1e-12) && close(g.cross_track_km, 0.0, 1e-12));
        assert!(close(g.approach_angle_deg, 90.0, 1e-9));
        assert!(close(g.relative_speed_km_s, 7.5 * 2f64.sqrt(), 1e-12));
    }
}
