//! The solver: exact branch-and-bound for small problems, greedy plus local
//! search above (see the module docs of [`super`]).

use std::collections::HashMap;

use super::problem::Problem;
use super::report::{Method, Plan, describe};
use super::{EXACT_LIMIT, PlanError, SCORE_EPS, plan_err};
use crate::progress::Progress;

/// Spacecraft-day groups and their value functions.
pub(super) struct Groups {
    /// Group of each candidate.
    pub(super) of: Vec<usize>,
    pub(super) info: Vec<GroupInfo>,
}

pub(super) struct GroupInfo {
    pub(super) weight: f64,
    pub(super) contacts_needed: Option<f64>,
    pub(super) volume_needed_mb: Option<f64>,
}

impl Groups {
    pub(super) fn new(p: &Problem) -> Groups {
        let days = p.day_count();
        let mut info = Vec::with_capacity(p.network.satellites.len() * days);
        for s in &p.network.satellites {
            for d in 0..days {
                let f = p.day_fraction(d).max(1e-9);
                let (c, v) = match (s.contacts_per_day, s.downlink_mb_per_day) {
                    (None, None) => (Some(f), None),
                    (c, v) => (c.map(|c| c * f), v.map(|v| v * f)),
                };
                info.push(GroupInfo {
                    weight: s.priority,
                    contacts_needed: c,
                    volume_needed_mb: v,
                });
            }
        }
        let of = p
            .candidates
            .iter()
            .map(|c| c.satellite * days + p.day_of(c))
            .collect();
        Groups { of, info }
    }

    pub(super) fn value(&self, g: usize, k: u32, volume_mb: f64) -> f64 {
        let i = &self.info[g];
        let frac = |have: f64, need: f64| {
            if need > 0.0 {
                (have / need).min(1.0)
            } else {
                1.0
            }
        };
        let c = i.contacts_needed.map(|n| frac(f64::from(k), n));
        let v = i.volume_needed_mb.map(|n| frac(volume_mb, n));
        let f = match (c, v) {
            (Some(c), Some(v)) => 0.5 * (c + v),
            (Some(c), None) => c,
            (None, Some(v)) => v,
            (None, None) => 1.0,
        };
        i.weight * f
    }
}

/// The mutable state of a search: what is chosen, group totals, and how many
/// chosen neighbours block each candidate.
pub(super) struct State<'a> {
    pub(super) p: &'a Problem,
    pub(super) groups: &'a Groups,
    pub(super) adj: &'a [Vec<usize>],
    pub(super) chosen: Vec<bool>,
    pub(super) blocked: Vec<u32>,
    pub(super) k: Vec<u32>,
    pub(super) vol: Vec<f64>,
    pub(super) score: f64,
}

impl<'a> State<'a> {
    pub(super) fn new(p: &'a Problem, groups: &'a Groups, adj: &'a [Vec<usize>]) -> Self {
        let n = p.candidates.len();
        let ng = groups.info.len();
        let score = (0..ng).map(|g| groups.value(g, 0, 0.0)).sum();
        State {
            p,
            groups,
            adj,
            chosen: vec![false; n],
            blocked: vec![0; n],
            k: vec![0; ng],
            vol: vec![0.0; ng],
            score,
        }
    }

    pub(super) fn gain(&self, c: usize) -> f64 {
        let g = self.groups.of[c];
        self.groups.value(
            g,
            self.k[g] + 1,
            self.vol[g] + self.p.candidates[c].volume_mb,
        ) - self.groups.value(g, self.k[g], self.vol[g])
    }

    pub(super) fn loss(&self, c: usize) -> f64 {
        let g = self.groups.of[c];
        self.groups.value(g, self.k[g], self.vol[g])
            - self.groups.value(
                g,
                self.k[g].saturating_sub(1),
                (self.vol[g] - self.p.candidates[c].volume_mb).max(0.0),
            )
    }

    pub(super) fn add(&mut self, c: usize) {
        self.score += self.gain(c);
        let g = self.groups.of[c];
        self.k[g] += 1;
        self.vol[g] += self.p.candidates[c].volume_mb;
        self.chosen[c] = true;
        for &n in &self.adj[c] {
            self.blocked[n] += 1;
        }
    }

