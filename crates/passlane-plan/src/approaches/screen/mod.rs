//! Close-approach screening: which pairs of objects come within a screening
//! volume of each other over a time window, when, and how close.
//!
//! # What it does
//! - Pairs: every pair within one set (a fleet, or a whole catalog all-vs-all),
//!   or every primary against every secondary (fleet vs catalog).
//! - Volume: a sphere, or a box or ellipsoid given by half-sizes in the
//!   primary's radial / in-track / cross-track (RIC) frame.
//! - Method, in stages that each only discard what cannot be an event:
//!   1. **Perigee/apogee filter** (Hoots, Crawford & Roehrich 1984): two orbits
//!      whose radius shells, padded, do not overlap never meet. Shells come
//!      from the mean elements and are padded by the volume's bounding radius
//!      plus [`ScreeningSettings::filter_margin_km`] (SGP4 short-period terms
//!      move the radius by ~10 km in LEO) plus the semi-major-axis decay the
//!      element set's mean-motion derivative implies over the window. In
//!      fleet-vs-catalog mode a catalog object outside every fleet shell is
//!      never propagated.
//!   2. **Radial time windows** (the perigee/apogee filter in time, fleet vs
//!      catalog): a catalog object whose orbit reaches above the fleet's band
//!      (the top of the fleet's padded shells plus 10 km) is sampled only in
//!      the 8-minute activity slots where it can be inside the band. From
//!      the SGP4 state at a slot's start, its radial speed obeys
//!      ṙ² = 2ε + 2μ/r − h²/r² ≤ 2ε_max + 2μ/r − h_min²/r², with the energy
//!      widened by three times the J2 potential at the band's top plus 1 %
//!      and the angular momentum lowered by 2 % (SGP4's short-period terms
//!      move both by ~0.1 %; drag only lowers the energy); integrating that
//!      bound gives the shortest time to come down to the band, and a slot
//!      shorter than it is skipped. Eccentric LEO-crossers (transfer stages,
//!      12-hour orbits) are then sampled near their perigee passages only.
//!   2b. **Predicted sampling** (fleet vs catalog, a fleet of at most 30,
//!      `PREDICT_MAX_FLEET`): a near-circular LEO catalog object (e ≤ 0.02,
//!      period under 225 min, no ephemeris) is sampled only in the activity
//!      slots where it can come near the fleet (in chunks within 30 days of
//!      its epoch). A mean-element model
//!      ([`predict`]: first-order J2 secular rates, first order in e), its
//!      phase anchored on SGP4 at each chunk's start and end, gives the
//!      object at every hash-step midpoint; a slot is sampled when, at some
//!      step of it, the model and a fleet object pass the grid's own
//!      linear-motion test with the reach widened by the model's 75 km
//!      allowance. Steps are skipped with the direct scan's closing-speed
//!      bound. Each chunk also checks the model against SGP4 at its start,
//!      middle and end; a chunk where it is off by more than 50 km is sampled
//!      throughout.
//!   3. **SGP4 samples and Hermite interpolation.** Each object is propagated
//!      once per sample step (60 s to half an hour, the longest power-of-two
//!      multiple of the hash step whose estimated cubic Hermite error stays
//!      under [`ScreeningSettings::interpolation_tolerance_km`]); everything
//!      before the final evaluation uses the interpolant. Time is processed in
//!      chunks so memory stays bounded whatever the window length.
//!   4. **Spatial grid per time step.** The window is cut into steps of
//!      [`ScreeningSettings::hash_step_s`]. At each step's midpoint every object
//!      is put in a cubic cell of side L = D + m + (v₁ + v₂)·h/2, where D is the
//!      volume's bounding radius, m the interpolation margin, h the step and
//!      v₁, v₂ the two largest speed bounds of the time chunk (one per set in
//!      fleet-vs-catalog mode). Each object's speed bound is the largest norm
//!      of the Bézier control points of its interpolant's velocity, which holds
//!      the velocity in their convex hull. All-vs-all, cells are sorted keys and
//!      the 13 forward neighbour cells are found with monotone pointers; a pair
//!      is then cut at d + (vᵢ + vⱼ)·h/2 with its own speed bounds. Fleet vs
//!      catalog, only the fleet goes into the grid (each fleet object in its
//!      cell and the 26 around it) and each catalog object looks up its own
//!      cell, after a radial-band test against the fleet's radii. A fleet of
//!      at most six spacecraft (`DIRECT_SCAN_MAX_FLEET`) skips the grid: each
//!      catalog object is measured against each spacecraft at the step
//!      midpoints, and the steps where no pair can come within a cell (the
//!      nearest spacecraft farther than the cell plus what the pair can close
//!      meanwhile at the chunk's closing-speed bound) are skipped.
//!   5. **Pair test and TCA.** Candidates pass a linear-motion bound, then the
//!      roots of Δr·Δv on the interpolant inside the step give the minima. A
//!      pair within reach across a whole step (co-orbiting objects, formation
//!      flyers, a deployer and its cubesats, slowly drifting pairs) is handed
//!      on as a *proximity* seed instead: its Δr·Δv is too small for the
//!      interpolant, so its minima are found from direct SGP4 samples over
//!      the step (eight per step). A pair within reach at the window's start
//!      with its distance already rising, or at the end with it still
//!      falling, gets an *edge* seed: its smallest distance is on the edge.
//!   6. **Final evaluation with direct SGP4**: the root of Δr·Δv inside the
//!      interpolant's bracket (safeguarded regula falsi on SGP4 to 10 µs;
//!      Newton from the interpolant's root when SGP4's signs do not bracket
//!      it); miss distance, RIC and states come from SGP4 at the TCA, not
//!      from the interpolant. Then the **encounter walk**: from the TCA
//!      backwards and forwards, in steps of a fifth of the time to cross the
//!      volume's smallest half-size at the TCA's relative speed (1 ms to
//!      60 s), while the pair stays inside the volume's bounding sphere and
//!      up to the neighbouring distance maxima; the volume is tested at every
//!      step and its measure minimised around the lowest sample, so a box or
//!      ellipsoid corner crossed away from the distance minimum is found.
//!      Entry and exit are the first and last crossings of the volume's
//!      boundary (bisection to 1 ms). Walks that meet inside the volume at a
//!      distance maximum join two encounters into one volume interval.
//!
//! # Why no event is missed
//! Every discarding step uses a bound, never a sample:
//! - Shells: SGP4's radius stays within the padded perigee/apogee shell (short
//!   period terms and decay are in the padding), and two objects closer than D
//!   have radii within D of each other.
//! - Radial time windows: the fall-time bound holds for two-body motion with
//!   the widened energy and angular momentum; a skipped slot is one where
//!   the object cannot be inside the fleet's band, so no fleet object can
//!   be within D of it (`fleet_against_the_dense_subset_equals_brute_force`
//!   checks it against brute force).
//! - Predicted sampling: **a measured allowance, not a proof.** A true event
//!   (SGP4 within D of a fleet object) puts the model within D + m + E of
//!   that fleet object's interpolant, E the model's distance from SGP4, so a
//!   skipped slot is one where no such event can be, as long as E stays
//!   within the 75 km allowance. E is estimated at ~50 km from the size of
//!   SGP4's periodic terms the model leaves out, measured at 30.3 km at most
//!   over the dense subset and the SSO fleet (every 30 s for a week,
//!   `tests/screening_predict.rs`), and checked in every chunk (start,
//!   middle, end; 50 km). The week-long comparison with sampling every
//!   object throughout (`predicted_catalog_sampling_finds_the_same_events_over_a_week`)
//!   and the brute-force comparisons of the fleet tests run with it on.
//! - Interpolation: the interpolant is within m of SGP4 at every instant (m is
//!   the per-object allowance, checked against SGP4 in the tests), so a pair
//!   within D in SGP4 is within D + m on the interpolant.
//! - Direct scan: the same bound between step midpoints: a pair at distance
//!   d at one midpoint is farther than d − (vᵢ + vⱼ)·Δt at a midpoint Δt
//!   later, so skipped steps are steps where the grid's cut would drop it
//!   (`a_small_fleet_against_the_dense_subset_equals_brute_force`).
//! - Grid: on the interpolant, |Δr(t) − Δr(t_mid)| ≤ (vᵢ + vⱼ)·|t − t_mid| with
//!   the hull speed bounds, so a pair within D + m at some time of the step is
//!   within L of each other at the midpoint, hence in neighbouring cells, and
//!   passes the per-pair cut. The radial band drops only objects whose radius
//!   differs from every fleet object's by more than L, which by the triangle
//!   inequality are farther than L from all of them.
//! - Pair test: the linear-motion closest approach is padded by the largest
//!   possible relative acceleration over half a step; the Δr·Δv sign test on
//!   four sub-intervals of each step finds every minimum (a minimum and a
//!   maximum of the distance are far more than a quarter step apart).
//!
//! The test `fast_screening_equals_brute_force_reference` and the benchmark's
//! 2,000-object case check the result against brute-force sampling.
//!
//! An event is a local minimum of the distance (or the window's edge, where
//! the distance is smallest when it is still falling at the end or already
//! rising at the start: `clipped`) whose encounter enters the volume; a pair
//! can have many over a window. For a sphere that is the TCA inside the
//! sphere; for a box or ellipsoid the trajectory may enter the volume only
//! away from the TCA (`tca_inside_volume` false). A pair that stays inside
//! the volume across distance maxima has one event per minimum, all sharing
//! one volume interval (`volume_entry` to `volume_exit`, `interval_minima`,
//! `interval_min_miss_km`).
//!
//! Proximity seeds and the encounter walk use direct SGP4 and rest on one
//! assumption, stated here: a distance minimum and maximum of one pair are
//! more than a few seconds apart (a quarter of an orbit for co-orbiting
//! pairs), so eight samples per 30 s step see every sign change of Δr·Δv,
//! and the walk's step sees every entry into the volume except grazes
//! shallower than the minimisation around the lowest sample recovers.
//!
//! # Cost
//! Measured with `benches/screening.rs` (synthetic 30,000-object catalog, 10 km
//! sphere, 30 s hash step, 2 cores shared with other builds, so wall time is
//! about twice what the CPU time over two cores would give):
//! - 30,000 all-vs-all over 24 h: 25.2 s CPU, 40 s wall (207,421 events: the
//!   synthetic LEO shell is dense; peak memory 228 MB);
//! - 100 vs 30,000 over 7 days: 22.0 s CPU, 45 s wall (18,176 objects removed by
//!   the shell filter; SGP4 sampling of the 12,000 others is about a third);
//! - 2,000 objects over 6 h: 0.21 s CPU, 163× less CPU than brute-force
//!   sampling at 10 s, identical events.
//!
//! On the realistic catalog (`benches/support/catalog.rs`: dense shells,
//! debris band, eccentric LEO-crossers; library call, idle machine, 5 km):
//! 30,000 all-vs-all over 24 h 15.9 s wall, 152,073 events, 371 MB; with the
//! fleet tuning ([`ScreeningSettings::fleet_vs_catalog`]) 100 vs 30,000 over
//! 7 days 12.1 s. 10 sun-synchronous spacecraft vs 30,000 over 7 days took
//! 7.0 s before the predicted sampling (20 M SGP4 samples of the ~13,900
//! objects the perigee/apogee filter keeps: 4.3 s; the grid: 3.0 s); with it
//! 3.3 M SGP4 samples (12,085 objects predicted) and about 4.3 s, most of it
//! the prediction's own scan (~52 M model evaluations, each against ten
//! fleet objects). The whole commands: README's speed table.
//!
//! # What it deliberately does not do
//! - No collision probability (no covariance here) and no manoeuvre planning.
//! - No file I/O and no printing: results and per-object diagnostics are values.
//! - An object whose propagation fails (decay, divergence) is reported once and
//!   screened no further from the chunk of samples where it failed; the rest go on.

