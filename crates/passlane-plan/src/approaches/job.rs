//! The one close-approach sequence that the command line (`passlane screen`)
//! and the window (Close approaches) both run: screen the fleet against the
//! catalog, add the fleet's own pairs, sort by TCA, assess every event with
//! the scenario's assumed covariance and hard-body radii.

use passlane_orbit::{ElementSet, UtcTime};

use crate::conjunction::{AssumedCovariance, EventRisk, assess_events_with_progress};
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
/// screens fleet and catalog as one set; every event is then assessed, on all
/// cores. Cancelling during the screening stops it and assesses what was
/// found; cancelling during the assessment leaves the rest unassessed.
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
        settings: if secondaries.is_some() {
            ScreeningSettings::fleet_vs_catalog(job.volume)
        } else {
            ScreeningSettings {
                volume: job.volume,
                ..ScreeningSettings::default()
            }
        },
    };
    let own_pairs = secondaries.is_some() && primaries.len() > 1;
    // The assessment is the last few percent of the work (microseconds per
    // event on all cores); screening is the rest.
    const SCREEN_SHARE: f64 = 0.97;
    let first_share = SCREEN_SHARE * if own_pairs { 0.9 } else { 1.0 };
    let mut result = screen_with_progress(&request, &Stage::new(progress, 0.0, first_share));
    if own_pairs && !result.cancelled {
        let own = screen_with_progress(
            &ScreeningRequest {
                secondaries: None,
                ..request
            },
            &Stage::new(progress, first_share, SCREEN_SHARE - first_share),
        );
        result.events.extend(own.events);
        result
            .events
            .sort_by(|a, b| a.tca.s_since_j2000().total_cmp(&b.tca.s_since_j2000()));
        result.cancelled |= own.cancelled;
    }
    let assessment = Stage::new(progress, SCREEN_SHARE, 1.0 - SCREEN_SHARE);
    let risks = assess_events_with_progress(
        &result.events,
        job.fleet.iter().chain(job.catalog),
        job.scenario,
        job.hard_body_radius_override_m,
        &assessment,
    );
    assessment.report(1.0);
    result.cancelled |= risks
        .iter()
        .any(|r| matches!(r, Err(m) if m == crate::conjunction::NOT_ASSESSED_CANCELLED));
    ScreeningOutcome {
        result,
        risks,
        covariance: AssumedCovariance::from_scenario(job.scenario),
        primaries: primaries.len(),
        secondaries: secondaries.map(<[ElementSet]>::len),
    }
}

/// One assessed event as the command line and scripts see it: the
/// screening's figures plus the probability (or why there is none). The field
/// names are a JSON contract (`passlane screen --format json`).
#[derive(Debug, Clone, serde::Serialize)]
pub struct EventRow<'a> {
    #[serde(flatten)]
    pub event: &'a crate::screen::CloseApproach,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub pc: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub pc_alfano: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub pc_chan: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub pc_max: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub covariance_source: Option<&'a str>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub hard_body_radius_m: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub risk_note: Option<String>,
}

impl<'a> EventRow<'a> {
    pub fn new(
        event: &'a crate::screen::CloseApproach,
        risk: &'a Result<EventRisk, String>,
    ) -> Self {
        match risk {
            Ok(r) => EventRow {
                event,
                pc: Some(r.pc),
                pc_alfano: Some(r.pc_alfano),
                pc_chan: Some(r.pc_chan),
                pc_max: Some(r.pc_max),
                covariance_source: Some(r.covariance_source.as_str()),
                hard_body_radius_m: Some(r.hard_body_radius_m),
                risk_note: None,
            },
            Err(msg) => EventRow {
                event,
                pc: None,
                pc_alfano: None,
                pc_chan: None,
                pc_max: None,
                covariance_source: None,
                hard_body_radius_m: None,
                risk_note: Some(msg.clone()),
            },
        }
    }
}
