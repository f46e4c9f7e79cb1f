//! The one close-approach sequence that the command line (`passlane screen`)
//! and the window (Close approaches) both run: screen the fleet against the
//! catalog, add the fleet's own pairs, sort by TCA, assess every event with
//! the scenario's assumed covariance and hard-body radii.

use passlane_orbit::{ElementSet, UtcTime};

use crate::conjunction::{AssumedCovariance, EventRisk, assess_events};
use crate::progress::{Progress, Stage};
use crate::scenario::Scenario;
use crate::screen::{
    ScreeningRequest, ScreeningResult, ScreeningSettings, ScreeningVolume, screen_with_progress,
};

/// What to screen and with which assumptions.
#[derive(Debug, Clone, Copy)]
pub struct ScreeningJob<'a> {
    /// The operator's spacecraft.
    pub fleet: &'a [ElementSet],
    /// Other objects to screen against (empty: the fleet's own pairs only).
    pub catalog: &'a [ElementSet],
    /// Every object against every other, fleet and catalog alike.
    pub all_vs_all: bool,
    pub start: UtcTime,
    pub end: UtcTime,
    pub volume: ScreeningVolume,
    /// Assumed covariance and hard-body radii.
    pub scenario: &'a Scenario,
    /// Combined hard-body radius for every event, replacing the scenario's.
    pub hard_body_radius_override_m: Option<f64>,
}

/// A finished screening with the probability of each event (or why there is none).
#[derive(Debug, Clone)]
pub struct ScreeningOutcome {
    /// Events sorted by TCA.
    pub result: ScreeningResult,
    /// One per event, in the same order.
    pub risks: Vec<Result<EventRisk, String>>,
    /// The covariance the probabilities assume.
    pub covariance: AssumedCovariance,
    /// Objects screened as primaries, and as secondaries (none: one set).
    pub primaries: usize,
    pub secondaries: Option<usize>,
}

/// Screens and assesses. Fleet against catalog, the fleet's own pairs are a
/// second, small screening (the last tenth of the progress); all-vs-all
/// screens fleet and catalog as one set. Cancelling stops the screening and
/// assesses what was found.
pub fn screen_and_assess(job: &ScreeningJob<'_>, progress: &dyn Progress) -> ScreeningOutcome {
    let everything: Vec<ElementSet>;
    let (primaries, secondaries): (&[ElementSet], Option<&[ElementSet]>) = if job.all_vs_all {
        everything = job.fleet.iter().chain(job.catalog).cloned().collect();
        (&everything, None)
    } else {
        (job.fleet, (!job.catalog.is_empty()).then_some(job.catalog))
    };
    let request = ScreeningRequest {
        primaries,
        secondaries,
        start: job.start,
        end: job.end,
        settings: ScreeningSettings {
            volume: job.volume,
            ..ScreeningSettings::default()
        },
    };
    let own_pairs = secondaries.is_some() && primaries.len() > 1;
    let first_share = if own_pairs { 0.9 } else { 1.0 };
    let mut result = screen_with_progress(&request, &Stage::new(progress, 0.0, first_share));
    if own_pairs && !result.cancelled {
        let own = screen_with_progress(
            &ScreeningRequest {
                secondaries: None,
                ..request
            },
            &Stage::new(progress, first_share, 1.0 - first_share),
        );
        result.events.extend(own.events);
        result
            .events
            .sort_by(|a, b| a.tca.s_since_j2000().total_cmp(&b.tca.s_since_j2000()));
        result.cancelled |= own.cancelled;
    }
    let risks = assess_events(
        &result.events,
        job.fleet.iter().chain(job.catalog),
        job.scenario,
        job.hard_body_radius_override_m,
    );
    ScreeningOutcome {
        result,
        risks,
        covariance: AssumedCovariance::from_scenario(job.scenario),
        primaries: primaries.len(),
        secondaries: secondaries.map(<[ElementSet]>::len),
    }
}