mod geometry;
mod grid;
mod hermite;
mod objects;
mod predict;
mod reference;
mod settings;

use rayon::prelude::*;

use passlane_orbit::constants::{EARTH_RADIUS_WGS72_KM, MU_WGS72_KM3_S2};
use passlane_orbit::{ElementSet, PropagationError, StateTeme, UtcTime};

pub use crate::encounter::RelativeGeometry;
pub use geometry::{relative_geometry, ric_components};
pub use predict::prediction_error_km;
pub use reference::screen_brute_force;
pub use settings::ScreeningSettings;
use settings::{DIRECT_SCAN_MAX_FLEET, DIRECT_SCAN_MAX_FLEET_PREDICTED};

use crate::progress::Progress;
use geometry::{Built, evaluate_seed, join_intervals};
use grid::{Candidate, ChunkContext, Flat, Scratch};
use hermite::{Sample, hermite};
use objects::{
    ObjectCursor, SLOT_HASH_STEPS, diagnostic, drop_unreachable_secondaries, fleet_band_top_km,
    prepare_objects, sample_step,
};

/// The region around the primary that counts as "close".
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(tag = "shape", rename_all = "snake_case")]
pub enum ScreeningVolume {
    Sphere {
        radius_km: f64,
    },
    /// Half-sizes along the primary's radial, in-track and cross-track axes.
    Box {
        radial_km: f64,
        in_track_km: f64,
        cross_track_km: f64,
    },
    /// Semi-axes along the primary's radial, in-track and cross-track axes.
    Ellipsoid {
        radial_km: f64,
        in_track_km: f64,
        cross_track_km: f64,
    },
}

