//! Earth geometry: TEME → Earth-fixed, Earth-fixed ↔ WGS-84 geodetic, and
//! topocentric look angles.
//!
//! Frames: TEME (true equator, mean equinox of date; SGP4's output) is rotated
//! about z by the Greenwich mean sidereal time of UT1 (IAU 1982 expression) to
//! the pseudo-Earth-fixed frame, then by polar motion to the Earth-fixed frame
//! (ITRF). Default Earth orientation: UT1 = UTC and no polar motion (metres to
//! tens of metres in LEO; documented in the user guide). Elevation is measured
//! from the ellipsoid normal (geodetic), with no refraction.

use crate::constants::{EARTH_ROTATION_RAD_S, WGS84_A_KM, WGS84_F};
use crate::time::UtcTime;
use std::f64::consts::{PI, TAU};

pub type Vec3 = [f64; 3];

/// Earth orientation parameters the user may set.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub struct EarthOrientation {
    /// UT1 − UTC, seconds (|value| < 0.9 s by definition of UTC).
    #[serde(default)]
    pub ut1_utc_s: f64,
    /// Polar motion x, arcseconds.
    #[serde(default)]
    pub polar_x_arcsec: f64,
    /// Polar motion y, arcseconds.
    #[serde(default)]
    pub polar_y_arcsec: f64,
}

/// Greenwich mean sidereal time, IAU 1982 expression (Aoki et al. 1982; as
/// written in Vallado et al. 2006, `gstime`), radians in [0, 2π).
pub fn gmst_1982_rad(jd_ut1: f64) -> f64 {
    gmst_1982_from_days_rad(jd_ut1 - 2_451_545.0)
}

/// GMST from UT1 days since J2000 (keeps more precision than a Julian date,
/// whose f64 resolution is ~40 µs).
pub fn gmst_1982_from_days_rad(days_ut1_since_j2000: f64) -> f64 {
    let t = days_ut1_since_j2000 / 36_525.0;
    let seconds = -6.2e-6 * t * t * t
        + 0.093_104 * t * t
        + (876_600.0 * 3600.0 + 8_640_184.812_866) * t
        + 67_310.548_41;
    // 86400 s of sidereal time is 2π; 1 s of time is 1/240 degree. The
    // whole turns are taken off in seconds, where k·86400 is an exact
    // integer product, so the reduction is exact (no `%`: a software fmod
    // was 4 % of a week's pass search, callgrind); a quotient rounded
    // across an integer is caught by the two corrections.
    let mut of_turn = seconds - 86_400.0 * (seconds / 86_400.0).floor();
    if of_turn < 0.0 {
        of_turn += 86_400.0;
    } else if of_turn >= 86_400.0 {
        of_turn -= 86_400.0;
    }
    (of_turn * PI / 43_200.0).min(TAU.next_down())
}

/// GMST at a UTC time with the given Earth orientation.
pub fn gmst_at_rad(t: UtcTime, eop: &EarthOrientation) -> f64 {
    gmst_1982_from_days_rad((t.s_since_j2000() + eop.ut1_utc_s) / 86_400.0)
}

/// Position and velocity in an Earth-fixed frame (km, km/s).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct EarthFixed {
    pub position_km: Vec3,
    pub velocity_km_s: Vec3,
}

impl EarthFixed {
    /// The acceleration of this state in the Earth-fixed frame under the
    /// numerical propagator's gravity (`numerical::ForceModel::zonal`:
    /// central term with J2, J3 and J4 of WGS-72, the constants SGP4 uses;
    /// the zonal field is symmetric about the Earth-fixed z axis, which is
    /// TEME's), with the rotating frame's Coriolis (−2ω×v) and centrifugal
    /// (−ω×(ω×r)) terms. For interpolating SGP4 samples to fifth order
    /// ([`crate::interpolate::Quintic`]), not for propagating: it leaves out
    /// drag and SGP4's own mismatch between its positions and velocities.
    pub fn model_acceleration_km_s2(&self) -> Vec3 {
        let g = crate::numerical::ForceModel::zonal(None).gravity(&self.position_km);
        let [x, y, _] = self.position_km;
        let [vx, vy, _] = self.velocity_km_s;
        let w = crate::constants::EARTH_ROTATION_RAD_S;
        [
            g[0] + 2.0 * w * vy + w * w * x,
            g[1] - 2.0 * w * vx + w * w * y,
            g[2],
        ]
    }
}

/// Precomputed rotation TEME → Earth-fixed at one instant.
#[derive(Debug, Clone, Copy)]
pub struct TemeToEarthFixed {
    cos_g: f64,
    sin_g: f64,
    polar: Option<(f64, f64)>,
}

