//! The largest probability over the size of an unknown covariance.

use super::{Encounter2d, PcInputError, pc, pc_foster};
use crate::numeric::brent_extremum;

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

/// The two cases both maximisers answer without a search: no hard body
/// (Pc 0 at any size) and a miss inside the hard-body disk (Pc tends to 1 as
/// the covariance shrinks; returned with `sigma_scale` 0).
fn edge_case(e: &Encounter2d) -> Option<PcMax> {
    if e.hard_body_radius_m == 0.0 {
        return Some(PcMax {
            pc_max: 0.0,
            sigma_scale: 1.0,
            sigma_x_m: e.sigma_x_m,
            sigma_y_m: e.sigma_y_m,
        });
    }
    (e.miss_m() < e.hard_body_radius_m).then_some(PcMax {
        pc_max: 1.0,
        sigma_scale: 0.0,
        sigma_x_m: 0.0,
        sigma_y_m: 0.0,
    })
}

/// Maximum probability over an unknown covariance size with the shape (axis
/// directions and aspect ratio σy/σx) fixed by the caller: max over k > 0 of
/// Pc with sigmas (kσx, kσy), Pc by the fast method [`pc`].
///
/// The idea is Alfriend et al. (1999) and Alfano (2005): when the covariance
/// is missing or not trusted, report the worst case over its size.
/// - Isotropic covariance (σx = σy): the maximiser has a closed form up to one
///   monotone equation, see [`isotropic_max_sigma_m`].
/// - Otherwise: a bracketed 1-D maximisation of ln Pc over ln k. For a small
///   hard body the maximum is near kσx = √((x² + y²/AR²)/2), AR = σy/σx
///   (from Pc ≈ R²/(2σxσy)·e^(−v/2) maximised over the scale; our
///   derivation); the search starts there, steps outwards until the value
///   falls on both sides, then refines with Brent's method to 1e-7 in ln k
///   (the error in Pc is then of order 1e-14, as the maximum is flat).
///
/// If the miss is inside the hard-body disk the probability tends to 1 as the
/// covariance shrinks; that supremum is returned with `sigma_scale` 0.
pub fn pc_max(e: &Encounter2d) -> PcMax {
    if let Some(edge) = edge_case(e) {
        return edge;
    }
    let r_m = e.hard_body_radius_m;
    let (sx, sy) = (e.sigma_x_m, e.sigma_y_m);
    let d_m = e.miss_m();
    let at_scale = |k: f64| e.with_sigma_scale(k).map(|s| pc(&s)).unwrap_or(0.0);
    if sx == sy && d_m > r_m {
        let k = isotropic_max_sigma_m(d_m, r_m) / sx;
        return PcMax {
            pc_max: at_scale(k),
            sigma_scale: k,
            sigma_x_m: k * sx,
            sigma_y_m: k * sy,
        };
    }
    let ln_pc = |ln_k: f64| {
        let p = at_scale(ln_k.exp());
        if p > 0.0 { p.ln() } else { f64::NEG_INFINITY }
    };
    // Small-body estimate of the best scale (see the doc comment).
    let ar = sy / sx;
    let s2 = 0.5 * (e.miss_x_m.powi(2) + (e.miss_y_m / ar).powi(2));
    let k_guess = if s2 > 0.0 { s2.sqrt() / sx } else { r_m / sx };
    // Bracket: walk in steps of 0.5 in ln k towards the larger value until
    // the middle point is the largest of three.
    const STEP: f64 = 0.5;
    let mut mid = k_guess.max(f64::MIN_POSITIVE).ln();
    let (mut f_lo, mut f_mid, mut f_hi) = (ln_pc(mid - STEP), ln_pc(mid), ln_pc(mid + STEP));
    for _ in 0..400 {
        if f_hi > f_mid {
            mid += STEP;
            (f_lo, f_mid) = (f_mid, f_hi);
            f_hi = ln_pc(mid + STEP);
        } else if f_lo > f_mid {
            mid -= STEP;
            (f_hi, f_mid) = (f_mid, f_lo);
            f_lo = ln_pc(mid - STEP);
        } else {
            break;
        }
    }
    let (ln_k, _) = brent_extremum(ln_pc, mid - STEP, mid + STEP, true, 1e-7);
    let k = ln_k.exp();
    PcMax {
        pc_max: at_scale(k),
        sigma_scale: k,
        sigma_x_m: k * sx,
        sigma_y_m: k * sy,
    }
}