impl ScreeningVolume {
    /// Radius of the smallest sphere around the primary that holds the volume.
    pub fn bounding_radius_km(&self) -> f64 {
        match *self {
            ScreeningVolume::Sphere { radius_km } => radius_km,
            ScreeningVolume::Box {
                radial_km,
                in_track_km,
                cross_track_km,
            } => (radial_km * radial_km
                + in_track_km * in_track_km
                + cross_track_km * cross_track_km)
                .sqrt(),
            ScreeningVolume::Ellipsoid {
                radial_km,
                in_track_km,
                cross_track_km,
            } => radial_km.max(in_track_km).max(cross_track_km),
        }
    }

    pub(crate) fn smallest_half_size_km(&self) -> f64 {
        match *self {
            ScreeningVolume::Sphere { radius_km } => radius_km,
            ScreeningVolume::Box {
                radial_km,
                in_track_km,
                cross_track_km,
            }
            | ScreeningVolume::Ellipsoid {
                radial_km,
                in_track_km,
                cross_track_km,
            } => radial_km.min(in_track_km).min(cross_track_km),
        }
    }

    /// Normalised size of a relative position given as RIC components (km):
    /// ≤ 1 inside the volume, > 1 outside.
    pub fn measure(&self, ric_km: &[f64; 3]) -> f64 {
        let [r, i, c] = *ric_km;
        match *self {
            ScreeningVolume::Sphere { radius_km } => (r * r + i * i + c * c).sqrt() / radius_km,
            ScreeningVolume::Box {
                radial_km,
                in_track_km,
                cross_track_km,
            } => (r.abs() / radial_km)
                .max(i.abs() / in_track_km)
                .max(c.abs() / cross_track_km),
            ScreeningVolume::Ellipsoid {
                radial_km,
                in_track_km,
                cross_track_km,
            } => {
                ((r / radial_km).powi(2) + (i / in_track_km).powi(2) + (c / cross_track_km).powi(2))
                    .sqrt()
            }
        }
    }

