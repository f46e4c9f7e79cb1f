//! Adaptive Gauss–Legendre quadrature and the 2-D integral of the Gaussian
//! density over the hard-body disk (Foster-style), the reference method.

use std::f64::consts::PI;

use super::Encounter2d;

/// 20-point Gauss–Legendre nodes on [−1, 1] (positive half; the rule is
/// symmetric) and weights, standard tabulated values (A&S Table 25.4 lists the
/// 20-point rule; digits recomputed with Newton iteration on P₂₀).
const GL20_X: [f64; 10] = [
    0.076_526_521_133_497_33,
    0.227_785_851_141_645_08,
    0.373_706_088_715_419_56,
    0.510_867_001_950_827_1,
    0.636_053_680_726_515,
    0.746_331_906_460_150_8,
    0.839_116_971_822_218_8,
    0.912_234_428_251_326,
    0.963_971_927_277_913_8,
    0.993_128_599_185_094_9,
];
const GL20_W: [f64; 10] = [
    0.152_753_387_130_725_85,
    0.149_172_986_472_603_75,
    0.142_096_109_318_382_05,
    0.131_688_638_449_176_63,
    0.118_194_531_961_518_42,
    0.101_930_119_817_240_44,
    0.083_276_741_576_704_75,
    0.062_672_048_334_109_06,
    0.040_601_429_800_386_94,
    0.017_614_007_139_152_12,
];

/// 20-point Gauss–Legendre over [a, b].
pub(super) fn gl20(f: &mut impl FnMut(f64) -> f64, a: f64, b: f64) -> f64 {
    let mid = 0.5 * (a + b);
    let half = 0.5 * (b - a);
    let mut s = 0.0;
    for (x, w) in GL20_X.iter().zip(GL20_W.iter()) {
        s += w * (f(mid - half * x) + f(mid + half * x));
    }
    s * half
}

/// A panel of the global adaptive rule: its ends, the sum of the two half
/// panels (the estimate), the two half values (reused when it is split) and
/// the error estimate |whole − halves|.
pub(super) struct Panel {
    a: f64,
    b: f64,
    left: f64,
    right: f64,
    err: f64,
}

pub(super) fn make_panel(
    f: &mut impl FnMut(f64) -> f64,
    a: f64,
    b: f64,
    whole: Option<f64>,
) -> Panel {
    let m = 0.5 * (a + b);
    let whole = whole.unwrap_or_else(|| gl20(f, a, b));
    let left = gl20(f, a, m);
    let right = gl20(f, m, b);
    Panel {
        a,
        b,
        left,
        right,
        err: (whole - left - right).abs(),
    }
}

/// Globally adaptive Gauss–Legendre on [a, b] (the strategy of QUADPACK's
/// QAG: keep splitting the panel with the largest error estimate until the
/// summed estimate is below `rel_tol` of the total).
///
/// `breakpoints` are places where the integrand is known to peak or turn
/// sharply; starting panels end there, so that a narrow peak is never missed
/// by the first sampling. This matters when the covariance is small against
/// the hard body, where the density is a needle inside the disk.
pub(super) fn integrate_global(
    mut f: impl FnMut(f64) -> f64,
    a: f64,
    b: f64,
    breakpoints: &[f64],
    rel_tol: f64,
) -> f64 {
    const START_PANELS: usize = 4;
    const MAX_PANELS: usize = 400;
    let mut cuts: Vec<f64> = (0..=START_PANELS)
        .map(|i| a + (b - a) * i as f64 / START_PANELS as f64)
        .collect();
    cuts.extend(breakpoints.iter().copied().filter(|x| *x > a && *x < b));
    cuts.sort_by(f64::total_cmp);
    cuts.dedup_by(|x, y| (*x - *y).abs() <= 1e-12 * (b - a).abs());
    let mut panels: Vec<Panel> = cuts
        .windows(2)
        .map(|w| make_panel(&mut f, w[0], w[1], None))
        .collect();
    loop {
        let total: f64 = panels.iter().map(|p| p.left + p.right).sum();
        let err: f64 = panels.iter().map(|p| p.err).sum();
        // The integrands are scaled so that their largest values are near 1;
        // an error below 1e-290 is then rounding in subnormal numbers, not
        // something more panels can resolve.
        if err <= rel_tol * total.abs() || err <= 1e-290 || panels.len() >= MAX_PANELS {
            return total;
        }
        let Some(worst) = panels
            .iter()
            .enumerate()
            .max_by(|x, y| x.1.err.total_cmp(&y.1.err))
            .map(|(i, _)| i)
        else {
            return total;
        };
        let p = panels.swap_remove(worst);
        let m = 0.5 * (p.a + p.b);
        panels.push(make_panel(&mut f, p.a, m, Some(p.left)));
        panels.push(make_panel(&mut f, m, p.b, Some(p.right)));
    }
}

/// Relative tolerance of the adaptive quadratures. The error estimate of a
/// 20-point panel against its halves is very pessimistic once the rule has
/// converged, so the delivered error is far below this.
pub(super) const QUAD_REL_TOL: f64 = 1e-11;

