//! The operator's workflows, driven end to end through accessible labels.

use std::path::PathBuf;
use std::time::{Duration, Instant};

use eframe::egui::{Event, Key, Modifiers, PointerButton, Pos2};
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use passlane_gui::views::sky::SkyPlot;
use passlane_gui::{Document, PasslaneApp, Tab};

use super::{app, app_with, harness, wait_for_passes, wait_until};

fn repo() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../..")
}

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("passlane-gui-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("scratch folder");
    dir
}

fn make_plan(h: &mut Harness<'static, PasslaneApp>) -> passlane_plan::Plan {
    h.get_by_label("Plan").click();
    h.run_steps(2);
    h.get_by_label("Make plan").click();
    h.run_steps(1);
    let deadline = Instant::now() + Duration::from_secs(240);
    while h.state_mut().plan_view().plan().is_none() || h.state_mut().plan_view().running() {
        assert!(Instant::now() < deadline, "planning did not finish");
        std::thread::sleep(Duration::from_millis(20));
        h.step();
    }
    h.run_steps(2);
    match h.state_mut().plan_view().plan().cloned() {
        Some(Ok(p)) => p,
        other => panic!("no plan: {other:?}"),
    }
}

/// Clicks a field, selects what it holds, types `text` and presses Enter.
fn type_into(h: &mut Harness<'static, PasslaneApp>, label: &str, text: &str) {
    h.get_by_label(label).click();
    h.run_steps(1);
    h.key_press_modifiers(Modifiers::COMMAND, Key::A);
    h.run_steps(1);
    // Type one character at a time, as a person does: the rows must not move meanwhile.
    for c in text.chars() {
        h.get_by_label(label).type_text(&c.to_string());
        h.run_steps(1);
    }
    h.key_press(Key::Enter);
    h.run_steps(2);
}

fn click_at(h: &mut Harness<'static, PasslaneApp>, pos: Pos2, button: PointerButton) {
    h.event(Event::PointerMoved(pos));
    h.run_steps(1);
    for pressed in [true, false] {
        h.event(Event::PointerButton {
            pos,
            button,
            pressed,
            modifiers: Modifiers::NONE,
        });
        h.run_steps(1);
    }
}

#[test]
fn a_new_station_gets_a_default_antenna_and_the_plan_uses_it() {
    let mut h = harness(app());
    wait_for_passes(&mut h);
    h.get_by_label("Fleet and stations").click();
    h.run_steps(2);
    h.get_by_label("Stations").click();
    h.run_steps(2);
    h.get_by_label("Add station").click();
    h.run_steps(2);
    // Its default antenna is shown, by name, ready for the plan.
    assert!(h.query_by_label("Antenna 1 name").is_some());
    let st = h.state().state.doc.scenario.stations[3].clone();
    assert_eq!(st.antennas.len(), 1);
    // Put it somewhere the sun-synchronous fleet passes often (an invented spot at sea).
    type_into(&mut h, "Latitude (deg)", "-61.5");
    type_into(&mut h, "Longitude (deg)", "-150.25");
    let st = h.state().state.doc.scenario.stations[3].clone();
    assert_eq!((st.latitude_deg, st.longitude_deg), (-61.5, -150.25));
    wait_for_passes(&mut h);
    let plan = make_plan(&mut h);
    assert!(
        plan.contacts
            .iter()
            .any(|c| c.station == st.name && c.antenna == "Antenna 1"),
        "the plan uses the new station's antenna"
    );
}

