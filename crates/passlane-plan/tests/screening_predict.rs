//! The screening's predicted positions (fleet vs catalog, see the module docs
//! of `passlane_plan::screen`) against SGP4: every eligible object of the
//! realistic catalog's dense subset and of the 10-spacecraft sun-synchronous
//! fleet, every 30 s over 7 days, with the phase anchored per 256-minute chunk
//! as a screening does it. The allowance the screening uses is an estimate
//! from the size of SGP4's periodic terms; this measures it.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

#[path = "../benches/support/catalog.rs"]
mod catalog;

use passlane_plan::screen::prediction_error_km;

/// The screening's allowance (`PREDICTION_ALLOWANCE_KM`) and the per-chunk check.
const ALLOWANCE_KM: f64 = 75.0;

#[test]
fn prediction_error_stays_inside_the_allowance() {
    let mut sets = catalog::element_sets(&catalog::dense_subset_synth());
    sets.extend(catalog::element_sets(&catalog::sso_fleet_synth()));
    let start = catalog::epoch();
    let end = start.add_s(7.0 * 86_400.0);
    let mut worst = (0.0f64, String::new());
    let mut predicted = 0;
    for set in &sets {
        if let Some(err) = prediction_error_km(set, start, end, 256.0 * 60.0, 30.0) {
            predicted += 1;
            if err > worst.0 {
                worst = (err, set.name.clone());
            }
        }
    }
    println!(
        "{predicted} of {} objects predicted; largest model-to-SGP4 distance {:.2} km ({})",
        sets.len(),
        worst.0,
        worst.1
    );
    assert!(predicted > sets.len() / 2, "only {predicted} predicted");
    assert!(worst.0 < ALLOWANCE_KM / 2.0, "{worst:?}");
}
