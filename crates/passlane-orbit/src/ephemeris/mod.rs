//! The operator's own ephemeris (CCSDS 502.0-B-3 OEM, KVN or XML) as a
//! motion source, beside SGP4 on mean elements.
//!
//! [`load_oem`] reads a message into an [`Ephemeris`]: segments of states
//! converted once to TEME (the frame every planner works in; from EME2000 or
//! GCRF by [`crate::inertial`], from an ITRF-family frame by
//! [`crate::frames`] with the Earth orientation given at load), each with the
//! interpolation its metadata recommends (Lagrange or Hermite of the stated
//! degree, 502.0-B-3 Table 5-3) and its usable span (USEABLE_START/STOP_TIME,
//! else START/STOP_TIME, within the first and last state). Between nodes
//! [`Ephemeris::state_at`] interpolates inside one segment only (5.2.4.6: no
//! interpolation across a metadata block); a time outside every usable span
//! is an error, never an extrapolation.
//!
//! A fleet entry ([`ElementSet`]) carries an ephemeris in
//! [`ElementSet::ephemeris`]; [`crate::Propagator::new`] then evaluates it
//! instead of SGP4, so the planners need no change. For the bounds the
//! planners take from mean elements (radius shells, sampling steps) such an
//! entry holds *bounding* elements derived from the ephemeris itself: semi-
//! major axis and eccentricity whose perigee and apogee are the ephemeris's
//! smallest and largest radius (with the element set's, when the fleet also
//! has one to fall back to). See [`attach_to_fleet`].
//!
//! Bad input follows the loader's rule: a bad header rejects the message, a
//! bad segment (metadata) rejects that segment, a bad data line or covariance
//! matrix rejects that line or matrix; each with a [`Diagnostic`] naming file,
//! line, keyword and reason, and the rest loads.

mod attach;
mod interpolate;
mod oem;
mod oem_raw;

use crate::elements::SourceRef;
use crate::frames::Vec3;
use crate::time::UtcTime;

pub use attach::{EphemerisInput, attach_to_fleet};
pub use interpolate::{hermite_nodes, lagrange_nodes};
pub use oem::{OemFormat, load_oem};

/// How a segment's states are interpolated (502.0-B-3 Table 5-3).
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub enum Interpolation {
    /// Lagrange polynomial of this degree (degree + 1 nodes) through the
    /// positions, and another through the velocities.
    Lagrange { degree: usize },
    /// Hermite polynomial through positions and velocities; degree `d` uses
    /// ⌈(d + 1)/2⌉ nodes (a polynomial through positions and velocities at
    /// `m` nodes has degree 2m − 1; the standard does not define "degree"
    /// for Hermite, this reading is common practice). Velocities are the
    /// polynomial's derivative.
    Hermite { degree: usize },
}

impl Interpolation {
    /// Nodes each evaluation uses.
    pub fn nodes(self) -> usize {
        match self {
            Interpolation::Lagrange { degree } => degree + 1,
            Interpolation::Hermite { degree } => (degree + 1).div_ceil(2),
        }
        .max(2)
    }

    /// The metadata keywords' values.
    pub fn keyword(self) -> (&'static str, usize) {
        match self {
            Interpolation::Lagrange { degree } => ("LAGRANGE", degree),
            Interpolation::Hermite { degree } => ("HERMITE", degree),
        }
    }
}

/// The frame an OEM segment's states were given in.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize)]
pub enum SourceFrame {
    Teme,
    Eme2000,
    /// GCRF (also ICRF about the Earth's centre).
    Gcrf,
    /// An Earth-fixed frame of the ITRF family, by its name in the message.
    EarthFixed(String),
}

/// One covariance matrix of an OEM (502.0-B-3 §5.2.5), as given: 21 terms of
/// the lower triangle (x, y, z, ẋ, ẏ, ż) in km², km²/s, km²/s².
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct OemCovariance {
    pub epoch: UtcTime,
    /// COV_REF_FRAME, or the segment's REF_FRAME when absent.
    pub frame: String,
    pub lower_triangle: [f64; 21],
    pub line: usize,
}

/// One segment: metadata and nodes (TEME, km and km/s).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Segment {
    /// Line of META_START (KVN) or `<segment>` (XML).
    pub line: usize,
    pub object_name: String,
    pub object_id: String,
    pub ref_frame: SourceFrame,
    /// REF_FRAME as written.
    pub ref_frame_text: String,
    pub interpolation: Interpolation,
    /// True when the message gave no INTERPOLATION and this tool chose.
    pub interpolation_defaulted: bool,
    pub usable_start: UtcTime,
    pub usable_stop: UtcTime,
    /// Node times, s since `t0`, strictly increasing.
    #[serde(skip)]
    pub times_s: Vec<f64>,
    #[serde(skip)]
    pub t0: UtcTime,
    /// TEME position and velocity at each node.
    #[serde(skip)]
    pub states: Vec<[f64; 6]>,
    pub covariances: Vec<OemCovariance>,
}

impl Segment {
    pub fn node_count(&self) -> usize {
        self.times_s.len()
    }