#[test]
fn typing_a_mask_azimuth_keeps_the_value_and_sorts_only_when_done() {
    let mut h = harness(app());
    wait_for_passes(&mut h);
    h.get_by_label("Fleet and stations").click();
    h.run_steps(2);
    h.get_by_label("Stations").click();
    h.run_steps(2);
    h.get_by_label("Bramble Hill").click();
    h.run_steps(2);
    let n = h.state().state.doc.scenario.stations[1].horizon_mask.len();
    h.get_by_label(&format!("Horizon mask ({n} points)"))
        .click();
    h.run_steps(2);
    let before = h.state().state.doc.scenario.stations[1]
        .horizon_mask
        .clone();
    // Point 2 becomes 175°: while typing "1", "17", "175" the rows stay put.
    h.get_by_label("Point 2 azimuth (deg)").click();
    h.run_steps(1);
    h.key_press_modifiers(Modifiers::COMMAND, Key::A);
    h.run_steps(1);
    for (typed, expect) in [("1", 1.0), ("7", 17.0), ("5", 175.0)] {
        h.get_by_label("Point 2 azimuth (deg)").type_text(typed);
        h.run_steps(1);
        let mask = &h.state().state.doc.scenario.stations[1].horizon_mask;
        assert_eq!(mask[1].azimuth_deg, expect, "row 2 holds what is typed");
        assert_eq!(mask[0], before[0], "row 1 untouched while typing");
    }
    h.key_press(Key::Enter);
    h.run_steps(2);
    let mask = h.state().state.doc.scenario.stations[1]
        .horizon_mask
        .clone();
    assert_eq!(mask.len(), before.len());
    let moved = mask
        .iter()
        .find(|p| p.azimuth_deg == 175.0)
        .expect("the typed value stays");
    assert_eq!(moved.elevation_deg, before[1].elevation_deg);
    assert!(
        mask.windows(2)
            .all(|w| w[0].azimuth_deg <= w[1].azimuth_deg),
        "sorted when committed"
    );
    assert!(
        !mask
            .iter()
            .any(|p| p.azimuth_deg == 1.0 || p.azimuth_deg == 17.0)
    );
    // Adding a point keeps the section open and never duplicates an azimuth.
    h.get_by_label("Add mask point").click();
    h.run_steps(2);
    assert!(
        h.query_by_label(&format!("Point {} azimuth (deg)", before.len() + 1))
            .is_some()
    );
    let mask = &h.state().state.doc.scenario.stations[1].horizon_mask;
    let last = mask.last().expect("a point");
    assert_eq!(
        mask.iter()
            .filter(|p| p.azimuth_deg == last.azimuth_deg)
            .count(),
        1
    );
}

fn names(doc: &Document) -> (Vec<String>, Vec<String>) {
    (
        doc.fleet.iter().map(|s| s.name.clone()).collect(),
        doc.scenario
            .stations
            .iter()
            .map(|s| s.name.clone())
            .collect(),
    )
}

