//! The station editor: position, horizon (minimum elevation and mask),
//! antennas (turnaround, minimum elevation), channels, downlink rate and mount
//! limits, each field validated as it is typed with the file loader's rules.
//!
//! The horizon mask keeps its rows where the user put them while a value is
//! being typed; rows are sorted by azimuth only when an edit is committed
//! (the field loses focus), and two points at one azimuth are flagged.

use eframe::egui::{CollapsingHeader, Grid, Ui};
use passlane_plan::Station;
use passlane_plan::station::{
    Antenna, Channel, LinkDirection, MaskPoint, MountLimits, unused_station_name,
};

use crate::palette;
use crate::state::AppState;
use crate::widgets::{self, Edit};

/// Turnaround of the antenna a new station gets, s (common practice for a
/// small az-el mount: a minute or two to slew and reconfigure).
pub const DEFAULT_TURNAROUND_S: f64 = 60.0;

/// A new station with one default antenna, so that the plan can use it at once.
pub fn new_station(existing: &[Station]) -> Station {
    let name = unused_station_name(existing, "Station");
    let mut st = Station::new(&name, 0.0, 0.0, 0.0);
    st.antennas.push(Antenna {
        name: "Antenna 1".into(),
        turnaround_s: DEFAULT_TURNAROUND_S,
        min_elevation_deg: None,
    });
    st
}

#[derive(Default)]
pub struct StationsEditor {
    pub selected: usize,
}

impl StationsEditor {
    pub fn ui(&mut self, ui: &mut Ui, state: &mut AppState) {
        let mut edit = Edit::default();
        ui.horizontal_wrapped(|ui| {
            ui.strong("Stations:");
            for (i, s) in state.doc.scenario.stations.iter().enumerate() {
                ui.selectable_value(&mut self.selected, i, &s.name);
            }
            if ui
                .button("Add station")
                .on_hover_text("A new station with one antenna; set its position below")
                .clicked()
            {
                let st = new_station(&state.doc.scenario.stations);
                state.doc.scenario.stations.push(st);
                self.selected = state.doc.scenario.stations.len() - 1;
                edit.changed = true;
                edit.committed = true;
            }
        });
        let count = state.doc.scenario.stations.len();
        if count == 0 {
            ui.label("No stations: add one to find passes.");
        } else {
            self.selected = self.selected.min(count - 1);
            let index = self.selected;
            let mut remove = false;
            if let Some(st) = state.doc.scenario.stations.get_mut(index) {
                edit |= station_editor(ui, index, st, &mut remove);
            }
            // The loader's check of the whole list (unique names too), worded as the loader words it.
            if let Err(e) =
                passlane_plan::station::StationSet::new(state.doc.scenario.stations.clone())
                && e.index == index
            {
                ui.colored_label(palette::VERMILLION, e.to_string());
            }
            if remove {
                state.doc.scenario.stations.remove(index);
                self.selected = index.saturating_sub(1);
                edit.changed = true;
                edit.committed = true;
            }
        }
        if edit.committed
            && let Some(st) = state.doc.scenario.stations.get_mut(self.selected)
        {
            sort_mask(st);
        }
        if edit.changed {
            state.doc.touch();
        }
    }
}

/// Sorts the mask by azimuth (stable: points at one azimuth keep their order).
fn sort_mask(st: &mut Station) {
    st.horizon_mask
        .sort_by(|a, b| a.azimuth_deg.total_cmp(&b.azimuth_deg));
}

/// Azimuths used by more than one mask point.
pub fn duplicate_azimuths(mask: &[MaskPoint]) -> Vec<f64> {
    let mut out: Vec<f64> = Vec::new();
    for (i, p) in mask.iter().enumerate() {
        if mask[..i].iter().any(|q| q.azimuth_deg == p.azimuth_deg) && !out.contains(&p.azimuth_deg)
        {
            out.push(p.azimuth_deg);
        }
    }
    out
}

/// An azimuth for a new mask point: the middle of the widest gap between
/// points (going round through 360°), so it never lands on an existing one.
fn free_azimuth(mask: &[MaskPoint]) -> f64 {
    let mut az: Vec<f64> = mask
        .iter()
        .map(|p| p.azimuth_deg.rem_euclid(360.0))
        .collect();
    az.sort_by(f64::total_cmp);
    az.dedup();
    if az.is_empty() {
        return 0.0;
    }
    let mut best = (360.0, az[0] + 180.0);
    best.0 = if az.len() == 1 { 360.0 } else { f64::MIN };
    for (k, a) in az.iter().enumerate() {
        let next = az.get(k + 1).copied().unwrap_or(az[0] + 360.0);
        if next - a > best.0 {
            best = (next - a, a + (next - a) / 2.0);
        }
    }
    (best.1.rem_euclid(360.0) * 10.0).round() / 10.0
}

