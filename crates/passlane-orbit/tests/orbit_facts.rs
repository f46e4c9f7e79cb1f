//! Orbit summary checked against facts of the field.

use passlane_orbit::constants::{
    EARTH_MASS_KG, EARTH_ROTATION_RAD_S, G_M3_KG_S2, MU_WGS72_KM3_S2, MU_WGS84_KM3_S2, WGS84_A_KM,
};
use passlane_orbit::summary::{semi_major_axis_km, vis_viva_speed_km_s};
use passlane_orbit::{ElementSet, OrbitSummary, UtcTime};

fn circular(alt_km: f64) -> ElementSet {
    // Mean motion of a circular orbit at `alt_km` by Kepler's third law.
    let a = 6378.135 + alt_km;
    let n_rev_day = (MU_WGS72_KM3_S2 / a.powi(3)).sqrt() * 86_400.0 / std::f64::consts::TAU;
    ElementSet {
        name: "TEST".into(),
        catalog_number: 99999,
        international_designator: String::new(),
        classification: 'U',
        epoch: UtcTime::parse_iso("2026-12-01T00:00:00Z").unwrap(),
        mean_motion_dot_rev_day2: 0.0,
        mean_motion_ddot_rev_day3: 0.0,
        bstar_per_earth_radii: 0.0,
        ephemeris_type: 0,
        element_set_number: 1,
        inclination_deg: 51.6,
        raan_deg: 0.0,
        eccentricity: 0.0,
        arg_perigee_deg: 0.0,
        mean_anomaly_deg: 0.0,
        mean_motion_rev_day: n_rev_day,
        revolution_number: 1,
        ephemeris: None,
        source: Default::default(),
    }
}

#[test]
fn geostationary_mean_motion_gives_42164_km() {
    // Fact of the field: a geostationary orbit (1.0027 rev/day) has
    // a ≈ 42,164 km (e.g. Vallado, Fundamentals, 4th ed., from memory).
    let a = semi_major_axis_km(1.0027, MU_WGS72_KM3_S2);
    assert!((a - 42_164.0).abs() < 5.0, "{a}");
}

#[test]
fn g_times_earth_mass_is_the_wgs_mu() {
    // Newton: μ = G·M. CODATA 2018 G and the Earth's mass (5.9722e24 kg, from
    // memory) give the WGS-84 value 398,600.4418 km³/s² to within the
    // uncertainty of G (~2e-5 relative).
    let mu_km3_s2 = G_M3_KG_S2 * EARTH_MASS_KG / 1e9;
    assert!(
        (mu_km3_s2 - MU_WGS84_KM3_S2).abs() / MU_WGS84_KM3_S2 < 1e-4,
        "{mu_km3_s2}"
    );
    assert!((mu_km3_s2 - MU_WGS72_KM3_S2).abs() / MU_WGS72_KM3_S2 < 1e-4);
}

#[test]
fn four_hundred_km_circular_period_is_about_92_6_min() {
    // Common practice: a 400 km circular LEO orbit has a period near 92.6 min.
    let s = OrbitSummary::of(&circular(400.0));
    assert!((s.period_min - 92.6).abs() < 0.1, "{}", s.period_min);
    assert!((s.perigee_altitude_km - 400.0).abs() < 1e-6);
    assert!((s.apogee_altitude_km - 400.0).abs() < 1e-6);
    // Circular: vis-viva gives √(μ/a) everywhere; energy −μ/2a.
    let a = s.semi_major_axis_km;
    assert!((s.perigee_speed_km_s - (MU_WGS72_KM3_S2 / a).sqrt()).abs() < 1e-9);
    assert!((s.specific_energy_km2_s2 + MU_WGS72_KM3_S2 / (2.0 * a)).abs() < 1e-9);
    // Escape speed is √2 times circular speed (vis-viva with a → ∞).
    assert!((s.escape_speed_at_perigee_km_s / s.perigee_speed_km_s - 2f64.sqrt()).abs() < 1e-12);
    // 400 km circular speed ≈ 7.67 km/s (common practice).
    assert!((s.perigee_speed_km_s - 7.67).abs() < 0.01);
}

#[test]
fn equatorial_centripetal_acceleration_is_0_034() {
    // Standard fact: ω²R at the equator ≈ 0.0339 m/s² (about 0.3 % of g).
    let acc_m_s2 = EARTH_ROTATION_RAD_S.powi(2) * WGS84_A_KM * 1000.0;
    assert!((acc_m_s2 - 0.0339).abs() < 0.0005, "{acc_m_s2}");
}

#[test]
fn eccentric_orbit_speeds_follow_vis_viva() {
    let mut set = circular(1000.0);
    set.eccentricity = 0.1;
    let s = OrbitSummary::of(&set);
    let a = s.semi_major_axis_km;
    // Angular momentum is conserved: r_p·v_p = r_a·v_a (Kepler's second law).
    let rp = a * 0.9;
    let ra = a * 1.1;
    assert!((rp * s.perigee_speed_km_s - ra * s.apogee_speed_km_s).abs() < 1e-6);
    assert!(
        (vis_viva_speed_km_s(a, a, MU_WGS72_KM3_S2) - (MU_WGS72_KM3_S2 / a).sqrt()).abs() < 1e-12
    );
}
