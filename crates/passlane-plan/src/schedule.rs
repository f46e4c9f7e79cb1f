//! The network contact plan: which antenna serves which spacecraft when.
//!
//! # Model
//! - **Antennas** belong to stations. Each has a turnaround time (the gap it
//!   needs between two contacts) and a minimum usable elevation (its own, or
//!   the station's when it has none). A station's downlink rate turns a
//!   contact's usable duration into a data volume.
//! - **Candidates**: one per (pass, antenna of the pass's station), clipped to
//!   the part of the pass above the antenna's minimum elevation
//!   ([`crate::passes::interval_above`]); candidates shorter than the
//!   spacecraft's `min_contact_s` are dropped.
//! - **Constraints** on a chosen set: on one antenna, any two contacts are at
//!   least the antenna's turnaround apart (`a.los + turnaround <= b.aos` or the
//!   reverse); one spacecraft is served by at most one antenna at a time unless
//!   its `allow_simultaneous` is set; pinned candidates are chosen; excluded
//!   candidates are not.
//!
//! # Objective
//! The plan window is cut into days of 86,400 s from its start (the last may
//! be partial; its demand is scaled by its length). A contact belongs to the
//! day that holds its midpoint. For spacecraft `s` with priority `p_s` and day
//! `d` with `k` contacts bringing `v` MB:
//!
//! ```text
//! c = min(1, k / (contacts_per_day · f_d))        f_d = day length / 86,400 s
//! m = min(1, v / (downlink_mb_per_day · f_d))
//! value(s, d) = p_s · (c + m) / 2    when both demands are given,
//!             = p_s · c  or  p_s · m when only one is,
//!             = p_s · min(1, k / f_d) when none is (one contact a day).
//! ```
//!
//! The plan maximises Σ value(s, d) over spacecraft and days. Each term is
//! concave and capped in its spacecraft-day's service, so once a spacecraft's
//! day is met further contacts add nothing and the antenna time goes to
//! others: the planner spreads service. The best possible score is Σ p_s per
//! day; [`Plan::demand_met_fraction`] is the score over that.
//!
//! # Search
//! With at most [`EXACT_LIMIT`] free candidates (after pins and exclusions),
//! a depth-first branch-and-bound finds the optimum: its bound adds to the
//! current score what every spacecraft-day would gain from all its remaining
//! compatible candidates (an upper bound, as each value is non-decreasing).
//! Above that, a greedy pass (largest marginal gain first, in two orders:
//! gain, and gain per second of antenna time; the better is kept) is improved
//! by local search: insert a candidate, drop the contacts it conflicts with,
//! greedily refill around them, and keep the change if the score rose.
//! [`Plan::upper_bound`] is the same score with every conflict ignored, a
//! bound any plan stays under.
//!
//! # What it does not do
//! No uplink/downlink direction choice, no link budget (the rate is per
//! station), no partial contacts (a candidate is taken whole or not at all),
//! no look-ahead across the window's end.

use std::collections::HashMap;

use passlane_orbit::{EarthOrientation, ElementSet, Propagator, UtcTime};
use rayon::prelude::*;
use serde::Serialize;

use crate::passes::{Pass, Progress, interval_above};
use crate::scenario::{ContactRef, Scenario};
use crate::station::Station;

/// Free candidates up to which the planner searches exhaustively.
pub const EXACT_LIMIT: usize = 20;

const SECONDS_PER_DAY: f64 = 86_400.0;
/// Scores closer than this are equal (they are sums of a few hundred terms ≤ 10).
const SCORE_EPS: f64 = 1e-9;

/// Why a plan could not be made; `field` names the scenario field at fault.
#[derive(Debug, Clone, PartialEq)]
pub struct PlanError {
    pub field: String,
    pub message: String,
}

impl std::fmt::Display for PlanError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        if self.field.is_empty() {
            write!(f, "{}", self.message)
        } else {
            write!(f, "{}: {}", self.field, self.message)
        }
    }
}

impl std::error::Error for PlanError {}