    pub(super) fn remove(&mut self, c: usize) {
        self.score -= self.loss(c);
        let g = self.groups.of[c];
        self.k[g] = self.k[g].saturating_sub(1);
        self.vol[g] = (self.vol[g] - self.p.candidates[c].volume_mb).max(0.0);
        self.chosen[c] = false;
        for &n in &self.adj[c] {
            self.blocked[n] = self.blocked[n].saturating_sub(1);
        }
    }

    pub(super) fn selection(&self) -> Vec<usize> {
        (0..self.chosen.len()).filter(|&i| self.chosen[i]).collect()
    }
}

/// Conflict lists, by a sweep over candidates sorted by start per antenna and
/// per spacecraft: O(n log n + edges).
pub(super) fn adjacency(p: &Problem) -> Vec<Vec<usize>> {
    let n = p.candidates.len();
    let mut adj = vec![Vec::new(); n];
    let link = |a: usize, b: usize, adj: &mut Vec<Vec<usize>>| {
        if p.conflict(a, b).is_some() && !adj[a].contains(&b) {
            adj[a].push(b);
            adj[b].push(a);
        }
    };
    let by_start = |mut v: Vec<usize>| {
        v.sort_by(|&a, &b| {
            p.candidates[a]
                .aos
                .s_since_j2000()
                .total_cmp(&p.candidates[b].aos.s_since_j2000())
        });
        v
    };
    let mut per_antenna: HashMap<usize, Vec<usize>> = HashMap::new();
    let mut per_sat: HashMap<usize, Vec<usize>> = HashMap::new();
    for (i, c) in p.candidates.iter().enumerate() {
        per_antenna.entry(c.antenna).or_default().push(i);
        per_sat.entry(c.satellite).or_default().push(i);
    }
    let mut keys: Vec<usize> = per_antenna.keys().copied().collect();
    keys.sort_unstable();
    for key in keys {
        let list = by_start(per_antenna.remove(&key).unwrap_or_default());
        let t = p.network.antennas[key].turnaround_s;
        for (x, &a) in list.iter().enumerate() {
            let reach = p.candidates[a].los.add_s(t);
            for &b in &list[x + 1..] {
                if p.candidates[b].aos >= reach {
                    break;
                }
                link(a, b, &mut adj);
            }
        }
    }
    let mut keys: Vec<usize> = per_sat.keys().copied().collect();
    keys.sort_unstable();
    for key in keys {
        if p.network.satellites[key].allow_simultaneous {
            continue;
        }
        let list = by_start(per_sat.remove(&key).unwrap_or_default());
        // Sorted by start, a candidate can overlap a later one only while the
        // later one starts before the longest end seen; keep scanning until then.
        for (x, &a) in list.iter().enumerate() {
            let end = p.candidates[a].los;
            for &b in &list[x + 1..] {
                if p.candidates[b].aos >= end {
                    break;
                }
                link(a, b, &mut adj);
            }
        }
    }
    for l in &mut adj {
        l.sort_unstable();
    }
    adj
}

