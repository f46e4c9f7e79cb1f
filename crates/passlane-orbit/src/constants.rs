//! Physical constants, each with its source.

/// WGS-72 Earth gravitational parameter, km³/s² (the value SGP4 and the
/// element sets' producers use; Hoots & Roehrich 1980, Spacetrack Report #3).
pub const MU_WGS72_KM3_S2: f64 = 398_600.8;
/// WGS-72 equatorial radius, km (same source).
pub const EARTH_RADIUS_WGS72_KM: f64 = 6378.135;
/// WGS-84 Earth gravitational parameter, km³/s² (NIMA TR8350.2, 3rd ed.).
pub const MU_WGS84_KM3_S2: f64 = 398_600.441_8;
/// WGS-84 semi-major axis, km (NIMA TR8350.2).
pub const WGS84_A_KM: f64 = 6378.137;
/// WGS-84 flattening (NIMA TR8350.2).
pub const WGS84_F: f64 = 1.0 / 298.257_223_563;
/// Earth rotation rate, rad/s (WGS-84 nominal value, NIMA TR8350.2; also the
/// value used for TEME→PEF velocity transforms in Vallado et al. 2006).
pub const EARTH_ROTATION_RAD_S: f64 = 7.292_115_146_706_979e-5;
/// Newtonian constant of gravitation, m³/(kg·s²) (CODATA 2018).
pub const G_M3_KG_S2: f64 = 6.674_30e-11;
/// Mass of the Earth, kg (IAU 2015 nominal GM / G; value from memory:
/// 5.9722e24 kg, as tabulated in the Astronomical Almanac).
pub const EARTH_MASS_KG: f64 = 5.9722e24;
/// Speed of light in vacuum, km/s (SI definition).
pub const SPEED_OF_LIGHT_KM_S: f64 = 299_792.458;
/// Astronomical unit, km (IAU 2012 Resolution B2).
pub const AU_KM: f64 = 149_597_870.7;
/// Solar radius, km (IAU 2015 nominal value).
pub const SUN_RADIUS_KM: f64 = 695_700.0;
/// Sidereal day ratio used for geostationary checks: a geostationary orbit
/// makes 1.00273790935 revolutions per solar day (Astronomical Almanac).
pub const SIDEREAL_REV_PER_DAY: f64 = 1.002_737_909_35;