fn plan_err(field: impl Into<String>, message: impl Into<String>) -> PlanError {
    PlanError {
        field: field.into(),
        message: message.into(),
    }
}

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
    let station_index: HashMap<&str, usize> = stations
        .iter()
        .enumerate()
        .map(|(i, s)| (s.name.as_str(), i))
        .collect();
    let per_pass: Vec<(Vec<Candidate>, usize, Option<String>)> = passes
        .par_iter()
        .map(|pass| {
            let mut out = Vec::new();
            let mut dropped = 0;
            let (Some(&si), Some(&st)) = (
                sat_index.get(&pass.catalog_number),
                station_index.get(pass.station.as_str()),
            ) else {
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

fn sort_candidates(c: &mut [Candidate]) {
    c.sort_by(|a, b| {
        a.aos
            .s_since_j2000()
            .total_cmp(&b.aos.s_since_j2000())
            .then(a.antenna.cmp(&b.antenna))
            .then(a.satellite.cmp(&b.satellite))
    });
}

/// Everything the solver needs.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Problem {
    pub start: UtcTime,
    pub end: UtcTime,
    pub network: Network,
    pub candidates: Vec<Candidate>,
    /// Candidate indices that must be kept.
    pub pinned: Vec<usize>,
    /// Candidate indices that must not be used.
    pub excluded: Vec<usize>,
}

impl Problem {
    pub fn new(
        network: Network,
        candidates: Vec<Candidate>,
        start: UtcTime,
        end: UtcTime,
    ) -> Problem {
        Problem {
            start,
            end,
            network,
            candidates,
            pinned: Vec::new(),
            excluded: Vec::new(),
        }
    }

    /// Resolves the scenario's pins and exclusions to candidates (see
    /// [`ContactRef`] for the matching rule). A pin that matches nothing is an
    /// error; an exclusion that matches nothing is returned as a warning (the
    /// contact may simply lie outside this window).
    pub fn apply_refs(
        &mut self,
        pins: &[ContactRef],
        exclusions: &[ContactRef],
    ) -> Result<Vec<String>, PlanError> {
        let mut warnings = Vec::new();
        for (i, r) in exclusions.iter().enumerate() {
            let hits = self.matches(r);
            if hits.is_empty() {
                warnings.push(format!(
                    "exclusions[{i}]: no contact of {} over {} within {} s of {}; nothing excluded",
                    r.catalog_number,
                    r.station,
                    r.tolerance_s,
                    r.aos.to_iso_ms()
                ));
            }
            for h in hits {
                if !self.excluded.contains(&h) {
                    self.excluded.push(h);
                }
            }
        }
        for (i, r) in pins.iter().enumerate() {
            let hits = self.matches(r);
            // Without an antenna: the first antenna in scenario order, then the closest AOS.
            let best = hits.into_iter().min_by(|&a, &b| {
                let (ca, cb) = (&self.candidates[a], &self.candidates[b]);
                ca.antenna
                    .cmp(&cb.antenna)
                    .then(ref_distance_s(r, ca).total_cmp(&ref_distance_s(r, cb)))
            });
            let Some(best) = best else {
                return Err(plan_err(
                    format!("pins[{i}]"),
                    format!(
                        "no usable contact of {} over {}{} within {} s of {} (outside the window, below the antenna's \
                         minimum elevation, or shorter than the spacecraft's min_contact_s?)",
                        r.catalog_number,
                        r.station,
                        r.antenna
                            .as_deref()
                            .map(|a| format!("/{a}"))
                            .unwrap_or_default(),
                        r.tolerance_s,
                        r.aos.to_iso_ms()
                    ),
                ));
            };
            if self.excluded.contains(&best) {
                return Err(plan_err(
                    format!("pins[{i}]"),
                    "this contact is also excluded (see exclusions)",
                ));
            }
            if !self.pinned.contains(&best) {
                self.pinned.push(best);
            }
        }
        Ok(warnings)
    }

    fn matches(&self, r: &ContactRef) -> Vec<usize> {
        self.candidates
            .iter()
            .enumerate()
            .filter(|(_, c)| {
                let sat = &self.network.satellites[c.satellite];
                let ant = &self.network.antennas[c.antenna];
                sat.catalog_number == r.catalog_number
                    && ant.station == r.station
                    && r.antenna.as_ref().is_none_or(|a| *a == ant.antenna)
                    && ref_distance_s(r, c) <= r.tolerance_s
            })
            .map(|(i, _)| i)
            .collect()
    }

    /// Number of planning days (the last may be partial).
    pub fn day_count(&self) -> usize {
        let span = self.end.s_since(self.start).max(0.0);
        ((span / SECONDS_PER_DAY).ceil() as usize).max(1)
    }

    /// Length of day `d` as a fraction of 86,400 s.
    fn day_fraction(&self, d: usize) -> f64 {
        let span = self.end.s_since(self.start).max(0.0);
        let rest = span - d as f64 * SECONDS_PER_DAY;
        (rest / SECONDS_PER_DAY).clamp(0.0, 1.0)
    }

    /// The day a candidate counts for (its midpoint's).
    pub fn day_of(&self, c: &Candidate) -> usize {
        let mid = 0.5 * (c.aos.s_since(self.start) + c.los.s_since(self.start));
        let d = (mid / SECONDS_PER_DAY).floor().max(0.0) as usize;
        d.min(self.day_count() - 1)
    }

    /// Do two candidates exclude each other? Returns why.
    pub fn conflict(&self, a: usize, b: usize) -> Option<ConflictKind> {
        if a == b {
            return None;
        }
        let (ca, cb) = (&self.candidates[a], &self.candidates[b]);
        let overlap = ca.aos < cb.los && cb.aos < ca.los;
        if ca.antenna == cb.antenna {
            if overlap {
                return Some(ConflictKind::Overlap);
            }
            let t = self.network.antennas[ca.antenna].turnaround_s;
            if ca.aos < cb.los.add_s(t) && cb.aos < ca.los.add_s(t) {
                return Some(ConflictKind::Turnaround);
            }
            return None;
        }
        if ca.satellite == cb.satellite
            && overlap
            && !self.network.satellites[ca.satellite].allow_simultaneous
        {
            return Some(ConflictKind::SameSpacecraft);
        }
        None
    }

    /// The objective (see the module docs) of a set of candidates.
    pub fn score(&self, chosen: &[usize]) -> f64 {
        let groups = Groups::new(self);
        let mut k = vec![0u32; groups.info.len()];
        let mut v = vec![0.0; groups.info.len()];
        for &c in chosen {
            let g = groups.of[c];
            k[g] += 1;
            v[g] += self.candidates[c].volume_mb;
        }
        (0..groups.info.len())
            .map(|g| groups.value(g, k[g], v[g]))
            .sum()
    }

    /// Σ priority over spacecraft and days, scaled for a partial last day: the
    /// score of a plan that meets every demand.
    pub fn max_score(&self) -> f64 {
        // A partial last day has its demand scaled down, so it too is worth
        // its full priority when met.
        let n = self.day_count();
        self.network
            .satellites
            .iter()
            .map(|s| s.priority)
            .sum::<f64>()
            * n as f64
    }
}

fn ref_distance_s(r: &ContactRef, c: &Candidate) -> f64 {
    r.aos
        .s_since(c.pass_aos)
        .abs()
        .min(r.aos.s_since(c.aos).abs())
}

/// Why two candidates cannot both be kept.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ConflictKind {
    /// Same antenna, overlapping in time.
    Overlap,
    /// Same antenna, closer than its turnaround time.
    Turnaround,
    /// Same spacecraft on two antennas at once.
    SameSpacecraft,
}

/// Spacecraft-day groups and their value functions.
struct Groups {
    /// Group of each candidate.
    of: Vec<usize>,
    info: Vec<GroupInfo>,
}

struct GroupInfo {
    weight: f64,
    contacts_needed: Option<f64>,
    volume_needed_mb: Option<f64>,
}

impl Groups {
    fn new(p: &Problem) -> Groups {
        let days = p.day_count();
        let mut info = Vec::with_capacity(p.network.satellites.len() * days);
        for s in &p.network.satellites {
            for d in 0..days {
                let f = p.day_fraction(d).max(1e-9);
                let (c, v) = match (s.contacts_per_day, s.downlink_mb_per_day) {
                    (None, None) => (Some(f), None),
                    (c, v) => (c.map(|c| c * f), v.map(|v| v * f)),
                };
                info.push(GroupInfo {
                    weight: s.priority,
                    contacts_needed: c,
                    volume_needed_mb: v,
                });
            }
        }
        let of = p
            .candidates
            .iter()
            .map(|c| c.satellite * days + p.day_of(c))
            .collect();
        Groups { of, info }
    }

    fn value(&self, g: usize, k: u32, volume_mb: f64) -> f64 {
        let i = &self.info[g];
        let frac = |have: f64, need: f64| {
            if need > 0.0 {
                (have / need).min(1.0)
            } else {
                1.0
            }
        };
        let c = i.contacts_needed.map(|n| frac(f64::from(k), n));
        let v = i.volume_needed_mb.map(|n| frac(volume_mb, n));
        let f = match (c, v) {
            (Some(c), Some(v)) => 0.5 * (c + v),
            (Some(c), None) => c,
            (None, Some(v)) => v,
            (None, None) => 1.0,
        };
        i.weight * f
    }
}

/// The mutable state of a search: what is chosen, group totals, and how many
/// chosen neighbours block each candidate.
struct State<'a> {
    p: &'a Problem,
    groups: &'a Groups,
    adj: &'a [Vec<usize>],
    chosen: Vec<bool>,
    blocked: Vec<u32>,
    k: Vec<u32>,
    vol: Vec<f64>,
    score: f64,
}

