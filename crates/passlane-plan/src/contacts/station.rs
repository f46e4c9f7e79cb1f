//! Ground stations: where they are, what horizon they see, what their antenna
//! mount can follow, and which radio channels they use.
//!
//! A station's effective horizon at an azimuth is the larger of its minimum
//! elevation and its horizon mask there. The mask is a list of
//! azimuth/elevation points, linearly interpolated in azimuth and wrapping at 360°.

use passlane_orbit::{Geodetic, Site};
use serde::{Deserialize, Serialize};

/// One point of a horizon mask.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct MaskPoint {
    pub azimuth_deg: f64,
    pub elevation_deg: f64,
}

/// What an az-el antenna mount can do.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct MountLimits {
    #[serde(default)]
    pub min_elevation_deg: f64,
    #[serde(default = "default_max_elevation")]
    pub max_elevation_deg: f64,
    pub max_azimuth_rate_deg_s: f64,
    pub max_elevation_rate_deg_s: f64,
}

fn default_max_elevation() -> f64 {
    90.0
}

/// Which way a channel carries signals.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum LinkDirection {
    /// Ground to spacecraft: the station pre-compensates its transmit frequency.
    Uplink,
    /// Spacecraft to ground: the station tunes its receiver.
    Downlink,
}

/// A named radio channel.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Channel {
    pub name: String,
    pub direction: LinkDirection,
    /// Nominal (rest) frequency, Hz.
    pub frequency_hz: f64,
}

/// One antenna of a station (used by the network planner).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Antenna {
    pub name: String,
    /// Time the antenna needs between two contacts (slew, reconfigure), s.
    #[serde(default)]
    pub turnaround_s: f64,
    /// Lowest elevation at which a contact on this antenna is usable, deg.
    #[serde(default)]
    pub min_elevation_deg: Option<f64>,
}

/// A ground station.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Station {
    pub name: String,
    pub latitude_deg: f64,
    pub longitude_deg: f64,
    #[serde(default)]
    pub height_m: f64,
    /// Minimum elevation everywhere, deg.
    #[serde(default = "default_min_elevation")]
    pub min_elevation_deg: f64,
    /// Optional azimuth-dependent horizon (terrain, buildings).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub horizon_mask: Vec<MaskPoint>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mount: Option<MountLimits>,
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub channels: Vec<Channel>,
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub antennas: Vec<Antenna>,
    /// Downlink rate at this station, bits per second (for the network plan).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub downlink_rate_bps: Option<f64>,
}

fn default_min_elevation() -> f64 {
    10.0
}

/// A problem with a station definition.
#[derive(Debug, Clone, PartialEq)]
pub struct StationError {
    pub station: String,
    pub field: String,
    pub message: String,
}

impl std::fmt::Display for StationError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "station {:?}: {}: {}",
            self.station, self.field, self.message
        )
    }
}

impl std::error::Error for StationError {}

impl Station {
    /// A station with only a position and a minimum elevation.
    pub fn new(name: &str, latitude_deg: f64, longitude_deg: f64, height_m: f64) -> Self {
        Station {
            name: name.to_string(),
            latitude_deg,
            longitude_deg,
            height_m,
            min_elevation_deg: default_min_elevation(),
            horizon_mask: Vec::new(),
            mount: None,
            channels: Vec::new(),
            antennas: Vec::new(),
            downlink_rate_bps: None,
        }
    }

