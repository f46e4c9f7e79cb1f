//! Inertial frames of the ephemerides operators exchange: TEME (SGP4's
//! output, true equator and mean equinox of date) ↔ EME2000 (mean equator and
//! equinox of J2000.0) ↔ GCRF, with the IAU 1976 precession and IAU 1980
//! nutation models.
//!
//! Chain, as in Vallado, Crawford, Hujsak & Kelso (2006, AIAA 2006-6753,
//! "Revisiting Spacetrack Report #3", §"TEME"):
//!
//! ```text
//! r_TEME = R3(Δψ·cos ε̄) · N · P · r_EME2000,    r_EME2000 = B · r_GCRF
//! ```
//!
//! - P: IAU 1976 precession (Lieske et al. 1977), angles ζ, z, θ;
//! - N = R1(−ε̄−Δε)·R3(−Δψ)·R1(ε̄): IAU 1980 nutation (Seidelmann 1982,
//!   Celestial Mechanics 27, 79-106; the 106-term series as tabulated in the
//!   Explanatory Supplement to the Astronomical Almanac, 1992, §3.222), mean
//!   obliquity ε̄ of IAU 1980;
//! - R3(Δψ·cos ε̄): the equation of the equinoxes without its later small
//!   terms, which takes the true equinox (TOD) to the mean equinox (TEME);
//! - B: the frame bias between the GCRF and the mean J2000 frame (IERS
//!   Conventions 2003, §5.5.4: ξ0 = −16.617 mas, η0 = −6.8192 mas,
//!   dα0 = −14.6 mas).
//!
//! Times: the models take TT, from UTC plus the leap seconds (TAI − UTC,
//! IERS Bulletin C) plus 32.184 s. No celestial-pole offsets (dψ, dε) are
//! applied: the frames are the models' own, as producers of EME2000
//! ephemerides from TEME use them. Velocities are rotated with the same
//! matrix (the matrix's own rate, from precession and nutation, moves a
//! LEO velocity by well under 1 mm/s). UT1 and polar motion do not enter:
//! they belong to the Earth-fixed frames ([`crate::frames`]).
//!
//! Checked against the PyPI package `pyerfa` 2.0.1.5 (`pnm80`, `nut80`,
//! `obl80`, `bp00`, `dat`) in `tests/inertial_frames.rs`.

use std::f64::consts::{PI, TAU};

use crate::frames::Vec3;
use crate::time::UtcTime;

/// A 3×3 rotation, row-major; `apply` computes `m · v`.
pub type Mat3 = [[f64; 3]; 3];

const ARCSEC: f64 = PI / 180.0 / 3600.0;

/// Leap seconds: (UTC start of the step, TAI − UTC from then on, s), from
/// the International Earth Rotation Service's Bulletin C. Before 1972 the
/// first value is used (this tool does not handle the rubber-second era).
const LEAP_SECONDS: [((i32, u32), f64); 28] = [
    ((1972, 1), 10.0),
    ((1972, 7), 11.0),
    ((1973, 1), 12.0),
    ((1974, 1), 13.0),
    ((1975, 1), 14.0),
    ((1976, 1), 15.0),
    ((1977, 1), 16.0),
    ((1978, 1), 17.0),
    ((1979, 1), 18.0),
    ((1980, 1), 19.0),
    ((1981, 7), 20.0),
    ((1982, 7), 21.0),
    ((1983, 7), 22.0),
    ((1985, 7), 23.0),
    ((1988, 1), 24.0),
    ((1990, 1), 25.0),
    ((1991, 1), 26.0),
    ((1992, 7), 27.0),
    ((1993, 7), 28.0),
    ((1994, 7), 29.0),
    ((1996, 1), 30.0),
    ((1997, 7), 31.0),
    ((1999, 1), 32.0),
    ((2006, 1), 33.0),
    ((2009, 1), 34.0),
    ((2012, 7), 35.0),
    ((2015, 7), 36.0),
    ((2017, 1), 37.0),
];