impl<'a> State<'a> {
    fn new(p: &'a Problem, groups: &'a Groups, adj: &'a [Vec<usize>]) -> Self {
        let n = p.candidates.len();
        let ng = groups.info.len();
        let score = (0..ng).map(|g| groups.value(g, 0, 0.0)).sum();
        State {
            p,
            groups,
            adj,
            chosen: vec![false; n],
            blocked: vec![0; n],
            k: vec![0; ng],
            vol: vec![0.0; ng],
            score,
        }
    }

    fn gain(&self, c: usize) -> f64 {
        let g = self.groups.of[c];
        self.groups.value(
            g,
            self.k[g] + 1,
            self.vol[g] + self.p.candidates[c].volume_mb,
        ) - self.groups.value(g, self.k[g], self.vol[g])
    }

    fn loss(&self, c: usize) -> f64 {
        let g = self.groups.of[c];
        self.groups.value(g, self.k[g], self.vol[g])
            - self.groups.value(
                g,
                self.k[g].saturating_sub(1),
                (self.vol[g] - self.p.candidates[c].volume_mb).max(0.0),
            )
    }

    fn add(&mut self, c: usize) {
        self.score += self.gain(c);
        let g = self.groups.of[c];
        self.k[g] += 1;
        self.vol[g] += self.p.candidates[c].volume_mb;
        self.chosen[c] = true;
        for &n in &self.adj[c] {
            self.blocked[n] += 1;
        }
    }

