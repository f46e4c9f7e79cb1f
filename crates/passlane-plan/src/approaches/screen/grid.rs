//! The time-stepped spatial grid: at each hash step every object's
//! interpolated position goes into a cubic cell, neighbouring cells give the
//! candidate pairs, and each pair's distance minima inside the step become
//! candidates for the final SGP4 evaluation. See the module docs of
//! [`super`] for the bounds that make it miss nothing.

use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};

use passlane_orbit::UtcTime;
use passlane_orbit::frames::{dot, norm, sub};

use super::MAX_ACCELERATION_KM_S2;
use super::ScreeningSettings;
use super::geometry::Seed;
use super::hermite::{Sample, hermite};
use super::objects::{Object, ObjectCursor};
use crate::numeric::bracketed_root;
use rayon::prelude::*;

/// A local minimum of the interpolated distance, to be refined with SGP4.
#[derive(Debug, Clone, Copy)]
pub(super) struct Candidate {
    pub(super) i: usize,
    pub(super) j: usize,
    pub(super) seed: Seed,
    pub(super) interpolated_miss_km: f64,
}

#[derive(Default)]
pub(super) struct Scratch {
    states: Vec<Option<Sample>>,
    keys: Vec<(u64, u32)>,
    /// Fleet mode: range of `keys` holding each cell's primaries.
    cell_ranges: HashMap<u64, (u32, u32), BuildHasherDefault<CellHasher>>,
}

/// A fast multiplicative hasher for packed cell keys (not for untrusted input).
#[derive(Default)]
struct CellHasher(u64);

impl Hasher for CellHasher {
    fn finish(&self) -> u64 {
        self.0
    }
    fn write(&mut self, bytes: &[u8]) {
        for &b in bytes {
            self.write_u64(u64::from(b));
        }
    }
    fn write_u64(&mut self, x: u64) {
        let y = (self.0 ^ x).wrapping_mul(0x9E37_79B9_7F4A_7C15);
        self.0 = y ^ (y >> 29);
    }
}

const KEY_BITS: u32 = 21;
const KEY_OFFSET: i64 = 1 << (KEY_BITS - 1);
const KEY_MASK: u64 = (1 << KEY_BITS) - 1;

fn cell_of(p: &[f64; 3], inv_cell_km: f64) -> [i64; 3] {
    let c = |x: f64| floor_i64(x * inv_cell_km).clamp(-KEY_OFFSET + 2, KEY_OFFSET - 2);
    [c(p[0]), c(p[1]), c(p[2])]
}

fn key_of(c: [i64; 3]) -> u64 {
    let k = |x: i64| ((x + KEY_OFFSET) as u64) & KEY_MASK;
    (k(c[0]) << (2 * KEY_BITS)) | (k(c[1]) << KEY_BITS) | k(c[2])
}

/// `floor` as an integer without a libm call (the default x86-64 target has
/// no rounding instruction, and this runs three times per object per step).
#[inline]
fn floor_i64(x: f64) -> i64 {
    let t = x as i64;
    t - i64::from((t as f64) > x)
}

/// Per-object sampling data of one chunk, packed for the hash loop.
#[derive(Clone, Copy)]
struct Hot {
    lane: u32,
    slot: u32,
    /// Samples before the first failure.
    valid: u32,
    group: u8,
    /// Activity slots sampled (bit k), and samples per slot (0: all sampled).
    mask: u32,
    per_slot: u32,
    /// Bound on the interpolant's speed anywhere in the chunk, km/s.
    speed_max_km_s: f64,
}

impl Hot {
    /// Whether the interval between samples m and m + 1 was sampled.
    #[inline]
    fn covers(&self, m: usize) -> bool {
        self.per_slot == 0 || self.mask & (1 << (m / self.per_slot as usize)) != 0
    }
}

/// The objects that share one sample step, with their samples interleaved by
/// sample index (every object's sample m, then every object's sample m + 1):
/// a hash step reads each lane front to back instead of jumping between
/// per-object arrays, which cost a cache miss per object per step.
struct Lane {
    step_s: f64,
    objects: Vec<u32>,
    samples: Vec<Sample>,
}

