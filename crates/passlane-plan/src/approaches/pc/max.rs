//! The largest probability over the size of an unknown covariance.

use super::{Encounter2d, PcInputError, pc_foster};

/// The largest probability over covariance scale, with its location.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PcMax {
    /// The maximum (supremum) probability.
    pub pc_max: f64,
    /// The factor k on both sigmas at the maximum (0 when the disk covers the
    /// origin and the supremum is approached as the covariance shrinks).
    pub sigma_scale: f64,
    /// Sigmas at the maximum (m).
    pub sigma_x_m: f64,
    pub sigma_y_m: f64,
}

/// Maximum probability over an unknown covariance size with the shape (axis
/// directions and aspect ratio σy/σx) fixed by the caller: max over k > 0 of
/// Pc with sigmas (kσx, kσy), using [`pc_foster`].
///
/// The idea is Alfriend et al. (1999) and Alfano (2005): when the covariance
/// is missing or not trusted, report the worst case over its size. For a small
/// hard body the maximum is near kσx = √((x² + y²/AR²)/2), AR = σy/σx,
/// giving Pc_max ≈ R² / (e · AR · (x² + y²/AR²)) (from Pc ≈ R²/(2σxσy)·e^(−v/2)
/// maximised over the scale; this is our derivation). We do not rely on that
/// approximation: we scan ln k over ±4 decades around it and refine the best
/// grid point with a golden-section search on ln k.
///
/// If the miss is inside the hard-body disk the probability tends to 1 as the
/// covariance shrinks; that supremum is returned with `sigma_scale` 0.
pub fn pc_max(e: &Encounter2d) -> PcMax {
    let r_m = e.hard_body_radius_m;
    let (sx, sy) = (e.sigma_x_m, e.sigma_y_m);
    let d_m = e.miss_m();
    if r_m == 0.0 {
        return PcMax {
            pc_max: 0.0,
            sigma_scale: 1.0,
            sigma_x_m: sx,
            sigma_y_m: sy,
        };
    }
    if d_m < r_m {
        return PcMax {
            pc_max: 1.0,
            sigma_scale: 0.0,
            sigma_x_m: 0.0,
            sigma_y_m: 0.0,
        };
    }
    let pc_at = |ln_k: f64| -> f64 {
        e.with_sigma_scale(ln_k.exp())
            .map(|s| pc_foster(&s))
            .unwrap_or(0.0)
    };
    // Small-body estimate of the best scale (see the doc comment).
    let ar = sy / sx;
    let s2 = 0.5 * (e.miss_x_m.powi(2) + (e.miss_y_m / ar).powi(2));
    let k_guess = if s2 > 0.0 { s2.sqrt() / sx } else { r_m / sx };
    let ln_guess = k_guess.max(f64::MIN_POSITIVE).ln();
    let steps = 40;
    let span = 4.0 * std::f64::consts::LN_10;
    let mut best = (ln_guess, pc_at(ln_guess));
    let mut grid = Vec::with_capacity(steps + 1);
    for i in 0..=steps {
        let ln_k = ln_guess - span + 2.0 * span * i as f64 / steps as f64;
        let p = pc_at(ln_k);
        grid.push(ln_k);
        if p > best.1 {
            best = (ln_k, p);
        }
    }
    // Golden-section refinement within one grid step either side of the best.
    let h = 2.0 * span / steps as f64;
    let (mut lo, mut hi) = (best.0 - h, best.0 + h);
    let g = 0.5 * (5.0f64.sqrt() - 1.0);
    let mut x1 = hi - g * (hi - lo);
    let mut x2 = lo + g * (hi - lo);
    let mut f1 = pc_at(x1);
    let mut f2 = pc_at(x2);
    for _ in 0..40 {
        if f1 < f2 {
            lo = x1;
            x1 = x2;
            f1 = f2;
            x2 = lo + g * (hi - lo);
            f2 = pc_at(x2);
        } else {
            hi = x2;
            x2 = x1;
            f2 = f1;
            x1 = hi - g * (hi - lo);
            f1 = pc_at(x1);
        }
        if hi - lo < 1e-9 {
            break;
        }
    }
    for (x, f) in [(x1, f1), (x2, f2)] {
        if f > best.1 {
            best = (x, f);
        }
    }
    let k = best.0.exp();
    PcMax {
        pc_max: best.1,
        sigma_scale: k,
        sigma_x_m: k * sx,
        sigma_y_m: k * sy,
    }
}

/// Maximum probability over an unknown isotropic covariance (σx = σy = σ, σ
/// free) for a miss distance `miss_m` and hard-body radius `hard_body_radius_m`.
/// For R ≪ d the maximum is at σ = d/√2 with Pc_max ≈ R²/(e·d²) (Alfriend et al.
/// 1999; re-derived in the doc of [`pc_max`] with AR = 1); this function
/// maximises the exact value numerically.
pub fn pc_max_isotropic(miss_m: f64, hard_body_radius_m: f64) -> Result<PcMax, PcInputError> {
    let e = Encounter2d::new(miss_m.abs(), 0.0, 1.0, 1.0, hard_body_radius_m)?;
    Ok(pc_max(&e))
}
