//! One image snapshot per view at a small (1024×700) and a large
//! (1920×1080) window: every control reachable in the small one (views
//! scroll rather than clip), and the layout filling the large one.

use std::time::{Duration, Instant};

use egui_kittest::kittest::Queryable;
use passlane_gui::Tab;

use super::{app, harness_sized, snapshot_options, wait_for_passes, wait_until};

fn views_at(w: f32, h: f32) {
    let mut hs = harness_sized(app(), [w, h]);
    wait_for_passes(&mut hs);
    let size = format!("{w:.0}x{h:.0}");
    // A cursor at a fixed instant keeps the pictures reproducible.
    let start = hs.state().state.doc.window().0;
    hs.state_mut().state.cursor = start.add_s(5.0 * 3600.0);
    hs.run_steps(2);
    hs.snapshot_options(format!("map_{size}"), &snapshot_options());

    let i = hs
        .state()
        .state
        .passes
        .passes
        .iter()
        .position(|p| p.station == "Bramble Hill" && p.max_elevation_deg > 40.0)
        .expect("a high Bramble Hill pass");
    hs.state_mut().state.select_pass(i);
    hs.state_mut().tab = Tab::Sky;
    hs.run_steps(3);
    hs.snapshot_options(format!("sky_view_{size}"), &snapshot_options());

    hs.state_mut().tab = Tab::Approaches;
    hs.run_steps(2);
    hs.get_by_label("Run screening").click();
    hs.run_steps(1);
    wait_until(&mut hs, "screening", |a| {
        !a.approaches().running() && a.approaches().outcome().is_some()
    });
    hs.state_mut().approaches_mut().select(0);
    hs.run_steps(3);
    hs.snapshot_options(format!("close_approaches_{size}"), &snapshot_options());

    hs.state_mut().tab = Tab::Plan;
    hs.run_steps(2);
    hs.get_by_label("Make plan").click();
    hs.run_steps(1);
    let deadline = Instant::now() + Duration::from_secs(240);
    while hs.state_mut().plan_view().plan().is_none() || hs.state_mut().plan_view().running() {
        assert!(Instant::now() < deadline, "planning did not finish");
        std::thread::sleep(Duration::from_millis(20));
        hs.step();
    }
    hs.run_steps(2);
    hs.snapshot_options(format!("plan_{size}"), &snapshot_options());

    hs.state_mut().tab = Tab::Fleet;
    hs.run_steps(2);
    hs.get_by_label("Stations").click();
    hs.run_steps(2);
    hs.snapshot_options(format!("stations_{size}"), &snapshot_options());
}

#[test]
fn views_at_1024x700() {
    views_at(1024.0, 700.0);
}

#[test]
fn views_at_1920x1080() {
    views_at(1920.0, 1080.0);
}