impl TemeToEarthFixed {
    pub fn at(t: UtcTime, eop: &EarthOrientation) -> Self {
        let g = gmst_at_rad(t, eop);
        let polar = if eop.polar_x_arcsec != 0.0 || eop.polar_y_arcsec != 0.0 {
            let arcsec = PI / 180.0 / 3600.0;
            Some((eop.polar_x_arcsec * arcsec, eop.polar_y_arcsec * arcsec))
        } else {
            None
        };
        TemeToEarthFixed {
            cos_g: g.cos(),
            sin_g: g.sin(),
            polar,
        }
    }

    /// Rotates a position only.
    pub fn position(&self, r: &Vec3) -> Vec3 {
        let pef = [
            self.cos_g * r[0] + self.sin_g * r[1],
            -self.sin_g * r[0] + self.cos_g * r[1],
            r[2],
        ];
        self.polar_motion(pef)
    }

    /// Rotates a state; the velocity gains the Earth-rotation term −ω × r.
    pub fn state(&self, r: &Vec3, v: &Vec3) -> EarthFixed {
        let r_pef = [
            self.cos_g * r[0] + self.sin_g * r[1],
            -self.sin_g * r[0] + self.cos_g * r[1],
            r[2],
        ];
        let w = EARTH_ROTATION_RAD_S;
        let v_pef = [
            self.cos_g * v[0] + self.sin_g * v[1] + w * r_pef[1],
            -self.sin_g * v[0] + self.cos_g * v[1] - w * r_pef[0],
            v[2],
        ];
        EarthFixed {
            position_km: self.polar_motion(r_pef),
            velocity_km_s: self.polar_motion(v_pef),
        }
    }

    /// Inverse rotation of a position, Earth-fixed → TEME (polar motion ignored
    /// when absent).
    pub fn position_to_teme(&self, r: &Vec3) -> Vec3 {
        let pef = match self.polar {
            None => *r,
            Some((xp, yp)) => {
                // Transpose of `polar_motion`.
                let m = polar_matrix(xp, yp);
                [
                    m[0][0] * r[0] + m[1][0] * r[1] + m[2][0] * r[2],
                    m[0][1] * r[0] + m[1][1] * r[1] + m[2][1] * r[2],
                    m[0][2] * r[0] + m[1][2] * r[1] + m[2][2] * r[2],
                ]
            }
        };
        [
            self.cos_g * pef[0] - self.sin_g * pef[1],
            self.sin_g * pef[0] + self.cos_g * pef[1],
            pef[2],
        ]
    }

    /// Inverse rotation of a state, Earth-fixed → TEME: polar motion undone,
    /// then the Earth-rotation term ω × r added back to the velocity, then
    /// the GMST rotation undone (the exact inverse of [`Self::state`]).
    pub fn state_to_teme(&self, r: &Vec3, v: &Vec3) -> (Vec3, Vec3) {
        let (r_pef, v_pef) = match self.polar {
            None => (*r, *v),
            Some((xp, yp)) => {
                let m = polar_matrix(xp, yp);
                let t = |a: &Vec3| -> Vec3 {
                    [
                        m[0][0] * a[0] + m[1][0] * a[1] + m[2][0] * a[2],
                        m[0][1] * a[0] + m[1][1] * a[1] + m[2][1] * a[2],
                        m[0][2] * a[0] + m[1][2] * a[1] + m[2][2] * a[2],
                    ]
                };
                (t(r), t(v))
            }
        };
        let w = EARTH_ROTATION_RAD_S;
        let u = [v_pef[0] - w * r_pef[1], v_pef[1] + w * r_pef[0], v_pef[2]];
        let back = |a: &Vec3| -> Vec3 {
            [
                self.cos_g * a[0] - self.sin_g * a[1],
                self.sin_g * a[0] + self.cos_g * a[1],
                a[2],
            ]
        };
        (back(&r_pef), back(&u))
    }

    fn polar_motion(&self, v: Vec3) -> Vec3 {
        match self.polar {
            None => v,
            Some((xp, yp)) => {
                let m = polar_matrix(xp, yp);
                [
                    m[0][0] * v[0] + m[0][1] * v[1] + m[0][2] * v[2],
                    m[1][0] * v[0] + m[1][1] * v[1] + m[1][2] * v[2],
                    m[2][0] * v[0] + m[2][1] * v[1] + m[2][2] * v[2],
                ]
            }
        }
    }
}

