//! The Sun's position and a satellite's shadow state.
//!
//! Sun: the low-precision series of the Astronomical Almanac (section C,
//! "Low precision formulas for the Sun"): about 0.01° in direction from 1950 to
//! 2050. The result is in the mean equator and equinox of date, which we use as
//! TEME (the two differ by the equation of the equinoxes, ~0.005°).
//! Shadow: the conical Earth-shadow model with the Sun and Earth as disks seen
//! from the satellite (Montenbruck & Gill, "Satellite Orbits", 2000, §3.4.2).

use crate::constants::{AU_KM, EARTH_RADIUS_WGS72_KM, SUN_RADIUS_KM};
use crate::frames::{Vec3, dot, norm, sub};
use crate::time::UtcTime;

/// Geocentric Sun position, km, in TEME (see the module docs).
pub fn sun_position_teme_km(t: UtcTime) -> Vec3 {
    let n = t.days_since_j2000();
    let mean_longitude_deg = (280.460 + 0.985_647_4 * n).rem_euclid(360.0);
    let g = (357.528 + 0.985_600_3 * n).rem_euclid(360.0).to_radians();
    let lambda = (mean_longitude_deg + 1.915 * g.sin() + 0.020 * (2.0 * g).sin()).to_radians();
    let epsilon = (23.439 - 0.000_000_4 * n).to_radians();
    let r_au = 1.000_14 - 0.016_71 * g.cos() - 0.000_14 * (2.0 * g).cos();
    let r = r_au * AU_KM;
    [
        r * lambda.cos(),
        r * epsilon.cos() * lambda.sin(),
        r * epsilon.sin() * lambda.sin(),
    ]
}

/// Whether a satellite sees the Sun.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Illumination {
    Sunlit,
    Penumbra,
    Umbra,
}

impl Illumination {
    pub fn label(self) -> &'static str {
        match self {
            Illumination::Sunlit => "sunlit",
            Illumination::Penumbra => "penumbra",
            Illumination::Umbra => "umbra",
        }
    }
}

/// Shadow state only, without the visible fraction: the same decisions as
/// [`shadow`] made on cosines (no inverse trigonometry), for callers that
/// sample many times per pass.
pub fn shadow_state(sat_km: &Vec3, sun_km: &Vec3) -> Illumination {
    let to_sun = sub(sun_km, sat_km);
    let d_sun = norm(&to_sun);
    let d_earth = norm(sat_km);
    if d_earth <= EARTH_RADIUS_WGS72_KM {
        return Illumination::Umbra;
    }
    let (sin_a, sin_b) = (SUN_RADIUS_KM / d_sun, EARTH_RADIUS_WGS72_KM / d_earth);
    let (cos_a, cos_b) = ((1.0 - sin_a * sin_a).sqrt(), (1.0 - sin_b * sin_b).sqrt());
    let cos_c = (-dot(sat_km, &to_sun) / (d_earth * d_sun)).clamp(-1.0, 1.0);
    // c ≥ a + b ⇔ cos c ≤ cos(a + b); c ≤ b − a ⇔ cos c ≥ cos(b − a) (all angles in [0, π]).
    if cos_c <= cos_a * cos_b - sin_a * sin_b {
        Illumination::Sunlit
    } else if sin_b > sin_a && cos_c >= cos_b * cos_a + sin_b * sin_a {
        Illumination::Umbra
    } else {
        Illumination::Penumbra
    }
}

/// How deep a position is in the Earth's penumbra and umbra, as two
/// continuous margins whose signs give [`shadow_state`]: the penumbra (or
/// umbra) holds where the first is positive, the umbra where the second is
/// not negative. Both are differences of cosines of the apparent angles
/// (Sun–Earth separation against the sum and difference of their radii), so
/// a scan can look for their extrema between samples and find a brush with
/// the shadow shorter than its step.
pub fn shadow_margins(sat_km: &Vec3, sun_km: &Vec3) -> (f64, f64) {
    let to_sun = sub(sun_km, sat_km);
    let d_sun = norm(&to_sun);
    let d_earth = norm(sat_km);
    if d_earth <= EARTH_RADIUS_WGS72_KM {
        return (1.0, 1.0);
    }
    let (sin_a, sin_b) = (SUN_RADIUS_KM / d_sun, EARTH_RADIUS_WGS72_KM / d_earth);
    let (cos_a, cos_b) = ((1.0 - sin_a * sin_a).sqrt(), (1.0 - sin_b * sin_b).sqrt());
    let cos_c = (-dot(sat_km, &to_sun) / (d_earth * d_sun)).clamp(-1.0, 1.0);
    let penumbra = cos_c - (cos_a * cos_b - sin_a * sin_b);
    let umbra = if sin_b > sin_a {
        cos_c - (cos_b * cos_a + sin_b * sin_a)
    } else {
        -2.0
    };
    (penumbra, umbra)
}

