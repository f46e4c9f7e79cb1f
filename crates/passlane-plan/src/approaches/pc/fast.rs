//! The production method: a series of positive terms for the 2-D Gaussian
//! over a disk, with a computable truncation bound, and Alfano's adaptive
//! 1-D integral where the series would need too many terms.
//!
//! The idea of a positive-term series with an error bound is that of Serra,
//! Arzelier, Joldes, Lasserre & Rondepierre (2016), "Fast and accurate
//! computation of orbital collision probability for short-term encounters",
//! J. Guidance, Control, and Dynamics 39(5). The form below is our own
//! derivation of such a series (a check of it is the 2-D reference integral
//! in the tests, not the paper's recurrences).
//!
//! Derivation. Put the disk at the origin and the density's centre at
//! (x_m, y_m), with σy ≤ σx (swap the axes otherwise). With p = 1/(2σy²) the
//! exponent splits as −p(x² + y²) + a x² + B x + C y − v/2 with a = pφ,
//! φ = 1 − σy²/σx², B = x_m/σx², C = y_m/σy², v = x_m²/σx² + y_m²/σy².
//! In polar coordinates the mean of F = exp(a x² + B x + C y) over the circle
//! of radius ρ is Σₖ ρ²ᵏ ΔᵏF(0) / (4ᵏ k!²) (Pizzetti's formula in the plane),
//! and the generating function Σₖ ΔᵏF(0) tᵏ/k! is the heat flow of F at the
//! origin, (1 − 4at)^(−½) exp(C² t + B² t/(1 − 4at)). Integrating ρ against
//! e^(−pρ²) term by term gives
//!
//!   Pc = Σₖ wₖ · P(k+1, pR²),
//!
//! where P is the regularised lower incomplete gamma function and the
//! weights wₖ ≥ 0 are the coefficients of
//! (σy/σx) e^(−v/2) (1 − φt)^(−½) exp(C̃ t + B̃ t/(1 − φt)),
//! C̃ = y_m²/(2σy²), B̃ = x_m²σy²/(2σx⁴). At t = 1 that is exactly 1, so the
//! weights are a probability distribution on k: the convolution of a Poisson
//! distribution of mean C̃ (the y part) with the coefficients hⱼ of the x
//! part, which follow from gₙ₊₁ = b gₙ + (φ/2) n gₙ₋₁ (b = √B̃; the
//! derivatives of exp(φx²/2 + b x) at 0), kept divided by Γ(n/2 + 1) so that
//! nothing overflows. Every term is positive, so there is no cancellation.
//! For an isotropic covariance (φ = 0, B̃ + C̃ = v/2) the series is Chan's
//! Rician series.
//!
//! Truncation bound: P(k+1, z) falls with k and the weights sum to 1, so the
//! terms after K add at most P(K+2, pR²)·(1 − Σₖ≤K wₖ). The sum stops when
//! that bound is below 1e-15 of the partial sum.
//!
//! Domain: the number of terms grows with pR² (hard body large against the
//! smaller sigma) and with v; when pR² > 40, v/2 > 600 (the weights would
//! leave the range of f64) or the terms pass 300, [`pc`] uses [`pc_alfano`]
//! instead, which is slower but has no such limit.

use super::Encounter2d;
use super::series::pc_alfano;

/// Largest pR² (hard-body radius against the smaller sigma) for the series.
const Z_MAX: f64 = 40.0;
/// Largest v/2 for the series: the weights are formed from e^(−v/2) and
/// quantities up to e^(v/2) (times the aspect ratio), which must stay finite.
const HALF_V_MAX: f64 = 600.0;
/// Most terms the series may use before [`pc`] falls back.
const TERMS_MAX: usize = 300;
/// Relative truncation bound at which the series stops.
const SERIES_REL_TOL: f64 = 1e-15;

/// Collision probability of a short-term encounter, the method every
/// assessment uses: [`pc_series`] where it applies, else [`pc_alfano`]. Agrees
/// with the 2-D reference [`super::pc_foster`] to 1e-6 relative or better
/// (tested over published cases and random geometries).
pub fn pc(e: &Encounter2d) -> f64 {
    pc_series(e).unwrap_or_else(|| pc_alfano(e))
}

