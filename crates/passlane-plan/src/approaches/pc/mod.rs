//! Short-term encounter collision probability in the 2-D encounter plane.
//!
//! Input is an [`Encounter2d`]: the miss vector and the combined position
//! covariance of the two objects, projected onto the encounter plane and
//! expressed in the covariance's principal axes (see [`crate::encounter`] for
//! how the plane is built), plus the combined hard-body radius. Every method
//! here assumes the short-term encounter model: straight-line relative motion,
//! constant covariance over the encounter, Gaussian errors, and a spherical
//! combined hard body, so the probability is the integral of a 2-D Gaussian
//! over a disk.
//!
//! Methods:
//! - [`pc`]: the method every assessment uses, a few microseconds or less: the
//!   positive-term series of [`pc_series`] (in the spirit of Serra et al.
//!   2016) with [`pc_alfano`] where the series would be long (`fast.rs`).
//! - [`pc_foster`]: 2-D numerical integration over the disk in polar
//!   coordinates about the disk centre, in the style of Foster & Estes (1992);
//!   the reference the other methods are tested against (milliseconds).
//! - [`pc_alfano`]: Alfano's (2005) 1-D integral along x, with the inner
//!   y-integral written with the error function. Differences of erf are taken
//!   in the erfc form so that probabilities far in the tail keep their digits.
//! - [`pc_chan`]: Chan's (1997, 2008) equivalent-area series, an approximation.
//! - [`pc_max`] / [`pc_max_isotropic`]: the largest probability over an unknown
//!   covariance size (scale) with the shape fixed, for when the covariance is
//!   missing or not trusted (Alfriend et al. 1999; Alfano 2005): a closed
//!   form for the isotropic case, a bracketed maximisation with [`pc`]
//!   otherwise; [`pc_max_scan`] is the brute-force reference for tests.
//!
//! The error function ([`erf`], [`erfc`]) is implemented here from W. J. Cody's
//! rational Chebyshev approximations (Math. Comp. 23, 1969) so that the tails
//! are right down to the underflow limit.
//!
//! This module does not build the encounter plane, does not handle long-term
//! (non-linear) encounters, and does no I/O.

mod erf;
mod fast;
mod max;
mod quadrature;
mod series;

use std::f64::consts::PI;

/// Why an encounter could not be set up.
#[derive(Debug, Clone, PartialEq)]
pub struct PcInputError {
    /// Which input was wrong (e.g. `sigma_x_m`).
    pub field: &'static str,
    pub reason: String,
}

impl std::fmt::Display for PcInputError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}: {}", self.field, self.reason)
    }
}

impl std::error::Error for PcInputError {}

/// A validated short-term encounter in the principal axes of the combined
/// covariance: miss components (m) along the two axes, the standard deviations
/// (m) along them, and the combined hard-body radius (m).
///
/// Fields are private so that every value the probability functions see has
/// passed [`Encounter2d::new`]: sigmas finite and positive, miss finite, radius
/// finite and not negative.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Encounter2d {
    miss_x_m: f64,
    miss_y_m: f64,
    sigma_x_m: f64,
    sigma_y_m: f64,
    hard_body_radius_m: f64,
}

impl Encounter2d {
    pub fn new(
        miss_x_m: f64,
        miss_y_m: f64,
        sigma_x_m: f64,
        sigma_y_m: f64,
        hard_body_radius_m: f64,
    ) -> Result<Self, PcInputError> {
        let bad = |field: &'static str, reason: &str| PcInputError {
            field,
            reason: reason.to_string(),
        };
        if !miss_x_m.is_finite() {
            return Err(bad("miss_x_m", "not a finite number"));
        }
        if !miss_y_m.is_finite() {
            return Err(bad("miss_y_m", "not a finite number"));
        }
        if !(sigma_x_m.is_finite() && sigma_x_m > 0.0) {
            return Err(bad("sigma_x_m", "must be finite and > 0"));
        }
        if !(sigma_y_m.is_finite() && sigma_y_m > 0.0) {
            return Err(bad("sigma_y_m", "must be finite and > 0"));
        }
        if !(hard_body_radius_m.is_finite() && hard_body_radius_m >= 0.0) {
            return Err(bad("hard_body_radius_m", "must be finite and >= 0"));
        }
        Ok(Encounter2d {
            miss_x_m,
            miss_y_m,
            sigma_x_m,
            sigma_y_m,
            hard_body_radius_m,
        })
    }

    /// General entry point: a miss vector and a symmetric 2×2 covariance (m²)
    /// in any orthonormal axes of the encounter plane. The covariance is
    /// diagonalised and the miss rotated into its principal axes; the first
    /// principal axis is the eigenvector closer to the first input axis.
    pub fn from_covariance(
        miss_m: [f64; 2],
        cov_m2: [[f64; 2]; 2],
        hard_body_radius_m: f64,
    ) -> Result<Self, PcInputError> {
        let p = principal_axes(miss_m, cov_m2)?;
        Encounter2d::new(
            p.miss_m[0],
            p.miss_m[1],
            p.sigma_m[0],
            p.sigma_m[1],
            hard_body_radius_m,
        )
    }

    pub fn miss_x_m(&self) -> f64 {
        self.miss_x_m
    }
    pub fn miss_y_m(&self) -> f64 {
        self.miss_y_m
    }
    pub fn sigma_x_m(&self) -> f64 {
        self.sigma_x_m
    }
    pub fn sigma_y_m(&self) -> f64 {
        self.sigma_y_m
    }
    pub fn hard_body_radius_m(&self) -> f64 {
        self.hard_body_radius_m
    }
    /// Miss distance in the plane (m).
    pub fn miss_m(&self) -> f64 {
        self.miss_x_m.hypot(self.miss_y_m)
    }

    /// The same encounter with both sigmas multiplied by `k` (> 0).
    pub fn with_sigma_scale(&self, k: f64) -> Result<Self, PcInputError> {
        Encounter2d::new(
            self.miss_x_m,
            self.miss_y_m,
            self.sigma_x_m * k,
            self.sigma_y_m * k,
            self.hard_body_radius_m,
        )
    }

    /// The same encounter with another hard-body radius.
    pub fn with_hard_body_radius_m(&self, r_m: f64) -> Result<Self, PcInputError> {
        Encounter2d::new(
            self.miss_x_m,
            self.miss_y_m,
            self.sigma_x_m,
            self.sigma_y_m,
            r_m,
        )
    }
}