    fn remove(&mut self, c: usize) {
        self.score -= self.loss(c);
        let g = self.groups.of[c];
        self.k[g] = self.k[g].saturating_sub(1);
        self.vol[g] = (self.vol[g] - self.p.candidates[c].volume_mb).max(0.0);
        self.chosen[c] = false;
        for &n in &self.adj[c] {
            self.blocked[n] = self.blocked[n].saturating_sub(1);
        }
    }

    fn selection(&self) -> Vec<usize> {
        (0..self.chosen.len()).filter(|&i| self.chosen[i]).collect()
    }
}

/// Conflict lists, by a sweep over candidates sorted by start per antenna and
/// per spacecraft: O(n log n + edges).
fn adjacency(p: &Problem) -> Vec<Vec<usize>> {
    let n = p.candidates.len();
    let mut adj = vec![Vec::new(); n];
    let link = |a: usize, b: usize, adj: &mut Vec<Vec<usize>>| {
        if p.conflict(a, b).is_some() && !adj[a].contains(&b) {
            adj[a].push(b);
            adj[b].push(a);
        }
    };
    let by_start = |mut v: Vec<usize>| {
        v.sort_by(|&a, &b| {
            p.candidates[a]
                .aos
                .s_since_j2000()
                .total_cmp(&p.candidates[b].aos.s_since_j2000())
        });
        v
    };
    let mut per_antenna: HashMap<usize, Vec<usize>> = HashMap::new();
    let mut per_sat: HashMap<usize, Vec<usize>> = HashMap::new();
    for (i, c) in p.candidates.iter().enumerate() {
        per_antenna.entry(c.antenna).or_default().push(i);
        per_sat.entry(c.satellite).or_default().push(i);
    }
    let mut keys: Vec<usize> = per_antenna.keys().copied().collect();
    keys.sort_unstable();
    for key in keys {
        let list = by_start(per_antenna.remove(&key).unwrap_or_default());
        let t = p.network.antennas[key].turnaround_s;
        for (x, &a) in list.iter().enumerate() {
            let reach = p.candidates[a].los.add_s(t);
            for &b in &list[x + 1..] {
                if p.candidates[b].aos >= reach {
                    break;
                }
                link(a, b, &mut adj);
            }
        }
    }
    let mut keys: Vec<usize> = per_sat.keys().copied().collect();
    keys.sort_unstable();
    for key in keys {
        if p.network.satellites[key].allow_simultaneous {
            continue;
        }
        let list = by_start(per_sat.remove(&key).unwrap_or_default());
        // Sorted by start, a candidate can overlap a later one only while the
        // later one starts before the longest end seen; keep scanning until then.
        for (x, &a) in list.iter().enumerate() {
            let end = p.candidates[a].los;
            for &b in &list[x + 1..] {
                if p.candidates[b].aos >= end {
                    break;
                }
                link(a, b, &mut adj);
            }
        }
    }
    for l in &mut adj {
        l.sort_unstable();
    }
    adj
}

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
    pub station: String,
    pub antenna: String,
    pub aos: UtcTime,
    pub los: UtcTime,
    pub duration_s: f64,
    pub max_elevation_deg: f64,
    pub channels: Vec<String>,
    pub volume_mb: f64,
    pub pinned: bool,
    /// Index into [`Problem::candidates`].
    pub candidate: usize,
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
    pub aos: UtcTime,
    pub los: UtcTime,
    pub winner_spacecraft: String,
    pub winner_catalog_number: u32,
    pub winner_station: String,
    pub winner_antenna: String,
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