/// TAI − UTC at a UTC time, s (the latest step stays in force afterwards).
pub fn tai_minus_utc_s(t: UtcTime) -> f64 {
    let mut v = LEAP_SECONDS[0].1;
    for ((y, m), dat) in LEAP_SECONDS {
        match UtcTime::from_calendar(y, m, 1, 0, 0, 0.0) {
            Some(start) if t >= start => v = dat,
            _ => break,
        }
    }
    v
}

/// Julian centuries of TT since J2000.0 (TT) at a UTC time.
pub fn tt_centuries_since_j2000(t: UtcTime) -> f64 {
    (t.s_since_j2000() + tai_minus_utc_s(t) + 32.184) / 86_400.0 / 36_525.0
}

/// Coordinate rotations (the frame turns by `a`; vectors are re-expressed).
fn r1(a: f64) -> Mat3 {
    let (s, c) = a.sin_cos();
    [[1.0, 0.0, 0.0], [0.0, c, s], [0.0, -s, c]]
}

fn r2(a: f64) -> Mat3 {
    let (s, c) = a.sin_cos();
    [[c, 0.0, -s], [0.0, 1.0, 0.0], [s, 0.0, c]]
}

fn r3(a: f64) -> Mat3 {
    let (s, c) = a.sin_cos();
    [[c, s, 0.0], [-s, c, 0.0], [0.0, 0.0, 1.0]]
}

/// Matrix product `a · b`.
pub fn mul(a: &Mat3, b: &Mat3) -> Mat3 {
    std::array::from_fn(|i| std::array::from_fn(|j| (0..3).map(|k| a[i][k] * b[k][j]).sum()))
}

pub fn transpose(a: &Mat3) -> Mat3 {
    std::array::from_fn(|i| std::array::from_fn(|j| a[j][i]))
}

/// `m · v`.
pub fn apply(m: &Mat3, v: &Vec3) -> Vec3 {
    std::array::from_fn(|i| m[i][0] * v[0] + m[i][1] * v[1] + m[i][2] * v[2])
}

/// IAU 1976 precession matrix, mean J2000 → mean of date, at `t` Julian
/// centuries of TT since J2000 (Lieske et al. 1977, with the fixed epoch
/// J2000: ζ, z, θ in arcseconds).
pub fn precession_1976(t: f64) -> Mat3 {
    let zeta = (2306.2181 + (0.30188 + 0.017998 * t) * t) * t * ARCSEC;
    let z = (2306.2181 + (1.09468 + 0.018203 * t) * t) * t * ARCSEC;
    let theta = (2004.3109 + (-0.42665 - 0.041833 * t) * t) * t * ARCSEC;
    mul(&r3(-z), &mul(&r2(theta), &r3(-zeta)))
}

/// Mean obliquity of the ecliptic, IAU 1980 (Lieske et al. 1977), radians.
pub fn mean_obliquity_1980(t: f64) -> f64 {
    (84_381.448 + (-46.8150 + (-0.00059 + 0.001813 * t) * t) * t) * ARCSEC
}