    /// Parses the command-line form `NAME,LAT_DEG,LON_DEG,HEIGHT_M`.
    pub fn parse_inline(text: &str) -> Result<Self, StationError> {
        let parts: Vec<&str> = text.split(',').map(str::trim).collect();
        let err = |field: &str, message: String| StationError {
            station: parts.first().copied().unwrap_or("").to_string(),
            field: field.to_string(),
            message,
        };
        if parts.len() != 4 {
            return Err(err(
                "station",
                format!(
                    "expected NAME,LAT_DEG,LON_DEG,HEIGHT_M, got {} field(s) in {text:?}",
                    parts.len()
                ),
            ));
        }
        let num = |i: usize, field: &str| -> Result<f64, StationError> {
            parts[i]
                .parse::<f64>()
                .map_err(|_| err(field, format!("{:?} is not a number", parts[i])))
        };
        let s = Station::new(
            parts[0],
            num(1, "LAT_DEG")?,
            num(2, "LON_DEG")?,
            num(3, "HEIGHT_M")?,
        );
        s.validate()?;
        Ok(s)
    }

    /// Checks ranges and consistency; the error names the field.
    pub fn validate(&self) -> Result<(), StationError> {
        let err = |field: &str, message: String| StationError {
            station: self.name.clone(),
            field: field.to_string(),
            message,
        };
        if self.name.trim().is_empty() {
            return Err(err("name", "must not be empty".into()));
        }
        if !(self.latitude_deg.is_finite() && (-90.0..=90.0).contains(&self.latitude_deg)) {
            return Err(err(
                "latitude_deg",
                format!("{} is outside -90..90", self.latitude_deg),
            ));
        }
        if !(self.longitude_deg.is_finite() && (-180.0..=360.0).contains(&self.longitude_deg)) {
            return Err(err(
                "longitude_deg",
                format!("{} is outside -180..360", self.longitude_deg),
            ));
        }
        if !(self.height_m.is_finite() && (-500.0..=10_000.0).contains(&self.height_m)) {
            return Err(err(
                "height_m",
                format!("{} m is not a plausible station height", self.height_m),
            ));
        }
        if !(self.min_elevation_deg.is_finite() && (-5.0..90.0).contains(&self.min_elevation_deg)) {
            return Err(err(
                "min_elevation_deg",
                format!("{} is outside -5..90", self.min_elevation_deg),
            ));
        }
        for (i, p) in self.horizon_mask.iter().enumerate() {
            if !(p.azimuth_deg.is_finite() && (0.0..=360.0).contains(&p.azimuth_deg)) {
                return Err(err(
                    &format!("horizon_mask[{i}].azimuth_deg"),
                    format!("{} is outside 0..360", p.azimuth_deg),
                ));
            }
            if !(p.elevation_deg.is_finite() && (-5.0..90.0).contains(&p.elevation_deg)) {
                return Err(err(
                    &format!("horizon_mask[{i}].elevation_deg"),
                    format!("{} is outside -5..90", p.elevation_deg),
                ));
            }
        }
        if let Some(m) = &self.mount {
            // A mount's elevation span: from a little below the horizon to the
            // zenith (an over-the-top mount's 180° is not modelled).
            for (field, v) in [
                ("mount.min_elevation_deg", m.min_elevation_deg),
                ("mount.max_elevation_deg", m.max_elevation_deg),
            ] {
                if !(v.is_finite() && (-5.0..=90.0).contains(&v)) {
                    return Err(err(field, format!("{v} is outside -5..90")));
                }
            }
            if m.min_elevation_deg > m.max_elevation_deg {
                return Err(err(
                    "mount.min_elevation_deg",
                    format!(
                        "{} is above mount.max_elevation_deg {}",
                        m.min_elevation_deg, m.max_elevation_deg
                    ),
                ));
            }
            for (field, v) in [
                ("mount.max_azimuth_rate_deg_s", m.max_azimuth_rate_deg_s),
                ("mount.max_elevation_rate_deg_s", m.max_elevation_rate_deg_s),
            ] {
                if !(v.is_finite() && v > 0.0) {
                    return Err(err(field, format!("{v} must be a positive rate")));
                }
            }
        }
        for (i, c) in self.channels.iter().enumerate() {
            if !(c.frequency_hz.is_finite() && c.frequency_hz > 0.0) {
                return Err(err(
                    &format!("channels[{i}].frequency_hz"),
                    format!("{} must be positive", c.frequency_hz),
                ));
            }
        }
        for (i, a) in self.antennas.iter().enumerate() {
            if a.name.trim().is_empty() {
                return Err(err(
                    &format!("antennas[{i}].name"),
                    "must not be empty".into(),
                ));
            }
            if self.antennas[..i].iter().any(|b| b.name == a.name) {
                return Err(err(
                    &format!("antennas[{i}].name"),
                    format!("{:?} is used by two antennas of this station", a.name),
                ));
            }
            if !(a.turnaround_s.is_finite() && a.turnaround_s >= 0.0) {
                return Err(err(
                    &format!("antennas[{i}].turnaround_s"),
                    format!("{} must not be negative", a.turnaround_s),
                ));
            }
            if let Some(m) = a.min_elevation_deg
                && !(m.is_finite() && (-5.0..90.0).contains(&m))
            {
                return Err(err(
                    &format!("antennas[{i}].min_elevation_deg"),
                    format!("{m} is outside -5..90"),
                ));
            }
        }
        if let Some(r) = self.downlink_rate_bps
            && !(r.is_finite() && r > 0.0)
        {
            return Err(err(
                "downlink_rate_bps",
                format!("{r} must be a positive rate (leave it out for no downlink figure)"),
            ));
        }
        Ok(())
    }

