//! Measures how long one frame of the map view takes to build and tessellate
//! headless, with a synthetic fleet of 100 spacecraft (100 ground tracks) and a
//! 30,000-object catalog loaded, while the time cursor moves as in playback.
//! GPU time is not included (there is no GPU here); the window's own
//! `--frame-stats` mode logs the same build time live.
//! Usage: `cargo run --release -p passlane-gui --example frame-stats`

use std::time::Instant;

use eframe::egui;
use passlane_gui::{AppOptions, Document, PasslaneApp};
use passlane_orbit::ElementSet;

/// Copies of a template set spread around the sky: each copy gets its own
/// catalog number, node and phase so tracks and points do not overlap.
fn spread(template: &ElementSet, count: usize, first_catalog: u32) -> Vec<ElementSet> {
    (0..count)
        .map(|i| {
            let mut s = template.clone();
            s.catalog_number = first_catalog + i as u32;
            s.name = format!("OBJ {}", s.catalog_number);
            s.raan_deg = (template.raan_deg + i as f64 * 137.508) % 360.0;
            s.mean_anomaly_deg = (template.mean_anomaly_deg + i as f64 * 97.3) % 360.0;
            s
        })
        .collect()
}

fn main() {
    let mut doc = Document::demo();
    let Some(template) = doc.fleet.first().cloned() else {
        eprintln!("the demo fleet did not load");
        return;
    };
    doc.fleet = spread(&template, 100, 100_000);
    doc.catalog = spread(&template, 30_000, 200_000);
    doc.revision += 1;
    let mut app = PasslaneApp::new(
        doc,
        AppOptions {
            config_dir: None,
            frame_stats: false,
            auto_passes: false,
        },
    );
    let ctx = egui::Context::default();
    let mut times_ms = Vec::new();
    for frame in 0..240 {
        // Advance the cursor 30 s per frame (playback at 1800× and 60 frames/s).
        app.state.cursor = app.state.cursor.add_s(30.0);
        let input = egui::RawInput {
            screen_rect: Some(egui::Rect::from_min_size(
                egui::Pos2::ZERO,
                egui::vec2(1500.0, 950.0),
            )),
            ..Default::default()
        };
        let t = Instant::now();
        let mut out = ctx.run_ui(input, |ui| app.ui(ui));
        let prims = ctx.tessellate(std::mem::take(&mut out.shapes), out.pixels_per_point);
        // No renderer here: the font atlas uploads are not needed (and egui
        // insists that unapplied texture updates are dropped on purpose).
        out.textures_delta.clear();
        let ms = t.elapsed().as_secs_f64() * 1e3;
        if frame >= 10 {
            times_ms.push(ms);
        }
        std::hint::black_box(prims);
    }
    times_ms.sort_by(f64::total_cmp);
    let n = times_ms.len();
    let mean = times_ms.iter().sum::<f64>() / n as f64;
    println!(
        "map view, 100 ground tracks, 30,000 catalog objects loaded: {n} frames, mean {mean:.2} ms, median {:.2} ms, p95 {:.2} ms, max {:.2} ms (UI build + tessellation, no GPU)",
        times_ms[n / 2],
        times_ms[n * 95 / 100],
        times_ms[n - 1]
    );
}
