//! Root finders and minimisers shared by the planners: Brent's root finder
//! and minimiser (contact windows, antenna limits), a safeguarded regula falsi
//! for functions that may be undefined (screening on interpolants), and the
//! bisection of a boundary crossing (screening volumes).
//!
//! Each works on plain `f64` arguments (seconds from some origin); callers
//! convert to and from [`passlane_orbit::UtcTime`].

/// Extremum of a unimodal function on [a, b] to about 1 ms, by Brent's
/// method (golden section with parabolic steps; Brent 1973, "Algorithms for
/// Minimization without Derivatives", ch. 5). Returns (argument, value); the
/// ends are considered too, as a clipped pass can peak on one.
/// Newton steps from `t0` (found on an approximation) towards the root of
/// the exact function: `step_at(t)` returns f(t)/f'(t) at t, or `None` where
/// it cannot (an evaluation failed, a slope of the wrong sign), which keeps
/// the last point. A step that would leave [lo, hi] or move more than
/// `max_move` from `t0` keeps the last point too; a step shorter than `tol`
/// is the last one taken. At most `max_steps` steps.
pub fn newton_polish(
    t0: f64,
    (lo, hi): (f64, f64),
    max_move: f64,
    tol: f64,
    max_steps: usize,
    mut step_at: impl FnMut(f64) -> Option<f64>,
) -> f64 {
    let mut t = t0;
    for _ in 0..max_steps {
        let Some(step) = step_at(t) else { return t };
        let next = t - step;
        if !(lo..=hi).contains(&next) || (next - t0).abs() > max_move {
            return t;
        }
        t = next;
        if step.abs() < tol {
            break;
        }
    }
    t
}

pub fn golden_extremum(f: impl Fn(f64) -> f64, a: f64, b: f64, maximise: bool) -> (f64, f64) {
    brent_extremum(f, a, b, maximise, 5e-4)
}

/// [`golden_extremum`] to `tol` in the argument (absolute, plus 1e-12 of it).
pub fn brent_extremum(
    f: impl Fn(f64) -> f64,
    a: f64,
    b: f64,
    maximise: bool,
    tol: f64,
) -> (f64, f64) {
    let sign = if maximise { -1.0 } else { 1.0 };
    let g = |t: f64| sign * f(t);
    const CGOLD: f64 = 0.381_966_011_250_105_1;
    let (mut a, mut b) = (a.min(b), a.max(b));
    let (lo, hi) = (a, b);
    let mut x = a + CGOLD * (b - a);
    let (mut w, mut v) = (x, x);
    let mut fx = g(x);
    let (mut fw, mut fv) = (fx, fx);
    let mut d: f64 = 0.0;
    let mut e: f64 = 0.0;
    for _ in 0..100 {
        let xm = 0.5 * (a + b);
        let tol1 = tol + 1e-12 * x.abs();
        let tol2 = 2.0 * tol1;
        if (x - xm).abs() <= tol2 - 0.5 * (b - a) {
            break;
        }
        let mut golden = true;
        if e.abs() > tol1 {
            // Parabola through x, w, v.
            let r = (x - w) * (fx - fv);
            let mut q = (x - v) * (fx - fw);
            let mut p = (x - v) * q - (x - w) * r;
            q = 2.0 * (q - r);
            if q > 0.0 {
                p = -p;
            }
            q = q.abs();
            let e_old = e;
            if p.abs() < (0.5 * q * e_old).abs() && p > q * (a - x) && p < q * (b - x) {
                e = d;
                d = p / q;
                let u = x + d;
                if u - a < tol2 || b - u < tol2 {
                    d = if xm >= x { tol1 } else { -tol1 };
                }
                golden = false;
            }
        }
        if golden {
            e = if x >= xm { a - x } else { b - x };
            d = CGOLD * e;
        }
        let u = if d.abs() >= tol1 {
            x + d
        } else {
            x + tol1.copysign(d)
        };
        let fu = g(u);
        if fu <= fx {
            if u >= x {
                a = x;
            } else {
                b = x;
            }
            v = w;
            fv = fw;
            w = x;
            fw = fx;
            x = u;
            fx = fu;
        } else {
            if u < x {
                a = u;
            } else {
                b = u;
            }
            if fu <= fw || w == x {
                v = w;
                fv = fw;
                w = u;
                fw = fu;
            } else if fu <= fv || v == x || v == w {
                v = u;
                fv = fu;
            }
        }
    }
    let mut best = (x, fx);
    for t in [lo, hi] {
        let val = g(t);
        if val < best.1 {
            best = (t, val);
        }
    }
    (best.0, sign * best.1)
}