/// Shadow state and the fraction of the solar disk visible (1 sunlit, 0 umbra).
pub fn shadow(sat_km: &Vec3, sun_km: &Vec3) -> (Illumination, f64) {
    let to_sun = sub(sun_km, sat_km);
    let d_sun = norm(&to_sun);
    let d_earth = norm(sat_km);
    if d_earth <= EARTH_RADIUS_WGS72_KM {
        return (Illumination::Umbra, 0.0);
    }
    // Apparent radii of the Sun (a) and the Earth (b), and their separation (c).
    let a = (SUN_RADIUS_KM / d_sun).asin();
    let b = (EARTH_RADIUS_WGS72_KM / d_earth).asin();
    let cos_c = (-dot(sat_km, &to_sun) / (d_earth * d_sun)).clamp(-1.0, 1.0);
    let c = cos_c.acos();
    if c >= a + b {
        return (Illumination::Sunlit, 1.0);
    }
    if c <= b - a {
        return (Illumination::Umbra, 0.0);
    }
    if c < a - b {
        // Earth's disk wholly inside the Sun's (not possible from near Earth,
        // kept for completeness): an annular eclipse.
        return (Illumination::Penumbra, 1.0 - (b * b) / (a * a));
    }
    // Partial overlap of two disks (Montenbruck & Gill eq. 3.87-3.89).
    let x = (c * c + a * a - b * b) / (2.0 * c);
    let y = (a * a - x * x).max(0.0).sqrt();
    let area = a * a * (x / a).clamp(-1.0, 1.0).acos()
        + b * b * ((c - x) / b).clamp(-1.0, 1.0).acos()
        - c * y;
    let visible = 1.0 - area / (std::f64::consts::PI * a * a);
    (Illumination::Penumbra, visible.clamp(0.0, 1.0))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frames::unit;

    #[test]
    fn sun_almanac_worked_example() {
        // Astronomical Almanac low-precision example as reproduced in Meeus,
        // "Astronomical Algorithms" (1998), Example 25.a (from memory):
        // 1992-10-13 00:00 TD: apparent RA 198.38083°, Dec -7.78507°,
        // distance 0.99766 AU. The low-precision series should agree to ~0.01°.
        let t = UtcTime::from_calendar(1992, 10, 13, 0, 0, 0.0).unwrap();
        let s = sun_position_teme_km(t);
        let u = unit(&s);
        let ra = u[1].atan2(u[0]).to_degrees().rem_euclid(360.0);
        let dec = u[2].asin().to_degrees();
        assert!((ra - 198.380_83).abs() < 0.02, "ra {ra}");
        assert!((dec - -7.785_07).abs() < 0.02, "dec {dec}");
        assert!((norm(&s) / AU_KM - 0.997_66).abs() < 2e-4);
    }

    #[test]
    fn cheap_shadow_state_agrees_with_the_full_model() {
        let sun = sun_position_teme_km(UtcTime::parse_iso("2026-12-01T00:00:00Z").unwrap());
        let mut seen = std::collections::HashSet::new();
        for i in 0..20_000 {
            let ang = i as f64 * 0.000_314_159;
            for r in [6_700.0, 7_000.0, 12_000.0, 42_164.0] {
                let p = [
                    r * ang.cos() * -1.0,
                    r * ang.sin(),
                    r * 0.1 * (ang * 3.0).sin(),
                ];
                let full = shadow(&p, &sun).0;
                assert_eq!(shadow_state(&p, &sun), full, "{p:?}");
                let (pm, um) = shadow_margins(&p, &sun);
                let from_margins = if um >= 0.0 {
                    Illumination::Umbra
                } else if pm > 0.0 {
                    Illumination::Penumbra
                } else {
                    Illumination::Sunlit
                };
                assert_eq!(from_margins, full, "{p:?}");
                seen.insert(full.label());
            }
        }
        assert_eq!(seen.len(), 3, "all three states exercised");
    }

    #[test]
    fn shadow_states() {
        let sun = [AU_KM, 0.0, 0.0];
        // Between Earth and Sun: sunlit.
        assert_eq!(shadow(&[7000.0, 0.0, 0.0], &sun).0, Illumination::Sunlit);
        // Straight behind the Earth in LEO: umbra.
        assert_eq!(shadow(&[-7000.0, 0.0, 0.0], &sun).0, Illumination::Umbra);
        // Over the pole, well off the shadow axis: sunlit.
        assert_eq!(shadow(&[0.0, 0.0, 7000.0], &sun).0, Illumination::Sunlit);
        // Near the shadow edge there is a thin penumbra between the two.
        let mut seen = Vec::new();
        for i in 0..2000 {
            let y = 6300.0 + i as f64 * 0.1;
            let (state, frac) = shadow(&[-7000.0, y, 0.0], &sun);
            assert!((0.0..=1.0).contains(&frac));
            if seen.last() != Some(&state) {
                seen.push(state);
            }
        }
        assert_eq!(
            seen,
            vec![
                Illumination::Umbra,
                Illumination::Penumbra,
                Illumination::Sunlit
            ]
        );
    }
}