/// PEF → ITRF, W = R1(yp)·R2(xp) (IERS Conventions, IAU-1980 style; the
/// transpose of Vallado's `polarm`).
fn polar_matrix(xp: f64, yp: f64) -> [[f64; 3]; 3] {
    let (sx, cx) = xp.sin_cos();
    let (sy, cy) = yp.sin_cos();
    [
        [cx, 0.0, sx],
        [sx * sy, cy, -cx * sy],
        [-sx * cy, sy, cx * cy],
    ]
}

/// TEME state → Earth-fixed state at the state's time.
pub fn teme_to_earth_fixed(t: UtcTime, r: &Vec3, v: &Vec3, eop: &EarthOrientation) -> EarthFixed {
    TemeToEarthFixed::at(t, eop).state(r, v)
}

/// A WGS-84 geodetic position.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub struct Geodetic {
    pub latitude_deg: f64,
    pub longitude_deg: f64,
    pub height_km: f64,
}

/// Geodetic → Earth-fixed Cartesian, km.
pub fn geodetic_to_earth_fixed(g: &Geodetic) -> Vec3 {
    let e2 = WGS84_F * (2.0 - WGS84_F);
    let (sp, cp) = g.latitude_deg.to_radians().sin_cos();
    let (sl, cl) = g.longitude_deg.to_radians().sin_cos();
    let n = WGS84_A_KM / (1.0 - e2 * sp * sp).sqrt();
    [
        (n + g.height_km) * cp * cl,
        (n + g.height_km) * cp * sl,
        (n * (1.0 - e2) + g.height_km) * sp,
    ]
}

/// Earth-fixed Cartesian → geodetic (Bowring's method, iterated to below a
/// micrometre; valid everywhere except within metres of the geocentre).
pub fn earth_fixed_to_geodetic(r: &Vec3) -> Geodetic {
    let a = WGS84_A_KM;
    let f = WGS84_F;
    let e2 = f * (2.0 - f);
    let b = a * (1.0 - f);
    let ep2 = e2 / (1.0 - e2);
    let p = (r[0] * r[0] + r[1] * r[1]).sqrt();
    let lon = r[1].atan2(r[0]);
    if p < 1e-9 {
        let lat = if r[2] >= 0.0 { 90.0 } else { -90.0 };
        return Geodetic {
            latitude_deg: lat,
            longitude_deg: lon.to_degrees(),
            height_km: r[2].abs() - b,
        };
    }
    // Bowring's initial parametric latitude, then Newton-like refinement.
    let mut beta = (r[2] * a).atan2(p * b);
    let mut lat = 0.0;
    for _ in 0..5 {
        let (sb, cb) = beta.sin_cos();
        lat = (r[2] + ep2 * b * sb * sb * sb).atan2(p - e2 * a * cb * cb * cb);
        let new_beta = ((1.0 - f) * lat.sin()).atan2(lat.cos());
        if (new_beta - beta).abs() < 1e-15 {
            break;
        }
        beta = new_beta;
    }
    let (sp, cp) = lat.sin_cos();
    let n = a / (1.0 - e2 * sp * sp).sqrt();
    // Height from whichever expression is better conditioned.
    let h = if cp.abs() > 0.3 {
        p / cp - n
    } else {
        r[2] / sp - n * (1.0 - e2)
    };
    Geodetic {
        latitude_deg: lat.to_degrees(),
        longitude_deg: lon.to_degrees(),
        height_km: h,
    }
}

/// Azimuth, elevation, range and range-rate of a target seen from a site.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize)]
pub struct LookAngles {
    /// Degrees from north through east, [0, 360).
    pub azimuth_deg: f64,
    /// Degrees above the plane normal to the ellipsoid normal (no refraction).
    pub elevation_deg: f64,
    pub range_km: f64,
    /// d(range)/dt, km/s; positive when the target recedes.
    pub range_rate_km_s: f64,
}

/// A fixed site on the Earth, with its local frame precomputed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Site {
    pub geodetic: Geodetic,
    pub position_km: Vec3,
    /// Rows: east, north and up unit vectors in the Earth-fixed frame.
    enu: [Vec3; 3],
}

impl Site {
    pub fn new(geodetic: Geodetic) -> Self {
        let (sp, cp) = geodetic.latitude_deg.to_radians().sin_cos();
        let (sl, cl) = geodetic.longitude_deg.to_radians().sin_cos();
        Site {
            geodetic,
            position_km: geodetic_to_earth_fixed(&geodetic),
            enu: [
                [-sl, cl, 0.0],
                [-sp * cl, -sp * sl, cp],
                [cp * cl, cp * sl, sp],
            ],
        }
    }

    /// The east/north/up components of an Earth-fixed vector.
    pub fn to_enu(&self, v: &Vec3) -> Vec3 {
        [
            dot(&self.enu[0], v),
            dot(&self.enu[1], v),
            dot(&self.enu[2], v),
        ]
    }