fn station_editor(ui: &mut Ui, index: usize, st: &mut Station, remove: &mut bool) -> Edit {
    let mut edit = Edit::default();
    let salt = |what: &str, k: usize| (index, what.to_string(), k);
    Grid::new(("station-fields", index))
        .num_columns(2)
        .show(ui, |ui| {
            edit |= widgets::text(ui, "Station name", &mut st.name, 200.0);
            ui.end_row();
            edit |= widgets::number(
                ui,
                "Latitude (deg)",
                salt("lat", 0),
                &mut st.latitude_deg,
                100.0,
            );
            ui.end_row();
            edit |= widgets::number(
                ui,
                "Longitude (deg)",
                salt("lon", 0),
                &mut st.longitude_deg,
                100.0,
            );
            ui.end_row();
            edit |= widgets::number(ui, "Height (m)", salt("h", 0), &mut st.height_m, 100.0);
            ui.end_row();
            edit |= widgets::number(
                ui,
                "Minimum elevation (deg)",
                salt("minel", 0),
                &mut st.min_elevation_deg,
                100.0,
            );
            ui.end_row();
            ui.label("");
            ui.horizontal(|ui| {
                edit |= widgets::optional_number(
                    ui,
                    "Downlink rate (bit/s)",
                    salt("rate", 0),
                    &mut st.downlink_rate_bps,
                    1e6,
                    110.0,
                );
            });
            ui.end_row();
        });
    edit |= antennas_ui(ui, index, st);
    edit |= mask_ui(ui, index, st);
    edit |= channels_ui(ui, index, st);
    edit |= mount_ui(ui, index, st);
    ui.add_space(4.0);
    if ui.button("Remove this station").clicked() {
        *remove = true;
    }
    edit
}

fn antennas_ui(ui: &mut Ui, index: usize, st: &mut Station) -> Edit {
    let mut edit = Edit::default();
    CollapsingHeader::new(format!("Antennas ({})", st.antennas.len()))
        .id_salt(("antennas", index))
        .default_open(true)
        .show(ui, |ui| {
            if st.antennas.is_empty() {
                ui.colored_label(
                    palette::YELLOW,
                    "No antenna: the network plan cannot use this station.",
                );
            }
            let mut drop = None;
            for (k, a) in st.antennas.iter_mut().enumerate() {
                let n = k + 1;
                ui.horizontal_wrapped(|ui| {
                    edit |= widgets::text(ui, &format!("Antenna {n} name"), &mut a.name, 110.0);
                    edit |= widgets::number(
                        ui,
                        &format!("Antenna {n} turnaround (s)"),
                        (index, "turn", k),
                        &mut a.turnaround_s,
                        60.0,
                    );
                    edit |= widgets::optional_number(
                        ui,
                        &format!("Antenna {n} own minimum elevation (deg)"),
                        (index, "aminel", k),
                        &mut a.min_elevation_deg,
                        st.min_elevation_deg,
                        50.0,
                    );
                    if ui.small_button(format!("Remove antenna {n}")).clicked() {
                        drop = Some(k);
                    }
                });
            }
            if let Some(k) = drop {
                st.antennas.remove(k);
                edit.changed = true;
            }
            if ui.button("Add antenna").clicked() {
                let n = (1..)
                    .map(|n| format!("Antenna {n}"))
                    .find(|name| !st.antennas.iter().any(|a| &a.name == name))
                    .unwrap_or_default();
                st.antennas.push(Antenna {
                    name: n,
                    turnaround_s: DEFAULT_TURNAROUND_S,
                    min_elevation_deg: None,
                });
                edit.changed = true;
            }
        });
    edit
}

fn mask_ui(ui: &mut Ui, index: usize, st: &mut Station) -> Edit {
    let mut edit = Edit::default();
    // The id does not depend on the count, so adding a point keeps the section open.
    CollapsingHeader::new(format!("Horizon mask ({} points)", st.horizon_mask.len()))
        .id_salt(("mask", index))
        .show(ui, |ui| {
            ui.label("Azimuth from north through east; elevation of the horizon there. Rows are sorted by azimuth when you leave a field.");
            let dups = duplicate_azimuths(&st.horizon_mask);
            let mut drop = None;
            Grid::new(("mask-grid", index)).num_columns(1).show(ui, |ui| {
                for (k, p) in st.horizon_mask.iter_mut().enumerate() {
                    let n = k + 1;
                    ui.horizontal(|ui| {
                        edit |= widgets::number(
                            ui,
                            &format!("Point {n} azimuth (deg)"),
                            (index, "maz", k),
                            &mut p.azimuth_deg,
                            60.0,
                        );
                        edit |= widgets::number(
                            ui,
                            &format!("Point {n} elevation (deg)"),
                            (index, "mel", k),
                            &mut p.elevation_deg,
                            60.0,
                        );
                        if ui.small_button(format!("Remove point {n}")).clicked() {
                            drop = Some(k);
                        }
                        if dups.contains(&p.azimuth_deg) {
                            ui.colored_label(palette::YELLOW, "duplicate azimuth");
                        }
                    });
                    ui.end_row();
                }
            });
            if !dups.is_empty() {
                ui.colored_label(
                    palette::YELLOW,
                    format!(
                        "Two or more points share the azimuth {}: the mask jumps there; change one.",
                        dups.iter()
                            .map(|a| format!("{a}°"))
                            .collect::<Vec<_>>()
                            .join(", ")
                    ),
                );
            }
            if let Some(k) = drop {
                st.horizon_mask.remove(k);
                edit.changed = true;
            }
            if ui.button("Add mask point").clicked() {
                // Added at the end and kept there until an edit is committed.
                st.horizon_mask.push(MaskPoint {
                    azimuth_deg: free_azimuth(&st.horizon_mask),
                    elevation_deg: st.min_elevation_deg,
                });
                edit.changed = true;
            }
        });
    edit
}

