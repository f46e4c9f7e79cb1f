//! The two shells over one library: the command line and the window run the
//! same planner functions for close approaches (screen + assess) and for the
//! network plan, so on the same scenario file they give the same answers.
//! Here the window is driven headless (egui_kittest) the way a user clicks it,
//! the command line is run as a script runs it, and their outputs are compared.

use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::{Duration, Instant};

use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use passlane_gui::{AppOptions, Document, PasslaneApp};
use serde_json::Value;

fn repo() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn cli_json(args: &[&str]) -> Value {
    let out = Command::new(env!("CARGO_BIN_EXE_passlane"))
        .args(args)
        .current_dir(repo())
        .output()
        .expect("run passlane");
    assert!(
        out.status.success(),
        "passlane {args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).expect("JSON on stdout")
}

fn window_on(scenario: &Path) -> Harness<'static, PasslaneApp> {
    let doc = Document::open(scenario).expect("the demo scenario opens");
    let app = PasslaneApp::new(
        doc,
        AppOptions {
            config_dir: None,
            frame_stats: false,
            auto_passes: true,
        },
    );
    Harness::builder()
        .with_size([1400.0, 900.0])
        .build_ui_state(|ui, app: &mut PasslaneApp| app.ui(ui), app)
}

fn wait_until(
    h: &mut Harness<'static, PasslaneApp>,
    what: &str,
    mut done: impl FnMut(&mut PasslaneApp) -> bool,
) {
    let deadline = Instant::now() + Duration::from_secs(180);
    while !done(h.state_mut()) {
        assert!(Instant::now() < deadline, "{what} did not finish");
        std::thread::sleep(Duration::from_millis(20));
        h.step();
    }
    h.run_steps(2);
}

#[test]
fn window_and_command_line_give_the_same_close_approaches_and_pc() {
    let scenario = repo().join("scenarios/demo.json");
    let mut h = window_on(&scenario);
    wait_until(&mut h, "pass search", |a| {
        a.passes_current() && !a.passes_running()
    });
    h.get_by_label("Close approaches").click();
    h.run_steps(2);
    h.get_by_label("Run screening").click();
    h.run_steps(1);
    wait_until(&mut h, "screening", |a| {
        !a.approaches().running() && a.approaches().outcome().is_some()
    });
    let Some(outcome) = h.state().approaches().outcome().cloned() else {
        unreachable!("waited for it")
    };
    let cli = cli_json(&[
        "screen",
        "--scenario",
        "scenarios/demo.json",
        "--format",
        "json",
        "--quiet",
    ]);
    let rows = cli.as_array().expect("an array of events");
    assert!(!rows.is_empty(), "the demo has close approaches");
    assert_eq!(rows.len(), outcome.result.events.len());
    assert_eq!(rows.len(), outcome.risks.len());
    for ((row, event), risk) in rows.iter().zip(&outcome.result.events).zip(&outcome.risks) {
        let expected = serde_json::to_value(event).expect("event as JSON");
        for key in [
            "primary_catalog_number",
            "secondary_catalog_number",
            "tca",
            "miss_distance_km",
            "radial_km",
            "in_track_km",
            "cross_track_km",
            "relative_speed_km_s",
            "volume_entry",
            "volume_exit",
        ] {
            assert_eq!(row[key], expected[key], "{key} of {row}");
        }
        let risk = risk.as_ref().expect("every demo event has a Pc");
        assert_eq!(row["pc"].as_f64(), Some(risk.pc), "pc of {row}");
        assert_eq!(row["pc_max"].as_f64(), Some(risk.pc_max), "pc_max of {row}");
        assert_eq!(
            row["hard_body_radius_m"].as_f64(),
            Some(risk.hard_body_radius_m)
        );
        assert_eq!(
            row["covariance_source"].as_str(),
            Some(outcome.covariance.label().as_str())
        );
    }
}

#[test]
fn window_and_command_line_make_the_same_plan() {
    let scenario = repo().join("scenarios/demo.json");
    let mut h = window_on(&scenario);
    wait_until(&mut h, "pass search", |a| {
        a.passes_current() && !a.passes_running()
    });
    h.get_by_label("Plan").click();
    h.run_steps(2);
    h.get_by_label("Make plan").click();
    h.run_steps(1);
    wait_until(&mut h, "planning", |a| {
        a.plan_view().plan().is_some() && !a.plan_view().running()
    });
    let window_plan = match h.state_mut().plan_view().plan().cloned() {
        Some(Ok(p)) => p,
        other => panic!("the demo should plan: {other:?}"),
    };
    let cli = cli_json(&[
        "plan",
        "--scenario",
        "scenarios/demo.json",
        "--format",
        "json",
    ]);
    assert!(!window_plan.contacts.is_empty());
    assert_eq!(
        cli,
        serde_json::to_value(&window_plan).expect("plan as JSON"),
        "the plan JSON of the command line and the window's plan"
    );
}