impl Lane {
    /// Interpolated state of the object in `slot` (with `valid` samples) at
    /// `x` sample steps after the chunk start.
    #[inline]
    fn at(&self, slot: usize, hot: &Hot, x: f64) -> Option<Sample> {
        let valid = hot.valid as usize;
        if valid < 2 || x > (valid - 1) as f64 + 1e-9 {
            return None;
        }
        // Truncation is the floor here: x is clamped to be non-negative.
        let mut m = (x.max(0.0) as usize).min(valid - 2);
        if !hot.covers(m) {
            // At the end of a sampled slot exactly (a step ending on the
            // boundary is evaluated there), the interval before holds it.
            if m > 0 && x - m as f64 <= 1e-9 && hot.covers(m - 1) {
                m -= 1;
            } else {
                return None;
            }
        }
        let n = self.objects.len();
        Some(hermite(
            &self.samples[m * n + slot],
            &self.samples[(m + 1) * n + slot],
            self.step_s,
            x - m as f64,
        ))
    }
}

#[derive(Default)]
pub(super) struct Flat {
    hot: Vec<Hot>,
    lanes: Vec<Lane>,
}

impl Flat {
    pub(super) fn build(cursors: &[ObjectCursor<'_>], objects: &[Object]) -> Flat {
        let mut flat = Flat::default();
        let mut lengths: Vec<usize> = Vec::new();
        for (i, (oc, o)) in cursors.iter().zip(objects).enumerate() {
            let lane = match flat.lanes.iter().position(|l| l.step_s == o.sample_step_s) {
                Some(l) => l,
                None => {
                    flat.lanes.push(Lane {
                        step_s: o.sample_step_s,
                        objects: Vec::new(),
                        samples: Vec::new(),
                    });
                    lengths.push(0);
                    flat.lanes.len() - 1
                }
            };
            let slot = flat.lanes[lane].objects.len();
            flat.lanes[lane].objects.push(i as u32);
            lengths[lane] = lengths[lane].max(oc.valid);
            flat.hot.push(Hot {
                lane: lane as u32,
                slot: slot as u32,
                valid: oc.valid as u32,
                group: o.group,
                mask: oc.mask,
                per_slot: oc.per_slot as u32,
                speed_max_km_s: 0.0,
            });
        }
        // Speed bounds, in parallel across objects.
        flat.hot
            .par_iter_mut()
            .zip(cursors.par_iter().zip(objects.par_iter()))
            .for_each(|(h, (oc, o))| {
                h.speed_max_km_s =
                    speed_bound_km_s(&oc.samples[..oc.valid], o.sample_step_s, |m| oc.covers(m));
            });
        for (lane, &len) in flat.lanes.iter_mut().zip(&lengths) {
            let n = lane.objects.len();
            lane.samples = vec![Sample::default(); n * len];
            // Row m holds every object's sample m: rows are filled in parallel.
            let objects = &lane.objects;
            lane.samples
                .par_chunks_mut(n.max(1))
                .enumerate()
                .for_each(|(m, row)| {
                    for (slot, &i) in objects.iter().enumerate() {
                        let oc = &cursors[i as usize];
                        if m < oc.valid {
                            row[slot] = oc.samples[m];
                        }
                    }
                });
        }
        flat
    }

    /// Sum of the two largest speed bounds (one per group when screening one
    /// set against another), km/s.
    pub(super) fn pair_speed_km_s(&self, cross: bool) -> f64 {
        let (mut top1, mut top2) = ([0.0f64; 2], [0.0f64; 2]);
        for h in self.hot.iter().filter(|h| h.valid >= 2) {
            let g = usize::from(cross && h.group == 1);
            let v = h.speed_max_km_s;
            if v > top1[g] {
                top2[g] = top1[g];
                top1[g] = v;
            } else if v > top2[g] {
                top2[g] = v;
            }
        }
        if cross {
            top1[0] + top1[1]
        } else {
            top1[0] + top2[0]
        }
    }

    /// Per activity slot of a chunk (`n_slots` of them), the catalog objects
    /// (group 1) with samples in it.
    pub(super) fn catalog_by_slot(&self, n_slots: usize) -> Vec<Vec<u32>> {
        let mut out = vec![Vec::new(); n_slots];
        for (j, h) in self.hot.iter().enumerate() {
            if h.group != 1 || h.valid < 2 {
                continue;
            }
            for (k, list) in out.iter_mut().enumerate() {
                if self.sampled_in_slot(j, k) {
                    list.push(j as u32);
                }
            }
        }
        out
    }

    /// Whether object `i` has samples in activity slot `slot`.
    #[inline]
    fn sampled_in_slot(&self, i: usize, slot: usize) -> bool {
        let h = &self.hot[i];
        h.per_slot == 0 || (slot < 32 && h.mask & (1 << slot) != 0)
    }

    /// Object `i`'s speed bound in the chunk, if it has samples, km/s.
    pub(super) fn speed_max_km_s(&self, i: usize) -> Option<f64> {
        let h = &self.hot[i];
        (h.valid >= 2).then_some(h.speed_max_km_s)
    }

    /// Interpolated state of object `i` at `dt_s` after the chunk start, if
    /// covered by valid samples.
    #[inline]
    pub(super) fn at(&self, i: usize, dt_s: f64) -> Option<Sample> {
        let h = &self.hot[i];
        let lane = &self.lanes[h.lane as usize];
        lane.at(h.slot as usize, h, dt_s / lane.step_s)
    }
}

/// Closest distance over [−half_s, half_s] of straight relative motion (`dr`, `dv`), km.
pub(super) fn linear_closest_km(dr: &[f64; 3], dv: &[f64; 3], half_s: f64) -> f64 {
    let vv = dot(dv, dv);
    let tau = if vv > 0.0 {
        (-dot(dr, dv) / vv).clamp(-half_s, half_s)
    } else {
        0.0
    };
    norm(&[
        dr[0] + dv[0] * tau,
        dr[1] + dv[1] * tau,
        dr[2] + dv[2] * tau,
    ])
}

/// Largest speed of the Hermite interpolant through `samples`, km/s. Between
/// two samples the interpolant's velocity is a quadratic whose Bézier control
/// points are v₀, 3(r₁ − r₀)/h − v₀ − v₁ and v₁; the curve lies in their convex
/// hull, so its speed never exceeds the largest of their norms.
fn speed_bound_km_s(samples: &[Sample], step_s: f64, covers: impl Fn(usize) -> bool) -> f64 {
    let mut v_max: f64 = 0.0;
    for (m, w) in samples.windows(2).enumerate() {
        if !covers(m) {
            continue;
        }
        let (a, b) = (&w[0], &w[1]);
        v_max = v_max.max(norm(&a.vel_km_s));
        let mid: [f64; 3] = std::array::from_fn(|k| {
            3.0 * (b.pos_km[k] - a.pos_km[k]) / step_s - a.vel_km_s[k] - b.vel_km_s[k]
        });
        v_max = v_max.max(norm(&mid)).max(norm(&b.vel_km_s));
    }
    v_max
}

pub(super) struct ChunkContext<'a> {
    pub(super) objects: &'a [Object],
    pub(super) flat: &'a Flat,
    pub(super) chunk_start: UtcTime,
    pub(super) settings: &'a ScreeningSettings,
    pub(super) margin_km: f64,
    pub(super) cross: bool,
    /// Largest closing speed any pair can have in the chunk (sum of the two
    /// largest speed bounds, or the largest of each group), km/s.
    pub(super) v_pair_km_s: f64,
    /// The screening window: a pair near one of its ends gets an edge seed.
    pub(super) window: (UtcTime, UtcTime),
    /// Fleet against catalog: the fleet's size (it comes first), the slot
    /// length (s), per slot the catalog objects sampled in it.
    pub(super) n_fleet: usize,
    pub(super) slot_s: f64,
    pub(super) slot_catalog: Vec<Vec<u32>>,
}

