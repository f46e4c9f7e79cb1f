//! Collision-probability speed: microseconds per event for the figures every
//! assessment computes (Pc, Pc max, and the Alfano and Chan columns), on one
//! thread, over a fixed-seed mix of encounter-plane geometries.
//!
//! The mix (20,000 encounters) stands for the events a screening hands to the
//! assessment with the assumed covariance: 90 % "operational" (miss 0–5 km
//! in a random direction, principal sigmas 30 m–3 km log-uniform with aspect
//! ratio 1–30, hard-body radius 2–20 m), 10 % hard cases (aspect ratio up to
//! 3,000, sigmas down to a tenth of the hard-body radius, misses out to 40
//! sigmas for probabilities down to 1e-300, misses inside the disk).
//! The old assessment (2-D reference integral and the brute-force maximum) is
//! timed on the first 200 for the before/after figure.
//!
//! Run: `cargo bench -p passlane-plan --bench pc`.

use std::time::Instant;

use passlane_plan::pc::{Encounter2d, pc, pc_alfano, pc_chan, pc_foster, pc_max, pc_max_scan};

struct Rng(u64);
impl Rng {
    fn next_f64(&mut self) -> f64 {
        // xorshift64*
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        (self.0.wrapping_mul(0x2545_F491_4F6C_DD1D) >> 11) as f64 / (1u64 << 53) as f64
    }
    fn uniform(&mut self, a: f64, b: f64) -> f64 {
        a + (b - a) * self.next_f64()
    }
    fn log_uniform(&mut self, a: f64, b: f64) -> f64 {
        (self.uniform(a.ln(), b.ln())).exp()
    }
}

fn mix(n: usize) -> Vec<Encounter2d> {
    let mut rng = Rng(0x2545_F491_4F6C_DD1D);
    (0..n)
        .map(|_| {
            let angle = rng.uniform(0.0, std::f64::consts::TAU);
            let hard = rng.next_f64() < 0.1;
            let (miss, sx, sy, r) = if hard {
                let r = rng.uniform(2.0, 30.0);
                let s_small = rng.log_uniform(0.1 * r, 300.0);
                let ar = rng.log_uniform(1.0, 3000.0);
                let miss = rng.uniform(0.0, 40.0) * s_small.max(r);
                (miss, s_small * ar, s_small, r)
            } else {
                let s = rng.log_uniform(30.0, 3000.0);
                let ar = rng.log_uniform(1.0, 30.0);
                (rng.uniform(0.0, 5000.0), s * ar, s, rng.uniform(2.0, 20.0))
            };
            let (sx, sy) = if rng.next_f64() < 0.5 {
                (sx, sy)
            } else {
                (sy, sx)
            };
            Encounter2d::new(miss * angle.cos(), miss * angle.sin(), sx, sy, r).expect("valid")
        })
        .collect()
}

fn per_event_us(events: &[Encounter2d], f: impl Fn(&Encounter2d) -> f64) -> (f64, f64) {
    let t0 = Instant::now();
    let mut check = 0.0;
    for e in events {
        check += f(e);
    }
    (
        t0.elapsed().as_secs_f64() * 1e6 / events.len() as f64,
        check,
    )
}

fn main() {
    let events = mix(20_000);
    let operational: Vec<Encounter2d> = events
        .iter()
        .copied()
        .filter(|e| e.sigma_x_m().min(e.sigma_y_m()) >= 30.0 && e.miss_m() <= 5000.0)
        .collect();
    println!(
        "Pc per event, one thread ({} encounters, {} operational):",
        events.len(),
        operational.len()
    );
    for (name, set) in [("whole mix", &events), ("operational", &operational)] {
        let (t_pc, _) = per_event_us(set, pc);
        let (t_max, _) = per_event_us(set, |e| pc_max(e).pc_max);
        let (t_alfano, _) = per_event_us(set, pc_alfano);
        let (t_chan, _) = per_event_us(set, pc_chan);
        println!(
            "  {name:12} pc {t_pc:7.2} µs   pc_max {t_max:7.2} µs   pc + pc_max {:7.2} µs   alfano {t_alfano:7.2} µs   chan {t_chan:7.2} µs   all four {:7.2} µs",
            t_pc + t_max,
            t_pc + t_max + t_alfano + t_chan
        );
    }
    let old = &events[..200];
    let (t_foster, _) = per_event_us(old, pc_foster);
    let (t_scan, _) = per_event_us(old, |e| pc_max_scan(e).pc_max);
    println!(
        "  before (first 200): 2-D reference {t_foster:9.1} µs   brute-force max {t_scan:9.1} µs"
    );
}
