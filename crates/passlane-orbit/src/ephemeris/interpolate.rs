//! Interpolation through the nodes of an ephemeris segment: Lagrange (on
//! positions, and separately on velocities) and Hermite (on positions with
//! the velocities as derivatives). Both take node times in seconds and
//! states `[x, y, z, ẋ, ẏ, ż]` (km, km/s).

use crate::frames::Vec3;

/// Lagrange interpolation through every node given, in barycentric form
/// (Berrut & Trefethen 2004, SIAM Review 46(3)): positions through the
/// positions and velocities through the velocities.
pub fn lagrange_nodes(ts: &[f64], states: &[[f64; 6]], x: f64) -> (Vec3, Vec3) {
    if let Some(j) = ts.iter().position(|&t| t == x) {
        let s = states[j];
        return ([s[0], s[1], s[2]], [s[3], s[4], s[5]]);
    }
    // Times relative to the first node keep the products small.
    let t0 = ts[0];
    let mut num = [0.0; 6];
    let mut den = 0.0;
    for (j, tj) in ts.iter().enumerate() {
        let mut w = 1.0;
        for (k, tk) in ts.iter().enumerate() {
            if k != j {
                w /= (tj - t0) - (tk - t0);
            }
        }
        let c = w / ((x - t0) - (tj - t0));
        den += c;
        for (n, v) in num.iter_mut().zip(states[j]) {
            *n += c * v;
        }
    }
    (
        [num[0] / den, num[1] / den, num[2] / den],
        [num[3] / den, num[4] / den, num[5] / den],
    )
}

/// Hermite interpolation through positions and velocities at every node
/// (divided differences on doubled nodes, then the Newton form and its
/// derivative). The velocity returned is the polynomial's derivative.
pub fn hermite_nodes(ts: &[f64], states: &[[f64; 6]], x: f64) -> (Vec3, Vec3) {
    let m = ts.len();
    let n = 2 * m;
    let t0 = ts[0];
    let z: Vec<f64> = (0..n).map(|i| ts[i / 2] - t0).collect();
    let xr = x - t0;
    let mut pos = [0.0; 3];
    let mut vel = [0.0; 3];
    for c in 0..3 {
        // q[i] holds the divided difference f[z_{i-k} .. z_i] after pass k.
        let mut q: Vec<f64> = (0..n).map(|i| states[i / 2][c]).collect();
        let mut coef = vec![q[0]; n];
        for k in 1..n {
            for i in (k..n).rev() {
                q[i] = if z[i] == z[i - k] {
                    // Only k = 1 can meet equal nodes: the derivative.
                    states[i / 2][c + 3]
                } else {
                    (q[i] - q[i - 1]) / (z[i] - z[i - k])
                };
            }
            coef[k] = q[k];
        }
        // Newton form p(x) = Σ coef[k] Π_{j<k} (x − z_j), with its derivative.
        let (mut p, mut dp) = (coef[n - 1], 0.0);
        for k in (0..n - 1).rev() {
            dp = dp * (xr - z[k]) + p;
            p = p * (xr - z[k]) + coef[k];
        }
        pos[c] = p;
        vel[c] = dp;
    }
    (pos, vel)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// x(t) = t⁵ − 3t³ + t − 2 on nodes 0, 1.5, 3 (and velocity 5t⁴ − 9t² + 1).
    fn poly(t: f64) -> [f64; 6] {
        let x = t.powi(5) - 3.0 * t.powi(3) + t - 2.0;
        let v = 5.0 * t.powi(4) - 9.0 * t * t + 1.0;
        [x, 2.0 * x, -x, v, 2.0 * v, -v]
    }

    #[test]
    fn hermite_on_three_nodes_is_exact_for_a_quintic() {
        let ts = [0.0, 1.5, 3.0];
        let st: Vec<[f64; 6]> = ts.iter().map(|&t| poly(t)).collect();
        for i in 0..=30 {
            let x = i as f64 * 0.1;
            let (p, v) = hermite_nodes(&ts, &st, x);
            let want = poly(x);
            assert!((p[0] - want[0]).abs() < 1e-9 && (p[1] - want[1]).abs() < 1e-9);
            assert!((v[0] - want[3]).abs() < 1e-9 && (v[2] - want[5]).abs() < 1e-9);
        }
    }

    #[test]
    fn lagrange_on_six_nodes_is_exact_for_a_quintic() {
        let ts = [10.0, 11.0, 12.5, 13.0, 14.0, 16.0];
        let st: Vec<[f64; 6]> = ts.iter().map(|&t| poly(t - 10.0)).collect();
        for i in 0..=60 {
            let x = 10.0 + i as f64 * 0.1;
            let (p, v) = lagrange_nodes(&ts, &st, x);
            let want = poly(x - 10.0);
            assert!((p[0] - want[0]).abs() < 1e-7 * want[0].abs().max(1.0));
            assert!((v[1] - want[4]).abs() < 1e-7 * want[4].abs().max(1.0));
        }
    }
}
