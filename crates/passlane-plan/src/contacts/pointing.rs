//! Pointing tables (azimuth, elevation, range, range rate and the tuned
//! frequency of every channel) from direct SGP4 states, look angles at one
//! instant, and the part of a pass above an antenna's own elevation limit.

use passlane_orbit::{
    EarthOrientation, ElementSet, LookAngles, PropagationError, Propagator, Site, TemeToEarthFixed,
    UtcTime,
};
use serde::Serialize;

use crate::numeric::brent_root;
use crate::passes::{Pass, tuned_frequency_hz};
use crate::sampling::{TableError, row_count};
use crate::station::Station;

/// One row of a pointing table.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PointingRow {
    /// Whole milliseconds, except the first and last rows (a root finder's
    /// instants): printed with microseconds either way.
    #[serde(serialize_with = "passlane_orbit::time::iso_us")]
    pub time: UtcTime,
    pub azimuth_deg: f64,
    pub elevation_deg: f64,
    pub range_km: f64,
    pub range_rate_km_s: f64,
    /// Doppler-corrected frequency per channel, Hz, in the station's channel order.
    pub frequencies_hz: Vec<f64>,
}

/// The pointing table of one pass at `step_s`, from direct SGP4 states (not
/// the interpolant); the first row is at AOS and the last at LOS exactly.
/// A step below 1 ms or a table over the row cap is an error
/// ([`crate::sampling`]).
pub fn pointing_table(
    set: &ElementSet,
    station: &Station,
    pass: &Pass,
    step_s: f64,
    eop: &EarthOrientation,
) -> Result<Vec<PointingRow>, TableError> {
    pointing_table_between(set, station, pass.aos, pass.los, step_s, eop)
}

/// The pointing table between two times (e.g. the usable part of a pass that
/// the network plan kept), first row at `start`, last at `end` exactly.
pub fn pointing_table_between(
    set: &ElementSet,
    station: &Station,
    start: UtcTime,
    end: UtcTime,
    step_s: f64,
    eop: &EarthOrientation,
) -> Result<Vec<PointingRow>, TableError> {
    let duration = end.s_since(start);
    let rows = row_count(duration, step_s)?;
    let prop = Propagator::new(set)?;
    let site = station.site();
    // The first and last rows are at `start` and `end` exactly (instants a
    // root finder produced, printed with microseconds); the rows between are
    // on whole milliseconds, so that the printed time is the computed one.
    let mut times: Vec<UtcTime> = Vec::with_capacity(rows);
    times.push(start);
    let mut k = 1usize;
    loop {
        let dt = k as f64 * step_s;
        if dt >= duration - 1e-6 {
            break;
        }
        let t = start.add_s(dt).round_to_ms();
        if t > start && t < end {
            times.push(t);
        }
        k += 1;
    }
    if end > start {
        times.push(end);
    }
    let mut cursor = prop.cursor();
    times
        .into_iter()
        .map(|t| -> Result<PointingRow, TableError> {
            let s = cursor.state_at(t)?;
            let ef = TemeToEarthFixed::at(t, eop).state(&s.position_km, &s.velocity_km_s);
            let l = site.look(&ef);
            Ok(PointingRow {
                time: t,
                azimuth_deg: l.azimuth_deg,
                elevation_deg: l.elevation_deg,
                range_km: l.range_km,
                range_rate_km_s: l.range_rate_km_s,
                frequencies_hz: station
                    .channels
                    .iter()
                    .map(|c| tuned_frequency_hz(c.frequency_hz, c.direction, l.range_rate_km_s))
                    .collect(),
            })
        })
        .collect()
}

/// Look angles of a satellite from a station at one time (direct SGP4).
pub fn look_at(
    prop: &Propagator,
    site: &Site,
    t: UtcTime,
    eop: &EarthOrientation,
) -> Result<LookAngles, PropagationError> {
    let s = prop.state_at(t)?;
    let ef = TemeToEarthFixed::at(t, eop).state(&s.position_km, &s.velocity_km_s);
    Ok(site.look(&ef))
}

/// The part of a pass during which the elevation is at least
/// `min_elevation_deg` (an antenna's own limit, above the station's horizon),
/// or `None` when the pass never gets that high.
///
/// A LEO pass rises to one maximum and sets again, so there is at most one
/// upward crossing between AOS and culmination and one downward crossing
/// after it; each is found by Brent's method on direct SGP4 look angles to
/// 10 ms, about a dozen propagations per crossing. The result is also clipped
/// to the pass, so a mask that cuts the pass keeps cutting it.
pub fn interval_above(
    prop: &Propagator,
    site: &Site,
    pass: &Pass,
    min_elevation_deg: f64,
    eop: &EarthOrientation,
) -> Result<Option<(UtcTime, UtcTime)>, PropagationError> {
    if pass.max_elevation_deg < min_elevation_deg {
        return Ok(None);
    }
    let t0 = pass.aos;
    let tmax_s = pass
        .max_elevation_time
        .s_since(t0)
        .clamp(0.0, pass.duration_s);
    let los_s = pass.los.s_since(t0);
    let margin = |t_s: f64| -> Result<f64, PropagationError> {
        Ok(look_at(prop, site, t0.add_s(t_s), eop)?.elevation_deg - min_elevation_deg)
    };
    let f_aos = margin(0.0)?;
    let f_max = margin(tmax_s)?;
    let f_los = margin(los_s)?;
    if f_max < 0.0 {
        // The interpolated maximum and direct SGP4 differ by far less than a
        // millidegree; a pass this close to the limit is not usable anyway.
        return Ok(None);
    }
    // A failure inside an interval whose ends propagated is not expected; it
    // reads as "below the limit" so the contact only gets shorter.
    let f = |t_s: f64| margin(t_s).unwrap_or(-90.0);
    let up_s = if f_aos >= 0.0 {
        0.0
    } else {
        brent_root(f, 0.0, tmax_s, f_aos, f_max, 0.01)
    };
    let down_s = if f_los >= 0.0 {
        los_s
    } else {
        brent_root(f, tmax_s, los_s, f_max, f_los, 0.01)
    };
    if down_s <= up_s {
        return Ok(None);
    }
    Ok(Some((t0.add_s(up_s), t0.add_s(down_s))))
}
