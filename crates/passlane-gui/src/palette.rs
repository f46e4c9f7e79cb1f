//! Colours. Interface colours (cautions, errors, sunlit/shadow) come from the
//! Okabe–Ito set, which stays distinguishable under the common forms of
//! colour-vision deficiency. Spacecraft get [`SERIES`]: twelve colours picked
//! by a search that maximised their smallest CAM02-UCS distance under normal
//! vision and simulated protanopia, deuteranopia and tritanopia, all light
//! enough on the dark background (checked by `tests/palette.rs` against the
//! fixture of `scripts/fixtures/check_palette.py`). Past twelve spacecraft
//! the colours repeat with a second cue: another marker shape and a dashed
//! track. Every coloured item also has a legend entry or a text label, so
//! colour is never the only carrier of meaning.

use eframe::egui::{self, Color32, Pos2, Sense, Shape, Stroke, vec2};

pub const ORANGE: Color32 = Color32::from_rgb(0xE6, 0x9F, 0x00);
pub const SKY_BLUE: Color32 = Color32::from_rgb(0x56, 0xB4, 0xE9);
pub const BLUISH_GREEN: Color32 = Color32::from_rgb(0x00, 0x9E, 0x73);
pub const YELLOW: Color32 = Color32::from_rgb(0xF0, 0xE4, 0x42);
pub const BLUE: Color32 = Color32::from_rgb(0x00, 0x72, 0xB2);
pub const VERMILLION: Color32 = Color32::from_rgb(0xD5, 0x5E, 0x00);
pub const REDDISH_PURPLE: Color32 = Color32::from_rgb(0xCC, 0x79, 0xA7);

/// Map background (sea) and coastline strokes: neutral, so the series stand out.
pub const SEA: Color32 = Color32::from_rgb(0x16, 0x1C, 0x26);
pub const COAST: Color32 = Color32::from_rgb(0x8A, 0x93, 0xA0);
pub const GRATICULE: Color32 = Color32::from_rgb(0x2A, 0x33, 0x40);
pub const NIGHT: Color32 = Color32::from_rgba_premultiplied(0, 0, 0, 110);
pub const CURSOR: Color32 = Color32::from_rgb(0xF5, 0xF5, 0xF5);
pub const STATION: Color32 = Color32::from_rgb(0xF5, 0xF5, 0xF5);

/// The spacecraft colours, most distinct first.
pub const SERIES: [Color32; 12] = [
    Color32::from_rgb(0xDF, 0x9F, 0x00),
    Color32::from_rgb(0x80, 0xFF, 0xFF),
    Color32::from_rgb(0xBF, 0x00, 0x9F),
    Color32::from_rgb(0x9F, 0xDF, 0x9F),
    Color32::from_rgb(0x9F, 0x00, 0xFF),
    Color32::from_rgb(0xDF, 0xFF, 0x20),
    Color32::from_rgb(0xDF, 0x60, 0x60),
    Color32::from_rgb(0x20, 0xBF, 0x9F),
    Color32::from_rgb(0xBF, 0x80, 0xFF),
    Color32::from_rgb(0x40, 0x80, 0x00),
    Color32::from_rgb(0x9F, 0x9F, 0xBF),
    Color32::from_rgb(0x9F, 0x60, 0x80),
];

/// Colour of the n-th spacecraft.
pub fn series(n: usize) -> Color32 {
    SERIES[n % SERIES.len()]
}

/// The second cue of the n-th spacecraft: 0 for the first twelve, then 1, 2...
/// (marker shape and track dashes).
pub fn cue(n: usize) -> usize {
    n / SERIES.len()
}

/// Whether the n-th spacecraft's track is dashed (the second cue past twelve).
pub fn dashed(n: usize) -> bool {
    cue(n) % 2 == 1
}

/// The n-th spacecraft's marker: circle, square, triangle, diamond (by cue).
pub fn marker(center: Pos2, radius: f32, n: usize, outline: Stroke) -> Shape {
    let fill = series(n);
    let r = radius;
    match cue(n) % 4 {
        0 => Shape::Circle(egui::epaint::CircleShape {
            center,
            radius: r,
            fill,
            stroke: outline,
        }),
        1 => Shape::convex_polygon(
            vec![
                center + vec2(-r, -r),
                center + vec2(r, -r),
                center + vec2(r, r),
                center + vec2(-r, r),
            ],
            fill,
            outline,
        ),
        2 => Shape::convex_polygon(
            vec![
                center + vec2(0.0, -r * 1.2),
                center + vec2(r * 1.1, r * 0.8),
                center + vec2(-r * 1.1, r * 0.8),
            ],
            fill,
            outline,
        ),
        _ => Shape::convex_polygon(
            vec![
                center + vec2(0.0, -r * 1.3),
                center + vec2(r * 1.3, 0.0),
                center + vec2(0.0, r * 1.3),
                center + vec2(-r * 1.3, 0.0),
            ],
            fill,
            outline,
        ),
    }
}

/// A small legend swatch: the spacecraft's marker in its colour.
pub fn legend_swatch(ui: &mut egui::Ui, n: usize) {
    let (r, _) = ui.allocate_exact_size(vec2(12.0, 12.0), Sense::hover());
    ui.painter()
        .add(marker(r.center(), 4.5, n, Stroke::new(1.0, Color32::BLACK)));
}