/// The IAU 1980 nutation series: multipliers of the Delaunay arguments
/// (l, l', F, D, Ω), then Δψ sine coefficient and its rate per century, Δε
/// cosine coefficient and its rate, in 0.1 mas (Seidelmann 1982; Explanatory
/// Supplement 1992, Table 3.222.1).
#[allow(clippy::type_complexity)]
const NUTATION_1980: [([i8; 5], f64, f64, f64, f64); 106] = [
    ([0, 0, 0, 0, 1], -171996.0, -174.2, 92025.0, 8.9),
    ([0, 0, 0, 0, 2], 2062.0, 0.2, -895.0, 0.5),
    ([-2, 0, 2, 0, 1], 46.0, 0.0, -24.0, 0.0),
    ([2, 0, -2, 0, 0], 11.0, 0.0, 0.0, 0.0),
    ([-2, 0, 2, 0, 2], -3.0, 0.0, 1.0, 0.0),
    ([1, -1, 0, -1, 0], -3.0, 0.0, 0.0, 0.0),
    ([0, -2, 2, -2, 1], -2.0, 0.0, 1.0, 0.0),
    ([2, 0, -2, 0, 1], 1.0, 0.0, 0.0, 0.0),
    ([0, 0, 2, -2, 2], -13187.0, -1.6, 5736.0, -3.1),
    ([0, 1, 0, 0, 0], 1426.0, -3.4, 54.0, -0.1),
    ([0, 1, 2, -2, 2], -517.0, 1.2, 224.0, -0.6),
    ([0, -1, 2, -2, 2], 217.0, -0.5, -95.0, 0.3),
    ([0, 0, 2, -2, 1], 129.0, 0.1, -70.0, 0.0),
    ([2, 0, 0, -2, 0], 48.0, 0.0, 1.0, 0.0),
    ([0, 0, 2, -2, 0], -22.0, 0.0, 0.0, 0.0),
    ([0, 2, 0, 0, 0], 17.0, -0.1, 0.0, 0.0),
    ([0, 1, 0, 0, 1], -15.0, 0.0, 9.0, 0.0),
    ([0, 2, 2, -2, 2], -16.0, 0.1, 7.0, 0.0),
    ([0, -1, 0, 0, 1], -12.0, 0.0, 6.0, 0.0),
    ([-2, 0, 0, 2, 1], -6.0, 0.0, 3.0, 0.0),
    ([0, -1, 2, -2, 1], -5.0, 0.0, 3.0, 0.0),
    ([2, 0, 0, -2, 1], 4.0, 0.0, -2.0, 0.0),
    ([0, 1, 2, -2, 1], 4.0, 0.0, -2.0, 0.0),
    ([1, 0, 0, -1, 0], -4.0, 0.0, 0.0, 0.0),
    ([2, 1, 0, -2, 0], 1.0, 0.0, 0.0, 0.0),
    ([0, 0, -2, 2, 1], 1.0, 0.0, 0.0, 0.0),
    ([0, 1, -2, 2, 0], -1.0, 0.0, 0.0, 0.0),
    ([0, 1, 0, 0, 2], 1.0, 0.0, 0.0, 0.0),
    ([-1, 0, 0, 1, 1], 1.0, 0.0, 0.0, 0.0),
    ([0, 1, 2, -2, 0], -1.0, 0.0, 0.0, 0.0),
    ([0, 0, 2, 0, 2], -2274.0, -0.2, 977.0, -0.5),
    ([1, 0, 0, 0, 0], 712.0, 0.1, -7.0, 0.0),
    ([0, 0, 2, 0, 1], -386.0, -0.4, 200.0, 0.0),
    ([1, 0, 2, 0, 2], -301.0, 0.0, 129.0, -0.1),
    ([1, 0, 0, -2, 0], -158.0, 0.0, -1.0, 0.0),
    ([-1, 0, 2, 0, 2], 123.0, 0.0, -53.0, 0.0),
    ([0, 0, 0, 2, 0], 63.0, 0.0, -2.0, 0.0),
    ([1, 0, 0, 0, 1], 63.0, 0.1, -33.0, 0.0),
    ([-1, 0, 0, 0, 1], -58.0, -0.1, 32.0, 0.0),
    ([-1, 0, 2, 2, 2], -59.0, 0.0, 26.0, 0.0),
    ([1, 0, 2, 0, 1], -51.0, 0.0, 27.0, 0.0),
    ([0, 0, 2, 2, 2], -38.0, 0.0, 16.0, 0.0),
    ([2, 0, 0, 0, 0], 29.0, 0.0, -1.0, 0.0),
    ([1, 0, 2, -2, 2], 29.0, 0.0, -12.0, 0.0),
    ([2, 0, 2, 0, 2], -31.0, 0.0, 13.0, 0.0),
    ([0, 0, 2, 0, 0], 26.0, 0.0, -1.0, 0.0),
    ([-1, 0, 2, 0, 1], 21.0, 0.0, -10.0, 0.0),
    ([-1, 0, 0, 2, 1], 16.0, 0.0, -8.0, 0.0),
    ([1, 0, 0, -2, 1], -13.0, 0.0, 7.0, 0.0),
    ([-1, 0, 2, 2, 1], -10.0, 0.0, 5.0, 0.0),
    ([1, 1, 0, -2, 0], -7.0, 0.0, 0.0, 0.0),
    ([0, 1, 2, 0, 2], 7.0, 0.0, -3.0, 0.0),
    ([0, -1, 2, 0, 2], -7.0, 0.0, 3.0, 0.0),
    ([1, 0, 2, 2, 2], -8.0, 0.0, 3.0, 0.0),
    ([1, 0, 0, 2, 0], 6.0, 0.0, 0.0, 0.0),
    ([2, 0, 2, -2, 2], 6.0, 0.0, -3.0, 0.0),
    ([0, 0, 0, 2, 1], -6.0, 0.0, 3.0, 0.0),
    ([0, 0, 2, 2, 1], -7.0, 0.0, 3.0, 0.0),
    ([1, 0, 2, -2, 1], 6.0, 0.0, -3.0, 0.0),
    ([0, 0, 0, -2, 1], -5.0, 0.0, 3.0, 0.0),
    ([1, -1, 0, 0, 0], 5.0, 0.0, 0.0, 0.0),
    ([2, 0, 2, 0, 1], -5.0, 0.0, 3.0, 0.0),
    ([0, 1, 0, -2, 0], -4.0, 0.0, 0.0, 0.0),
    ([1, 0, -2, 0, 0], 4.0, 0.0, 0.0, 0.0),
    ([0, 0, 0, 1, 0], -4.0, 0.0, 0.0, 0.0),
    ([1, 1, 0, 0, 0], -3.0, 0.0, 0.0, 0.0),
    ([1, 0, 2, 0, 0], 3.0, 0.0, 0.0, 0.0),
    ([1, -1, 2, 0, 2], -3.0, 0.0, 1.0, 0.0),
    ([-1, -1, 2, 2, 2], -3.0, 0.0, 1.0, 0.0),
    ([-2, 0, 0, 0, 1], -2.0, 0.0, 1.0, 0.0),
    ([3, 0, 2, 0, 2], -3.0, 0.0, 1.0, 0.0),
    ([0, -1, 2, 2, 2], -3.0, 0.0, 1.0, 0.0),
    ([1, 1, 2, 0, 2], 2.0, 0.0, -1.0, 0.0),
    ([-1, 0, 2, -2, 1], -2.0, 0.0, 1.0, 0.0),
    ([2, 0, 0, 0, 1], 2.0, 0.0, -1.0, 0.0),
    ([1, 0, 0, 0, 2], -2.0, 0.0, 1.0, 0.0),
    ([3, 0, 0, 0, 0], 2.0, 0.0, 0.0, 0.0),
    ([0, 0, 2, 1, 2], 2.0, 0.0, -1.0, 0.0),
    ([-1, 0, 0, 0, 2], 1.0, 0.0, -1.0, 0.0),
    ([1, 0, 0, -4, 0], -1.0, 0.0, 0.0, 0.0),
    ([-2, 0, 2, 2, 2], 1.0, 0.0, -1.0, 0.0),
    ([-1, 0, 2, 4, 2], -2.0, 0.0, 1.0, 0.0),
    ([2, 0, 0, -4, 0], -1.0, 0.0, 0.0, 0.0),
    ([1, 1, 2, -2, 2], 1.0, 0.0, -1.0, 0.0),
    ([1, 0, 2, 2, 1], -1.0, 0.0, 1.0, 0.0),
    ([-2, 0, 2, 4, 2], -1.0, 0.0, 1.0, 0.0),
    ([-1, 0, 4, 0, 2], 1.0, 0.0, 0.0, 0.0),
    ([1, -1, 0, -2, 0], 1.0, 0.0, 0.0, 0.0),
    ([2, 0, 2, -2, 1], 1.0, 0.0, -1.0, 0.0),
    ([2, 0, 2, 2, 2], -1.0, 0.0, 0.0, 0.0),
    ([1, 0, 0, 2, 1], -1.0, 0.0, 0.0, 0.0),
    ([0, 0, 4, -2, 2], 1.0, 0.0, 0.0, 0.0),
    ([3, 0, 2, -2, 2], 1.0, 0.0, 0.0, 0.0),
    ([1, 0, 2, -2, 0], -1.0, 0.0, 0.0, 0.0),
    ([0, 1, 2, 0, 1], 1.0, 0.0, 0.0, 0.0),
    ([-1, -1, 0, 2, 1], 1.0, 0.0, 0.0, 0.0),
    ([0, 0, -2, 0, 1], -1.0, 0.0, 0.0, 0.0),
    ([0, 0, 2, -1, 2], -1.0, 0.0, 0.0, 0.0),
    ([0, 1, 0, 2, 0], -1.0, 0.0, 0.0, 0.0),
    ([1, 0, -2, -2, 0], -1.0, 0.0, 0.0, 0.0),
    ([0, -1, 2, 0, 1], -1.0, 0.0, 0.0, 0.0),
    ([1, 1, 0, -2, 1], -1.0, 0.0, 0.0, 0.0),
    ([1, 0, -2, 2, 0], -1.0, 0.0, 0.0, 0.0),
    ([2, 0, 0, 2, 0], 1.0, 0.0, 0.0, 0.0),
    ([0, 0, 2, 4, 2], -1.0, 0.0, 0.0, 0.0),
    ([0, 1, 0, 1, 0], 1.0, 0.0, 0.0, 0.0),
];