/// ∫₀ᴿ ρ·exp(−(q − q_ref)) dρ along the ray from the disk centre at angle θ,
/// where along the ray q = q* + ½a(ρ − ρ*)² exactly (the density is Gaussian).
/// The integrand is negligible (below e⁻⁴⁰ of its largest value on [0, R])
/// outside a window around the best point of the ray, so only that window is
/// integrated, with panels short enough that each spans at most 8 e-folds of
/// the exponential; then a fixed 20-point rule per panel is exact to rounding.
pub(super) fn radial_integral(
    centre_m: [f64; 2],
    sigma_m: [f64; 2],
    r_m: f64,
    theta: f64,
    q_ref: f64,
) -> f64 {
    let (s, c) = theta.sin_cos();
    let (mx, my) = (centre_m[0], centre_m[1]);
    let (sx2, sy2) = (sigma_m[0] * sigma_m[0], sigma_m[1] * sigma_m[1]);
    let a = c * c / sx2 + s * s / sy2;
    let rho_star = -(mx * c / sx2 + my * s / sy2) / a;
    let rho_peak = rho_star.clamp(0.0, r_m);
    let g = (rho_peak - rho_star).abs();
    let window = (80.0 / a) / (g + (g * g + 80.0 / a).sqrt());
    let lo = (rho_peak - window).max(0.0);
    let hi = (rho_peak + window).min(r_m);
    if hi <= lo {
        return 0.0;
    }
    let rate = a * g + a.sqrt() + 1.0 / hi;
    let panels = (((hi - lo) * rate / 8.0).ceil() as usize).clamp(1, 256);
    let h = (hi - lo) / panels as f64;
    let mut f = |rho: f64| {
        let x = mx + rho * c;
        let y = my + rho * s;
        rho * (q_ref - 0.5 * (x * x / sx2 + y * y / sy2)).exp()
    };
    let mut total = 0.0;
    for i in 0..panels {
        let p0 = lo + h * i as f64;
        total += gl20(&mut f, p0, p0 + h);
    }
    total
}

// ---------------------------------------------------------------------------
// Probability methods
// ---------------------------------------------------------------------------

/// The smallest value of q = ½(x²/σx² + y²/σy²) over the disk, approximately:
/// 0 when the disk holds the origin, otherwise the least of 256 samples on
/// the circle (the minimum lies on it) refined by a golden-section search.
/// Dividing the density by exp(−q_ref) makes its largest value on the disk
/// about 1, so the integrands never overflow and never sink into subnormal
/// numbers, where rounding noise would stall the adaptive rule.
pub(super) fn q_min_on_disk(centre_m: [f64; 2], sigma_m: [f64; 2], r_m: f64) -> f64 {
    let [mx, my] = centre_m;
    if mx.hypot(my) <= r_m {
        return 0.0;
    }
    let q = |t: f64| {
        let (s, c) = t.sin_cos();
        0.5 * (((mx + r_m * c) / sigma_m[0]).powi(2) + ((my + r_m * s) / sigma_m[1]).powi(2))
    };
    let n = 256;
    let h = 2.0 * PI / n as f64;
    let (mut best_t, mut best_q) = (0.0, q(0.0));
    for i in 1..n {
        let t = h * i as f64;
        let v = q(t);
        if v < best_q {
            (best_t, best_q) = (t, v);
        }
    }
    let g = 0.5 * (5.0f64.sqrt() - 1.0);
    let (mut lo, mut hi) = (best_t - h, best_t + h);
    for _ in 0..40 {
        let (x1, x2) = (hi - g * (hi - lo), lo + g * (hi - lo));
        if q(x1) < q(x2) {
            hi = x2;
        } else {
            lo = x1;
        }
    }
    best_q.min(q(0.5 * (lo + hi)))
}

/// True when Pc ≤ exp(−q_min)·πR²/(2πσxσy) (the density's largest value on
/// the disk times its area) is below the smallest f64, so the answer is 0.
/// Without this, a disk thousands of sigmas out would still be integrated
/// to full relative precision only to be multiplied by 0.
pub(super) fn below_underflow(q_min: f64, e: &Encounter2d) -> bool {
    let ln_bound = -q_min + (e.hard_body_radius_m.powi(2) / (2.0 * e.sigma_x_m * e.sigma_y_m)).ln();
    ln_bound < -746.0
}

/// Foster-style 2-D integration (Foster & Estes 1992): polar coordinates
/// (ρ, θ) about the centre of the hard-body disk, the Gaussian density of the
/// combined covariance integrated over ρ ∈ [0, R] and θ ∈ [0, 2π).
///
/// Foster and Estes used a fixed polar grid; ours is adaptive. Along each ray
/// the density is an exact Gaussian in ρ, which fixes where the radial
/// integrand lives (see `radial_integral`); the angular integral is globally
/// adaptive with a breakpoint in the direction of the density's centre. The
/// exponent is kept relative to the minimum of the quadratic form over the
/// disk, so neither overflow nor early underflow can occur and tails as small
/// as 1e-300 keep their relative precision.
pub fn pc_foster(e: &Encounter2d) -> f64 {
    let r_m = e.hard_body_radius_m;
    if r_m == 0.0 {
        return 0.0;
    }
    let (mx, my, sx, sy) = (e.miss_x_m, e.miss_y_m, e.sigma_x_m, e.sigma_y_m);
    let d_m = mx.hypot(my);
    let q_ref = q_min_on_disk([mx, my], [sx, sy], r_m);
    if below_underflow(q_ref, e) {
        return 0.0;
    }
    let theta0 = if d_m > 0.0 { (-my).atan2(-mx) } else { 0.0 };
    let integral = integrate_global(
        |t| radial_integral([mx, my], [sx, sy], r_m, theta0 + t, q_ref),
        -PI,
        PI,
        &[0.0],
        QUAD_REL_TOL,
    );
    let prob = integral * (-q_ref).exp() / (2.0 * PI * sx * sy);
    prob.clamp(0.0, 1.0)
}