    pub fn geodetic(&self) -> Geodetic {
        Geodetic {
            latitude_deg: self.latitude_deg,
            longitude_deg: self.longitude_deg,
            height_km: self.height_m / 1000.0,
        }
    }

    pub fn site(&self) -> Site {
        Site::new(self.geodetic())
    }

    /// The effective horizon at an azimuth: max(minimum elevation, mask), deg.
    pub fn horizon_deg(&self, azimuth_deg: f64) -> f64 {
        self.min_elevation_deg.max(self.mask_deg(azimuth_deg))
    }

    /// The lowest effective horizon over all azimuths, deg. The mask is
    /// piecewise linear, so its lowest value is at one of its points.
    pub fn lowest_horizon_deg(&self) -> f64 {
        let mask_min = self
            .horizon_mask
            .iter()
            .map(|p| p.elevation_deg)
            .fold(f64::INFINITY, f64::min);
        if mask_min.is_finite() {
            self.min_elevation_deg.max(mask_min)
        } else {
            self.min_elevation_deg
        }
    }

    /// The mask alone, interpolated (−90 when there is none).
    pub fn mask_deg(&self, azimuth_deg: f64) -> f64 {
        let m = &self.horizon_mask;
        match m.len() {
            0 => -90.0,
            1 => m[0].elevation_deg,
            _ => {
                let az = azimuth_deg.rem_euclid(360.0);
                // Points are sorted by azimuth when the scenario is loaded; find the
                // bracketing pair, wrapping from the last point to the first + 360.
                let n = m.len();
                let idx = m.partition_point(|p| p.azimuth_deg <= az);
                let (a, b) = if idx == 0 || idx == n {
                    (
                        m[n - 1],
                        MaskPoint {
                            azimuth_deg: m[0].azimuth_deg + 360.0,
                            elevation_deg: m[0].elevation_deg,
                        },
                    )
                } else {
                    (m[idx - 1], m[idx])
                };
                let az_adj = if az < a.azimuth_deg { az + 360.0 } else { az };
                let span = b.azimuth_deg - a.azimuth_deg;
                if span <= 0.0 {
                    return a.elevation_deg.max(b.elevation_deg);
                }
                a.elevation_deg
                    + (b.elevation_deg - a.elevation_deg) * (az_adj - a.azimuth_deg) / span
            }
        }
    }

    /// Sorts the mask by azimuth (the interpolation relies on it).
    pub fn normalise(&mut self) {
        self.horizon_mask
            .sort_by(|a, b| a.azimuth_deg.total_cmp(&b.azimuth_deg));
        if self.longitude_deg > 180.0 {
            self.longitude_deg -= 360.0;
        }
    }
}