/// Makes the plan: pins kept, exclusions respected, the objective maximised
/// (exactly up to [`EXACT_LIMIT`] free candidates). Fails only when pins
/// conflict with each other.
pub fn solve(p: &Problem, progress: &dyn Progress) -> Result<Plan, PlanError> {
    let groups = Groups::new(p);
    let adj = adjacency(p);
    let n = p.candidates.len();
    let mut excluded = vec![false; n];
    for &e in &p.excluded {
        if e < n {
            excluded[e] = true;
        }
    }
    let mut state = State::new(p, &groups, &adj);
    let mut pinned = vec![false; n];
    for (i, &c) in p.pinned.iter().enumerate() {
        if c >= n {
            return Err(plan_err(format!("pins[{i}]"), "refers to no candidate"));
        }
        if state.blocked[c] > 0 {
            let other = p.pinned[..i]
                .iter()
                .copied()
                .find(|&o| adj[c].contains(&o))
                .unwrap_or(c);
            return Err(plan_err(
                format!("pins[{i}]"),
                format!(
                    "conflicts with another pin ({}); both cannot be kept",
                    label(p, other)
                ),
            ));
        }
        if !state.chosen[c] {
            state.add(c);
            pinned[c] = true;
        }
    }
    // Free candidates: not excluded, not pinned, compatible with every pin.
    let free: Vec<usize> = (0..n)
        .filter(|&c| !excluded[c] && !pinned[c] && state.blocked[c] == 0)
        .collect();
    let method = if free.len() <= EXACT_LIMIT {
        exact(&mut state, &free);
        Method::Exact
    } else {
        heuristic(&mut state, &free, &pinned, progress);
        Method::Heuristic
    };
    progress.report(1.0);
    let upper_bound = {
        let mut all: Vec<usize> = free.clone();
        all.extend((0..n).filter(|&c| pinned[c]));
        p.score(&all)
    };
    Ok(describe(
        p,
        &groups,
        &adj,
        &state,
        &pinned,
        &excluded,
        method,
        upper_bound,
    ))
}

fn label(p: &Problem, c: usize) -> String {
    let cand = &p.candidates[c];
    let a = &p.network.antennas[cand.antenna];
    format!(
        "{} on {}/{} at {}",
        p.network.satellites[cand.satellite].name,
        a.station,
        a.antenna,
        cand.aos.to_iso_s()
    )
}