/// Nutation in longitude and obliquity, IAU 1980, radians, at `t` Julian
/// centuries of TT since J2000.
pub fn nutation_1980(t: f64) -> (f64, f64) {
    // Delaunay arguments of the 1980 theory: arcseconds plus whole
    // revolutions per century.
    let arg = |c0: f64, c1: f64, c2: f64, c3: f64, rev: f64| {
        ((c0 + (c1 + (c2 + c3 * t) * t) * t) * ARCSEC + (rev * t).rem_euclid(1.0) * TAU)
            .rem_euclid(TAU)
    };
    let l = arg(485_866.733, 715_922.633, 31.310, 0.064, 1325.0);
    let lp = arg(1_287_099.804, 1_292_581.224, -0.577, -0.012, 99.0);
    let f = arg(335_778.877, 295_263.137, -13.257, 0.011, 1342.0);
    let d = arg(1_072_261.307, 1_105_601.328, -6.891, 0.019, 1236.0);
    let om = arg(450_160.280, -482_890.539, 7.455, 0.008, -5.0);
    let (mut dpsi, mut deps) = (0.0, 0.0);
    // Smallest terms first, for the rounding.
    for (k, s, st, c, ct) in NUTATION_1980.iter().rev() {
        let a = f64::from(k[0]) * l
            + f64::from(k[1]) * lp
            + f64::from(k[2]) * f
            + f64::from(k[3]) * d
            + f64::from(k[4]) * om;
        dpsi += (s + st * t) * a.sin();
        deps += (c + ct * t) * a.cos();
    }
    let unit = ARCSEC / 1e4;
    (dpsi * unit, deps * unit)
}

