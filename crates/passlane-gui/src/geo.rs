//! Map geometry as plain series: ground tracks, sub-satellite points, station
//! visibility circles and the day/night terminator. Everything here is computed
//! when its inputs change and cached by the caller; drawing only transforms the
//! points to the screen.
//!
//! Longitudes are in [-180, 180) degrees, latitudes geodetic degrees. A series
//! is a list of line strips, already split where it crosses the antimeridian so
//! that no strip draws a false line across the whole map.

use passlane_orbit::constants::EARTH_RADIUS_WGS72_KM;
use passlane_orbit::frames::earth_fixed_to_geodetic;
use passlane_orbit::{
    EarthOrientation, ElementSet, Propagator, TemeToEarthFixed, UtcTime, sun_position_teme_km,
};
use passlane_plan::Station;

/// A point on the map: (longitude_deg, latitude_deg).
pub type LonLat = [f64; 2];

/// Splits a sequence of map points into strips wherever consecutive longitudes
/// jump by more than 180°, interpolating the crossing so each strip reaches the
/// map edge instead of stopping short of it.
pub fn split_at_antimeridian(points: &[LonLat]) -> Vec<Vec<LonLat>> {
    let mut strips: Vec<Vec<LonLat>> = Vec::new();
    let mut current: Vec<LonLat> = Vec::new();
    for &p in points {
        if let Some(&q) = current.last() {
            let dlon = p[0] - q[0];
            if dlon.abs() > 180.0 {
                // Unwrap p next to q, find where the segment meets ±180.
                let edge = if dlon > 0.0 { -180.0 } else { 180.0 };
                let p_unwrapped = if dlon > 0.0 {
                    p[0] - 360.0
                } else {
                    p[0] + 360.0
                };
                let f = (edge - q[0]) / (p_unwrapped - q[0]);
                let lat = q[1] + f * (p[1] - q[1]);
                current.push([edge, lat]);
                strips.push(std::mem::take(&mut current));
                current.push([-edge, lat]);
            }
        }
        current.push(p);
    }
    if current.len() > 1 {
        strips.push(current);
    }
    strips.retain(|s| s.len() > 1);
    strips
}

/// Sub-satellite point (geodetic) of one element set at one time, or `None`
/// when SGP4 fails there (decayed, bad elements).
pub fn sub_satellite_point(
    prop: &Propagator,
    t: UtcTime,
    eop: &EarthOrientation,
) -> Option<LonLat> {
    let s = prop.state_at(t).ok()?;
    let ef = TemeToEarthFixed::at(t, eop).position(&s.position_km);
    let g = earth_fixed_to_geodetic(&ef);
    Some([wrap_lon_deg(g.longitude_deg), g.latitude_deg])
}

/// Where a spacecraft is at one time, for the map's hover: sub-satellite
/// point, height above the ellipsoid and whether it sees the Sun.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Position {
    pub lon_lat: LonLat,
    pub height_km: f64,
    pub illumination: passlane_orbit::Illumination,
}

/// [`Position`] of one spacecraft at `t`, or `None` when SGP4 fails there.
pub fn position(prop: &Propagator, t: UtcTime, eop: &EarthOrientation) -> Option<Position> {
    let s = prop.state_at(t).ok()?;
    let ef = TemeToEarthFixed::at(t, eop).position(&s.position_km);
    let g = earth_fixed_to_geodetic(&ef);
    Some(Position {
        lon_lat: [wrap_lon_deg(g.longitude_deg), g.latitude_deg],
        height_km: g.height_km,
        illumination: passlane_orbit::shadow_state(&s.position_km, &sun_position_teme_km(t)),
    })
}

/// The ground track of one spacecraft from `start` over `span_s`, sampled every
/// `step_s`, as antimeridian-split strips. Samples that fail to propagate end a strip.
pub fn ground_track(
    set: &ElementSet,
    start: UtcTime,
    span_s: f64,
    step_s: f64,
    eop: &EarthOrientation,
) -> Vec<Vec<LonLat>> {
    let Ok(prop) = Propagator::new(set) else {
        return Vec::new();
    };
    let step_s = step_s.max(1.0);
    let n = (span_s / step_s).ceil().max(1.0) as usize;
    let mut cursor = prop.cursor();
    let mut out = Vec::new();
    let mut run: Vec<LonLat> = Vec::with_capacity(n + 1);
    for i in 0..=n {
        let t = start.add_s(i as f64 * step_s);
        match cursor.state_at(t) {
            Ok(s) => {
                let ef = TemeToEarthFixed::at(t, eop).position(&s.position_km);
                let g = earth_fixed_to_geodetic(&ef);
                run.push([wrap_lon_deg(g.longitude_deg), g.latitude_deg]);
            }
            Err(_) => out.extend(split_at_antimeridian(&std::mem::take(&mut run))),
        }
    }
    out.extend(split_at_antimeridian(&run));
    out
}

/// Earth central angle (deg) from a station to the edge of the region where a
/// satellite at `altitude_km` stands at least `elevation_deg` above the horizon
/// (spherical Earth): λ = acos(R·cos ε / (R + h)) − ε.
pub fn central_angle_deg(altitude_km: f64, elevation_deg: f64) -> f64 {
    let r = EARTH_RADIUS_WGS72_KM;
    let eps = elevation_deg.to_radians();
    let ratio = (r * eps.cos() / (r + altitude_km.max(0.0))).clamp(-1.0, 1.0);
    (ratio.acos() - eps).max(0.0).to_degrees()
}