/// Depth-first branch-and-bound over `free` (in time order): include first
/// (when compatible and worth something), then exclude; prune when the bound
/// cannot beat the best found.
fn exact(state: &mut State, free: &[usize]) {
    let mut best_score = state.score;
    let mut best: Vec<usize> = state.selection();
    fn bound(state: &State, rest: &[usize]) -> f64 {
        // Optimistic: every remaining compatible candidate added to its group.
        let mut extra_k: HashMap<usize, (u32, f64)> = HashMap::new();
        for &c in rest {
            if state.blocked[c] == 0 {
                let e = extra_k.entry(state.groups.of[c]).or_insert((0, 0.0));
                e.0 += 1;
                e.1 += state.p.candidates[c].volume_mb;
            }
        }
        state.score
            + extra_k
                .iter()
                .map(|(&g, &(k, v))| {
                    state.groups.value(g, state.k[g] + k, state.vol[g] + v)
                        - state.groups.value(g, state.k[g], state.vol[g])
                })
                .sum::<f64>()
    }
    fn go(state: &mut State, rest: &[usize], best_score: &mut f64, best: &mut Vec<usize>) {
        if state.score > *best_score + SCORE_EPS {
            *best_score = state.score;
            *best = state.selection();
        }
        let Some((&c, tail)) = rest.split_first() else {
            return;
        };
        if bound(state, rest) <= *best_score + SCORE_EPS {
            return;
        }
        if state.blocked[c] == 0 && state.gain(c) > SCORE_EPS {
            state.add(c);
            go(state, tail, best_score, best);
            state.remove(c);
        }
        go(state, tail, best_score, best);
    }
    go(state, free, &mut best_score, &mut best);
    let current = state.selection();
    for c in current {
        state.remove(c);
    }
    for c in best {
        state.add(c);
    }
}

/// Greedy in two orders, the better kept, then local search.
fn heuristic(state: &mut State, free: &[usize], pinned: &[bool], progress: &dyn Progress) {
    let base = state.selection();
    let reset = |state: &mut State| {
        for c in state.selection() {
            state.remove(c);
        }
        for &c in &base {
            state.add(c);
        }
    };
    greedy(state, free, false);
    let by_gain = (state.score, state.selection());
    reset(state);
    greedy(state, free, true);
    if by_gain.0 > state.score + SCORE_EPS {
        reset(state);
        for c in by_gain.1 {
            if !state.chosen[c] {
                state.add(c);
            }
        }
    }
    progress.report(0.3);
    local_search(state, free, pinned, progress);
}

/// Lazy greedy: gains only shrink as contacts are added (each value is
/// concave in its group's service), so a stale gain is an upper bound and a
/// candidate whose refreshed gain still tops the heap is the true best.
fn greedy(state: &mut State, free: &[usize], per_second: bool) {
    let key = |state: &State, c: usize| -> f64 {
        let g = state.gain(c);
        if per_second {
            let cand = &state.p.candidates[c];
            g / (cand.duration_s() + state.p.network.antennas[cand.antenna].turnaround_s).max(1.0)
        } else {
            g
        }
    };
    let mut heap: std::collections::BinaryHeap<(OrdF64, std::cmp::Reverse<usize>)> = free
        .iter()
        .filter(|&&c| state.blocked[c] == 0 && !state.chosen[c])
        .map(|&c| (OrdF64(key(state, c)), std::cmp::Reverse(c)))
        .collect();
    while let Some((OrdF64(k), std::cmp::Reverse(c))) = heap.pop() {
        if state.chosen[c] || state.blocked[c] > 0 || k <= SCORE_EPS {
            continue;
        }
        let fresh = key(state, c);
        if fresh + SCORE_EPS < k {
            if fresh > SCORE_EPS {
                heap.push((OrdF64(fresh), std::cmp::Reverse(c)));
            }
            continue;
        }
        if state.gain(c) > SCORE_EPS {
            state.add(c);
        }
    }
}

