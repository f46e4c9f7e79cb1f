//! A series of messages about one close approach: as the encounter nears, an
//! operator receives several CDMs for the same pair and watches how the miss
//! distance, the probability and the covariance evolve. [`trend_groups`]
//! sorts messages into events (same two objects, TCA within
//! [`SAME_EVENT_TCA_S`]) and makes one [`TrendRow`] per message, oldest
//! first; the command line prints them and the window plots them.

use passlane_orbit::UtcTime;
use serde::Serialize;

use super::Cdm;

/// Two messages of the same pair whose TCAs differ by at most this much
/// describe the same event, s (a few minutes: later orbit determinations
/// move the TCA by seconds to a minute, while the next approach of the same
/// pair is at least about half an orbit away).
pub const SAME_EVENT_TCA_S: f64 = 300.0;

/// One message of an event's series.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TrendRow {
    /// Where the message came from (file name as the user gave it).
    pub file: String,
    pub message_id: String,
    pub creation_date: UtcTime,
    pub tca: UtcTime,
    /// Recomputed from the two states, m.
    pub miss_distance_m: f64,
    /// Object 2 relative to object 1, object 1's RTN frame, m.
    pub radial_m: f64,
    pub in_track_m: f64,
    pub cross_track_m: f64,
    /// Recomputed (2-D integral) with `hard_body_radius_m`; `None` when the
    /// message's covariances do not allow it (`pc_note` says why).
    pub pc: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub pc_note: Option<String>,
    /// As the message reports it.
    pub cdm_collision_probability: Option<f64>,
    pub hard_body_radius_m: f64,
    pub hard_body_radius_source: String,
    /// Covariance size: each object's 1-σ radial, in-track, cross-track, m.
    pub object1_sigma_rtn_m: [f64; 3],
    pub object2_sigma_rtn_m: [f64; 3],
    /// The combined covariance in the encounter plane, principal 1-σ, m
    /// (0 when `pc` is `None`).
    pub sigma_x_m: f64,
    pub sigma_y_m: f64,
}

/// The messages of one event, oldest first.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TrendGroup {
    /// `OBJECT_DESIGNATOR` and `OBJECT_NAME` of object 1 and object 2 as the
    /// first message names them.
    pub object1: String,
    pub object2: String,
    pub rows: Vec<TrendRow>,
}

fn sigmas(c: &[f64; 21]) -> [f64; 3] {
    [
        c[0].max(0.0).sqrt(),
        c[2].max(0.0).sqrt(),
        c[5].max(0.0).sqrt(),
    ]
}

/// One row for one message, re-assessed with the radius [`Cdm::hard_body_radius`] picks.
pub fn trend_row(file: &str, cdm: &Cdm, hard_body_radius_override_m: Option<f64>) -> TrendRow {
    let hbr = cdm.hard_body_radius(hard_body_radius_override_m);
    let a = cdm.recompute_with(&hbr);
    let g = crate::encounter::relative_geometry(&cdm.object1.state, &cdm.object2.state).ok();
    let (pc, pc_note, sx, sy) = match &a {
        Ok(a) => (Some(a.pc), None, a.sigma_x_m, a.sigma_y_m),
        Err(e) => (None, Some(e.to_string()), 0.0, 0.0),
    };
    let (miss, r, i, c) = match (&a, &g) {
        (Ok(a), _) => (a.miss_distance_m, a.radial_m, a.in_track_m, a.cross_track_m),
        (Err(_), Some(g)) => (
            g.miss_distance_km * 1000.0,
            g.radial_km * 1000.0,
            g.in_track_km * 1000.0,
            g.cross_track_km * 1000.0,
        ),
        (Err(_), None) => (cdm.relative.miss_distance_m, f64::NAN, f64::NAN, f64::NAN),
    };
    TrendRow {
        file: file.to_string(),
        message_id: cdm.header.message_id.clone(),
        creation_date: cdm.header.creation_date,
        tca: cdm.relative.tca,
        miss_distance_m: miss,
        radial_m: r,
        in_track_m: i,
        cross_track_m: c,
        pc,
        pc_note,
        cdm_collision_probability: cdm.relative.collision_probability,
        hard_body_radius_m: hbr.radius_m,
        hard_body_radius_source: hbr.source,
        object1_sigma_rtn_m: sigmas(&cdm.object1.covariance_rtn),
        object2_sigma_rtn_m: sigmas(&cdm.object2.covariance_rtn),
        sigma_x_m: sx,
        sigma_y_m: sy,
    }
}

