//! The problem the solver works on: candidates, days, pins and exclusions,
//! conflicts between candidates and the objective (see the module docs of
//! [`super`]).

use passlane_orbit::UtcTime;
use serde::Serialize;

use super::candidates::Candidate;
use super::network::Network;
use super::solve::Groups;
use super::{PlanError, SECONDS_PER_DAY, plan_err};
use crate::scenario::ContactRef;
use crate::station::same_station_name;

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

    pub(super) fn matches(&self, r: &ContactRef) -> Vec<usize> {
        self.candidates
            .iter()
            .enumerate()
            .filter(|(_, c)| {
                let sat = &self.network.satellites[c.satellite];
                let ant = &self.network.antennas[c.antenna];
                sat.catalog_number == r.catalog_number
                    && same_station_name(&ant.station, &r.station)
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
    pub(super) fn day_fraction(&self, d: usize) -> f64 {
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

pub(super) fn ref_distance_s(r: &ContactRef, c: &Candidate) -> f64 {
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
