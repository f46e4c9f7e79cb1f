//! Properties of the Earth geometry over the whole domain, by random search.
//!
//! Tolerance: 1 mm in position for the Earth-fixed ↔ geodetic round trip
//! (the converter iterates to below a micrometre; 1 mm leaves room for
//! rounding at 50,000 km, where one ulp of a coordinate is ~7 nm).

use passlane_orbit::Geodetic;
use passlane_orbit::frames::{earth_fixed_to_geodetic, geodetic_to_earth_fixed, norm, sub};
use proptest::prelude::*;

const ONE_MM_KM: f64 = 1e-6;

proptest! {
    #![proptest_config(ProptestConfig::with_cases(2000))]

    /// Geodetic → Earth-fixed → geodetic → Earth-fixed lands on the same point,
    /// over every latitude (poles included), longitude and height from 1 km
    /// below the ellipsoid to 50,000 km above it.
    #[test]
    fn geodetic_round_trip_within_a_millimetre(
        latitude_deg in -90.0..=90.0f64,
        longitude_deg in -180.0..180.0f64,
        height_km in -1.0..50_000.0f64,
    ) {
        let g = Geodetic { latitude_deg, longitude_deg, height_km };
        let r = geodetic_to_earth_fixed(&g);
        let back = earth_fixed_to_geodetic(&r);
        let r2 = geodetic_to_earth_fixed(&back);
        prop_assert!(norm(&sub(&r, &r2)) <= ONE_MM_KM, "{g:?} -> {back:?}: {} km", norm(&sub(&r, &r2)));
        prop_assert!((back.height_km - height_km).abs() <= ONE_MM_KM, "{g:?} -> {back:?}");
        prop_assert!((-90.0..=90.0).contains(&back.latitude_deg));
        prop_assert!((-180.0..=180.0).contains(&back.longitude_deg));
    }

    /// The same from the Earth-fixed side: any point between 1 km below the
    /// surface and 50,000 km up, in any direction.
    #[test]
    fn earth_fixed_round_trip_within_a_millimetre(
        x in -1.0..=1.0f64,
        y in -1.0..=1.0f64,
        z in -1.0..=1.0f64,
        radius_km in 6_355.0..56_400.0f64,
    ) {
        let n = (x * x + y * y + z * z).sqrt();
        prop_assume!(n > 1e-3);
        let r = [x / n * radius_km, y / n * radius_km, z / n * radius_km];
        let g = earth_fixed_to_geodetic(&r);
        prop_assume!((-1.0..=50_000.0).contains(&g.height_km));
        let back = geodetic_to_earth_fixed(&g);
        prop_assert!(norm(&sub(&r, &back)) <= ONE_MM_KM, "{r:?} -> {g:?}: {} km", norm(&sub(&r, &back)));
    }
}

#[test]
fn round_trip_on_the_axes_and_the_equator() {
    // Points where the usual formulas divide by zero or lose precision.
    for height_km in [-1.0, 0.0, 400.0, 35_786.0, 50_000.0] {
        for (lat, lon) in [
            (90.0, 0.0),
            (-90.0, 0.0),
            (0.0, 0.0),
            (0.0, 180.0),
            (0.0, -90.0),
            (89.999_999, 45.0),
        ] {
            let g = Geodetic {
                latitude_deg: lat,
                longitude_deg: lon,
                height_km,
            };
            let r = geodetic_to_earth_fixed(&g);
            let r2 = geodetic_to_earth_fixed(&earth_fixed_to_geodetic(&r));
            assert!(
                norm(&sub(&r, &r2)) <= ONE_MM_KM,
                "{g:?}: {} km",
                norm(&sub(&r, &r2))
            );
        }
    }
}
