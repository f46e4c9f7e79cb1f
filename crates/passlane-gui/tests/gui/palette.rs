//! The spacecraft palette is the one whose colour-vision check is in the
//! fixture: colorspacious 1.1.2 (CAM02-UCS distances; protanopia,
//! deuteranopia and tritanopia simulated after Machado, Oliveira &
//! Fernandes 2009), made by `scripts/fixtures/check_palette.py`.

use passlane_gui::palette::SERIES;

#[test]
fn the_palette_is_the_checked_one_and_stays_apart_under_colour_vision_deficiency() {
    let fixture: serde_json::Value =
        serde_json::from_str(include_str!("../fixtures/palette-cvd.json"))
            .expect("fixture is JSON");
    let checked: Vec<String> = fixture["palette"]
        .as_array()
        .expect("palette list")
        .iter()
        .map(|v| v.as_str().unwrap_or_default().to_string())
        .collect();
    let ours: Vec<String> = SERIES
        .iter()
        .map(|c| format!("#{:02X}{:02X}{:02X}", c.r(), c.g(), c.b()))
        .collect();
    assert_eq!(
        ours, checked,
        "re-run scripts/fixtures/check_palette.py after changing the palette"
    );
    // Two colours this far apart in CAM02-UCS are told apart at a glance (a
    // just-noticeable difference is about 1-2 units; 14 is common practice
    // for "clearly different" categorical colours, a value from memory).
    for (vision, d) in fixture["min_distance"].as_object().expect("distances") {
        let d = d.as_f64().expect("number");
        assert!(d >= 14.0, "{vision}: smallest distance {d}");
    }
    let lightness = fixture["min_lightness_above_background"]
        .as_f64()
        .expect("number");
    assert!(lightness >= 35.0, "{lightness}");
}