fn channels_ui(ui: &mut Ui, index: usize, st: &mut Station) -> Edit {
    let mut edit = Edit::default();
    CollapsingHeader::new(format!("Channels ({})", st.channels.len()))
        .id_salt(("channels", index))
        .show(ui, |ui| {
            let mut drop = None;
            for (k, ch) in st.channels.iter_mut().enumerate() {
                let n = k + 1;
                ui.horizontal_wrapped(|ui| {
                    edit |= widgets::text(ui, &format!("Channel {n} name"), &mut ch.name, 100.0);
                    let mut mhz = ch.frequency_hz / 1e6;
                    let e = widgets::number(
                        ui,
                        &format!("Channel {n} frequency (MHz)"),
                        (index, "freq", k),
                        &mut mhz,
                        90.0,
                    );
                    if e.changed {
                        ch.frequency_hz = mhz * 1e6;
                    }
                    edit |= e;
                    edit.changed |= ui
                        .selectable_value(&mut ch.direction, LinkDirection::Downlink, "downlink")
                        .changed();
                    edit.changed |= ui
                        .selectable_value(&mut ch.direction, LinkDirection::Uplink, "uplink")
                        .changed();
                    if ui.small_button(format!("Remove channel {n}")).clicked() {
                        drop = Some(k);
                    }
                });
            }
            if let Some(k) = drop {
                st.channels.remove(k);
                edit.changed = true;
            }
            if ui.button("Add channel").clicked() {
                st.channels.push(Channel {
                    name: format!("Channel {}", st.channels.len() + 1),
                    direction: LinkDirection::Downlink,
                    frequency_hz: 437e6,
                });
                edit.changed = true;
            }
        });
    edit
}

fn mount_ui(ui: &mut Ui, index: usize, st: &mut Station) -> Edit {
    let mut edit = Edit::default();
    CollapsingHeader::new("Mount limits")
        .id_salt(("mount", index))
        .show(ui, |ui| {
            let mut has = st.mount.is_some();
            if ui
                .checkbox(&mut has, "This mount has rate or elevation limits")
                .changed()
            {
                st.mount = has.then_some(MountLimits {
                    min_elevation_deg: 0.0,
                    max_elevation_deg: 90.0,
                    max_azimuth_rate_deg_s: 5.0,
                    max_elevation_rate_deg_s: 3.0,
                });
                edit.changed = true;
            }
            if let Some(m) = &mut st.mount {
                Grid::new(("mount-fields", index))
                    .num_columns(2)
                    .show(ui, |ui| {
                        for (label, k, v) in [
                            ("Mount lowest elevation (deg)", 0, &mut m.min_elevation_deg),
                            ("Mount highest elevation (deg)", 1, &mut m.max_elevation_deg),
                            ("Max azimuth rate (deg/s)", 2, &mut m.max_azimuth_rate_deg_s),
                            (
                                "Max elevation rate (deg/s)",
                                3,
                                &mut m.max_elevation_rate_deg_s,
                            ),
                        ] {
                            edit |= widgets::number(ui, label, (index, "mount", k), v, 80.0);
                            ui.end_row();
                        }
                    });
            }
        });
    edit
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_new_mask_point_lands_in_the_widest_gap() {
        let pts = |az: &[f64]| {
            az.iter()
                .map(|&a| MaskPoint {
                    azimuth_deg: a,
                    elevation_deg: 5.0,
                })
                .collect::<Vec<_>>()
        };
        assert_eq!(free_azimuth(&[]), 0.0);
        assert_eq!(free_azimuth(&pts(&[0.0])), 180.0);
        assert_eq!(free_azimuth(&pts(&[0.0, 90.0])), 225.0);
        assert_eq!(duplicate_azimuths(&pts(&[10.0, 20.0, 10.0])), vec![10.0]);
    }
}
