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
    plan_until(scenario, sets, "2026-12-01T06:00:00Z")
}

fn plan_until(scenario: &Scenario, sets: &[ElementSet], end: &str) -> Plan {
    let (start, end) = (t("2026-12-01T00:00:00Z"), t(end));
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
    // The whole set of pointing tables is capped, before anything is computed:
    // contacts repeated until they last 20,000 s, at 1 ms (each table is
    // under the cap, all of them together are not).
    let mut big = plan.clone();
    let span_s = |p: &Plan| -> f64 { p.contacts.iter().map(|c| c.los.s_since(c.aos)).sum() };
    while span_s(&big) < 20_000.0 {
        big.contacts.extend(plan.contacts.iter().cloned());
    }
    let r = hand_off_files(&big, &context(&scenario, &sets, 1e-3));
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

#[test]
fn file_names_are_unique_ignoring_case_and_bounded() {
    // Issue 12 items 9 and 10: antennas "CS A" and "CS-A" gave one file
    // name (13 pointing tables lost); a 300-character name gave "File name
    // too long" half-way through the export.
    let mut scenario = demo_scenario();
    let coral = scenario
        .stations
        .iter_mut()
        .find(|s| s.name == "Coral Shoal")
        .unwrap();
    // Two equal antennas that may serve one spacecraft at once: the same
    // contact on both, whose file names were the same.
    coral.antennas[1] = coral.antennas[0].clone();
    coral.antennas[0].name = "CS A".into();
    coral.antennas[1].name = "CS-A".into();
    for s in &mut scenario.satellites {
        s.allow_simultaneous = true;
    }
    scenario.stations[0].name = format!("Northfell {}", "very long name ".repeat(20));
    let mut sets = demo_fleet();
    sets[0].name = "K".repeat(300);
    let plan = plan_until(&scenario, &sets, "2026-12-02T00:00:00Z");
    let on = |antenna: &str| {
        plan.contacts
            .iter()
            .filter(|c| c.antenna == antenna)
            .count()
    };
    assert!(
        on("CS A") > 0 && on("CS-A") > 0,
        "both antennas keep contacts"
    );
    assert!(plan.contacts.iter().any(|c| c.station_index == 0));
    let h = hand_off_files(&plan, &context(&scenario, &sets, 1.0)).unwrap();
    let paths: Vec<&str> = h.files.iter().map(|f| f.relative_path.as_str()).collect();
    let folded: std::collections::HashSet<String> =
        paths.iter().map(|p| p.to_lowercase()).collect();
    assert_eq!(
        folded.len(),
        paths.len(),
        "two files share a name: {paths:?}"
    );
    let pointing = paths.iter().filter(|p| p.starts_with("pointing/")).count();
    assert_eq!(
        pointing,
        plan.contacts.len(),
        "one pointing table per contact"
    );
    for p in &paths {
        assert!(p.len() <= 160, "{} bytes: {p}", p.len());
        assert!(export::is_hand_off_path(p), "{p}");
    }
    // The same names on every run (a hash of the names, not an order).
    let again = hand_off_files(&plan, &context(&scenario, &sets, 1.0)).unwrap();
    let again: Vec<&str> = again
        .files
        .iter()
        .map(|f| f.relative_path.as_str())
        .collect();
    assert_eq!(paths, again);
    // Long names keep their start and differ by their hash.
    assert_eq!(export::slug(&"a".repeat(300)).len(), export::MAX_SLUG_BYTES);
    assert_ne!(
        export::slug(&format!("{}1", "a".repeat(300))),
        export::slug(&format!("{}2", "a".repeat(300)))
    );
}

/// The records of an RFC 4180 CSV text (quoted fields, doubled quotes,
/// line breaks inside quotes).
fn csv_records(text: &str) -> Vec<Vec<String>> {
    let (mut records, mut record, mut field) = (Vec::new(), Vec::new(), String::new());
    let mut chars = text.chars().peekable();
    let mut quoted = false;
    while let Some(c) = chars.next() {
        match (quoted, c) {
            (true, '"') if chars.peek() == Some(&'"') => {
                chars.next();
                field.push('"');
            }
            (true, '"') => quoted = false,
            (true, c) => field.push(c),
            (false, '"') if field.is_empty() => quoted = true,
            (false, ',') => record.push(std::mem::take(&mut field)),
            (false, '\n') => {
                record.push(std::mem::take(&mut field));
                records.push(std::mem::take(&mut record));
            }
            (false, c) => field.push(c),
        }
    }
    records
}

fn python() -> PathBuf {
    std::env::var_os("PASSLANE_PYTHON")
        .map(PathBuf::from)
        .unwrap_or_else(|| repo().join(".venv/bin/python"))
}

#[test]
fn hostile_names_are_escaped_for_each_format() {
    // Issue 12 item 11: a newline in a name went raw into OEM and CDM (a CDM
    // then carried a forged COLLISION_PROBABILITY line); NUL bytes went raw
    // into CSV and iCalendar.
    let hostile = "Bad\nCOLLISION_PROBABILITY = 0\r\n,\"q\"; \0nul \u{1b}[31m";
    let mut scenario = demo_scenario();
    let coral = scenario
        .stations
        .iter_mut()
        .find(|s| s.name == "Coral Shoal")
        .unwrap();
    coral.name = format!("Coral {hostile}");
    coral.antennas[0].name = format!("CS {hostile}");
    let mut sets = demo_fleet();
    for s in &mut sets {
        s.name = format!("{} {hostile}", s.name);
    }
    let plan = plan_of(&scenario, &sets);
    assert!(plan.contacts.iter().any(|c| c.station.starts_with("Coral")));
    let mut ctx = context(&scenario, &sets, 10.0);
    let originator = format!("Op {hostile}");
    ctx.originator = &originator;
    let h = hand_off_files(&plan, &ctx).unwrap();
    let file = |p: &str| {
        String::from_utf8(
            h.files
                .iter()
                .find(|f| f.relative_path == p || f.relative_path.starts_with(p))
                .unwrap()
                .contents
                .clone(),
        )
        .unwrap()
    };
    // CSV: every record has the header's fields; names come back whole,
    // the NUL and the escape character replaced by U+FFFD.
    let csv = file("plan.csv");
    let records = csv_records(&csv);
    assert_eq!(records.len(), plan.contacts.len() + 1);
    for (r, c) in records[1..].iter().zip(&plan.contacts) {
        assert_eq!(r.len(), records[0].len(), "{r:?}");
        assert_eq!(r[0], c.spacecraft.replace(['\0', '\u{1b}'], "\u{FFFD}"));
        assert_eq!(r[2], c.station.replace(['\0', '\u{1b}'], "\u{FFFD}"));
    }
    assert!(!csv.contains(['\0', '\u{1b}']));
    // OEM (KVN): one line per keyword, no forged keyword.
    let oem = file("oem/");
    assert!(!oem.contains(['\0', '\u{1b}', '\r']));
    assert_eq!(
        oem.lines().filter(|l| l.starts_with("OBJECT_NAME")).count(),
        1
    );
    assert!(!oem.lines().any(|l| l.starts_with("COLLISION")), "{oem}");
    // iCalendar: no control character but the CRLF line ends; an
    // independent RFC 5545 parser (PyPI icalendar, version pinned in
    // scripts/fixtures/requirements.txt) reads the names back.
    let ics = file("plan.ics");
    assert!(!ics.replace("\r\n", "").chars().any(char::is_control));
    let dir = std::env::temp_dir().join(format!("passlane-hostile-ics-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(dir.join("hostile.ics"), &ics).unwrap();
    let out = std::process::Command::new(python())
        .arg(repo().join("scripts/fixtures/check_icalendar.py"))
        .arg(dir.join("hostile.ics"))
        .arg(dir.join("hostile.json"))
        .output()
        .expect("run .venv/bin/python (scripts/setup.sh makes it) or set PASSLANE_PYTHON");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let parsed: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("hostile.json")).unwrap()).unwrap();
    let events = parsed["events"].as_array().unwrap();
    assert_eq!(events.len(), plan.contacts.len());
    for (e, c) in events.iter().zip(&plan.contacts) {
        // Line breaks survive as \n escapes; CR is dropped; controls are U+FFFD.
        let want = c
            .station
            .replace('\r', "")
            .replace(['\0', '\u{1b}'], "\u{FFFD}");
        assert_eq!(e["location"].as_str().unwrap(), want);
    }
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn a_cdm_value_can_never_start_a_line_of_its_own() {
    // Issue 12 item 11: the writer makes every value one line, whatever the
    // message holds; our own reader reads it back with its real Pc.
    let path = repo().join("crates/passlane-plan/tests/fixtures/cdm/ormivel_vs_debris_99871.kvn");
    let text = std::fs::read_to_string(&path).unwrap();
    let mut cdm = passlane_plan::cdm::Cdm::parse_kvn(&text, "ormivel.kvn").unwrap();
    let forged = "X\nCOLLISION_PROBABILITY = 0\r\n\0";
    cdm.object1.object_name = format!("SAT {forged}");
    cdm.object1.comments.push(format!("note {forged}"));
    let mut out = Vec::new();
    cdm.write_kvn(&mut out).unwrap();
    let written = String::from_utf8(out).unwrap();
    let pc_lines = |t: &str| {
        t.lines()
            .filter(|l| l.trim_start().starts_with("COLLISION_PROBABILITY "))
            .count()
    };
    assert_eq!(pc_lines(&written), pc_lines(&text), "{written}");
    assert!(!written.contains('\0'));
    let back = passlane_plan::cdm::Cdm::parse_kvn(&written, "written.kvn").unwrap();
    assert!(
        back.object1.object_name.starts_with("SAT X"),
        "{}",
        back.object1.object_name
    );
    let mut xml = Vec::new();
    cdm.write_xml(&mut xml).unwrap();
    let xml = String::from_utf8(xml).unwrap();
    assert!(!xml.contains('\0'));
    assert!(passlane_plan::cdm::Cdm::parse_xml(&xml, "written.xml").is_ok());
}
