//! The plan as reported: kept contacts, demand met per spacecraft and day,
//! and the conflicts the plan resolved, with reasons.

use passlane_orbit::UtcTime;
use serde::Serialize;

use super::problem::{ConflictKind, Problem};
use super::solve::{Groups, State};
use super::{SCORE_EPS, SECONDS_PER_DAY};

/// How the plan was found.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Method {
    /// Branch-and-bound over every choice: the optimum.
    Exact,
    /// Greedy start plus local search: good, not proven optimal.
    Heuristic,
}

/// One kept contact, with the names an operator reads.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PlannedContact {
    pub spacecraft: String,
    pub catalog_number: u32,
    /// The station's name (kept in the JSON for scripts).
    pub station: String,
    /// Index of the station in the scenario's station list.
    #[serde(skip)]
    pub station_index: usize,
    pub antenna: String,
    #[serde(serialize_with = "passlane_orbit::time::iso_us")]
    pub aos: UtcTime,
    #[serde(serialize_with = "passlane_orbit::time::iso_us")]
    pub los: UtcTime,
    pub duration_s: f64,
    pub max_elevation_deg: f64,
    pub channels: Vec<String>,
    pub volume_mb: f64,
    pub pinned: bool,
    /// Index into [`Problem::candidates`].
    pub candidate: usize,
    /// Days from the element set's epoch to the pass's culmination; `None`
    /// when an operator ephemeris covers the pass.
    pub element_age_days: Option<f64>,
}

/// Shortfall of one spacecraft on one day.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DayShortfall {
    pub day_start: UtcTime,
    pub contacts: usize,
    pub contacts_wanted: Option<f64>,
    pub volume_mb: f64,
    pub volume_wanted_mb: Option<f64>,
    /// 0–1: how much of the day's demand is met.
    pub met_fraction: f64,
}

/// What one spacecraft gets over the whole window.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DemandMet {
    pub spacecraft: String,
    pub catalog_number: u32,
    pub priority: f64,
    pub contacts: usize,
    pub contacts_wanted: Option<f64>,
    pub volume_mb: f64,
    pub volume_wanted_mb: Option<f64>,
    /// Mean over days of the met fraction, 0–1.
    pub met_fraction: f64,
    /// Days that fall short, with the figures.
    pub unmet_days: Vec<DayShortfall>,
}

/// A contact the plan left out because a kept one took its place.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ResolvedConflict {
    pub loser_spacecraft: String,
    pub loser_catalog_number: u32,
    pub station: String,
    pub antenna: String,
    #[serde(serialize_with = "passlane_orbit::time::iso_us")]
    pub aos: UtcTime,
    #[serde(serialize_with = "passlane_orbit::time::iso_us")]
    pub los: UtcTime,
    pub winner_spacecraft: String,
    pub winner_catalog_number: u32,
    pub winner_station: String,
    pub winner_antenna: String,
    #[serde(serialize_with = "passlane_orbit::time::iso_us")]
    pub winner_aos: UtcTime,
    pub kind: ConflictKind,
    /// Why the winner was kept, in words.
    pub reason: String,
}

impl ResolvedConflict {
    /// One line, e.g. "KRSL-3 LUNNOCK lost Northfell/NF-A 2026-12-01 03:12–03:20
    /// to KRSL-5 FIRTHEN (priority 5 > 1)".
    pub fn describe(&self) -> String {
        let aos = self.aos.to_iso_s();
        let los = self.los.to_iso_s();
        format!(
            "{} lost {}/{} {} {}–{} to {} ({})",
            self.loser_spacecraft,
            self.station,
            self.antenna,
            &aos[..10],
            &aos[11..16],
            &los[11..16],
            self.winner_spacecraft,
            self.reason
        )
    }
}

/// The network plan.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Plan {
    pub start: UtcTime,
    pub end: UtcTime,
    /// Kept contacts, by AOS.
    pub contacts: Vec<PlannedContact>,
    pub demand: Vec<DemandMet>,
    pub conflicts: Vec<ResolvedConflict>,
    /// The objective (module docs) of the kept contacts.
    pub score: f64,
    /// The objective if every demand were met.
    pub max_score: f64,
    /// The objective with all conflicts ignored: no plan can score more.
    pub upper_bound: f64,
    pub method: Method,
    /// Candidates considered (after clipping and the minimum length).
    pub candidates: usize,
    pub warnings: Vec<String>,
}

impl Plan {
    /// Score over the best possible score, 0–1.
    pub fn demand_met_fraction(&self) -> f64 {
        if self.max_score > 0.0 {
            self.score / self.max_score
        } else {
            1.0
        }
    }
}