/// The positive-term series of the module docs; `None` outside its domain
/// (see there), where the caller should integrate instead.
pub fn pc_series(e: &Encounter2d) -> Option<f64> {
    let r_m = e.hard_body_radius_m;
    if r_m == 0.0 {
        return Some(0.0);
    }
    let (mx, my, sx, sy) = if e.sigma_y_m <= e.sigma_x_m {
        (e.miss_x_m, e.miss_y_m, e.sigma_x_m, e.sigma_y_m)
    } else {
        (e.miss_y_m, e.miss_x_m, e.sigma_y_m, e.sigma_x_m)
    };
    let z = 0.5 * (r_m / sy).powi(2);
    let half_vx = 0.5 * (mx / sx).powi(2);
    let c_t = 0.5 * (my / sy).powi(2);
    if z > Z_MAX || half_vx + c_t > HALF_V_MAX {
        return None;
    }
    let ratio = sy / sx;
    // 1 − ratio² without cancellation when the ratio is near 1.
    let phi = (1.0 - ratio) * (1.0 + ratio);
    let b = (half_vx).sqrt() * ratio; // √B̃ = |x_m| σy / (√2 σx²)
    let mut x_part = XPart::new(b, phi, ratio * (-half_vx).exp());
    let mut poisson_y = Vec::with_capacity(32);
    let mut h = Vec::with_capacity(32);
    let mut gamma = GammaP::new(z);
    let mut sum = 0.0;
    let mut weight_sum = 0.0;
    let mut y_term = (-c_t).exp();
    for k in 0..TERMS_MAX {
        h.push(x_part.next());
        poisson_y.push(y_term);
        y_term *= c_t / (k + 1) as f64;
        // wₖ = Σⱼ hⱼ · Poisson(k − j; C̃).
        let w: f64 = h
            .iter()
            .zip(poisson_y.iter().rev())
            .map(|(hj, pj)| hj * pj)
            .sum();
        let p_k = gamma.next();
        sum += w * p_k;
        weight_sum += w;
        let bound = gamma.upper_bound_next() * (1.0 - weight_sum).max(0.0);
        if bound <= SERIES_REL_TOL * sum || (sum == 0.0 && bound == 0.0) {
            return Some(sum.clamp(0.0, 1.0));
        }
    }
    None
}

/// The coefficients hⱼ of the x part, scaled by (σy/σx)·e^(−x_m²/(2σx²)):
/// Ĝₙ = gₙ/Γ(n/2 + 1) with Ĝₙ₊₁ = b ρₙ Ĝₙ + φ n/(n+1) Ĝₙ₋₁ and
/// ρₙ = Γ(n/2 + 1)/Γ(n/2 + 3/2), ρₙρₙ₊₁ = 1/(n/2 + 1); hⱼ = Ĝ₂ⱼ.
struct XPart {
    b: f64,
    phi: f64,
    /// Ĝₙ₋₁, Ĝₙ (scaled), ρₙ and n.
    g_prev: f64,
    g: f64,
    rho: f64,
    n: f64,
    started: bool,
}

impl XPart {
    fn new(b: f64, phi: f64, scale: f64) -> Self {
        XPart {
            b,
            phi,
            g_prev: 0.0,
            g: scale,
            rho: 2.0 / std::f64::consts::PI.sqrt(),
            n: 0.0,
            started: false,
        }
    }

    /// One step of the recurrence, n → n + 1.
    fn step(&mut self) {
        let next = self.b * self.rho * self.g + self.phi * self.n / (self.n + 1.0) * self.g_prev;
        self.rho = 1.0 / ((0.5 * self.n + 1.0) * self.rho);
        self.g_prev = self.g;
        self.g = next;
        self.n += 1.0;
    }

    /// hⱼ for j = 0, 1, 2, … on successive calls.
    fn next(&mut self) -> f64 {
        if self.started {
            self.step();
            self.step();
        }
        self.started = true;
        self.g
    }
}

/// P(k+1, z) for k = 0, 1, 2, … on successive calls, each with full relative
/// accuracy: 1 − e^(−z)Σⱼ≤ₖ zʲ/j! while k + 1 ≤ z (the value is then above
/// about a half, so the subtraction loses nothing), and the tail
/// e^(−z)Σⱼ>ₖ zʲ/j! summed directly beyond.
struct GammaP {
    z: f64,
    /// e^(−z) z^k / k! for the current k.
    poisson: f64,
    /// Σⱼ≤ₖ of those terms.
    head: f64,
    k: usize,
}

impl GammaP {
    fn new(z: f64) -> Self {
        GammaP {
            z,
            poisson: 0.0,
            head: 0.0,
            k: 0,
        }
    }

    fn next(&mut self) -> f64 {
        self.poisson = if self.k == 0 {
            (-self.z).exp()
        } else {
            self.poisson * self.z / self.k as f64
        };
        self.head += self.poisson;
        self.k += 1;
        // Now P(k, z) with k = self.k: the Poisson tail from k on.
        let k = self.k as f64;
        if k <= self.z {
            return (1.0 - self.head).max(0.0);
        }
        let mut term = self.poisson * self.z / k;
        let mut tail = 0.0;
        let mut j = k;
        while term > 1e-17 * tail || tail == 0.0 {
            tail += term;
            j += 1.0;
            term *= self.z / j;
            if term == 0.0 {
                break;
            }
        }
        tail
    }

    /// An upper bound on the value the next call returns, P(k+1, z):
    /// the tail is below its first term over 1 − z/(k+2) once k + 2 > z.
    fn upper_bound_next(&self) -> f64 {
        let k = self.k as f64; // the next value is P(k+1, z)
        let first = self.poisson * self.z / k * self.z / (k + 1.0);
        let q = self.z / (k + 2.0);
        if q < 1.0 { first / (1.0 - q) } else { 1.0 }
    }
}
