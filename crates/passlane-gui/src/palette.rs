//! Colours. Series colours come from the Okabe–Ito set, which stays
//! distinguishable under the common forms of colour-vision deficiency; every
//! coloured item also has a legend entry or a text label, so colour is never
//! the only carrier of meaning.

use eframe::egui::Color32;

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

/// Colour of the n-th spacecraft; cycles through the seven non-black Okabe–Ito hues.
pub fn series(n: usize) -> Color32 {
    const SERIES: [Color32; 7] = [
        ORANGE,
        SKY_BLUE,
        BLUISH_GREEN,
        YELLOW,
        VERMILLION,
        REDDISH_PURPLE,
        BLUE,
    ];
    SERIES[n % SERIES.len()]
}
