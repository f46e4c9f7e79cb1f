//! Opens the desktop window on a scenario (default: the bundled demo), for
//! trying the views before the root binary wires them in.
//! Usage: `cargo run -p passlane-gui --example passlane-window -- [SCENARIO.json] [--frame-stats]`

fn main() -> anyhow::Result<()> {
    let mut options = passlane_gui::RunOptions::default();
    for arg in std::env::args().skip(1) {
        if arg == "--frame-stats" {
            options.frame_stats = true;
        } else {
            options.scenario = Some(arg.into());
        }
    }
    passlane_gui::run(options)
}