/// The fleet's interpolated midpoint states at every hash step of a chunk,
/// for [`ChunkContext::fleet_scan`].
pub(super) struct FleetTrack {
    /// Each step's start, end and half length (s).
    steps: Vec<(UtcTime, UtcTime, f64)>,
    /// The fleet's object indices.
    fleet: Vec<usize>,
    /// `states[k * fleet.len() + f]`: fleet object f at step k's midpoint.
    states: Vec<Option<Sample>>,
}

/// The bounds of one hash step [a, b] (see the module docs of [`super`]).
#[derive(Clone, Copy)]
struct StepBounds {
    a: UtcTime,
    b: UtcTime,
    half_s: f64,
    /// Volume's bounding radius plus the interpolation margin, km.
    d: f64,
    cell_km: f64,
    inv: f64,
    /// Linear-test reach with the curvature allowance, km.
    reach_km: f64,
}

impl ChunkContext<'_> {
    /// The fleet (group 0) at every step midpoint of the chunk.
    pub(super) fn fleet_track(&self, n_steps: usize, chunk_end: UtcTime) -> FleetTrack {
        let h = self.settings.hash_step_s;
        let steps: Vec<(UtcTime, UtcTime, f64)> = (0..n_steps)
            .map(|k| {
                let a = self.chunk_start.add_s(k as f64 * h);
                let b = a.add_s(h).min(chunk_end);
                (a, b, 0.5 * b.s_since(a))
            })
            .collect();
        let fleet: Vec<usize> = (0..self.flat.hot.len())
            .filter(|&i| self.flat.hot[i].group == 0)
            .collect();
        let states = steps
            .iter()
            .flat_map(|&(a, _, half_s)| {
                let mid_dt = a.s_since(self.chunk_start) + half_s;
                fleet.iter().map(move |&i| self.flat.at(i, mid_dt))
            })
            .collect();
        FleetTrack {
            steps,
            fleet,
            states,
        }
    }

    /// All candidate minima of the hash step [a, b].
    pub(super) fn step(&self, a: UtcTime, b: UtcTime, scratch: &mut Scratch) -> Vec<Candidate> {
        let half_s = 0.5 * b.s_since(a);
        let mid_dt = a.s_since(self.chunk_start) + half_s;
        scratch.states.clear();
        if self.cross {
            // Only the fleet (the first objects); `fleet_step` interpolates
            // the catalog objects sampled in this step's slot.
            scratch
                .states
                .extend((0..self.n_fleet).map(|i| self.flat.at(i, mid_dt)));
        } else {
            scratch.states.resize(self.flat.hot.len(), None);
            for lane in &self.flat.lanes {
                let x = mid_dt / lane.step_s;
                for (slot, &i) in lane.objects.iter().enumerate() {
                    scratch.states[i as usize] = lane.at(slot, &self.flat.hot[i as usize], x);
                }
            }
        }
        // A pair closer than d at some time in the step is closer than
        // d + (v₁ + v₂)·h/2 at its midpoint, with v₁, v₂ the two speed bounds.
        let a_pair = 2.0 * MAX_ACCELERATION_KM_S2;
        let d = self.settings.volume.bounding_radius_km() + self.margin_km;
        let cell_km = d + self.v_pair_km_s * half_s + 1e-3;
        let inv = 1.0 / cell_km;
        // Curvature allowance of the linear test: |Δa|·τ²/2 with τ ≤ half a step.
        let reach_km = d + 0.5 * a_pair * half_s * half_s;
        let step = StepBounds {
            a,
            b,
            half_s,
            d,
            cell_km,
            inv,
            reach_km,
        };
        let mut out = Vec::new();
        let Scratch {
            states,
            keys,
            cell_ranges,
        } = scratch;
        if self.cross {
            self.fleet_step(&step, states, keys, cell_ranges, &mut out);
        } else {
            self.all_pairs_step(&step, states, keys, &mut out);
        }
        out
    }

    /// Fleet against catalog: the primaries (the small set) go into the grid,
    /// each catalog object looks up its own cell.
    fn fleet_step(
        &self,
        step: &StepBounds,
        states: &[Option<Sample>],
        entries: &mut Vec<(u64, u32)>,
        ranges: &mut HashMap<u64, (u32, u32), BuildHasherDefault<CellHasher>>,
        out: &mut Vec<Candidate>,
    ) {
        let StepBounds {
            a,
            b,
            cell_km,
            inv,
            reach_km,
            ..
        } = *step;
        // The primaries go into their cell and the 26 around it: a sorted
        // list and a map from cell to range (emptied, not rebuilt).
        entries.clear();
        let (mut r_min_km, mut r_max_km) = (f64::INFINITY, 0.0f64);
        for (i, state) in states.iter().enumerate() {
            let Some(s) = state else {
                continue;
            };
            let r = norm(&s.pos_km);
            r_min_km = r_min_km.min(r);
            r_max_km = r_max_km.max(r);
            let c = cell_of(&s.pos_km, inv);
            for dx in -1..=1 {
                for dy in -1..=1 {
                    for dz in -1..=1 {
                        entries.push((key_of([c[0] + dx, c[1] + dy, c[2] + dz]), i as u32));
                    }
                }
            }
        }
        entries.sort_unstable();
        ranges.clear();
        let mut s0 = 0;
        while s0 < entries.len() {
            let mut e0 = s0 + 1;
            while e0 < entries.len() && entries[e0].0 == entries[s0].0 {
                e0 += 1;
            }
            ranges.insert(entries[s0].0, (s0 as u32, e0 as u32));
            s0 = e0;
        }
        // Radial band: a secondary whose radius differs from every
        // primary's by more than a cell is farther than a cell from all of
        // them (triangle inequality): no lookup.
        let band_lo_km = r_min_km - cell_km;
        let band_hi_km = r_max_km + cell_km;
        let (band_lo2, band_hi2) = (band_lo_km.max(0.0).powi(2), band_hi_km * band_hi_km);
        let mid_dt = a.s_since(self.chunk_start) + step.half_s;
        let slot = ((mid_dt / self.slot_s) as usize).min(self.slot_catalog.len().saturating_sub(1));
        for &j in self.slot_catalog.get(slot).map_or(&[][..], Vec::as_slice) {
            let j = j as usize;
            let Some(s) = self.flat.at(j, mid_dt) else {
                continue;
            };
            let r2 = dot(&s.pos_km, &s.pos_km);
            if r2 < band_lo2 || r2 > band_hi2 {
                continue;
            }
            if let Some(&(lo, hi)) = ranges.get(&key_of(cell_of(&s.pos_km, inv))) {
                for &(_, i) in &entries[lo as usize..hi as usize] {
                    if let Some(si) = &states[i as usize] {
                        self.pair_at(i as usize, j, si, &s, a, b, reach_km, cell_km, out);
                    }
                }
            }
        }
    }

    /// Fleet against catalog for a small fleet, over the whole chunk: each
    /// catalog object is tested against every fleet object directly, and
    /// skips the hash steps where it cannot be within a cell of any of them.
    ///
    /// The bound: on the interpolants, the distance of a pair changes by at
    /// most `v_pair_km_s` (the chunk's closing-speed bound, see
    /// [`Flat::pair_speed_km_s`]) per second, so a pair at distance d at one
    /// step's midpoint is farther than the cell at every midpoint less than
    /// (d − cell)/(v_pair·h) steps later. The pairs it tests, and the tests,
    /// are those of [`Self::fleet_step`] (whose cut is the cell too); only
    /// steps where no pair can pass the cut are skipped.
    pub(super) fn fleet_scan(&self, track: &FleetTrack, catalog: &[usize]) -> Vec<Candidate> {
        let h = self.settings.hash_step_s;
        let d = self.settings.volume.bounding_radius_km() + self.margin_km;
        let a_pair = 2.0 * MAX_ACCELERATION_KM_S2;
        let FleetTrack {
            steps,
            fleet,
            states: fleet_states,
        } = track;
        let n_steps = steps.len();
        // The widest cell of the chunk (a full step) bounds every step's cut.
        let cell_full_km = d + self.v_pair_km_s * 0.5 * h + 1e-3;
        let closing_per_step_km = (self.v_pair_km_s * h).max(1e-9);
        let mut out = Vec::new();
        let steps_per_slot = ((self.slot_s / h).round() as usize).max(1);
        for &j in catalog {
            let mut k = 0;
            while k < n_steps {
                if !self.flat.sampled_in_slot(j, k / steps_per_slot) {
                    k = (k / steps_per_slot + 1) * steps_per_slot;
                    continue;
                }
                let (a, b, half_s) = steps[k];
                let Some(sj) = self.flat.at(j, a.s_since(self.chunk_start) + half_s) else {
                    k += 1;
                    continue;
                };
                let cell_km = d + self.v_pair_km_s * half_s + 1e-3;
                let reach_km = d + 0.5 * a_pair * half_s * half_s;
                let mut nearest_km = f64::INFINITY;
                for (f, &i) in fleet.iter().enumerate() {
                    let Some(si) = &fleet_states[k * fleet.len() + f] else {
                        continue;
                    };
                    let dr = sub(&sj.pos_km, &si.pos_km);
                    let dist = dot(&dr, &dr).sqrt();
                    nearest_km = nearest_km.min(dist);
                    if dist <= cell_km {
                        self.pair_at(i, j, si, &sj, a, b, reach_km, cell_km, &mut out);
                    }
                }
                let skip = ((nearest_km - cell_full_km) / closing_per_step_km).floor();
                k += if skip >= 2.0 {
                    (skip as usize).min(n_steps)
                } else {
                    1
                };
            }
        }
        out
    }

    /// All against all: every object goes into the grid; pairs come from each
    /// cell and its 13 forward neighbours.
    fn all_pairs_step(
        &self,
        step: &StepBounds,
        states: &[Option<Sample>],
        keys: &mut Vec<(u64, u32)>,
        out: &mut Vec<Candidate>,
    ) {
        let StepBounds {
            a,
            b,
            half_s,
            d,
            inv,
            reach_km,
            cell_km,
        } = *step;
        keys.clear();
        for (i, s) in states.iter().enumerate() {
            if let Some(s) = s {
                keys.push((key_of(cell_of(&s.pos_km, inv)), i as u32));
            }
        }
        keys.sort_unstable();
        // Positions in cell order, so the inner loops read memory in sequence.
        // Positions and speeds in cell order, so the inner loops read memory
        // in sequence; the cut uses the pair's own speeds, which for two LEO
        // objects is a quarter smaller than the global bound the cell uses.
        let pos: Vec<([f64; 3], f64)> = keys
            .iter()
            .map(|&(_, i)| {
                let v = self.flat.hot[i as usize].speed_max_km_s;
                states[i as usize].map_or(([f64::NAN; 3], 0.0), |s| (s.pos_km, v))
            })
            .collect();
        let near = |x: usize, y: usize| {
            let dr = sub(&pos[y].0, &pos[x].0);
            let cut = d + (pos[x].1 + pos[y].1) * half_s;
            dot(&dr, &dr) <= cut * cut
        };
        // Keys sort with z fastest, so the 13 "forward" neighbour cells form
        // five contiguous key ranges: (0,0,+1), (0,+1,-1..=1) and
        // (+1,-1..=1,-1..=1). Their bounds grow with the cell key, so five
        // pointers that only move forward find them without hashing.
        let y1 = 1u64 << KEY_BITS;
        let x1 = 1u64 << (2 * KEY_BITS);
        let columns = |k: u64| -> [(u64, u64); 5] {
            [
                (k + 1, k + 1),
                (k + y1 - 1, k + y1 + 1),
                (k + x1 - y1 - 1, k + x1 - y1 + 1),
                (k + x1 - 1, k + x1 + 1),
                (k + x1 + y1 - 1, k + x1 + y1 + 1),
            ]
        };
        let mut ptr = [0usize; 5];
        let mut s0 = 0;
        while s0 < keys.len() {
            let k = keys[s0].0;
            let mut e0 = s0 + 1;
            while e0 < keys.len() && keys[e0].0 == k {
                e0 += 1;
            }
            for x in s0..e0 {
                for y in (x + 1..e0).filter(|&y| near(x, y)) {
                    self.pair(
                        keys[x].1 as usize,
                        keys[y].1 as usize,
                        a,
                        b,
                        reach_km,
                        cell_km,
                        states,
                        out,
                    );
                }
            }
            for (c, (lo, hi)) in columns(k).into_iter().enumerate() {
                let p = &mut ptr[c];
                while *p < keys.len() && keys[*p].0 < lo {
                    *p += 1;
                }
                let mut q = *p;
                while q < keys.len() && keys[q].0 <= hi {
                    q += 1;
                }
                for x in s0..e0 {
                    for y in (*p..q).filter(|&y| near(x, y)) {
                        self.pair(
                            keys[x].1 as usize,
                            keys[y].1 as usize,
                            a,
                            b,
                            reach_km,
                            cell_km,
                            states,
                            out,
                        );
                    }
                }
            }
            s0 = e0;
        }
    }

    /// Tests one pair over the step [a, b]: the linear-motion bound at the
    /// midpoint, then the roots of Δr·Δv on the interpolant.
    #[allow(clippy::too_many_arguments)]
    fn pair(
        &self,
        i: usize,
        j: usize,
        a: UtcTime,
        b: UtcTime,
        reach_km: f64,
        cut_km: f64,
        states: &[Option<Sample>],
        out: &mut Vec<Candidate>,
    ) {
        // Within one set the earlier object in the input is the primary.
        let (i, j) = if self.cross || i < j { (i, j) } else { (j, i) };
        let (Some(si), Some(sj)) = (&states[i], &states[j]) else {
            return;
        };
        self.pair_at(i, j, si, sj, a, b, reach_km, cut_km, out);
    }

    /// [`Self::pair`] with the two midpoint states given.
    #[allow(clippy::too_many_arguments)]
    fn pair_at(
        &self,
        i: usize,
        j: usize,
        si: &Sample,
        sj: &Sample,
        a: UtcTime,
        b: UtcTime,
        reach_km: f64,
        cut_km: f64,
        out: &mut Vec<Candidate>,
    ) {
        // Cheapest test first: farther apart than anything can close in half a step.
        let dr = sub(&sj.pos_km, &si.pos_km);
        if dot(&dr, &dr) > cut_km * cut_km {
            return;
        }
        let half_s = 0.5 * b.s_since(a);
        let dv = sub(&sj.vel_km_s, &si.vel_km_s);
        if linear_closest_km(&dr, &dv, half_s) > reach_km {
            return;
        }
        // Object data only for the few pairs that pass the geometric tests.
        let (oi, oj) = (&self.objects[i], &self.objects[j]);
        if oi.id.catalog_number == oj.id.catalog_number
            || oi.shell_max_km < oj.shell_min_km
            || oj.shell_max_km < oi.shell_min_km
        {
            return;
        }
        // Sign changes of f = Δr·Δv from − to + are distance minima. Four
        // sub-intervals: a minimum and a maximum of the distance are at least
        // a good fraction of an orbit apart, never inside one of them.
        let t0 = a.s_since(self.chunk_start);
        let f_at = |dt: f64| -> Option<(f64, f64)> {
            let p = self.flat.at(i, dt)?;
            let q = self.flat.at(j, dt)?;
            let dr = sub(&q.pos_km, &p.pos_km);
            let dv = sub(&q.vel_km_s, &p.vel_km_s);
            Some((dot(&dr, &dv), norm(&dr)))
        };
        const SUB: usize = 4;
        let dt_sub = 2.0 * half_s / SUB as f64;
        let mut f = [(0.0, 0.0); SUB + 1];
        for (k, v) in f.iter_mut().enumerate() {
            let Some(x) = f_at(t0 + k as f64 * dt_sub) else {
                return;
            };
            *v = x;
        }
        let d_km = self.settings.volume.bounding_radius_km() + self.margin_km;
        // The window's ends: a pair within reach there whose distance is
        // still falling at the end (or already rising at the start) has its
        // smallest distance on the edge.
        if a <= self.window.0 && f[0].0 > 0.0 && f[0].1 <= d_km {
            out.push(Candidate {
                i,
                j,
                seed: Seed::Edge { at: self.window.0 },
                interpolated_miss_km: f[0].1,
            });
        }
        if b >= self.window.1 && f[SUB].0 < 0.0 && f[SUB].1 <= d_km {
            out.push(Candidate {
                i,
                j,
                seed: Seed::Edge { at: self.window.1 },
                interpolated_miss_km: f[SUB].1,
            });
        }
        // A pair within reach across the whole step moves slowly relative to
        // the other: its minima are found from direct SGP4 over the step.
        if f.iter().all(|&(_, d)| d <= d_km) {
            out.push(Candidate {
                i,
                j,
                seed: Seed::Proximity { lo: a, hi: b },
                interpolated_miss_km: f.iter().map(|x| x.1).fold(f64::INFINITY, f64::min),
            });
            return;
        }
        for k in 0..SUB {
            let (lo, hi) = (t0 + k as f64 * dt_sub, t0 + (k + 1) as f64 * dt_sub);
            let (f_lo, f_hi) = (f[k].0, f[k + 1].0);
            if f_lo < 0.0 && f_hi >= 0.0 {
                // To 0.1 ms on the interpolant.
                let Some(x) = bracketed_root(|t| f_at(t).map(|(f, _)| f), lo, hi, f_lo, f_hi, 1e-4)
                else {
                    return;
                };
                if let Some((_, dist)) = f_at(x) {
                    out.push(Candidate {
                        i,
                        j,
                        seed: Seed::Minimum {
                            guess: self.chunk_start.add_s(x),
                            lo: self.chunk_start.add_s(lo),
                            hi: self.chunk_start.add_s(hi),
                        },
                        interpolated_miss_km: dist,
                    });
                }
            }
        }
    }
}
