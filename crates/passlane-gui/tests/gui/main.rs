//! Drives the app headless through its accessible labels and checks state,
//! plus image snapshots of each view at a small and a large window size
//! (rendered by the software GPU path, so the thresholds tolerate small
//! rasterisation differences). `workflows` drives the operator's
//! workflows end to end; `palette` checks the spacecraft colours.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

mod palette;
mod snapshots;
mod workflows;

use std::time::{Duration, Instant};

use eframe::egui;
use egui_kittest::kittest::Queryable;
use egui_kittest::{Harness, SnapshotOptions};
use passlane_gui::{AppOptions, Document, PasslaneApp, Tab};
use passlane_plan::{Silent, find_passes};

pub fn app() -> PasslaneApp {
    app_with(Document::demo())
}

pub fn app_with(doc: Document) -> PasslaneApp {
    PasslaneApp::new(
        doc,
        AppOptions {
            config_dir: None,
            frame_stats: false,
            auto_passes: true,
        },
    )
}

pub fn harness(app: PasslaneApp) -> Harness<'static, PasslaneApp> {
    harness_sized(app, [1400.0, 900.0])
}

pub fn harness_sized(app: PasslaneApp, size: [f32; 2]) -> Harness<'static, PasslaneApp> {
    Harness::builder()
        .with_size(size)
        // On: every interactive widget must carry an accessible name (a label tied to it with
        // `labelled_by`), which is also what lets these tests find widgets by label.
        .with_accessibility_check(true)
        .build_ui_state(|ui, app: &mut PasslaneApp| app.ui(ui), app)
}

/// Steps until the background pass search has delivered (it runs on a thread).
pub fn wait_for_passes(h: &mut Harness<'static, PasslaneApp>) {
    let deadline = Instant::now() + Duration::from_secs(120);
    while !h.state().passes_current() || h.state().passes_running() {
        assert!(Instant::now() < deadline, "pass search did not finish");
        std::thread::sleep(Duration::from_millis(20));
        h.step();
    }
    h.run_steps(3);
}

pub fn snapshot_options() -> SnapshotOptions {
    SnapshotOptions::new()
        .threshold(2.0)
        .max_failed_pixels(2_000)
}

#[test]
fn app_finds_the_same_passes_as_the_library_call() {
    let mut h = harness(app());
    wait_for_passes(&mut h);
    let state = &h.state().state;
    let direct = find_passes(
        &state.doc.fleet,
        &state.doc.scenario.stations,
        &state.pass_options(),
        &Silent,
    );
    assert!(!direct.passes.is_empty(), "the demo should have passes");
    assert_eq!(state.passes.passes, direct.passes);
}

#[test]
fn select_a_pass_then_open_close_approaches_and_move_the_cursor() {
    let mut h = harness(app());
    wait_for_passes(&mut h);
    h.get_by_label("Sky view").click();
    h.run_steps(2);
    assert_eq!(h.state().tab, Tab::Sky);
    // Pass list rows read "HH:MM · spacecraft · station · max°".
    let first = h.state().state.passes.passes[0].clone();
    let label_prefix = format!(
        "{} · {} · {}",
        &first.aos.to_iso_s()[11..16],
        first.satellite,
        first.station
    );
    h.get_by_label_contains(&label_prefix).click();
    h.run_steps(2);
    assert_eq!(h.state().state.selected_pass, Some(0));

    h.get_by_label("Close approaches").click();
    h.run_steps(2);
    assert_eq!(h.state().tab, Tab::Approaches);
    assert!(
        h.query_by_label_contains("Element-set screening is advisory")
            .is_some()
    );

    let before = h.state().state.cursor;
    h.get_by_label("Play").click();
    for _ in 0..5 {
        h.step();
    }
    assert!(
        h.state().state.cursor > before,
        "playing moves the time cursor"
    );
    h.get_by_label("Pause").click();
    h.run_steps(1);
    assert!(!h.state().playing);
}

/// Steps until `done` holds, failing after two minutes.
pub fn wait_until(
    h: &mut Harness<'static, PasslaneApp>,
    what: &str,
    done: impl Fn(&PasslaneApp) -> bool,
) {
    let deadline = Instant::now() + Duration::from_secs(120);
    while !done(h.state()) {
        assert!(Instant::now() < deadline, "{what} did not finish");
        std::thread::sleep(Duration::from_millis(20));
        h.step();
    }
    h.run_steps(2);
}