/// Sorts messages into events and lines each event's messages up, oldest
/// creation date first (ties: message ID). Messages are `(file, message)`.
/// Events come in order of their first TCA.
pub fn trend_groups(
    messages: &[(String, Cdm)],
    hard_body_radius_override_m: Option<f64>,
) -> Vec<TrendGroup> {
    // The pair regardless of which object is which in each message.
    let pair = |c: &Cdm| {
        let (a, b) = (
            c.object1.object_designator.trim().to_string(),
            c.object2.object_designator.trim().to_string(),
        );
        if a <= b { (a, b) } else { (b, a) }
    };
    let mut order: Vec<usize> = (0..messages.len()).collect();
    order.sort_by(|&i, &j| {
        let (a, b) = (&messages[i].1, &messages[j].1);
        pair(a).cmp(&pair(b)).then(
            a.relative
                .tca
                .s_since_j2000()
                .total_cmp(&b.relative.tca.s_since_j2000()),
        )
    });
    let mut groups: Vec<Vec<usize>> = Vec::new();
    for i in order {
        let c = &messages[i].1;
        let joins = groups.last().is_some_and(|g| {
            let last = &messages[g[g.len() - 1]].1;
            pair(last) == pair(c)
                && c.relative.tca.s_since(last.relative.tca).abs() <= SAME_EVENT_TCA_S
        });
        match groups.last_mut() {
            Some(g) if joins => g.push(i),
            _ => groups.push(vec![i]),
        }
    }
    let mut out: Vec<TrendGroup> = groups
        .into_iter()
        .map(|mut g| {
            g.sort_by(|&i, &j| {
                let (a, b) = (&messages[i].1.header, &messages[j].1.header);
                a.creation_date
                    .s_since_j2000()
                    .total_cmp(&b.creation_date.s_since_j2000())
                    .then_with(|| a.message_id.cmp(&b.message_id))
            });
            let first = &messages[g[0]].1;
            let name = |o: &super::CdmObject| format!("{} {}", o.object_designator, o.object_name);
            TrendGroup {
                object1: name(&first.object1),
                object2: name(&first.object2),
                rows: g
                    .iter()
                    .map(|&i| {
                        trend_row(&messages[i].0, &messages[i].1, hard_body_radius_override_m)
                    })
                    .collect(),
            }
        })
        .collect();
    out.sort_by(|a, b| {
        let t = |g: &TrendGroup| {
            g.rows
                .iter()
                .map(|r| r.tca.s_since_j2000())
                .fold(f64::INFINITY, f64::min)
        };
        t(a).total_cmp(&t(b))
    });
    out
}

/// The rows of one series when every message is about the same event, or
/// an error naming the message that is not.
pub fn trend(
    messages: &[(String, Cdm)],
    hard_body_radius_override_m: Option<f64>,
) -> Result<TrendGroup, String> {
    let mut groups = trend_groups(messages, hard_body_radius_override_m);
    match groups.len() {
        0 => Err("no messages".to_string()),
        1 => Ok(groups.remove(0)),
        n => Err(format!(
            "the messages describe {n} different events (same pair and TCA within {SAME_EVENT_TCA_S} s make one event): {}",
            groups
                .iter()
                .map(|g| format!(
                    "{} vs {} at {}",
                    g.object1,
                    g.object2,
                    g.rows
                        .first()
                        .map(|r| r.tca.to_iso_ms())
                        .unwrap_or_default()
                ))
                .collect::<Vec<_>>()
                .join("; ")
        )),
    }
}