/// The sigma that maximises the probability of an isotropic encounter with
/// miss `miss_m` > hard-body radius `hard_body_radius_m`.
///
/// Closed form (our derivation): with a = d/σ and b = R/σ the probability is
/// 1 − Q₁(a, b) (Marcum Q), and from ∂Q₁/∂a = b e^(−(a²+b²)/2) I₁(ab),
/// ∂Q₁/∂b = −b e^(−(a²+b²)/2) I₀(ab), dPc/dσ ∝ a I₁(ab) − b I₀(ab). The
/// maximum is therefore at σ² = R d / x, where x solves I₁(x)/I₀(x) = R/d.
/// The ratio is increasing in x, lies below x/2 and above x/(1 + √(1 + x²))
/// (Amos 1974, Math. Comp. 28), so the root lies in [2ρ, 2ρ/(1 − ρ²)],
/// ρ = R/d; it is found by Newton's method kept inside that bracket. For
/// R ≪ d this gives σ = d/√2 and Pc_max ≈ R²/(e d²) (Alfriend et al. 1999).
pub fn isotropic_max_sigma_m(miss_m: f64, hard_body_radius_m: f64) -> f64 {
    let rho = hard_body_radius_m / miss_m;
    let (mut lo, mut hi) = (2.0 * rho, 2.0 * rho / ((1.0 - rho) * (1.0 + rho)));
    let mut x = if rho < 0.5 {
        2.0 * rho
    } else {
        0.5 * (lo + hi)
    };
    for _ in 0..100 {
        let r = bessel_i1_over_i0(x);
        let f = r - rho;
        if f > 0.0 {
            hi = x;
        } else {
            lo = x;
        }
        let slope = 1.0 - r / x - r * r;
        let mut next = x - f / slope;
        if !(next > lo && next < hi) {
            next = 0.5 * (lo + hi);
        }
        if (next - x).abs() <= 1e-14 * x || hi - lo <= 1e-14 * hi {
            x = next;
            break;
        }
        x = next;
    }
    (hard_body_radius_m * miss_m / x).sqrt()
}

/// I₁(x)/I₀(x) for x > 0 by the continued fraction
/// I_ν/I_(ν+1) = 2(ν+1)/x + I_(ν+2)/I_(ν+1), evaluated from far below
/// (ν ≈ 2x + 40, where the ratio is negligible) upwards.
fn bessel_i1_over_i0(x: f64) -> f64 {
    let n = (2.0 * x + 40.0).min(1e7) as usize;
    let mut r = 0.0; // I_(n+1)/I_n, taken as 0
    for nu in (0..n).rev() {
        r = 1.0 / (2.0 * (nu as f64 + 1.0) / x + r);
    }
    r
}

/// The reference for [`pc_max`] in tests: the same maximum found by brute
/// force with the 2-D reference integral [`pc_foster`] (about 100 integrals).
/// Maximum probability over an unknown covariance size with the shape (axis
/// directions and aspect ratio σy/σx) fixed by the caller: max over k > 0 of
/// Pc with sigmas (kσx, kσy).
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
pub fn pc_max_scan(e: &Encounter2d) -> PcMax {
    if let Some(edge) = edge_case(e) {
        return edge;
    }
    let r_m = e.hard_body_radius_m;
    let (sx, sy) = (e.sigma_x_m, e.sigma_y_m);
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
/// 1999); this function uses the exact maximiser of [`isotropic_max_sigma_m`].
pub fn pc_max_isotropic(miss_m: f64, hard_body_radius_m: f64) -> Result<PcMax, PcInputError> {
    let e = Encounter2d::new(miss_m.abs(), 0.0, 1.0, 1.0, hard_body_radius_m)?;
    Ok(pc_max(&e))
}