/// Brent's root finder on [a, b] with f(a)·f(b) ≤ 0, to `tol` in the argument.
pub fn brent_root(
    f: impl Fn(f64) -> f64,
    mut a: f64,
    mut b: f64,
    mut fa: f64,
    mut fb: f64,
    tol: f64,
) -> f64 {
    if fa == 0.0 {
        return a;
    }
    if fb == 0.0 {
        return b;
    }
    if fa.abs() < fb.abs() {
        std::mem::swap(&mut a, &mut b);
        std::mem::swap(&mut fa, &mut fb);
    }
    let mut c = a;
    let mut fc = fa;
    let mut mflag = true;
    let mut d = 0.0;
    for _ in 0..100 {
        if fb == 0.0 || (b - a).abs() < tol {
            return b;
        }
        let mut s = if fa != fc && fb != fc {
            a * fb * fc / ((fa - fb) * (fa - fc))
                + b * fa * fc / ((fb - fa) * (fb - fc))
                + c * fa * fb / ((fc - fa) * (fc - fb))
        } else {
            b - fb * (b - a) / (fb - fa)
        };
        let q = (3.0 * a + b) / 4.0;
        let between = if q < b {
            s > q && s < b
        } else {
            s > b && s < q
        };
        if !between
            || (mflag && (s - b).abs() >= (b - c).abs() / 2.0)
            || (!mflag && (s - b).abs() >= (c - d).abs() / 2.0)
            || (mflag && (b - c).abs() < tol)
            || (!mflag && (c - d).abs() < tol)
        {
            s = 0.5 * (a + b);
            mflag = true;
        } else {
            mflag = false;
        }
        let fs = f(s);
        d = c;
        c = b;
        fc = fb;
        if fa * fs < 0.0 {
            b = s;
            fb = fs;
        } else {
            a = s;
            fa = fs;
        }
        if fa.abs() < fb.abs() {
            std::mem::swap(&mut a, &mut b);
            std::mem::swap(&mut fa, &mut fb);
        }
    }
    b
}

/// A root of `f` on [x0, x1] with f(x0) < 0 ≤ f(x1), by regula falsi with a
/// bisection safeguard (a trial point within a tenth of either end is
/// replaced by the midpoint), to `tol` in the argument; returns the midpoint
/// of the final bracket. `f` may be undefined somewhere (`None`): the search
/// then gives up and returns `None`.
pub fn bracketed_root(
    f: impl Fn(f64) -> Option<f64>,
    mut x0: f64,
    mut x1: f64,
    mut g0: f64,
    mut g1: f64,
    tol: f64,
) -> Option<f64> {
    for _ in 0..60 {
        if x1 - x0 < tol {
            break;
        }
        let mut x = x0 - g0 * (x1 - x0) / (g1 - g0);
        if !(x > x0 + 0.1 * (x1 - x0) && x < x1 - 0.1 * (x1 - x0)) {
            x = 0.5 * (x0 + x1);
        }
        let g = f(x)?;
        if g < 0.0 {
            x0 = x;
            g0 = g;
        } else {
            x1 = x;
            g1 = g;
        }
    }
    Some(0.5 * (x0 + x1))
}

/// The boundary between `inside` (where `is_inside` holds) and `outside`, by
/// bisection until the bracket is at most `tol` wide; returns its midpoint.
/// The arguments may be in either order.
pub fn bisect_boundary<E>(
    mut is_inside: impl FnMut(f64) -> Result<bool, E>,
    mut inside: f64,
    mut outside: f64,
    tol: f64,
) -> Result<f64, E> {
    while (outside - inside).abs() > tol {
        let mid = 0.5 * (inside + outside);
        if is_inside(mid)? {
            inside = mid;
        } else {
            outside = mid;
        }
    }
    Ok(0.5 * (inside + outside))
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    #[test]
    fn root_finders_agree_on_a_cubic() {
        // x³ − 2 has its root at 2^(1/3) (exact value).
        let f = |x: f64| x * x * x - 2.0;
        let r = brent_root(f, 0.0, 2.0, f(0.0), f(2.0), 1e-12);
        assert!((r - 2f64.cbrt()).abs() < 1e-10);
        let r = bracketed_root(|x| Some(f(x)), 0.0, 2.0, f(0.0), f(2.0), 1e-10).unwrap();
        assert!((r - 2f64.cbrt()).abs() < 1e-9);
        assert_eq!(
            bracketed_root(|_| None, 0.0, 2.0, f(0.0), f(2.0), 1e-10),
            None
        );
        let b: Result<f64, ()> = bisect_boundary(|x| Ok(f(x) < 0.0), 0.0, 2.0, 1e-10);
        assert!((b.unwrap() - 2f64.cbrt()).abs() < 1e-9);
    }

    #[test]
    fn extremum_of_a_parabola_and_at_an_end() {
        let (x, v) = golden_extremum(|x| -(x - 1.0) * (x - 1.0) + 3.0, 0.0, 5.0, true);
        assert!((x - 1.0).abs() < 1e-3 && (v - 3.0).abs() < 1e-6);
        // Increasing on the whole interval: the maximum is at the end.
        let (x, _) = golden_extremum(|x| x, 0.0, 5.0, true);
        assert_eq!(x, 5.0);
    }
}