    /// TEME state at `t`, or `None` outside the usable span.
    pub fn state_at(&self, t: UtcTime) -> Option<(Vec3, Vec3)> {
        if t < self.usable_start || t > self.usable_stop {
            return None;
        }
        let x = t.s_since(self.t0);
        let n = self.times_s.len();
        let m = self.interpolation.nodes().min(n);
        // The interval [t_i, t_i+1] holding x, then a window of m nodes
        // centred on it, shifted to stay inside the segment.
        let i = self.times_s.partition_point(|&s| s <= x).saturating_sub(1);
        let first = (i + 1).saturating_sub(m / 2).min(n - m);
        let ts = &self.times_s[first..first + m];
        let ss = &self.states[first..first + m];
        Some(match self.interpolation {
            Interpolation::Lagrange { .. } => lagrange_nodes(ts, ss, x),
            Interpolation::Hermite { .. } => hermite_nodes(ts, ss, x),
        })
    }

    /// Smallest and largest radius over the nodes, km.
    pub fn radius_range_km(&self) -> (f64, f64) {
        self.states
            .iter()
            .fold((f64::INFINITY, 0.0_f64), |(lo, hi), s| {
                let r = (s[0] * s[0] + s[1] * s[1] + s[2] * s[2]).sqrt();
                (lo.min(r), hi.max(r))
            })
    }
}

/// An operator ephemeris: one object's segments, in time order.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Ephemeris {
    pub source: SourceRef,
    pub format: OemFormat,
    pub version: String,
    pub originator: String,
    pub creation_date: UtcTime,
    pub message_id: Option<String>,
    pub segments: Vec<Segment>,
}

/// A usable span of an ephemeris.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Span {
    pub start: UtcTime,
    pub stop: UtcTime,
}

impl Ephemeris {
    /// The object's name (first segment's OBJECT_NAME).
    pub fn object_name(&self) -> &str {
        self.segments.first().map_or("", |s| s.object_name.as_str())
    }

    /// The object's OBJECT_ID (first segment).
    pub fn object_id(&self) -> &str {
        self.segments.first().map_or("", |s| s.object_id.as_str())
    }

    /// The segment whose usable span holds `t` (the later one at a shared
    /// endpoint), and its index.
    pub fn segment_at(&self, t: UtcTime) -> Option<(usize, &Segment)> {
        self.segments
            .iter()
            .enumerate()
            .rev()
            .find(|(_, s)| t >= s.usable_start && t <= s.usable_stop)
    }

    /// TEME state at `t` from the segment that covers it; `None` outside
    /// every usable span (no extrapolation).
    pub fn state_at(&self, t: UtcTime) -> Option<(Vec3, Vec3)> {
        self.segment_at(t).and_then(|(_, s)| s.state_at(t))
    }

    /// The usable spans, merged where segments meet.
    pub fn spans(&self) -> Vec<Span> {
        let mut v: Vec<Span> = self
            .segments
            .iter()
            .map(|s| Span {
                start: s.usable_start,
                stop: s.usable_stop,
            })
            .collect();
        v.sort_by(|a, b| a.start.s_since_j2000().total_cmp(&b.start.s_since_j2000()));
        let mut out: Vec<Span> = Vec::new();
        for s in v {
            match out.last_mut() {
                Some(last) if s.start <= last.stop => last.stop = last.stop.max(s.stop),
                _ => out.push(s),
            }
        }
        out
    }

    /// Smallest and largest radius over every node, km.
    pub fn radius_range_km(&self) -> (f64, f64) {
        self.segments
            .iter()
            .map(Segment::radius_range_km)
            .fold((f64::INFINITY, 0.0_f64), |(lo, hi), (a, b)| {
                (lo.min(a), hi.max(b))
            })
    }

    /// The covariance matrix nearest in time to `t` within the segment that
    /// covers `t` (not propagated to `t`), if the message has any.
    pub fn covariance_near(&self, t: UtcTime) -> Option<&OemCovariance> {
        let (_, seg) = self.segment_at(t)?;
        seg.covariances.iter().min_by(|a, b| {
            a.epoch
                .s_since(t)
                .abs()
                .total_cmp(&b.epoch.s_since(t).abs())
        })
    }

    /// A short description for reports: file, frame, interpolation.
    pub fn describe(&self) -> String {
        let s = self.segments.first();
        format!(
            "ephemeris {} (OEM {}, {} segment(s), {}, {} {})",
            self.source.file,
            match self.format {
                OemFormat::Kvn => "KVN",
                OemFormat::Xml => "XML",
            },
            self.segments.len(),
            s.map_or("", |s| s.ref_frame_text.as_str()),
            s.map_or("", |s| s.interpolation.keyword().0),
            s.map_or(0, |s| s.interpolation.keyword().1),
        )
    }
}

/// What a fleet entry carries when its motion comes from an ephemeris.
#[derive(Debug, Clone, PartialEq)]
pub struct EphemerisSource {
    pub ephemeris: Ephemeris,
    /// The published element set to use outside the ephemeris's usable
    /// spans, when the fleet had one for this catalog number (stated with a
    /// warning at load). `None`: outside the spans is an error.
    pub fallback: Option<crate::ElementSet>,
}
