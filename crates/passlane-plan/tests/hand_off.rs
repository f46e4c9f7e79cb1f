//! The hand-off files as data (issue 12, output side): limits of sampled
//! tables, file names that are unique and bounded, and values escaped for
//! each format.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

use std::path::PathBuf;

use passlane_orbit::{ElementSet, LoadOptions, UtcTime, elements};
use passlane_plan::export::{self, HandOffContext, hand_off_files};
use passlane_plan::passes::{PassOptions, find_passes};
use passlane_plan::sampling::{StepError, TableError};
use passlane_plan::schedule::{Plan, plan_scenario};
use passlane_plan::{Scenario, Silent};

fn repo() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../..")
}

fn t(s: &str) -> UtcTime {
    UtcTime::parse_iso(s).unwrap()
}

fn demo_fleet() -> Vec<ElementSet> {
    let bytes = std::fs::read(repo().join("scenarios/demo-fleet.tle")).unwrap();
    elements::load(&bytes, "demo-fleet.tle", LoadOptions::default()).sets
}

fn demo_scenario() -> Scenario {
    let text = std::fs::read_to_string(repo().join("scenarios/demo.json")).unwrap();
    Scenario::from_json(&text, "demo.json").unwrap()
}

/// Six hours of the demo network, with the library calls the CLI makes.
fn plan_of(scenario: &Scenario, sets: &[ElementSet]) -> Plan {
    let (start, end) = (t("2026-12-01T00:00:00Z"), t("2026-12-01T06:00:00Z"));
    let mut options = PassOptions::new(start, end);
    options.earth_orientation = scenario.earth_orientation;
    let passes = find_passes(sets, &scenario.stations, &options, &Silent).passes;
    plan_scenario(
        scenario,
        sets,
        &passes,
        start,
        end,
        &scenario.earth_orientation,
        &Silent,
    )
    .unwrap()
}

fn context<'a>(scenario: &'a Scenario, sets: &'a [ElementSet], step_s: f64) -> HandOffContext<'a> {
    HandOffContext {
        fleet: sets,
        stations: &scenario.stations,
        earth_orientation: scenario.earth_orientation,
        calendar_name: scenario.calendar_name(),
        originator: scenario.originator(),
        created: t("2026-11-30T12:00:00Z"),
        pointing_step_s: step_s,
        oem_format: passlane_orbit::ephemeris::OemFormat::Kvn,
        oem_frame: export::OemFrame::Eme2000,
    }
}

#[test]
fn sampled_tables_refuse_steps_below_a_millisecond_and_tables_over_the_cap() {
    let (scenario, sets) = (demo_scenario(), demo_fleet());
    let plan = plan_of(&scenario, &sets);
    assert!(!plan.contacts.is_empty());
    for step_s in [1e-17, 1e-9, 0.0, -1.0, f64::NAN] {
        let r = hand_off_files(&plan, &context(&scenario, &sets, step_s));
        assert!(r.is_err(), "step {step_s}: {r:?}");
    }
    // The whole set of pointing tables is capped, before anything is computed.
    let span_s: f64 = plan.contacts.iter().map(|c| c.los.s_since(c.aos)).sum();
    let r = hand_off_files(&plan, &context(&scenario, &sets, span_s / 2e7));
    assert!(matches!(r, Err(StepError::TooManySamples { .. })), "{r:?}");
    let c = &plan.contacts[0];
    let set = sets
        .iter()
        .find(|s| s.catalog_number == c.catalog_number)
        .unwrap();
    let station = &scenario.stations[c.station_index];
    let eop = scenario.earth_orientation;
    let r = passlane_plan::pointing::pointing_table_between(set, station, c.aos, c.los, 1e-9, &eop);
    assert!(
        matches!(r, Err(TableError::Step(StepError::BelowResolution { .. }))),
        "{r:?}"
    );
    // 1e-300 once overflowed the count to zero states.
    let r = export::oem_states(set, plan.start, plan.end, 1e-300);
    assert!(
        matches!(r, Err(TableError::Step(StepError::BelowResolution { .. }))),
        "{r:?}"
    );
    // At the smallest step the table is made, on distinct millisecond times.
    let end = c.aos.add_s(0.05);
    let rows =
        passlane_plan::pointing::pointing_table_between(set, station, c.aos, end, 1e-3, &eop)
            .unwrap();
    assert!(rows.windows(2).all(|w| w[0].time < w[1].time));
    assert!(rows.len() >= 50, "{} rows", rows.len());
}