    pub fn contains(&self, ric_km: &[f64; 3]) -> bool {
        self.measure(ric_km) <= 1.0
    }

    fn is_valid(&self) -> bool {
        let ok = |x: f64| x.is_finite() && x > 0.0;
        match *self {
            ScreeningVolume::Sphere { radius_km } => ok(radius_km),
            ScreeningVolume::Box {
                radial_km,
                in_track_km,
                cross_track_km,
            }
            | ScreeningVolume::Ellipsoid {
                radial_km,
                in_track_km,
                cross_track_km,
            } => ok(radial_km) && ok(in_track_km) && ok(cross_track_km),
        }
    }
}

/// What to screen: `primaries` against each other when `secondaries` is `None`
/// (a fleet, or a catalog all-vs-all), else every primary against every secondary.
#[derive(Debug, Clone, Copy)]
pub struct ScreeningRequest<'a> {
    pub primaries: &'a [ElementSet],
    pub secondaries: Option<&'a [ElementSet]>,
    pub start: UtcTime,
    pub end: UtcTime,
    pub settings: ScreeningSettings,
}

/// One close approach. The field names are a JSON contract.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct CloseApproach {
    pub primary: String,
    pub secondary: String,
    pub primary_catalog_number: u32,
    pub secondary_catalog_number: u32,
    /// Time of closest approach (local minimum of the distance).
    #[serde(serialize_with = "passlane_orbit::time::iso_us")]
    pub tca: UtcTime,
    pub miss_distance_km: f64,
    /// Components of secondary − primary in the primary's RIC frame at TCA.
    pub radial_km: f64,
    pub in_track_km: f64,
    pub cross_track_km: f64,
    pub relative_speed_km_s: f64,
    /// Angle between the two velocity vectors at TCA, degrees.
    pub approach_angle_deg: f64,
    /// When the secondary enters the volume in this encounter (clamped to the
    /// window start). For a box or ellipsoid this can be after the TCA (the
    /// trajectory crosses the volume away from the distance minimum).
    #[serde(serialize_with = "passlane_orbit::time::iso_us")]
    pub volume_entry: UtcTime,
    /// When it leaves the volume again (clamped to the window end).
    #[serde(serialize_with = "passlane_orbit::time::iso_us")]
    pub volume_exit: UtcTime,
    /// TEME states at TCA, direct from SGP4.
    pub primary_state: StateTeme,
    pub secondary_state: StateTeme,
    /// The TCA is the window's start or end, not a local minimum: the
    /// distance was still falling when the window ended (or already rising
    /// when it began), as a pass clipped by the window.
    pub clipped: bool,
    /// The relative position at TCA is inside the volume (always, for a
    /// sphere; for a box or ellipsoid the trajectory may enter it only away
    /// from the distance minimum).
    pub tca_inside_volume: bool,
    /// `volume_entry` is the window's start (the pair was already inside).
    pub volume_entry_clipped: bool,
    /// `volume_exit` is the window's end (the pair is still inside).
    pub volume_exit_clipped: bool,
    /// Local distance minima inside this event's volume interval (entry to
    /// exit): more than one for a pair that stays inside across a distance
    /// maximum (formation flyers, a deployer and its cubesats, co-orbiting
    /// objects). Each minimum is its own event; they share the interval.
    pub interval_minima: u32,
    /// Smallest miss distance over the volume interval, km.
    pub interval_min_miss_km: f64,
}