#[test]
fn saving_into_another_folder_keeps_the_fleet_and_the_passes() {
    let demo = repo().join("scenarios/demo.json");
    let doc = Document::open(&demo).expect("the demo on disk");
    let mut h = harness(app_with(doc));
    wait_for_passes(&mut h);
    let before_names = names(&h.state().state.doc);
    let before_passes = h.state().state.passes.passes.clone();
    let dir = scratch("save-elsewhere");
    let target = dir.join("sub").join("moved.json");
    std::fs::create_dir_all(target.parent().expect("folder")).expect("folder");
    type_into(&mut h, "Path:", &target.display().to_string());
    h.get_by_label("Save to path").click();
    h.run_steps(2);
    // The window asks how to keep the element files reachable.
    h.get_by_label("Rewrite the paths").click();
    h.run_steps(2);
    assert!(target.is_file());
    let info = h.state().state.info.clone();
    assert!(info.contains("demo-fleet.tle now named"), "{info}");
    // Open what was saved: the same spacecraft, stations and passes.
    h.get_by_label("Open path").click();
    h.run_steps(2);
    wait_for_passes(&mut h);
    let doc = &h.state().state.doc;
    assert_eq!(doc.path.as_deref(), Some(target.as_path()));
    assert!(
        doc.unread_files().next().is_none(),
        "every element file found"
    );
    assert_eq!(names(doc), before_names);
    assert_eq!(h.state().state.passes.passes, before_passes);

    // The other choice: copies beside the scenario.
    let copy_target = dir.join("copies").join("copied.json");
    std::fs::create_dir_all(copy_target.parent().expect("folder")).expect("folder");
    type_into(&mut h, "Path:", &copy_target.display().to_string());
    h.get_by_label("Save to path").click();
    h.run_steps(2);
    h.get_by_label("Copy the element files beside it").click();
    h.run_steps(2);
    assert!(copy_target.with_file_name("demo-fleet.tle").is_file());
    let reopened = Document::open(&copy_target).expect("reopen");
    assert_eq!(names(&reopened), before_names);
    assert_eq!(
        reopened.scenario.element_files,
        vec!["demo-fleet.tle".to_string()]
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn a_missing_element_file_is_an_error_with_its_path_and_nothing_is_invented() {
    let dir = scratch("missing");
    let mut s: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(repo().join("scenarios/demo.json")).expect("demo"),
    )
    .expect("json");
    s["catalog_files"] = serde_json::json!([]);
    let path = dir.join("lost.json");
    std::fs::write(&path, s.to_string()).expect("write");
    let doc = Document::open(&path).expect("opens");
    let mut h = harness(app_with(doc));
    h.run_steps(3);
    assert!(
        h.state().state.doc.fleet.is_empty(),
        "no spacecraft invented"
    );
    h.get_by_label("Fleet and stations").click();
    h.run_steps(2);
    let missing = dir.join("demo-fleet.tle").display().to_string();
    assert!(
        h.query_by_label_contains(&format!("cannot read {missing}"))
            .is_some(),
        "the error names the path tried"
    );
    // Point to the file: the fleet loads.
    let real = repo().join("scenarios/demo-fleet.tle");
    type_into(&mut h, "path", &real.display().to_string());
    h.get_by_label("Use this file for demo-fleet.tle").click();
    h.run_steps(2);
    assert_eq!(h.state().state.doc.fleet.len(), 6);
    assert!(h.state().state.doc.dirty, "the new path is an unsaved edit");
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn a_contact_pinned_on_the_timeline_is_kept_by_the_plan() {
    let mut h = harness(app());
    wait_for_passes(&mut h);
    // A pass drawn on the timeline (the first day is on show).
    // A pass drawn on the timeline, well inside the window and high enough
    // for every antenna's minimum elevation.
    let start = h.state().state.doc.window().0;
    let (index, rect) = (0..h.state().state.passes.passes.len())
        .filter(|&i| {
            let p = &h.state().state.passes.passes[i];
            p.aos.s_since(start) > 3600.0 && p.max_elevation_deg > 40.0
        })
        .find_map(|i| h.state().timeline().bar_rect(i).map(|r| (i, r)))
        .expect("a pass on the timeline");
    let pass = h.state().state.passes.passes[index].clone();
    click_at(&mut h, rect.center(), PointerButton::Secondary);
    h.run_steps(2);
    h.get_by_label("Keep this contact").click();
    h.run_steps(2);
    let pins = h.state().state.doc.scenario.pins.clone();
    assert_eq!(pins.len(), 1);
    assert_eq!(pins[0].catalog_number, pass.catalog_number);
    // Listed, and removable, in Fleet and stations.
    h.get_by_label("Fleet and stations").click();
    h.run_steps(2);
    h.get_by_label("Pins and exclusions").click();
    h.run_steps(2);
    assert!(h.query_by_label("Remove pin 1").is_some());
    wait_for_passes(&mut h);
    let plan = make_plan(&mut h);
    assert!(
        plan.contacts.iter().any(|c| c.pinned
            && c.catalog_number == pass.catalog_number
            && c.station_index == pass.station_index
            && c.aos.s_since(pass.aos).abs() < 600.0),
        "the plan keeps the pinned contact"
    );
}

#[test]
fn the_doppler_plot_of_an_s_band_pass_has_labelled_ticks_on_both_axes() {
    let mut h = harness(app());
    wait_for_passes(&mut h);
    // Northfell carries the S-band channels (2245 and 2065 MHz).
    let i = h
        .state()
        .state
        .passes
        .passes
        .iter()
        .position(|p| p.station == "Northfell" && p.max_elevation_deg > 30.0)
        .expect("a good Northfell pass");
    h.state_mut().state.select_pass(i);
    h.state_mut().tab = Tab::Sky;
    h.run_steps(4);
    let (time, doppler) = h.state().sky().tick_labels(SkyPlot::Doppler);
    assert!(doppler.len() > 2, "Doppler ticks: {doppler:?}");
    assert!(time.len() > 2, "time ticks: {time:?}");
    let (_, elevation) = h.state().sky().tick_labels(SkyPlot::Elevation);
    assert!(elevation.len() > 2, "elevation ticks: {elevation:?}");
    // The selection moved the cursor to the pass.
    let p = &h.state().state.passes.passes[i];
    assert!((p.aos..=p.los).contains(&h.state().state.cursor));
}

#[test]
fn keys_play_step_and_open_help() {
    let mut h = harness(app());
    wait_for_passes(&mut h);
    let c0 = h.state().state.cursor;
    h.key_press(Key::ArrowRight);
    h.run_steps(1);
    assert_eq!(h.state().state.cursor.s_since(c0), 60.0);
    h.key_press(Key::Space);
    h.run_steps(1);
    assert!(h.state().playing);
    h.key_press(Key::Space);
    h.run_steps(1);
    assert!(!h.state().playing);
    h.key_press(Key::F1);
    h.run_steps(2);
    assert!(h.query_by_label("play or pause the time cursor").is_some());
    h.key_press(Key::Escape);
    h.run_steps(2);
    assert!(!h.state().help_open);
}

#[test]
fn the_avoidance_what_if_shows_a_burns_effect_with_its_caution() {
    let mut h = harness(app());
    wait_for_passes(&mut h);
    h.get_by_label("Close approaches").click();
    h.run_steps(2);
    h.get_by_label("Run screening").click();
    h.run_steps(1);
    wait_until(&mut h, "screening", |a| {
        !a.approaches().running() && a.approaches().outcome().is_some()
    });
    h.state_mut().approaches_mut().select(0);
    h.run_steps(3);
    // Selecting the event moved the cursor to its TCA and marks it on the map.
    assert!(h.state().state.focus_approach.is_some());
    let (x, y) = h.state().approaches().plane_tick_labels();
    assert!(
        x.len() > 2 && y.len() > 2,
        "encounter-plane ticks {x:?} {y:?}"
    );
    h.get_by_label("Avoidance what-if…").scroll_to_me();
    h.run_steps(30);
    h.get_by_label("Avoidance what-if…").click();
    h.run_steps(2);
    assert!(
        h.query_by_label_contains("Coordinate any manoeuvre with the other operator")
            .is_some()
    );
    // The work runs on a worker thread, with progress and a cancel button.
    h.get_by_label("Compute the trade").scroll_to_me();
    h.run_steps(30);
    h.get_by_label("Compute the trade").click();
    h.run_steps(2);
    assert!(
        h.state()
            .approaches()
            .avoid_panel()
            .is_some_and(|p| p.running())
    );
    h.get_by_label("Cancel").scroll_to_me();
    h.run_steps(30);
    h.get_by_label("Cancel").click();
    h.run_steps(2);
    let panel = h.state().approaches().avoid_panel();
    assert!(panel.is_some_and(|p| !p.running()), "cancelled at once");
    assert!(h.query_by_label_contains("Cancelled").is_some());
    // One burn (the default: 0.1 m/s in-track one orbit ahead) is computed
    // and its before/after figures shown.
    h.get_by_label("Compute this burn").scroll_to_me();
    h.run_steps(30);
    h.get_by_label("Compute this burn").click();
    h.run_steps(1);
    let deadline = Instant::now() + Duration::from_secs(120);
    while h
        .state()
        .approaches()
        .avoid_panel()
        .is_some_and(|p| p.running() || p.effect().is_none())
    {
        assert!(Instant::now() < deadline, "the burn's effect did not come");
        std::thread::sleep(Duration::from_millis(20));
        h.step();
    }
    h.run_steps(3);
    let ok = h
        .state()
        .approaches()
        .avoid_panel()
        .and_then(|p| p.effect())
        .is_some_and(|e| e.is_ok());
    assert!(ok, "the burn's effect is computed");
    assert!(h.query_by_label("after the burn").is_some());
    // And what else it changes: looked for, and shown.
    let looked = h
        .state()
        .approaches()
        .avoid_panel()
        .and_then(|p| p.consequences())
        .is_some_and(|c| c.is_ok());
    assert!(
        looked,
        "new close approaches and contact shifts are computed"
    );
    assert!(
        h.query_by_label_contains("Close approaches this burn creates or worsens")
            .is_some()
    );
    assert!(
        h.query_by_label_contains("Contact windows in the 24 hours after the burn")
            .is_some()
    );
}

#[test]
fn two_files_with_the_same_problems_each_open_their_own_diagnostics() {
    let dir = scratch("diagnostics");
    // Two files, each with one bad record (the same count of problems).
    let good = std::fs::read_to_string(repo().join("scenarios/demo-debris.tle")).expect("demo");
    let mut paths = Vec::new();
    for name in ["a.tle", "b.tle"] {
        let p = dir.join(name);
        std::fs::write(&p, format!("{good}BROKEN\n1 nonsense\n2 nonsense\n")).expect("write");
        paths.push(p);
    }
    let mut doc = Document::new_empty();
    for p in &paths {
        doc.add_element_file(p, false)
            .expect("loads the good records");
    }
    let mut h = harness(app_with(doc));
    h.run_steps(2);
    h.get_by_label("Fleet and stations").click();
    h.run_steps(2);
    let headers: Vec<String> = h
        .state()
        .state
        .doc
        .files
        .iter()
        .map(|f| format!("{} errors, 0 warnings", f.diagnostics.len()))
        .collect();
    assert_eq!(headers[0], headers[1], "the same summary text");
    h.get_all_by_label(&headers[0])
        .next()
        .expect("first expander")
        .click();
    h.run_steps(2);
    // The first file's messages show, the second's do not.
    assert!(h.query_all_by_label_contains("a.tle:").count() > 0);
    assert_eq!(h.query_all_by_label_contains("b.tle:").count(), 0);
    // No lenient mode is mentioned that the window does not offer: it offers one.
    assert!(h.query_by_label_contains("Lenient mode").is_some());
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn conjunction_messages_of_one_event_show_their_trend_and_a_bad_one_its_reason() {
    // Three messages of one event received a day apart (the planner's CDM
    // fixture with its creation date and ID changed), plus one refused.
    let dir = scratch("cdm-trend");
    let base = std::fs::read_to_string(
        repo().join("crates/passlane-plan/tests/fixtures/cdm/ormivel_vs_debris_99871.kvn"),
    )
    .expect("fixture");
    for (k, created) in [
        "2026-11-28T08:00:00.000",
        "2026-11-29T08:00:00.000",
        "2026-11-30T08:00:00.000",
    ]
    .iter()
    .enumerate()
    {
        let text = base
            .replace("2026-11-30T08:00:00.000Z", created)
            .replace("KRSL-20261130-0001", &format!("KRSL-TREND-{k}"));
        std::fs::write(dir.join(format!("msg-{k}.kvn")), text).expect("write");
    }
    std::fs::copy(
        repo().join("crates/passlane-plan/tests/fixtures/cdm/bad_missing_miss_distance.kvn"),
        dir.join("refused.kvn"),
    )
    .expect("copy");
    let mut h = harness(app());
    wait_for_passes(&mut h);
    h.get_by_label("Close approaches").click();
    h.run_steps(2);
    type_into(&mut h, "Message file or folder", &dir.display().to_string());
    h.run_steps(3);
    let view = &h.state().approaches().messages;
    assert_eq!(view.groups().len(), 1, "one event");
    let rows = &view.groups()[0].rows;
    assert_eq!(rows.len(), 3, "three messages, one row each");
    assert!(
        rows.windows(2)
            .all(|w| w[0].creation_date < w[1].creation_date),
        "oldest first"
    );
    assert!(
        rows.iter().all(|r| r.pc.is_some()),
        "each message re-assessed"
    );
    let errors = view.errors().to_vec();
    assert_eq!(errors.len(), 1, "{errors:?}");
    assert!(
        errors[0].contains("refused.kvn") && errors[0].contains("MISS_DISTANCE"),
        "{}",
        errors[0]
    );
    assert!(
        h.query_by_label_contains("3 message(s), oldest first")
            .is_some()
    );
    assert!(
        h.query_by_label_contains("refused.kvn").is_some(),
        "the refused file is shown with its reason"
    );
    h.get_by_label("Clear messages").scroll_to_me();
    h.run_steps(3);
    let ticks = h.state().approaches().messages.miss_tick_labels(0);
    let Some((x, y)) = ticks else {
        unreachable!("one group has its plots")
    };
    assert!(
        x.len() >= 2 && !y.is_empty(),
        "the trend plot has labelled axes: {x:?} {y:?}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}
