//! The network the planner works on: antennas (from the stations) and the
//! demand of each spacecraft (from the scenario), checked against the element sets.

use passlane_orbit::ElementSet;
use serde::Serialize;

use super::{PlanError, plan_err};
use crate::scenario::Scenario;

/// One antenna as the planner sees it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct NetworkAntenna {
    pub station: String,
    pub antenna: String,
    /// Index into the station list the network was made from.
    pub station_index: usize,
    pub turnaround_s: f64,
    /// The antenna's own minimum elevation, or the station's, deg.
    pub min_elevation_deg: f64,
    /// The station's downlink rate, bit/s (0 when the station states none).
    pub downlink_rate_bps: f64,
    /// Channel names of the station, in its order.
    pub channels: Vec<String>,
}

/// What one spacecraft needs (validated from the scenario's `satellites`).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Demand {
    pub catalog_number: u32,
    pub name: String,
    pub priority: f64,
    pub min_contact_s: f64,
    pub contacts_per_day: Option<f64>,
    pub downlink_mb_per_day: Option<f64>,
    pub allow_simultaneous: bool,
}

/// Antennas and demands, checked against the stations and element sets.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Network {
    pub antennas: Vec<NetworkAntenna>,
    pub satellites: Vec<Demand>,
}

impl Network {
    /// The network of a scenario. Every station must have an antenna; every
    /// entry of `satellites` must name a spacecraft of `sets`. When the
    /// scenario lists no satellites at all, every element set is planned with
    /// priority 1 and one contact a day.
    pub fn from_scenario(scenario: &Scenario, sets: &[ElementSet]) -> Result<Network, PlanError> {
        let mut antennas = Vec::new();
        if scenario.stations.is_empty() {
            return Err(plan_err(
                "stations",
                "the scenario has no stations to plan on",
            ));
        }
        for (i, st) in scenario.stations.iter().enumerate() {
            st.validate()
                .map_err(|e| plan_err(format!("stations[{i}].{}", e.field), e.message))?;
            if st.antennas.is_empty() {
                return Err(plan_err(
                    format!("stations[{i}].antennas"),
                    format!(
                        "station {:?} has no antennas; the network plan needs at least one per station \
                         (e.g. \"antennas\": [{{\"name\": \"A\", \"turnaround_s\": 60}}])",
                        st.name
                    ),
                ));
            }
            for a in &st.antennas {
                antennas.push(NetworkAntenna {
                    station: st.name.clone(),
                    antenna: a.name.clone(),
                    station_index: i,
                    turnaround_s: a.turnaround_s,
                    min_elevation_deg: a.min_elevation_deg.unwrap_or(st.min_elevation_deg),
                    downlink_rate_bps: st.downlink_rate_bps.unwrap_or(0.0),
                    channels: st.channels.iter().map(|c| c.name.clone()).collect(),
                });
            }
        }
        let mut satellites = Vec::new();
        if scenario.satellites.is_empty() {
            for set in sets {
                satellites.push(Demand {
                    catalog_number: set.catalog_number,
                    name: set.name.clone(),
                    priority: 1.0,
                    min_contact_s: 0.0,
                    contacts_per_day: Some(1.0),
                    downlink_mb_per_day: None,
                    allow_simultaneous: false,
                });
            }
        }
        for (i, n) in scenario.satellites.iter().enumerate() {
            let Some(set) = sets.iter().find(|s| s.catalog_number == n.catalog_number) else {
                return Err(plan_err(
                    format!("satellites[{i}].catalog_number"),
                    format!(
                        "demand for spacecraft {} but no element set with that catalog number was loaded",
                        n.catalog_number
                    ),
                ));
            };
            satellites.push(Demand {
                catalog_number: n.catalog_number,
                name: set.name.clone(),
                priority: n.priority,
                min_contact_s: n.min_contact_s,
                contacts_per_day: n.contacts_per_day,
                downlink_mb_per_day: n.downlink_mb_per_day,
                allow_simultaneous: n.allow_simultaneous,
            });
        }
        Ok(Network {
            antennas,
            satellites,
        })
    }
}