/// Point at great-circle distance `angle_deg` from (lat, lon) along bearing
/// `bearing_deg` (clockwise from north), on a sphere.
pub fn destination(lat_deg: f64, lon_deg: f64, bearing_deg: f64, angle_deg: f64) -> LonLat {
    let (phi1, lam1) = (lat_deg.to_radians(), lon_deg.to_radians());
    let (theta, delta) = (bearing_deg.to_radians(), angle_deg.to_radians());
    let sin_phi2 = phi1.sin() * delta.cos() + phi1.cos() * delta.sin() * theta.cos();
    let phi2 = sin_phi2.clamp(-1.0, 1.0).asin();
    let lam2 =
        lam1 + (theta.sin() * delta.sin() * phi1.cos()).atan2(delta.cos() - phi1.sin() * sin_phi2);
    [wrap_lon_deg(lam2.to_degrees()), phi2.to_degrees()]
}

/// Outline of the area from which `station` sees a satellite at `altitude_km`,
/// honouring its minimum elevation and horizon mask azimuth by azimuth.
pub fn visibility_circle(station: &Station, altitude_km: f64) -> Vec<Vec<LonLat>> {
    let points: Vec<LonLat> = (0..=180)
        .map(|i| {
            let az = f64::from(i) * 2.0;
            let lambda = central_angle_deg(altitude_km, station.horizon_deg(az));
            destination(station.latitude_deg, station.longitude_deg, az, lambda)
        })
        .collect();
    split_at_antimeridian(&points)
}

/// The sub-solar point at `t` (geocentric latitude, which is what the
/// terminator needs; the difference from geodetic is below a map pixel).
pub fn sub_solar_point(t: UtcTime, eop: &EarthOrientation) -> LonLat {
    let sun = TemeToEarthFixed::at(t, eop).position(&sun_position_teme_km(t));
    let lon = sun[1].atan2(sun[0]).to_degrees();
    let lat = sun[2].atan2(sun[0].hypot(sun[1])).to_degrees();
    [wrap_lon_deg(lon), lat]
}

/// The night side as vertical bands: for each longitude sample, the latitude
/// range (low, high) that is in darkness. Solving the great circle 90° from the
/// sub-solar point for latitude gives tan φ = −cos(λ − λs) / tan φs.
pub fn night_bands(sub_solar: LonLat, lon_step_deg: f64) -> Vec<(f64, f64, f64)> {
    let [lon_s, lat_s] = sub_solar;
    // Keep the declination away from zero: at an equinox the terminator is a
    // meridian pair, and the formula's division needs a finite tangent.
    let lat_s = if lat_s.abs() < 0.01 {
        0.01_f64.copysign(lat_s + 1e-12)
    } else {
        lat_s
    };
    let tan_s = lat_s.to_radians().tan();
    let n = (360.0 / lon_step_deg.max(0.1)).round() as usize;
    (0..=n)
        .map(|i| {
            let lon = -180.0 + i as f64 * 360.0 / n as f64;
            let term = (-(lon - lon_s).to_radians().cos() / tan_s)
                .atan()
                .to_degrees();
            // The pole away from the Sun is in night.
            if lat_s > 0.0 {
                (lon, -90.0, term)
            } else {
                (lon, term, 90.0)
            }
        })
        .collect()
}

/// Longitude wrapped into [-180, 180).
pub fn wrap_lon_deg(lon: f64) -> f64 {
    (lon + 180.0).rem_euclid(360.0) - 180.0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn central_angle_matches_textbook_leo_figure() {
        // 500 km at 10° elevation, by hand with R = 6378.135 km:
        // acos(6378.135·cos 10° / 6878.135) = acos(0.91322) = 24.06°, minus 10° = 14.06°.
        let lambda = central_angle_deg(500.0, 10.0);
        assert!((lambda - 14.05).abs() < 0.05, "{lambda}");
        // At 0° elevation it is the horizon angle acos(R/(R+h)) = 21.99°.
        let horizon = central_angle_deg(500.0, 0.0);
        assert!((horizon - 21.99).abs() < 0.05, "{horizon}");
    }

    #[test]
    fn antimeridian_split_reaches_both_edges() {
        let strips =
            split_at_antimeridian(&[[170.0, 0.0], [179.0, 1.0], [-179.0, 2.0], [-170.0, 3.0]]);
        assert_eq!(strips.len(), 2);
        assert_eq!(strips[0].last().map(|p| p[0]), Some(180.0));
        assert_eq!(strips[1].first().map(|p| p[0]), Some(-180.0));
        let lat = strips[0].last().map(|p| p[1]).unwrap_or(f64::NAN);
        assert!((lat - 1.5).abs() < 1e-9, "{lat}");
    }

    #[test]
    fn destination_round_trip_on_meridian() {
        let p = destination(0.0, 0.0, 0.0, 30.0);
        assert!((p[1] - 30.0).abs() < 1e-9 && p[0].abs() < 1e-9);
        let q = destination(10.0, 20.0, 90.0, 0.0);
        assert!((q[0] - 20.0).abs() < 1e-9 && (q[1] - 10.0).abs() < 1e-9);
    }

    #[test]
    fn december_night_covers_the_north_pole() {
        // Early December: the Sun is near declination −22°, so the north pole is dark.
        let t = UtcTime::from_calendar(2026, 12, 1, 12, 0, 0.0).unwrap_or_default();
        let ss = sub_solar_point(t, &EarthOrientation::default());
        assert!((ss[1] + 21.8).abs() < 0.5, "sub-solar latitude {}", ss[1]);
        // Near 12:00 UTC the Sun is over longitude ~0 (equation of time ~ +11 min in early December).
        assert!(ss[0].abs() < 5.0, "sub-solar longitude {}", ss[0]);
        let bands = night_bands(ss, 10.0);
        assert!(bands.iter().all(|b| b.2 == 90.0));
    }
}