/// An object that could not be screened (fully or from some time on).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ObjectDiagnostic {
    pub name: String,
    pub catalog_number: u32,
    /// First time propagation failed, if it got started at all.
    pub time: Option<UtcTime>,
    pub message: String,
}

/// Work counters, for benchmarks and for the curious.
#[derive(Debug, Clone, Copy, Default, PartialEq, serde::Serialize)]
pub struct ScreeningStats {
    pub objects: usize,
    /// Objects the perigee/apogee filter removed before propagation.
    pub objects_filtered: usize,
    /// Catalog objects the prediction covers: sampled only where it comes
    /// near the fleet, in the chunks within 30 days of their epoch.
    pub objects_predicted: usize,
    pub sgp4_samples: u64,
    /// Pairs that passed the hash and linear-motion test.
    pub candidate_pairs: u64,
    /// Minima refined with direct SGP4.
    pub refinements: u64,
    /// Wall-clock seconds spent propagating samples, in the hash and pair
    /// tests, and in the final SGP4 evaluation.
    pub propagation_s: f64,
    pub hash_s: f64,
    pub evaluation_s: f64,
}

/// The outcome of a screening.
#[derive(Debug, Clone, Default, serde::Serialize)]
pub struct ScreeningResult {
    /// Sorted by TCA.
    pub events: Vec<CloseApproach>,
    pub diagnostics: Vec<ObjectDiagnostic>,
    /// True when the caller stopped the run; `events` covers the window up to `screened_until`.
    pub cancelled: bool,
    pub screened_until: UtcTime,
    pub stats: ScreeningStats,
}

