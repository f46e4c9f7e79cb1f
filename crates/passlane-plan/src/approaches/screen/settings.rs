//! The screening's tuning: [`ScreeningSettings`] and the fleet-size
//! thresholds, each with the measurement it comes from.

use super::ScreeningVolume;

/// Tuning of the screening method; the defaults suit LEO-heavy catalogs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ScreeningSettings {
    pub volume: ScreeningVolume,
    /// Time step of the spatial hash, s. Shorter steps mean smaller cells and
    /// fewer candidate pairs, longer steps fewer hash builds; 30 s balances them.
    pub hash_step_s: f64,
    /// Largest estimated Hermite interpolation error allowed when choosing an
    /// object's SGP4 sample step, km. It only widens the search margin: final
    /// figures come from direct SGP4 states.
    pub interpolation_tolerance_km: f64,
    /// Padding of the perigee/apogee filter beyond the volume, km.
    pub filter_margin_km: f64,
    /// Fleet vs catalog, for a fleet of at most this many: sample a
    /// near-circular LEO catalog object with SGP4 only where its
    /// mean-element prediction comes near the fleet ([`super::predict`]). 0 samples
    /// every catalog object throughout (for comparisons; the same events).
    pub predict_max_fleet: usize,
    /// Fleet vs catalog, for a fleet of at most this many: the direct scan
    /// instead of the per-step grid; `None`: the measured defaults
    /// (`DIRECT_SCAN_MAX_FLEET` when the catalog is sampled throughout,
    /// `DIRECT_SCAN_MAX_FLEET_PREDICTED` when it is predicted).
    pub direct_scan_max_fleet: Option<usize>,
}

impl Default for ScreeningSettings {
    fn default() -> Self {
        ScreeningSettings {
            volume: ScreeningVolume::Sphere { radius_km: 5.0 },
            hash_step_s: 30.0,
            interpolation_tolerance_km: 0.5,
            filter_margin_km: 50.0,
            predict_max_fleet: PREDICT_MAX_FLEET,
            direct_scan_max_fleet: None,
        }
    }
}

impl ScreeningSettings {
    /// The tuning for a fleet screened against a catalog: a 60 s hash step
    /// and an 8 km interpolation tolerance (SGP4 samples about every 480 s
    /// in LEO instead of 240 s).
    ///
    /// In this mode most of the cost is sampling the catalog objects that
    /// pass the perigee/apogee filter, and few pairs need refining, so a
    /// looser interpolant (a wider search margin, more refinements with
    /// direct SGP4) pays. All-vs-all is the opposite: pairs are many, and
    /// the defaults (30 s, 0.5 km) are fastest there. Measured with
    /// `cargo bench -p passlane-plan --bench screening` on the realistic
    /// catalog (2 cores, 5 km sphere; wall seconds, identical events in
    /// every column):
    ///
    /// | case | 30 s, 0.5 km | 60 s, 0.5 km | 60 s, 4 km | 60 s, 8 km |
    /// |---|---|---|---|---|
    /// | 10 SSO vs 30,000, 7 d | 14.4 | 10.4 | — | 7.0 |
    /// | 100 vs 30,000, 7 d | 18.5 | 15.2 | 14.8 | 12.1 |
    /// | all-vs-all 10,000, 24 h | 3.8 | 2.9 | — | 5.2 |
    /// | all-vs-all 30,000, 24 h | 15.9 | 17.9 | — | — |
    ///
    /// The interpolation allowance stays a bound at these steps: the tests
    /// check the actual Hermite error against it for every object of the
    /// dense realistic subset, eccentric LEO-crossers included.
    pub fn fleet_vs_catalog(volume: ScreeningVolume) -> Self {
        ScreeningSettings {
            volume,
            hash_step_s: 60.0,
            interpolation_tolerance_km: 8.0,
            ..ScreeningSettings::default()
        }
    }
}

/// Largest fleet for which catalog objects are sampled only where the
/// mean-element prediction ([`super::predict`]) comes near the fleet.
///
/// Measured (`SCREEN_FLEET_N=N SCREEN_PREDICT_MAX_FLEET=M SCREEN_DIRECT_MAX_FLEET=D
/// cargo bench -p passlane-plan --bench screening -- real-fleet`: the first
/// N of the 100-spacecraft fleet against the realistic 30,000 over 7 days,
/// 2 cores with two niced fuzzers in the background, 2026-12-03; library
/// wall seconds, the same events in every column):
///
/// | fleet | 1 | 3 | 6 | 10 | 20 | 30 | 50 | 100 |
/// |---|---|---|---|---|---|---|---|---|
/// | predicted, direct scan | 2.6 | 2.8 | 3.5–4.2 | 3.8–4.1 | 6.0 | 8.2 | — | — |
/// | predicted, grid | 2.6 | 3.8 | 3.4–4.1 | 4.4 | 6.5 | 7.3 | 12.1 | 17.2 |
/// | sampled throughout, grid | 8.6 | 8.4 | 8.1 | 8.2 | 9.2 | 9.3 | 10.1 | 12.3 |
/// | sampled throughout, direct scan | 5.7 | 6.9 | 7.7 | 8.0 | — | — | — | — |
///
/// The prediction's scan costs each catalog object a test per fleet member
/// per step, so it pays while the fleet is small: it wins up to 30 and loses
/// from 50. With it the direct scan is as fast as or faster than the grid
/// up to 20 spacecraft and slower at 30.
pub(super) const PREDICT_MAX_FLEET: usize = 30;
/// Largest fleet taking the direct scan when its catalog is predicted (see
/// the table above).
pub(super) const DIRECT_SCAN_MAX_FLEET_PREDICTED: usize = 20;

/// Largest fleet screened against a catalog by the direct scan
/// ([`super::grid::ChunkContext::fleet_scan`]) rather than the per-step grid, when
/// every catalog object is sampled throughout.
///
/// Measured before the prediction existed (`SCREEN_FLEET_N=N cargo bench -p passlane-plan --bench
/// screening -- real-fleet`: the first N of the 100-spacecraft fleet against
/// the realistic 30,000 over 7 days, 2 cores; wall seconds of the pair
/// phase, the same events either way):
///
/// | fleet | 1 | 2 | 4 | 10 | 30 | 100 |
/// |---|---|---|---|---|---|---|
/// | direct scan | 1.7 | 2.0 | 2.9 | 4.2 | 10.5 | 33.8 |
/// | grid | 3.3 | 3.7 | 4.0 | 3.6 | 4.9 | 6.3 |
///
/// The crossing lies between 4 and 10; 6 splits it. The skip rarely jumps
/// far (any pair may close at ~16 km/s, 960 km per 60 s step), so the scan's
/// cost grows with the fleet while the grid's barely does.
pub(super) const DIRECT_SCAN_MAX_FLEET: usize = 6;