/// Frame bias, GCRF → mean J2000 (EME2000): r_EME2000 = B · r_GCRF (IERS
/// Conventions 2003 §5.5.4, B = R1(−η0)·R2(ξ0)·R3(dα0), with the bias in
/// longitude −41.775 mas, so ξ0 = −41.775 mas · sin ε0 ≈ −16.617 mas).
pub fn frame_bias() -> Mat3 {
    let mas = ARCSEC / 1000.0;
    let xi0 = -41.775 * mas * mean_obliquity_1980(0.0).sin();
    let eta0 = -6.8192 * mas;
    let da0 = -14.6 * mas;
    mul(&r1(-eta0), &mul(&r2(xi0), &r3(da0)))
}

/// The rotation EME2000 → TEME at one instant: r_TEME = M · r_EME2000.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Eme2000ToTeme {
    m: Mat3,
}

impl Eme2000ToTeme {
    pub fn at(t: UtcTime) -> Self {
        let c = tt_centuries_since_j2000(t);
        let eps = mean_obliquity_1980(c);
        let (dpsi, deps) = nutation_1980(c);
        let p = precession_1976(c);
        let n = mul(&r1(-(eps + deps)), &mul(&r3(-dpsi), &r1(eps)));
        let eq = r3(dpsi * eps.cos());
        Eme2000ToTeme {
            m: mul(&eq, &mul(&n, &p)),
        }
    }

