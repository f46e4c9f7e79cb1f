//! The one-dimensional methods: Alfano's error-function integral and Chan's
//! series.

use std::f64::consts::PI;

use super::Encounter2d;
use super::erf::erf_diff;
use super::quadrature::{QUAD_REL_TOL, below_underflow, integrate_global};

/// Alfano's 1-D integral (Alfano 2005, J. Astronautical Sciences 53(1)):
/// along x across the disk, the y-integral of the Gaussian over the chord is
/// ½[erf((y_m + h)/(√2σy)) − erf((y_m − h)/(√2σy))] with h the half chord.
///
/// Implementation choices of ours: the erf difference is taken in the stable
/// form of [`erf_diff`]; x is parametrised as x = x_m + R sin φ so that the
/// square-root behaviour of the chord at the disk edge disappears; and the
/// φ-integral is globally adaptive Gauss–Legendre with breakpoints where the
/// x-factor peaks and where the chord edges cross y = 0 (Alfano used a
/// Simpson-type rule with a sample count set from the geometry).
pub fn pc_alfano(e: &Encounter2d) -> f64 {
    let r_m = e.hard_body_radius_m;
    if r_m == 0.0 {
        return 0.0;
    }
    let (mx, my, sx, sy) = (e.miss_x_m, e.miss_y_m, e.sigma_x_m, e.sigma_y_m);
    let sqrt2 = std::f64::consts::SQRT_2;
    // exp(−x²/2σx²) is kept relative to its largest value on the disk so that a
    // disk far out in x does not underflow before the final product.
    let x_near = (mx.abs() - r_m).max(0.0);
    let q_ref = 0.5 * (x_near / sx).powi(2);
    // A lower bound of the quadratic form's minimum over the disk suffices
    // for the underflow test and costs nothing (the exact minimum costs a
    // few hundred evaluations): the disk is at least d − R from the centre,
    // and no direction has a sigma above the larger one.
    let gap_m = (mx.hypot(my) - r_m).max(0.0);
    if below_underflow(0.5 * (gap_m / sx.max(sy)).powi(2), e) {
        return 0.0;
    }
    let integrand = |phi: f64| {
        let (s, c) = phi.sin_cos();
        let x = mx + r_m * s;
        let h = r_m * c;
        let chord = 0.5 * erf_diff((my + h) / (sqrt2 * sy), (my - h) / (sqrt2 * sy));
        chord * (q_ref - 0.5 * (x / sx).powi(2)).exp() * r_m * c
    };
    let mut breaks = vec![(-mx / r_m).clamp(-1.0, 1.0).asin()];
    if my.abs() < r_m {
        let phi_edge = (my.abs() / r_m).acos();
        breaks.extend([phi_edge, -phi_edge]);
    }
    let est = integrate_global(integrand, -PI / 2.0, PI / 2.0, &breaks, QUAD_REL_TOL);
    let prob = est * (-q_ref).exp() / ((2.0 * PI).sqrt() * sx);
    prob.clamp(0.0, 1.0)
}

/// Chan's equivalent-area series (Chan 1997; "Spacecraft Collision
/// Probability", 2008, ch. 5).
///
/// Chan scales the encounter plane so that the covariance becomes isotropic,
/// which turns the hard-body disk into an ellipse, and replaces that ellipse
/// with the circle of equal area. The probability of the circle is then the
/// Rician (non-central χ², 2 degrees of freedom) distribution:
///
/// Pc = e^(−v/2) Σₘ (v/2)ᵐ/m! · [1 − e^(−u/2) Σₖ₌₀..ₘ (u/2)ᵏ/k!],
///
/// with u = R²/(σxσy) and v = x²/σx² + y²/σy². It is exact for an isotropic
/// covariance and an approximation otherwise, good when R is small against
/// the smaller sigma.
///
/// The bracket is the regularised incomplete gamma P(m+1, u/2); for small u it
/// is summed as its tail e^(−u/2) Σₖ₍ₘ (u/2)ᵏ/k! rather than as 1 minus the
/// head, which would cancel. The Poisson weights are formed in logarithms so a
/// large v does not underflow e^(−v/2) before the sum.
pub fn pc_chan(e: &Encounter2d) -> f64 {
    let r_m = e.hard_body_radius_m;
    if r_m == 0.0 {
        return 0.0;
    }
    let u = r_m * r_m / (e.sigma_x_m * e.sigma_y_m);
    let v = (e.miss_x_m / e.sigma_x_m).powi(2) + (e.miss_y_m / e.sigma_y_m).powi(2);
    rician_cdf(v / 2.0, u / 2.0).clamp(0.0, 1.0)
}

/// Σₘ Poisson(m; λ) · P(m+1, a), i.e. P(non-central χ²₂(2λ) ≤ 2a).
///
/// Each step costs O(1) plus a short tail sum: ln m! and the head
/// e^(−a) Σₖ≤ₘ aᵏ/k! are carried from one m to the next instead of being
/// recomputed (recomputing them made a far miss, λ ~ 10⁶, take hours). The
/// sum also stops as soon as P(m+1, a) is negligible: it falls with m, so no
/// later term can exceed it.
pub(super) fn rician_cdf(lambda: f64, a: f64) -> f64 {
    if a <= 0.0 {
        return 0.0;
    }
    let ln_lambda = lambda.ln();
    let ln_a = a.ln();
    let mut ln_fact = 0.0; // ln m!
    let mut head = 0.0; // e^(−a) Σₖ≤ₘ aᵏ/k!
    let mut total = 0.0;
    let m_peak = lambda.floor();
    let mut m = 0u32;
    loop {
        let mf = f64::from(m);
        if m > 0 {
            ln_fact += mf.ln();
        }
        head += (mf * ln_a - ln_fact - a).exp();
        let ln_w = if lambda > 0.0 {
            -lambda + mf * ln_lambda - ln_fact
        } else if m == 0 {
            0.0
        } else {
            f64::NEG_INFINITY
        };
        let p = gamma_p_int(m + 1, a, ln_fact + (mf + 1.0).ln(), head);
        let term = ln_w.exp() * p;
        total += term;
        if p <= 1e-17 * total || p < f64::MIN_POSITIVE {
            break;
        }
        // Stop past the Poisson peak once terms no longer matter.
        if mf > m_peak && (term <= 1e-17 * total || ln_w < -745.0) {
            break;
        }
        if m > 100_000 {
            break;
        }
        m += 1;
    }
    total
}

/// Regularised lower incomplete gamma P(n, a) for integer n ≥ 1, given
/// ln n! and the head e^(−a) Σₖ<ₙ aᵏ/k! (the caller carries both along n).
pub(super) fn gamma_p_int(n: u32, a: f64, ln_n_fact: f64, head: f64) -> f64 {
    if a <= 0.0 {
        return 0.0;
    }
    let nf = f64::from(n);
    if a < nf {
        // Tail form e^(−a) Σₖ≥ₙ aᵏ/k!, no cancellation; computed in logs.
        let mut term = (nf * a.ln() - ln_n_fact - a).exp();
        let mut sum = term;
        let mut k = nf;
        while term > 1e-17 * sum {
            k += 1.0;
            term *= a / k;
            sum += term;
            if k > nf + 10_000.0 {
                break;
            }
        }
        sum.min(1.0)
    } else {
        // 1 − head: here the head is at most about one half, so the
        // subtraction loses little.
        (1.0 - head).max(0.0)
    }
}