#[allow(clippy::too_many_arguments)]
pub(super) fn describe(
    p: &Problem,
    groups: &Groups,
    adj: &[Vec<usize>],
    state: &State,
    pinned: &[bool],
    excluded: &[bool],
    method: Method,
    upper_bound: f64,
) -> Plan {
    let chosen = state.selection();
    let mut contacts: Vec<PlannedContact> = chosen
        .iter()
        .map(|&c| {
            let cand = &p.candidates[c];
            let sat = &p.network.satellites[cand.satellite];
            let ant = &p.network.antennas[cand.antenna];
            PlannedContact {
                spacecraft: sat.name.clone(),
                catalog_number: sat.catalog_number,
                station: ant.station.clone(),
                station_index: ant.station_index,
                antenna: ant.antenna.clone(),
                aos: cand.aos,
                los: cand.los,
                duration_s: cand.duration_s(),
                max_elevation_deg: cand.max_elevation_deg,
                channels: ant.channels.clone(),
                volume_mb: cand.volume_mb,
                pinned: pinned[c],
                candidate: c,
                element_age_days: cand.element_age_days,
            }
        })
        .collect();
    contacts.sort_by(|a, b| {
        a.aos
            .s_since_j2000()
            .total_cmp(&b.aos.s_since_j2000())
            .then(a.station.cmp(&b.station))
            .then(a.antenna.cmp(&b.antenna))
    });
    let days = p.day_count();
    let demand = p
        .network
        .satellites
        .iter()
        .enumerate()
        .map(|(si, s)| {
            let mut unmet_days = Vec::new();
            let mut met_sum = 0.0;
            for d in 0..days {
                let g = si * days + d;
                let info = &groups.info[g];
                let met = if info.weight > 0.0 {
                    groups.value(g, state.k[g], state.vol[g]) / info.weight
                } else {
                    1.0
                };
                met_sum += met;
                if met < 1.0 - 1e-9 {
                    unmet_days.push(DayShortfall {
                        day_start: p.start.add_s(d as f64 * SECONDS_PER_DAY),
                        contacts: state.k[g] as usize,
                        contacts_wanted: s
                            .contacts_per_day
                            .map(|_| info.contacts_needed.unwrap_or(0.0)),
                        volume_mb: state.vol[g],
                        volume_wanted_mb: info.volume_needed_mb,
                        met_fraction: met,
                    });
                }
            }
            let total_days: f64 = (0..days).map(|d| p.day_fraction(d)).sum();
            DemandMet {
                spacecraft: s.name.clone(),
                catalog_number: s.catalog_number,
                priority: s.priority,
                contacts: (0..days).map(|d| state.k[si * days + d] as usize).sum(),
                contacts_wanted: s.contacts_per_day.map(|c| c * total_days),
                volume_mb: (0..days).map(|d| state.vol[si * days + d]).sum(),
                volume_wanted_mb: s.downlink_mb_per_day.map(|v| v * total_days),
                met_fraction: met_sum / days as f64,
                unmet_days,
            }
        })
        .collect();
    // Conflicts: every left-out candidate that would have added value on its
    // own, against each kept contact that blocks it.
    let mut conflicts = Vec::new();
    for c in 0..p.candidates.len() {
        if state.chosen[c] || excluded[c] || state.gain(c) <= SCORE_EPS {
            continue;
        }
        for &w in &adj[c] {
            if !state.chosen[w] {
                continue;
            }
            let Some(kind) = p.conflict(c, w) else {
                continue;
            };
            let (lc, wc) = (&p.candidates[c], &p.candidates[w]);
            let (ls, ws) = (
                &p.network.satellites[lc.satellite],
                &p.network.satellites[wc.satellite],
            );
            let (la, wa) = (
                &p.network.antennas[lc.antenna],
                &p.network.antennas[wc.antenna],
            );
            let priority = if ws.priority > ls.priority {
                format!("priority {} > {}", ws.priority, ls.priority)
            } else {
                format!(
                    "worth more to the plan: {:.2} vs {:.2} priority-weighted demand",
                    state.loss(w),
                    state.gain(c)
                )
            };
            let reason = if pinned[w] {
                "pinned".to_string()
            } else {
                match kind {
                    ConflictKind::Overlap => priority,
                    ConflictKind::Turnaround => {
                        format!("turnaround {} s; {priority}", la.turnaround_s)
                    }
                    ConflictKind::SameSpacecraft => {
                        format!("already in contact via {}/{}", wa.station, wa.antenna)
                    }
                }
            };
            conflicts.push(ResolvedConflict {
                loser_spacecraft: ls.name.clone(),
                loser_catalog_number: ls.catalog_number,
                station: la.station.clone(),
                antenna: la.antenna.clone(),
                aos: lc.aos,
                los: lc.los,
                winner_spacecraft: ws.name.clone(),
                winner_catalog_number: ws.catalog_number,
                winner_station: wa.station.clone(),
                winner_antenna: wa.antenna.clone(),
                winner_aos: wc.aos,
                kind,
                reason,
            });
        }
    }
    Plan {
        start: p.start,
        end: p.end,
        contacts,
        demand,
        conflicts,
        score: state.score,
        max_score: p.max_score(),
        upper_bound,
        method,
        candidates: p.candidates.len(),
        warnings: Vec::new(),
    }
}