/// Runs the screening without progress reports.
pub fn screen(request: &ScreeningRequest<'_>) -> ScreeningResult {
    screen_with_progress(request, &crate::progress::Silent)
}

/// Runs the screening, reporting the fraction done between time chunks; when
/// the caller cancels, the run stops and returns what it has, with
/// `cancelled` set.
pub fn screen_with_progress(
    request: &ScreeningRequest<'_>,
    progress: &dyn Progress,
) -> ScreeningResult {
    let mut result = ScreeningResult {
        screened_until: request.start,
        ..Default::default()
    };
    let settings = request.settings;
    let span_s = request.end.s_since(request.start);
    if !settings.volume.is_valid()
        || !positive(settings.hash_step_s)
        || !positive(span_s)
        || !positive(settings.interpolation_tolerance_km)
    {
        return result;
    }
    let mut objects = prepare_objects(request, &mut result.diagnostics);
    result.stats.objects = objects.len();
    if request.secondaries.is_some() {
        let before = objects.len();
        drop_unreachable_secondaries(&mut objects);
        result.stats.objects_filtered = before - objects.len();
    }
    let mut cursors: Vec<ObjectCursor<'_>> = objects.iter().map(ObjectCursor::new).collect();
    // Fleet against catalog: eccentric catalog objects are sampled only in
    // the activity slots where they can be inside the fleet's radius band.
    let band_top_km = if request.secondaries.is_some() {
        fleet_band_top_km(&objects)
    } else {
        None
    };
    let slot_s = settings.hash_step_s * f64::from(SLOT_HASH_STEPS);

    let h = settings.hash_step_s;
    let chunk_s = h * f64::from(CHUNK_HASH_STEPS);
    let n_chunks = (span_s / chunk_s).ceil().max(1.0) as usize;
    let margin_km = objects.iter().map(|o| o.margin_km).fold(0.0, f64::max) * 2.0;
    let mut candidates: Vec<Candidate> = Vec::new();
    // A fleet of at most PREDICT_MAX_FLEET against a catalog: catalog objects
    // the mean-element model covers are sampled only near the fleet. The
    // fleet comes first among the objects.
    let n_fleet = objects.iter().take_while(|o| o.group == 0).count();
    let predicting = request.secondaries.is_some() && n_fleet <= settings.predict_max_fleet;
    if predicting {
        result.stats.objects_predicted = objects.iter().filter(|o| o.model.is_some()).count();
    }
    // A small fleet against a catalog takes the direct scan (the same for
    // every chunk: objects are not dropped between chunks).
    let direct_max = settings.direct_scan_max_fleet.unwrap_or(if predicting {
        DIRECT_SCAN_MAX_FLEET_PREDICTED
    } else {
        DIRECT_SCAN_MAX_FLEET
    });
    let direct_scan = request.secondaries.is_some() && n_fleet <= direct_max;
    let catalog: Vec<usize> = (0..objects.len())
        .filter(|&j| direct_scan && objects[j].group == 1)
        .collect();
    for c in 0..n_chunks {
        let chunk_start = request.start.add_s(c as f64 * chunk_s);
        let chunk_end = chunk_start.add_s(chunk_s).min(request.end);
        // Samples for every object over the chunk, in parallel across objects.
        let clock = std::time::Instant::now();
        cursors
            .par_iter_mut()
            .zip(objects.par_iter())
            .filter(|(_, o)| !(predicting && o.model.is_some()))
            .for_each(|(oc, o)| {
                oc.fill(o, chunk_start, chunk_end, band_top_km, slot_s, u32::MAX);
            });
        if predicting {
            // The fleet is sampled; the predicted catalog objects only
            // where they can come near it.
            let fleet = predict::FleetMidpoints::new(
                &Flat::build(&cursors[..n_fleet], &objects[..n_fleet]),
                n_fleet,
                chunk_end.s_since(chunk_start),
                h,
            );
            let reach_km = settings.volume.bounding_radius_km() + margin_km;
            cursors
                .par_iter_mut()
                .zip(objects.par_iter())
                .for_each(|(oc, o)| {
                    if let Some(model) = &o.model {
                        oc.fill_predicted(
                            o,
                            model,
                            chunk_start,
                            chunk_end,
                            slot_s,
                            &fleet,
                            reach_km,
                        );
                    }
                });
        }
        for (oc, o) in cursors.iter_mut().zip(objects.iter()) {
            result.stats.sgp4_samples += oc.computed as u64;
            if let Some(e) = oc.error.take() {
                result.diagnostics.push(diagnostic(o, &e));
            }
        }
        result.stats.propagation_s += clock.elapsed().as_secs_f64();
        let clock = std::time::Instant::now();
        let n_steps = (chunk_end.s_since(chunk_start) / h).ceil() as usize;
        // Compact copy of the chunk's samples: the hash loop touches every object
        // at every step, and the large propagator structs would cost a cache
        // miss each.
        let flat = Flat::build(&cursors, &objects);
        let ctx = ChunkContext {
            objects: &objects,
            flat: &flat,
            chunk_start,
            settings: &settings,
            margin_km,
            cross: request.secondaries.is_some(),
            v_pair_km_s: flat.pair_speed_km_s(request.secondaries.is_some()),
            window: (request.start, request.end),
            n_fleet,
            slot_s,
            slot_catalog: if request.secondaries.is_some() {
                flat.catalog_by_slot(n_steps.div_ceil(SLOT_HASH_STEPS as usize))
            } else {
                Vec::new()
            },
        };
        let found: Vec<Vec<Candidate>> = if direct_scan {
            // Small fleet: each catalog object against the fleet directly,
            // skipping steps it cannot use, in parallel across objects.
            let track = ctx.fleet_track(n_steps, chunk_end);
            catalog
                .par_chunks(64)
                .map(|js| ctx.fleet_scan(&track, js))
                .collect()
        } else {
            (0..n_steps)
                .into_par_iter()
                .map_init(Scratch::default, |scratch, k| {
                    let a = chunk_start.add_s(k as f64 * h);
                    let b = a.add_s(h).min(chunk_end);
                    ctx.step(a, b, scratch)
                })
                .collect()
        };
        for f in found {
            result.stats.candidate_pairs += f.len() as u64;
            candidates.extend(f.into_iter().filter(|c| {
                c.interpolated_miss_km <= settings.volume.bounding_radius_km() + margin_km
            }));
        }
        result.stats.hash_s += clock.elapsed().as_secs_f64();
        result.screened_until = chunk_end;
        progress.report((c + 1) as f64 / n_chunks as f64);
        if progress.cancelled() && c + 1 < n_chunks {
            result.cancelled = true;
            break;
        }
    }
    result.stats.refinements = candidates.len() as u64;
    let clock = std::time::Instant::now();
    let window = (request.start, result.screened_until);
    let built: Vec<Result<Vec<Built>, PropagationError>> = candidates
        .par_iter()
        .map(|c| {
            let (o1, o2) = (&objects[c.i], &objects[c.j]);
            evaluate_seed(
                (&o1.id, &o1.prop),
                (&o2.id, &o2.prop),
                &settings.volume,
                c.seed,
                window,
            )
        })
        .collect();
    let built: Vec<Built> = built.into_iter().filter_map(Result::ok).flatten().collect();
    let events = finish_events(built);
    result.events = events;
    result.stats.evaluation_s = clock.elapsed().as_secs_f64();
    result
}