#[test]
fn close_approaches_view_shows_the_screening_and_its_covariance_source() {
    let mut h = harness(app());
    wait_for_passes(&mut h);
    h.get_by_label("Close approaches").click();
    h.run_steps(2);
    h.get_by_label("Run screening").click();
    h.run_steps(1);
    wait_until(&mut h, "screening", |a| {
        !a.approaches().running() && a.approaches().outcome().is_some()
    });
    // The computation is the planner's (`tests/shells.rs` at the workspace
    // root compares it with the command line); here: what the table shows.
    let app = h.state();
    let Some(outcome) = app.approaches().outcome() else {
        unreachable!("waited for it")
    };
    let events = outcome.result.events.clone();
    assert!(!events.is_empty(), "the demo has close approaches");
    assert!(outcome.risks.iter().all(|r| r.is_ok()));
    assert!(
        h.query_all_by_label("assumed (scenario)").count() == events.len(),
        "each row says where its covariance came from"
    );
    // Selecting the first event shows its encounter plane.
    h.get_by_label(&passlane_gui::state::time_label(events[0].tca))
        .click();
    h.run_steps(2);
    assert!(h.query_by_label_contains("Encounter plane: Pc").is_some());
}

#[test]
fn plan_view_shows_the_plan_and_exports_its_hand_off_files() {
    let mut h = harness(app());
    wait_for_passes(&mut h);
    h.get_by_label("Plan").click();
    h.run_steps(2);
    assert_eq!(h.state().tab, Tab::Plan);
    h.get_by_label("Make plan").click();
    h.run_steps(1);
    let deadline = Instant::now() + Duration::from_secs(120);
    while h.state_mut().plan_view().plan().is_none() || h.state_mut().plan_view().running() {
        assert!(Instant::now() < deadline, "planning did not finish");
        std::thread::sleep(Duration::from_millis(20));
        h.step();
    }
    h.run_steps(2);
    let got = h.state_mut().plan_view().plan().cloned();
    let Some(Ok(got)) = got else {
        panic!("the demo should plan: {got:?}")
    };

    // The plan is the planner's (`tests/shells.rs` at the workspace root
    // compares it with the command line); here: what the view shows and writes.
    let direct = got;
    assert!(!direct.contacts.is_empty());
    assert!(
        h.query_by_label_contains("Transmitting needs a licence")
            .is_some()
    );
    assert!(h.query_by_label("Demand met per spacecraft").is_some());
    let first_conflict = direct.conflicts.first().map(|c| c.describe());
    if let Some(line) = first_conflict {
        assert!(h.query_by_label(&line).is_some(), "conflict listed: {line}");
    }

    // Export into a fresh folder through the typed-path route (no file dialog in tests).
    let dir = std::env::temp_dir().join(format!("passlane-gui-export-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    h.state_mut().plan_view().set_export_dir(&dir);
    h.run_steps(1);
    h.get_by_label("Export to folder").click();
    h.run_steps(1);
    let deadline = Instant::now() + Duration::from_secs(120);
    while h.state_mut().plan_view().running() {
        assert!(Instant::now() < deadline, "export did not finish");
        std::thread::sleep(Duration::from_millis(20));
        h.step();
    }
    let status = h.state_mut().plan_view().export_status().to_string();
    assert!(status.starts_with("Wrote "), "{status}");
    for f in ["plan.csv", "plan.json", "plan.ics"] {
        assert!(dir.join(f).is_file(), "{f} written");
    }
    let mut csv = Vec::new();
    passlane_plan::export::write_plan_csv(&mut csv, &direct).expect("CSV into memory");
    assert_eq!(
        std::fs::read(dir.join("plan.csv")).expect("read plan.csv"),
        csv
    );
    let pointing = std::fs::read_dir(dir.join("pointing"))
        .map(|d| d.count())
        .unwrap_or(0);
    assert_eq!(
        pointing,
        direct.contacts.len(),
        "one pointing table per kept contact"
    );
    let oem = std::fs::read_dir(dir.join("oem"))
        .map(|d| d.count())
        .unwrap_or(0);
    assert_eq!(oem, direct.demand.len(), "one OEM per spacecraft");

    // Exporting again into the same folder says which files it replaced; the
    // folder is replaced as a whole, so a file of an earlier plan that this
    // one does not have is gone (issue 12, item 8).
    let earlier = dir.join("pointing/90001_EARLIER-PLAN_A_20261130T000000Z.csv");
    std::fs::write(&earlier, "time\n").expect("plant an earlier plan's table");
    h.get_by_label("Export to folder").click();
    h.run_steps(1);
    let deadline = Instant::now() + Duration::from_secs(120);
    while h.state_mut().plan_view().running() {
        assert!(Instant::now() < deadline, "export did not finish");
        std::thread::sleep(Duration::from_millis(20));
        h.step();
    }
    let status = h.state_mut().plan_view().export_status().to_string();
    // plan.csv, plan.json, plan.ics, a pointing table per contact, an OEM per spacecraft.
    let written = 3 + direct.contacts.len() + direct.demand.len();
    assert!(
        status.contains(&format!("Replaced {written} files of an earlier export")),
        "{status}"
    );
    assert!(
        status.contains("Removed 1 files of the earlier export"),
        "{status}"
    );
    assert!(!earlier.exists(), "the earlier plan's table is still there");
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn fleet_view_shows_orbit_summaries_and_stations() {
    let mut h = harness(app());
    wait_for_passes(&mut h);
    h.get_by_label("Fleet and stations").click();
    h.run_steps(2);
    h.get_by_label("Spacecraft").click();
    h.run_steps(2);
    assert!(
        h.query_by_label("Demands, priorities and hard-body radii")
            .is_some()
    );
    // The name also labels the spacecraft's legend entries, so it appears more than once.
    assert!(
        h.query_all_by_label("KRSL-1 ORMIVEL").count() >= 2,
        "legend and summary row"
    );
    let ormivel = h
        .state()
        .state
        .doc
        .fleet
        .iter()
        .find(|s| s.name == "KRSL-1 ORMIVEL")
        .cloned();
    let ormivel = ormivel.expect("the demo fleet has KRSL-1 ORMIVEL");
    let period = format!(
        "{:.2}",
        passlane_orbit::OrbitSummary::of(&ormivel).period_min
    );
    assert!(
        h.query_by_label(&period).is_some(),
        "orbit summary shows the period {period} min"
    );
    // Adding a station edits the document and makes the passes out of date.
    h.get_by_label("Stations").click();
    h.run_steps(2);
    h.get_by_label("Add station").click();
    h.run_steps(1);
    assert!(h.state().state.doc.dirty);
    assert_eq!(h.state().state.doc.scenario.stations.len(), 4);
}

/// The bundled fonts are small: a character they lack panics in tests and draws
/// a box in the window. Every non-ASCII character on a code line of the UI
/// sources (doc comments and whole-line comments excluded) must have a glyph in
/// both the proportional and the monospace font.
#[test]
fn every_non_ascii_character_in_the_ui_sources_has_a_glyph() {
    let mut files = Vec::new();
    let mut stack = vec![std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("src")];
    while let Some(d) = stack.pop() {
        for e in std::fs::read_dir(&d).expect("src folder").flatten() {
            let p = e.path();
            if p.is_dir() {
                stack.push(p);
            } else if p.extension().is_some_and(|x| x == "rs") {
                files.push(std::fs::read_to_string(&p).expect("source file"));
            }
        }
    }
    assert!(files.len() > 10, "found the sources");
    let mut chars: Vec<char> = files
        .iter()
        .flat_map(|s| s.lines())
        .filter(|l| !l.trim_start().starts_with("//"))
        .flat_map(|l| l.chars())
        .filter(|c| !c.is_ascii())
        .collect();
    chars.sort_unstable();
    chars.dedup();
    let ctx = egui::Context::default();
    // Fonts are loaded at the first pass; its texture upload is not needed here.
    ctx.run_ui(egui::RawInput::default(), |_| {})
        .textures_delta
        .clear();
    let missing: Vec<String> = ctx.fonts_mut(|f| {
        chars
            .iter()
            .filter(|c| {
                !f.has_glyph(&egui::FontId::proportional(14.0), **c)
                    || !f.has_glyph(&egui::FontId::monospace(14.0), **c)
            })
            .map(|c| format!("{c} (U+{:04X})", u32::from(*c)))
            .collect()
    });
    assert!(
        missing.is_empty(),
        "characters without a glyph in the bundled fonts: {missing:?}"
    );
}
