//! Passlane's desktop window: the same library calls as the command line,
//! drawn as a world map, a contact timeline, a sky view of one pass, close
//! approaches, and fleet/station editing.
//!
//! Layout of the crate: [`doc::Document`] is the open scenario and its loaded
//! element sets; [`state::AppState`] adds the latest pass search, the shared
//! time cursor and the selections; [`app::PasslaneApp`] is the shell that runs
//! long work on worker threads ([`jobs`]) and hands finished results to the
//! state; each view in [`views`] keeps its own caches, rebuilt when its inputs
//! change, never while drawing. [`geo`] turns orbits into map series.
//!
//! Architecture invariant: no orbit or pass computation of its own beyond
//! drawing series (ground tracks, circles, terminator); passes come from
//! `passlane_plan::find_passes` and pointing from `passlane_plan::pointing_table`.

pub mod app;
pub mod axes;
pub mod coast;
pub mod doc;
pub mod geo;
pub mod jobs;
pub mod palette;
pub mod state;
pub mod views;
pub mod widgets;

use std::path::PathBuf;

pub use app::{AppOptions, PasslaneApp, Tab};
pub use doc::Document;

/// Options for [`run`].
#[derive(Debug, Clone, Default)]
pub struct RunOptions {
    /// Scenario to open; the bundled demo when `None`.
    pub scenario: Option<PathBuf>,
    /// Log frame times to standard error (also on with `PASSLANE_FRAME_STATS=1`).
    pub frame_stats: bool,
}

/// Finds the demo scenario on disk (so its element files resolve next to it):
/// beside the executable, under the current directory, or in the source tree.
fn find_demo_on_disk() -> Option<PathBuf> {
    let rel = PathBuf::from("scenarios").join("demo.json");
    let mut candidates = Vec::new();
    if let Ok(exe) = std::env::current_exe() {
        for dir in exe.ancestors().skip(1).take(4) {
            candidates.push(dir.join(&rel));
        }
    }
    if let Ok(cwd) = std::env::current_dir() {
        candidates.push(cwd.join(&rel));
    }
    candidates.push(
        PathBuf::from(env!("CARGO_MANIFEST_DIR"))
            .join("../..")
            .join(&rel),
    );
    candidates.into_iter().find(|p| p.is_file())
}

/// The document to start with: the given file, else the demo from disk, else
/// the embedded demo.
pub fn initial_document(scenario: Option<&std::path::Path>) -> anyhow::Result<Document> {
    match scenario {
        Some(p) => Document::open(p),
        None => Ok(find_demo_on_disk()
            .and_then(|p| Document::open(&p).ok())
            // A demo opened from disk is still the demo: not the user's file to overwrite.
            .map(|mut d| {
                d.path = None;
                d
            })
            .unwrap_or_else(Document::demo)),
    }
}

/// The directory for the recent-files list.
fn config_dir() -> Option<PathBuf> {
    if let Some(x) = std::env::var_os("XDG_CONFIG_HOME").filter(|v| !v.is_empty()) {
        return Some(PathBuf::from(x).join("passlane"));
    }
    std::env::var_os("HOME").map(|h| PathBuf::from(h).join(".config").join("passlane"))
}

/// Opens the window and runs until it is closed.
pub fn run(options: RunOptions) -> anyhow::Result<()> {
    let doc = initial_document(options.scenario.as_deref())?;
    let frame_stats =
        options.frame_stats || std::env::var("PASSLANE_FRAME_STATS").is_ok_and(|v| v == "1");
    let app_options = AppOptions {
        config_dir: config_dir(),
        frame_stats,
        auto_passes: true,
    };
    let native = eframe::NativeOptions {
        viewport: eframe::egui::ViewportBuilder::default()
            .with_inner_size([1500.0, 950.0])
            .with_title("Passlane"),
        ..Default::default()
    };
    eframe::run_native(
        "Passlane",
        native,
        Box::new(move |cc| {
            cc.egui_ctx.set_theme(eframe::egui::Theme::Dark);
            Ok(Box::new(PasslaneApp::new(doc, app_options)))
        }),
    )
    .map_err(|e| anyhow::anyhow!("could not open the window: {e}"))
}