/// True for a positive number (false for NaN).
pub(crate) fn positive(x: f64) -> bool {
    x > 0.0
}

/// Drops the same minimum found twice (two neighbouring steps, or a step's
/// interpolant and a proximity scan, can converge on one approach), joins
/// the volume intervals of each pair, and sorts by TCA.
pub(crate) fn finish_events(mut built: Vec<Built>) -> Vec<CloseApproach> {
    built.sort_by(|a, b| {
        let (a, b) = (&a.event, &b.event);
        (a.primary_catalog_number, a.secondary_catalog_number)
            .cmp(&(b.primary_catalog_number, b.secondary_catalog_number))
            .then(a.tca.s_since_j2000().total_cmp(&b.tca.s_since_j2000()))
    });
    built.dedup_by(|b, a| {
        let (a, b) = (&a.event, &b.event);
        a.primary_catalog_number == b.primary_catalog_number
            && a.secondary_catalog_number == b.secondary_catalog_number
            && b.tca.s_since(a.tca).abs() < 0.01
    });
    join_intervals(&mut built);
    let mut events: Vec<CloseApproach> = built.into_iter().map(|b| b.event).collect();
    sort_by_tca(&mut events);
    events
}

/// Sorts by TCA, then by pair.
pub(crate) fn sort_by_tca(events: &mut [CloseApproach]) {
    events.sort_by(|a, b| {
        a.tca
            .s_since_j2000()
            .total_cmp(&b.tca.s_since_j2000())
            .then(
                (a.primary_catalog_number, a.secondary_catalog_number)
                    .cmp(&(b.primary_catalog_number, b.secondary_catalog_number)),
            )
    });
}