    /// Sine of the elevation of an Earth-fixed position (cheap, no trig).
    pub fn sin_elevation(&self, r: &Vec3) -> f64 {
        let d = sub(r, &self.position_km);
        dot(&self.enu[2], &d) / norm(&d)
    }

    /// Look angles of an Earth-fixed state.
    pub fn look(&self, target: &EarthFixed) -> LookAngles {
        let d = sub(&target.position_km, &self.position_km);
        let range = norm(&d);
        let [e, n, u] = self.to_enu(&d);
        let mut az = e.atan2(n).to_degrees();
        if az < 0.0 {
            az += 360.0;
        }
        if az >= 360.0 {
            az -= 360.0;
        }
        LookAngles {
            azimuth_deg: az,
            elevation_deg: (u / range).clamp(-1.0, 1.0).asin().to_degrees(),
            range_km: range,
            range_rate_km_s: dot(&d, &target.velocity_km_s) / range,
        }
    }
}

pub fn dot(a: &Vec3, b: &Vec3) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

pub fn sub(a: &Vec3, b: &Vec3) -> Vec3 {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

pub fn add(a: &Vec3, b: &Vec3) -> Vec3 {
    [a[0] + b[0], a[1] + b[1], a[2] + b[2]]
}

pub fn scale(a: &Vec3, k: f64) -> Vec3 {
    [a[0] * k, a[1] * k, a[2] * k]
}

pub fn cross(a: &Vec3, b: &Vec3) -> Vec3 {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

pub fn norm(a: &Vec3) -> f64 {
    dot(a, a).sqrt()
}

pub fn unit(a: &Vec3) -> Vec3 {
    let n = norm(a);
    if n > 0.0 { scale(a, 1.0 / n) } else { [0.0; 3] }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gmst_vallado_example_3_5() {
        // Vallado, "Fundamentals of Astrodynamics and Applications", 4th ed.,
        // Example 3-5 (from memory): 1992-08-20 12:14:00 UT1 gives
        // GMST = 152.578787886°.
        let t = UtcTime::from_calendar(1992, 8, 20, 12, 14, 0.0).unwrap();
        let g = gmst_1982_rad(t.julian_date()).to_degrees();
        assert!((g - 152.578_787_886).abs() < 1e-6, "{g}");
    }

    #[test]
    fn gmst_at_j2000() {
        // At J2000.0 (UT1) the IAU 1982 expression's constant term gives
        // 67310.54841 s = 280.46061837° (Aoki et al. 1982).
        let g = gmst_1982_rad(2_451_545.0).to_degrees();
        assert!((g - 280.460_618_37).abs() < 1e-8, "{g}");
    }

    #[test]
    fn gmst_reduction_agrees_with_a_remainder_and_stays_in_one_turn() {
        // The reduction by whole days of seconds against the straightforward
        // remainder of the angle, from 1957 to 2100 and at exact day
        // boundaries of the sidereal seconds.
        let reference = |days: f64| {
            let t = days / 36_525.0;
            let seconds = -6.2e-6 * t * t * t
                + 0.093_104 * t * t
                + (876_600.0 * 3600.0 + 8_640_184.812_866) * t
                + 67_310.548_41;
            (seconds * PI / 180.0 / 240.0).rem_euclid(TAU)
        };
        let mut days = -15_700.0;
        while days < 36_600.0 {
            let g = gmst_1982_from_days_rad(days);
            assert!((0.0..TAU).contains(&g), "{days}: {g}");
            let d = (g - reference(days)).abs();
            assert!(d.min(TAU - d) < 1e-10, "{days}: {g} vs {}", reference(days));
            days += 0.379_123_7;
        }
    }

    #[test]
    fn geodetic_round_trip_examples() {
        for g in [
            Geodetic {
                latitude_deg: 0.0,
                longitude_deg: 0.0,
                height_km: 0.0,
            },
            Geodetic {
                latitude_deg: 73.36,
                longitude_deg: -98.74,
                height_km: 0.24,
            },
            Geodetic {
                latitude_deg: -45.0,
                longitude_deg: -170.0,
                height_km: 800.0,
            },
            Geodetic {
                latitude_deg: 89.9999,
                longitude_deg: 10.0,
                height_km: 35786.0,
            },
        ] {
            let back = earth_fixed_to_geodetic(&geodetic_to_earth_fixed(&g));
            assert!((back.latitude_deg - g.latitude_deg).abs() < 1e-10);
            assert!((back.longitude_deg - g.longitude_deg).abs() < 1e-10);
            assert!((back.height_km - g.height_km).abs() < 1e-9);
        }
    }
}