    pub fn matrix(&self) -> Mat3 {
        self.m
    }

    /// EME2000 → TEME.
    pub fn to_teme(&self, r: &Vec3) -> Vec3 {
        apply(&self.m, r)
    }

    /// TEME → EME2000.
    pub fn to_eme2000(&self, r: &Vec3) -> Vec3 {
        apply(&transpose(&self.m), r)
    }
}

/// TEME → EME2000 for a state (km, km/s) at its time.
pub fn teme_to_eme2000(t: UtcTime, r: &Vec3, v: &Vec3) -> (Vec3, Vec3) {
    let m = Eme2000ToTeme::at(t);
    (m.to_eme2000(r), m.to_eme2000(v))
}

/// EME2000 → TEME for a state (km, km/s) at its time.
pub fn eme2000_to_teme(t: UtcTime, r: &Vec3, v: &Vec3) -> (Vec3, Vec3) {
    let m = Eme2000ToTeme::at(t);
    (m.to_teme(r), m.to_teme(v))
}

/// GCRF → TEME for a state (km, km/s) at its time (frame bias, then as EME2000).
pub fn gcrf_to_teme(t: UtcTime, r: &Vec3, v: &Vec3) -> (Vec3, Vec3) {
    let b = frame_bias();
    eme2000_to_teme(t, &apply(&b, r), &apply(&b, v))
}

/// TEME → GCRF for a state (km, km/s) at its time.
pub fn teme_to_gcrf(t: UtcTime, r: &Vec3, v: &Vec3) -> (Vec3, Vec3) {
    let (r, v) = teme_to_eme2000(t, r, v);
    let bt = transpose(&frame_bias());
    (apply(&bt, &r), apply(&bt, &v))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn leap_seconds_step_at_the_start_of_2017() {
        let before = UtcTime::from_calendar(2016, 12, 31, 23, 59, 59.0).unwrap_or_default();
        let after = UtcTime::from_calendar(2017, 1, 1, 0, 0, 0.0).unwrap_or_default();
        assert_eq!(tai_minus_utc_s(before), 36.0);
        assert_eq!(tai_minus_utc_s(after), 37.0);
    }

    #[test]
    fn rotations_round_trip() {
        let t = UtcTime::from_calendar(2026, 12, 1, 0, 0, 0.0).unwrap_or_default();
        let r = [6778.0, -1234.5, 321.0];
        let v = [1.0, 7.5, -0.3];
        let (re, ve) = teme_to_gcrf(t, &r, &v);
        let (rb, vb) = gcrf_to_teme(t, &re, &ve);
        for k in 0..3 {
            assert!((rb[k] - r[k]).abs() < 1e-9 && (vb[k] - v[k]).abs() < 1e-12);
        }
    }
}