/// Hash steps per time chunk: with 30 s steps a chunk is 2 h 8 min, a multiple
/// of the longest sample step (64 hash steps), and 30,000 LEO objects need
/// about 100 MB of samples in it.
const CHUNK_HASH_STEPS: u32 = 256;

/// Longest sample step, in hash steps (a power of two dividing the chunk).
const MAX_SAMPLE_STEP_FACTOR: u32 = 64;
/// Bound on the gravitational acceleration anywhere above the surface, km/s².
const MAX_ACCELERATION_KM_S2: f64 =
    MU_WGS72_KM3_S2 / (EARTH_RADIUS_WGS72_KM * EARTH_RADIUS_WGS72_KM);

/// How one object is sampled: its SGP4 sample step, s, and the position error
/// allowance (interpolant position error plus velocity error over half a hash
/// step), km, that widens the search.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct InterpolationPlan {
    pub sample_step_s: f64,
    pub margin_km: f64,
}

/// The sample step and error allowance the screening uses for `set`.
pub fn interpolation_plan(set: &ElementSet, settings: &ScreeningSettings) -> InterpolationPlan {
    let (sample_step_s, margin_km) = sample_step(set, settings);
    InterpolationPlan {
        sample_step_s,
        margin_km,
    }
}

/// Cubic Hermite interpolation between two states (position and velocity at
/// both ends) at time `t`, which should lie between them. The screening uses
/// this between SGP4 samples; it is public so that its accuracy can be checked.
pub fn hermite_state(a: &StateTeme, b: &StateTeme, t: UtcTime) -> StateTeme {
    let step_s = b.time.s_since(a.time);
    let sa = Sample {
        pos_km: a.position_km,
        vel_km_s: a.velocity_km_s,
    };
    let sb = Sample {
        pos_km: b.position_km,
        vel_km_s: b.velocity_km_s,
    };
    let s = hermite(&sa, &sb, step_s, t.s_since(a.time) / step_s);
    StateTeme {
        time: t,
        position_km: s.pos_km,
        velocity_km_s: s.vel_km_s,
    }
}