/// Insert-and-repair moves until none improves (or a round limit).
fn local_search(state: &mut State, free: &[usize], pinned: &[bool], progress: &dyn Progress) {
    const MAX_ROUNDS: usize = 8;
    for round in 0..MAX_ROUNDS {
        if progress.cancelled() {
            return;
        }
        let mut improved = false;
        for &c in free {
            if state.chosen[c] {
                continue;
            }
            // Worth trying only if it would add something on its own.
            if state.gain(c) <= SCORE_EPS {
                continue;
            }
            let blockers: Vec<usize> = state.adj[c]
                .iter()
                .copied()
                .filter(|&b| state.chosen[b])
                .collect();
            if blockers.iter().any(|&b| pinned[b]) {
                continue;
            }
            let before = state.score;
            for &b in &blockers {
                state.remove(b);
            }
            state.add(c);
            // Refill around what was removed: their neighbours may fit now.
            let mut refill: Vec<usize> = blockers
                .iter()
                .flat_map(|&b| state.adj[b].iter().copied().chain(std::iter::once(b)))
                .filter(|&x| x != c && !pinned[x])
                .collect();
            refill.sort_unstable();
            refill.dedup();
            let mut added = Vec::new();
            loop {
                let best = refill
                    .iter()
                    .copied()
                    .filter(|&x| !state.chosen[x] && state.blocked[x] == 0)
                    .map(|x| (state.gain(x), x))
                    .filter(|(g, _)| *g > SCORE_EPS)
                    .max_by(|a, b| a.0.total_cmp(&b.0).then(b.1.cmp(&a.1)));
                let Some((_, x)) = best else { break };
                state.add(x);
                added.push(x);
            }
            if state.score > before + 1e-7 {
                improved = true;
            } else {
                for &x in &added {
                    state.remove(x);
                }
                state.remove(c);
                for &b in &blockers {
                    state.add(b);
                }
            }
        }
        progress.report(0.3 + 0.7 * (round + 1) as f64 / MAX_ROUNDS as f64);
        if !improved {
            break;
        }
    }
}

/// f64 ordered for the heap (NaN never arises: gains are finite).
#[derive(Debug, Clone, Copy, PartialEq)]
struct OrdF64(f64);
impl Eq for OrdF64 {}
impl PartialOrd for OrdF64 {
    fn partial_cmp(&self, other: &Self) -> Option<std::cmp::Ordering> {
        Some(self.cmp(other))
    }
}
impl Ord for OrdF64 {
    fn cmp(&self, other: &Self) -> std::cmp::Ordering {
        self.0.total_cmp(&other.0)
    }
}

#[allow(clippy::too_many_arguments)]
fn describe(
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
                antenna: ant.antenna.clone(),
                aos: cand.aos,
                los: cand.los,
                duration_s: cand.duration_s(),
                max_elevation_deg: cand.max_elevation_deg,
                channels: ant.channels.clone(),
                volume_mb: cand.volume_mb,
                pinned: pinned[c],
                candidate: c,
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

/// The whole chain for a scenario whose passes are known: network, candidates,
/// pins and exclusions, solve. Warnings (exclusions matching nothing,
/// spacecraft that failed to propagate, volume demand without any rate) land
/// in [`Plan::warnings`].
#[allow(clippy::too_many_arguments)]
pub fn plan_scenario(
    scenario: &Scenario,
    sets: &[ElementSet],
    passes: &[Pass],
    start: UtcTime,
    end: UtcTime,
    eop: &EarthOrientation,
    progress: &dyn Progress,
) -> Result<Plan, PlanError> {
    let network = Network::from_scenario(scenario, sets)?;
    let mut warnings = Vec::new();
    if network.antennas.iter().all(|a| a.downlink_rate_bps <= 0.0) {
        for s in &network.satellites {
            if s.downlink_mb_per_day.is_some_and(|v| v > 0.0) {
                warnings.push(format!(
                    "{} wants {} MB a day but no station states a downlink_rate_bps: its volume demand cannot be met",
                    s.name,
                    s.downlink_mb_per_day.unwrap_or(0.0)
                ));
            }
        }
    }
    let cands = build_candidates(&network, passes, sets, &scenario.stations, eop);
    warnings.extend(cands.failures.iter().cloned());
    let mut problem = Problem::new(network, cands.candidates, start, end);
    warnings.extend(problem.apply_refs(&scenario.pins, &scenario.exclusions)?);
    let mut plan = solve(&problem, progress)?;
    plan.warnings = warnings;
    Ok(plan)
}