/// Makes the plan: pins kept, exclusions respected, the objective maximised
/// (exactly up to [`EXACT_LIMIT`] free candidates). Fails only when pins
/// conflict with each other.
pub fn solve(p: &Problem, progress: &dyn Progress) -> Result<Plan, PlanError> {
    let groups = Groups::new(p);
    let adj = adjacency(p);
    let n = p.candidates.len();
    let mut excluded = vec![false; n];
    for &e in &p.excluded {
        if e < n {
            excluded[e] = true;
        }
    }
    let mut state = State::new(p, &groups, &adj);
    let mut pinned = vec![false; n];
    for (i, &c) in p.pinned.iter().enumerate() {
        if c >= n {
            return Err(plan_err(format!("pins[{i}]"), "refers to no candidate"));
        }
        if state.blocked[c] > 0 {
            let other = p.pinned[..i]
                .iter()
                .copied()
                .find(|&o| adj[c].contains(&o))
                .unwrap_or(c);
            return Err(plan_err(
                format!("pins[{i}]"),
                format!(
                    "conflicts with another pin ({}); both cannot be kept",
                    label(p, other)
                ),
            ));
        }
        if !state.chosen[c] {
            state.add(c);
            pinned[c] = true;
        }
    }
    // Free candidates: not excluded, not pinned, compatible with every pin.
    let free: Vec<usize> = (0..n)
        .filter(|&c| !excluded[c] && !pinned[c] && state.blocked[c] == 0)
        .collect();
    let method = if free.len() <= EXACT_LIMIT {
        exact(&mut state, &free);
        Method::Exact
    } else {
        heuristic(&mut state, &free, &pinned, progress);
        Method::Heuristic
    };
    progress.report(1.0);
    let upper_bound = {
        let mut all: Vec<usize> = free.clone();
        all.extend((0..n).filter(|&c| pinned[c]));
        p.score(&all)
    };
    Ok(describe(
        p,
        &groups,
        &adj,
        &state,
        &pinned,
        &excluded,
        method,
        upper_bound,
    ))
}

pub(super) fn label(p: &Problem, c: usize) -> String {
    let cand = &p.candidates[c];
    let a = &p.network.antennas[cand.antenna];
    format!(
        "{} on {}/{} at {}",
        p.network.satellites[cand.satellite].name,
        a.station,
        a.antenna,
        cand.aos.to_iso_s()
    )
}

/// Depth-first branch-and-bound over `free` (in time order): include first
/// (when compatible and worth something), then exclude; prune when the bound
/// cannot beat the best found.
pub(super) fn exact(state: &mut State, free: &[usize]) {
    let mut best_score = state.score;
    let mut best: Vec<usize> = state.selection();
    pub(super) fn bound(state: &State, rest: &[usize]) -> f64 {
        // Optimistic: every remaining compatible candidate added to its group.
        let mut extra_k: HashMap<usize, (u32, f64)> = HashMap::new();
        for &c in rest {
            if state.blocked[c] == 0 {
                let e = extra_k.entry(state.groups.of[c]).or_insert((0, 0.0));
                e.0 += 1;
                e.1 += state.p.candidates[c].volume_mb;
            }
        }
        state.score
            + extra_k
                .iter()
                .map(|(&g, &(k, v))| {
                    state.groups.value(g, state.k[g] + k, state.vol[g] + v)
                        - state.groups.value(g, state.k[g], state.vol[g])
                })
                .sum::<f64>()
    }
    pub(super) fn go(
        state: &mut State,
        rest: &[usize],
        best_score: &mut f64,
        best: &mut Vec<usize>,
    ) {
        if state.score > *best_score + SCORE_EPS {
            *best_score = state.score;
            *best = state.selection();
        }
        let Some((&c, tail)) = rest.split_first() else {
            return;
        };
        if bound(state, rest) <= *best_score + SCORE_EPS {
            return;
        }
        if state.blocked[c] == 0 && state.gain(c) > SCORE_EPS {
            state.add(c);
            go(state, tail, best_score, best);
            state.remove(c);
        }
        go(state, tail, best_score, best);
    }
    go(state, free, &mut best_score, &mut best);
    let current = state.selection();
    for c in current {
        state.remove(c);
    }
    for c in best {
        state.add(c);
    }
}

/// Greedy in two orders, the better kept, then local search.
pub(super) fn heuristic(
    state: &mut State,
    free: &[usize],
    pinned: &[bool],
    progress: &dyn Progress,
) {
    let base = state.selection();
    let reset = |state: &mut State| {
        for c in state.selection() {
            state.remove(c);
        }
        for &c in &base {
            state.add(c);
        }
    };
    greedy(state, free, false);
    let by_gain = (state.score, state.selection());
    reset(state);
    greedy(state, free, true);
    if by_gain.0 > state.score + SCORE_EPS {
        reset(state);
        for c in by_gain.1 {
            if !state.chosen[c] {
                state.add(c);
            }
        }
    }
    progress.report(0.3);
    local_search(state, free, pinned, progress);
}

