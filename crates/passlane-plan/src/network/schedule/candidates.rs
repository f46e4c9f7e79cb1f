//! Candidates: each pass of a planned spacecraft on each antenna of its
//! station, clipped to the part above the antenna's own minimum elevation.

use std::collections::HashMap;

use passlane_orbit::{EarthOrientation, ElementSet, Propagator, UtcTime};
use rayon::prelude::*;
use serde::Serialize;

use super::network::Network;
use crate::passes::Pass;
use crate::pointing::interval_above;
use crate::station::Station;

/// One possible contact: a spacecraft on an antenna over the usable part of a pass.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Candidate {
    /// Index into [`Network::satellites`].
    pub satellite: usize,
    /// Index into [`Network::antennas`].
    pub antenna: usize,
    /// AOS of the pass (horizon crossing), for matching pins and exclusions.
    pub pass_aos: UtcTime,
    /// Usable start and end (above the antenna's minimum elevation).
    pub aos: UtcTime,
    pub los: UtcTime,
    pub max_elevation_deg: f64,
    /// Expected downlink volume, MB (usable duration × station rate).
    pub volume_mb: f64,
    /// The pass's [`Pass::element_age_days`].
    pub element_age_days: Option<f64>,
}

impl Candidate {
    pub fn duration_s(&self) -> f64 {
        self.los.s_since(self.aos)
    }
}

/// Candidates made from a pass search.
#[derive(Debug, Clone, Default, Serialize)]
pub struct CandidateSet {
    pub candidates: Vec<Candidate>,
    /// Pass-antenna pairs dropped as too short or never high enough.
    pub dropped: usize,
    /// Spacecraft whose look angles failed (message per spacecraft).
    pub failures: Vec<String>,
}

/// Builds the candidates: each pass of a planned spacecraft on each antenna of
/// its station, clipped to the antenna's minimum elevation.
pub fn build_candidates(
    network: &Network,
    passes: &[Pass],
    sets: &[ElementSet],
    stations: &[Station],
    eop: &EarthOrientation,
) -> CandidateSet {
    let sat_index: HashMap<u32, usize> = network
        .satellites
        .iter()
        .enumerate()
        .map(|(i, d)| (d.catalog_number, i))
        .collect();
    let mut props: HashMap<u32, Result<Propagator, String>> = HashMap::new();
    for set in sets {
        if sat_index.contains_key(&set.catalog_number) {
            props.insert(
                set.catalog_number,
                Propagator::new(set).map_err(|e| e.to_string()),
            );
        }
    }
    let sites: Vec<_> = stations.iter().map(|s| s.site()).collect();
    let per_pass: Vec<(Vec<Candidate>, usize, Option<String>)> = passes
        .par_iter()
        .map(|pass| {
            let mut out = Vec::new();
            let mut dropped = 0;
            // The pass names its station by index into the same list.
            let st = pass.station_index;
            let (Some(&si), true) = (sat_index.get(&pass.catalog_number), st < stations.len())
            else {
                return (out, 0, None);
            };
            let Some(prop) = props.get(&pass.catalog_number) else {
                return (out, 0, None);
            };
            let prop = match prop {
                Ok(p) => p,
                Err(e) => return (out, 0, Some(e.clone())),
            };
            let demand = &network.satellites[si];
            // Antennas with the same limit share one crossing search.
            let mut cache: Vec<(f64, Option<(UtcTime, UtcTime)>)> = Vec::new();
            for (ai, ant) in network.antennas.iter().enumerate() {
                if ant.station_index != st {
                    continue;
                }
                let interval = if ant.min_elevation_deg <= stations[st].min_elevation_deg {
                    // The pass is above the station's horizon, which is never
                    // below its minimum elevation: nothing to clip.
                    Some((pass.aos, pass.los))
                } else if let Some((_, iv)) =
                    cache.iter().find(|(m, _)| *m == ant.min_elevation_deg)
                {
                    *iv
                } else {
                    match interval_above(prop, &sites[st], pass, ant.min_elevation_deg, eop) {
                        Ok(iv) => {
                            cache.push((ant.min_elevation_deg, iv));
                            iv
                        }
                        Err(e) => return (out, dropped, Some(e.to_string())),
                    }
                };
                let Some((aos, los)) = interval else {
                    dropped += 1;
                    continue;
                };
                let duration_s = los.s_since(aos);
                if duration_s <= 0.0 || duration_s < demand.min_contact_s {
                    dropped += 1;
                    continue;
                }
                out.push(Candidate {
                    satellite: si,
                    antenna: ai,
                    pass_aos: pass.aos,
                    aos,
                    los,
                    max_elevation_deg: pass.max_elevation_deg,
                    volume_mb: duration_s * ant.downlink_rate_bps / 8e6,
                    element_age_days: pass.element_age_days,
                });
            }
            (out, dropped, None)
        })
        .collect();
    let mut set = CandidateSet::default();
    for (c, d, f) in per_pass {
        set.candidates.extend(c);
        set.dropped += d;
        if let Some(f) = f
            && !set.failures.contains(&f)
        {
            set.failures.push(f);
        }
    }
    sort_candidates(&mut set.candidates);
    set
}

pub(super) fn sort_candidates(c: &mut [Candidate]) {
    c.sort_by(|a, b| {
        a.aos
            .s_since_j2000()
            .total_cmp(&b.aos.s_since_j2000())
            .then(a.antenna.cmp(&b.antenna))
            .then(a.satellite.cmp(&b.satellite))
    });
}