/// A 2×2 covariance in its principal axes and the miss vector rotated into them.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PrincipalAxes {
    /// Angle (rad) from the first input axis to the first principal axis,
    /// in [−π/4, π/4].
    pub angle_rad: f64,
    /// Standard deviations along the two principal axes (m).
    pub sigma_m: [f64; 2],
    /// Miss components along the two principal axes (m).
    pub miss_m: [f64; 2],
}

/// Diagonalises a symmetric 2×2 covariance (m²) and rotates the miss vector.
///
/// The first principal axis is chosen as the eigenvector within 45° of the
/// first input axis, so that a covariance that is already diagonal comes back
/// unchanged rather than with its axes swapped.
pub fn principal_axes(
    miss_m: [f64; 2],
    cov_m2: [[f64; 2]; 2],
) -> Result<PrincipalAxes, PcInputError> {
    let (a, b, c) = (
        cov_m2[0][0],
        0.5 * (cov_m2[0][1] + cov_m2[1][0]),
        cov_m2[1][1],
    );
    if !(a.is_finite() && b.is_finite() && c.is_finite()) {
        return Err(PcInputError {
            field: "cov_m2",
            reason: "not finite".to_string(),
        });
    }
    // Half the angle of the double-angle form is the direction of one
    // eigenvector; folding it into [−π/4, π/4] picks the one nearer axis 1.
    let mut angle_rad = 0.5 * (2.0 * b).atan2(a - c);
    if angle_rad > PI / 4.0 {
        angle_rad -= PI / 2.0;
    } else if angle_rad < -PI / 4.0 {
        angle_rad += PI / 2.0;
    }
    let (s, co) = angle_rad.sin_cos();
    let var1 = a * co * co + 2.0 * b * s * co + c * s * s;
    let var2 = a * s * s - 2.0 * b * s * co + c * co * co;
    if !(var1 > 0.0 && var2 > 0.0) {
        return Err(PcInputError {
            field: "cov_m2",
            reason: format!(
                "not positive definite (principal variances {var1:.6e}, {var2:.6e} m²)"
            ),
        });
    }
    Ok(PrincipalAxes {
        angle_rad,
        sigma_m: [var1.sqrt(), var2.sqrt()],
        miss_m: [
            co * miss_m[0] + s * miss_m[1],
            -s * miss_m[0] + co * miss_m[1],
        ],
    })
}

// ---------------------------------------------------------------------------
// Error function
// ---------------------------------------------------------------------------

pub use erf::{erf, erf_diff, erfc};
pub use fast::{pc, pc_series};
pub use max::{PcMax, isotropic_max_sigma_m, pc_max, pc_max_isotropic, pc_max_scan};
pub use quadrature::pc_foster;
pub use series::{pc_alfano, pc_chan};

/// All methods at once, for reports.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PcAll {
    pub pc: f64,
    pub pc_foster: f64,
    pub pc_alfano: f64,
    pub pc_chan: f64,
    pub pc_max: PcMax,
}

pub fn pc_all(e: &Encounter2d) -> PcAll {
    PcAll {
        pc: pc(e),
        pc_foster: pc_foster(e),
        pc_alfano: pc_alfano(e),
        pc_chan: pc_chan(e),
        pc_max: pc_max(e),
    }
}