/// Lazy greedy: gains only shrink as contacts are added (each value is
/// concave in its group's service), so a stale gain is an upper bound and a
/// candidate whose refreshed gain still tops the heap is the true best.
pub(super) fn greedy(state: &mut State, free: &[usize], per_second: bool) {
    let key = |state: &State, c: usize| -> f64 {
        let g = state.gain(c);
        if per_second {
            let cand = &state.p.candidates[c];
            g / (cand.duration_s() + state.p.network.antennas[cand.antenna].turnaround_s).max(1.0)
        } else {
            g
        }
    };
    let mut heap: std::collections::BinaryHeap<(OrdF64, std::cmp::Reverse<usize>)> = free
        .iter()
        .filter(|&&c| state.blocked[c] == 0 && !state.chosen[c])
        .map(|&c| (OrdF64(key(state, c)), std::cmp::Reverse(c)))
        .collect();
    while let Some((OrdF64(k), std::cmp::Reverse(c))) = heap.pop() {
        if state.chosen[c] || state.blocked[c] > 0 || k <= SCORE_EPS {
            continue;
        }
        let fresh = key(state, c);
        if fresh + SCORE_EPS < k {
            if fresh > SCORE_EPS {
                heap.push((OrdF64(fresh), std::cmp::Reverse(c)));
            }
            continue;
        }
        if state.gain(c) > SCORE_EPS {
            state.add(c);
        }
    }
}

/// Insert-and-repair moves until none improves (or a round limit).
pub(super) fn local_search(
    state: &mut State,
    free: &[usize],
    pinned: &[bool],
    progress: &dyn Progress,
) {
    const MAX_ROUNDS: usize = 8;
    for round in 0..MAX_ROUNDS {
        if progress.cancelled() {
            return;
        }
        let mut improved = false;
        for &c in free {
            if state.chosen[c] {
                continue;
            }
            // Worth trying only if it would add something on its own.
            if state.gain(c) <= SCORE_EPS {
                continue;
            }
            let blockers: Vec<usize> = state.adj[c]
                .iter()
                .copied()
                .filter(|&b| state.chosen[b])
                .collect();
            if blockers.iter().any(|&b| pinned[b]) {
                continue;
            }
            let before = state.score;
            for &b in &blockers {
                state.remove(b);
            }
            state.add(c);
            // Refill around what was removed: their neighbours may fit now.
            let mut refill: Vec<usize> = blockers
                .iter()
                .flat_map(|&b| state.adj[b].iter().copied().chain(std::iter::once(b)))
                .filter(|&x| x != c && !pinned[x])
                .collect();
            refill.sort_unstable();
            refill.dedup();
            let mut added = Vec::new();
            loop {
                let best = refill
                    .iter()
                    .copied()
                    .filter(|&x| !state.chosen[x] && state.blocked[x] == 0)
                    .map(|x| (state.gain(x), x))
                    .filter(|(g, _)| *g > SCORE_EPS)
                    .max_by(|a, b| a.0.total_cmp(&b.0).then(b.1.cmp(&a.1)));
                let Some((_, x)) = best else { break };
                state.add(x);
                added.push(x);
            }
            if state.score > before + 1e-7 {
                improved = true;
            } else {
                for &x in &added {
                    state.remove(x);
                }
                state.remove(c);
                for &b in &blockers {
                    state.add(b);
                }
            }
        }
        progress.report(0.3 + 0.7 * (round + 1) as f64 / MAX_ROUNDS as f64);
        if !improved {
            break;
        }
    }
}

/// f64 ordered for the heap (NaN never arises: gains are finite).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct OrdF64(f64);
impl Eq for OrdF64 {}
impl PartialOrd for OrdF64 {
    fn partial_cmp(&self, other: &Self) -> Option<std::cmp::Ordering> {
        Some(self.cmp(other))
    }
}
impl Ord for OrdF64 {
    fn cmp(&self, other: &Self) -> std::cmp::Ordering {
        self.0.total_cmp(&other.0)
    }
}