/// Stations checked together: each one valid, and no two with the same name
/// (compared without regard to case or surrounding blanks, as the command
/// line and the scenario's pins match names). Everything downstream — passes,
/// the plan, the hand-off files, the window — identifies a station by its
/// index in such a list.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct StationSet {
    stations: Vec<Station>,
}

/// Why a list of stations was refused: `index` is the entry at fault.
#[derive(Debug, Clone, PartialEq)]
pub struct StationListError {
    pub index: usize,
    /// Field inside the entry (`name`, `latitude_deg`, `horizon_mask[2]`...).
    pub field: String,
    pub message: String,
}

impl std::fmt::Display for StationListError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "stations[{}].{}: {}",
            self.index, self.field, self.message
        )
    }
}

impl std::error::Error for StationListError {}

/// The form of a name that uniqueness is checked on.
fn name_key(name: &str) -> String {
    name.trim().to_lowercase()
}

/// Whether two station names name the same station (ignoring case and
/// surrounding blanks): the one rule for matching a name typed by a user or
/// written in a scenario (pins, exclusions, `--station NAME`).
pub fn same_station_name(a: &str, b: &str) -> bool {
    name_key(a) == name_key(b)
}

impl StationSet {
    /// Validates every station and the uniqueness of their names; the error
    /// names both entries of a clash.
    pub fn new(stations: Vec<Station>) -> Result<Self, StationListError> {
        StationSet::check(&stations)?;
        Ok(StationSet { stations })
    }

    /// The checks of [`StationSet::new`] on stations kept where they are
    /// (a scenario's, which a copy would double).
    pub fn check(stations: &[Station]) -> Result<(), StationListError> {
        // A table of name keys: a scenario holds at most 10,000 stations
        // (`scenario::MAX_ENTRIES`), so it stays small whatever the file.
        let mut seen: std::collections::HashMap<String, usize> = std::collections::HashMap::new();
        for (i, s) in stations.iter().enumerate() {
            s.validate().map_err(|e| StationListError {
                index: i,
                field: e.field,
                message: e.message,
            })?;
            let key = name_key(&s.name);
            if let Some(&first) = seen.get(&key) {
                return Err(StationListError {
                    index: i,
                    field: "name".into(),
                    message: format!(
                        "{:?} is already the name of stations[{first}] ({:?}); station names must be unique",
                        s.name, stations[first].name
                    ),
                });
            }
            seen.insert(key, i);
        }
        Ok(())
    }

    /// Index of the station with this name (ignoring case and blanks).
    pub fn index_of(&self, name: &str) -> Option<usize> {
        let key = name_key(name);
        self.stations.iter().position(|s| name_key(&s.name) == key)
    }

    pub fn into_vec(self) -> Vec<Station> {
        self.stations
    }
}

impl std::ops::Deref for StationSet {
    type Target = [Station];
    fn deref(&self) -> &[Station] {
        &self.stations
    }
}

