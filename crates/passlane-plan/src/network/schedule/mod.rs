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

mod candidates;
mod network;
mod problem;
mod report;
mod solve;

use passlane_orbit::{EarthOrientation, ElementSet, UtcTime};

use crate::passes::{Pass, PassOptions, find_passes};
use crate::progress::{Progress, Stage};
use crate::scenario::Scenario;

pub use candidates::{Candidate, CandidateSet, build_candidates};
pub use network::{Demand, Network, NetworkAntenna};
pub use problem::{ConflictKind, Problem};
pub use report::{DayShortfall, DemandMet, Method, Plan, PlannedContact, ResolvedConflict};
pub use solve::solve;

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

/// The one network-plan sequence that the command line (`passlane plan`) and
/// the window (Plan) both run: every pass of the fleet over the scenario's
/// stations in `start..end` (the scenario's Earth orientation, each station's
/// own minimum elevation and mask), then [`plan_scenario`]. Spacecraft that
/// could not be propagated become warnings of the plan. The pass search takes
/// the first half of the progress; a cancelled search is an error.
pub fn plan_network(
    scenario: &Scenario,
    fleet: &[ElementSet],
    start: UtcTime,
    end: UtcTime,
    progress: &dyn Progress,
) -> Result<Plan, PlanError> {
    let eop = scenario.earth_orientation;
    let options = PassOptions {
        earth_orientation: eop,
        ..PassOptions::new(start, end)
    };
    let report = find_passes(
        fleet,
        &scenario.stations,
        &options,
        &Stage::new(progress, 0.0, 0.5),
    );
    if report.cancelled {
        return Err(plan_err("", "cancelled during the pass search"));
    }
    let mut plan = plan_scenario(
        scenario,
        fleet,
        &report.passes,
        start,
        end,
        &eop,
        &Stage::new(progress, 0.5, 0.5),
    )?;
    plan.warnings.extend(
        report
            .failures
            .iter()
            .map(|f| format!("{} ({}): {}", f.satellite, f.catalog_number, f.message)),
    );
    Ok(plan)
}