/// A name for a new station that no station of `existing` has yet:
/// `"{base} N"` with the smallest N ≥ 1 that is free.
pub fn unused_station_name(existing: &[Station], base: &str) -> String {
    let taken: std::collections::HashSet<String> =
        existing.iter().map(|s| name_key(&s.name)).collect();
    (1..)
        .map(|n| format!("{base} {n}"))
        .find(|n| !taken.contains(&name_key(n)))
        .unwrap_or_else(|| base.to_string())
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    #[test]
    fn mask_interpolates_and_wraps() {
        let mut s = Station::new("Test", 0.0, 0.0, 0.0);
        s.min_elevation_deg = 5.0;
        s.horizon_mask = vec![
            MaskPoint {
                azimuth_deg: 350.0,
                elevation_deg: 20.0,
            },
            MaskPoint {
                azimuth_deg: 10.0,
                elevation_deg: 0.0,
            },
            MaskPoint {
                azimuth_deg: 90.0,
                elevation_deg: 30.0,
            },
        ];
        s.normalise();
        assert!((s.mask_deg(0.0) - 10.0).abs() < 1e-12);
        assert!((s.mask_deg(50.0) - 15.0).abs() < 1e-12);
        assert!((s.mask_deg(355.0) - 15.0).abs() < 1e-12);
        // 90 → 350 (+260°): 30 → 20.
        assert!((s.mask_deg(220.0) - 25.0).abs() < 1e-12);
        assert_eq!(s.horizon_deg(10.0), 5.0);
        assert_eq!(s.lowest_horizon_deg(), 5.0);
    }

    #[test]
    fn inline_form() {
        let s = Station::parse_inline("Bramble Hill,51.42,-126.45,1580").unwrap();
        assert_eq!(s.name, "Bramble Hill");
        assert_eq!(s.height_m, 1580.0);
        let e = Station::parse_inline("X,91,0,0").unwrap_err();
        assert_eq!(e.field, "latitude_deg");
        let e = Station::parse_inline("X,1,zero,0").unwrap_err();
        assert_eq!(e.field, "LON_DEG");
    }

    #[test]
    fn a_station_list_refuses_two_stations_of_one_name_and_names_both() {
        let a = Station::new("Ridge", 10.0, 20.0, 0.0);
        let b = Station::new("  ridge ", 11.0, 21.0, 0.0);
        let err =
            StationSet::new(vec![a.clone(), Station::new("Other", 0.0, 0.0, 0.0), b]).unwrap_err();
        assert_eq!(err.index, 2);
        assert_eq!(err.field, "name");
        assert!(err.message.contains("stations[0]"), "{err}");
        let set = StationSet::new(vec![a.clone()]).unwrap();
        assert_eq!(set.index_of("RIDGE"), Some(0));
        assert_eq!(set.len(), 1);
        assert_eq!(
            unused_station_name(std::slice::from_ref(&a), "Ridge"),
            "Ridge 1"
        );
        let two = vec![
            Station::new("Station 1", 0.0, 0.0, 0.0),
            Station::new("station 2", 0.0, 0.0, 0.0),
        ];
        assert_eq!(unused_station_name(&two, "Station"), "Station 3");
    }

    #[test]
    fn a_clash_names_the_first_station_of_the_name() {
        // The first clash in list order, against the earliest station of
        // that name.
        let names = ["ΟΔΟΣ", "Ridge", "Vale", "vale ", "RIDGE", "οδος"];
        let stations: Vec<Station> = names
            .iter()
            .map(|n| Station::new(n, 1.0, 2.0, 0.0))
            .collect();
        let err = StationSet::check(&stations).unwrap_err();
        assert_eq!(err.index, 3);
        assert!(err.message.contains("stations[2]"), "{err}");
        // The earliest of the name, not a later one.
        let err = StationSet::check(&stations[1..]).unwrap_err();
        assert_eq!(err.index, 2, "{err}");
        assert!(err.message.contains("stations[1]"), "{err}");
        let ridges = [&stations[1], &stations[2], &stations[4]].map(Clone::clone);
        let err = StationSet::check(&ridges).unwrap_err();
        assert_eq!(err.index, 2, "{err}");
        assert!(err.message.contains("stations[0]"), "{err}");
        let distinct: Vec<Station> = ["a", "b", "c", "A "]
            .iter()
            .map(|n| Station::new(n, 1.0, 2.0, 0.0))
            .collect();
        let err = StationSet::check(&distinct).unwrap_err();
        assert_eq!(err.index, 3, "{err}");
        assert!(err.message.contains("stations[0]"), "{err}");
        assert!(StationSet::check(&distinct[..3]).is_ok());
        assert_eq!(StationSet::check(&stations).unwrap_err().index, 3);
    }
}
