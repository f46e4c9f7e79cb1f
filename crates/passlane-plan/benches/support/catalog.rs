//! A fixed-seed synthetic catalog shaped like today's sky, for the screening
//! benchmarks and tests (included by path; no file is committed).
//!
//! Every object, catalog number and name here is invented. The 30,000-object
//! catalog ([`realistic`]) is made of (counts for 30,000; a smaller catalog is
//! an evenly spaced pick of it, so the proportions hold):
//!
//! | group | count | shape |
//! | --- | --- | --- |
//! | shell A | 4,320 | 550 km ± 1.5 km, 53.0° ± 0.05°, 72 planes × 60, e ≤ 3e-4 |
//! | shell B | 2,000 | 540 km ± 1.5 km, 97.6° ± 0.05°, 50 planes × 40 |
//! | shell C | 1,296 | 1,200 km ± 2 km, 87.9° ± 0.05°, 36 planes × 36 |
//! | shell D | 1,344 | 530 km ± 1.5 km, 43.0° ± 0.05°, 28 planes × 48 |
//! | debris band | 6,000 | perigee 750–900 km, e ≤ 0.01, inclination from five clouds (98.5°, 82°, 74°, 86.4°, 65°) ± 1° |
//! | other LEO | 10,340 | 300–2,000 km (weighted low), e ≤ 0.02, 0–110° |
//! | eccentric LEO-crossers | 1,800 (6 %) | perigee 250–700 km; a third transfer-like (apogee near GEO, 0–30°), a third 12-h orbits at 63.4° (a = 26,560 km), a third apogee 1,000–20,000 km at 0–100° |
//! | MEO | 1,200 | 19,000–23,500 km, 55° / 64.8°, e ≤ 0.01 |
//! | GEO and near-GEO | 1,500 | ± 200 km of GEO, 0–15°, e ≤ 0.003 |
//! | far HEO | 200 | perigee 1,000–20,000 km, apogee 40,000–150,000 km |
//!
//! Within a shell the planes are evenly spread in RAAN (with a small jitter)
//! and the objects of a plane evenly spread in phase (with a per-plane offset
//! and a small jitter); altitudes and inclinations scatter within the stated
//! spread, which puts thousands of objects at one altitude within a few km, as
//! in the real catalog. All sets share the epoch 2026-12-01T00:00:00Z.
//!
//! The sets are written as TLE text ([`tle_text`]) and read back with the
//! workspace loader, so the benchmark, the tests and a command-line run see
//! exactly the same elements (TLE precision).

#![allow(dead_code, clippy::unwrap_used, clippy::expect_used, clippy::panic)]

use passlane_orbit::{ElementSet, UtcTime};

const MU_KM3_S2: f64 = 398_600.8;
const EARTH_RADIUS_KM: f64 = 6378.135;
/// The TLE epoch field of 2026-12-01T00:00:00Z (day 335 of 2026).
const EPOCH_FIELD: &str = "26335.00000000";

pub fn epoch() -> UtcTime {
    UtcTime::parse_iso("2026-12-01T00:00:00Z").unwrap()
}

/// xorshift64*: small, fixed-seed, good enough to scatter orbits.
pub struct Rng(pub u64);

impl Rng {
    pub fn next_u64(&mut self) -> u64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }
    pub fn uniform(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * ((self.next_u64() >> 11) as f64 / (1u64 << 53) as f64)
    }
}

/// Which part of the catalog an object belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Group {
    ShellA,
    ShellB,
    ShellC,
    ShellD,
    Debris,
    OtherLeo,
    Crosser,
    Meo,
    Geo,
    FarHeo,
    Fleet,
}

/// Mean elements of one invented object, before they become TLE text.
#[derive(Debug, Clone)]
pub struct Synth {
    pub group: Group,
    /// Plane index within a shell (0 elsewhere).
    pub plane: u32,
    pub name: String,
    pub catalog_number: u32,
    pub inclination_deg: f64,
    pub raan_deg: f64,
    pub eccentricity: f64,
    pub arg_perigee_deg: f64,
    pub mean_anomaly_deg: f64,
    pub mean_motion_rev_day: f64,
    pub bstar: f64,
}

pub fn mean_motion_rev_day(a_km: f64) -> f64 {
    (MU_KM3_S2 / a_km.powi(3)).sqrt() * 86_400.0 / std::f64::consts::TAU
}

#[allow(clippy::too_many_arguments)]
fn synth(
    group: Group,
    plane: u32,
    rp_km: f64,
    ra_km: f64,
    inc: f64,
    raan: f64,
    m: f64,
    bstar: f64,
    rng: &mut Rng,
) -> Synth {
    let a = 0.5 * (rp_km + ra_km);
    let e = (ra_km - rp_km) / (ra_km + rp_km);
    Synth {
        group,
        plane,
        name: String::new(),
        catalog_number: 0,
        inclination_deg: inc,
        raan_deg: raan.rem_euclid(360.0),
        eccentricity: e,
        arg_perigee_deg: rng.uniform(0.0, 360.0),
        mean_anomaly_deg: m.rem_euclid(360.0),
        mean_motion_rev_day: mean_motion_rev_day(a),
        bstar,
    }
}

/// A constellation-like shell: `planes` × `per_plane` objects.
#[allow(clippy::too_many_arguments)]
fn shell(
    out: &mut Vec<Synth>,
    group: Group,
    alt_km: f64,
    alt_spread_km: f64,
    inc_deg: f64,
    planes: u32,
    per_plane: u32,
    rng: &mut Rng,
) {
    for p in 0..planes {
        let raan = 360.0 * f64::from(p) / f64::from(planes) + rng.uniform(-0.2, 0.2);
        let offset = rng.uniform(0.0, 360.0);
        for k in 0..per_plane {
            let r = EARTH_RADIUS_KM + alt_km + rng.uniform(-alt_spread_km, alt_spread_km);
            let e = rng.uniform(0.0, 3e-4);
            let m = offset + 360.0 * f64::from(k) / f64::from(per_plane) + rng.uniform(-0.5, 0.5);
            let inc = inc_deg + rng.uniform(-0.05, 0.05);
            let bstar = rng.uniform(5e-5, 3e-4);
            out.push(synth(
                group,
                p,
                r * (1.0 - e),
                r * (1.0 + e),
                inc,
                raan,
                m,
                bstar,
                rng,
            ));
        }
    }
}

/// The 30,000 objects of the table in the module docs, in group order.
pub fn realistic_synth() -> Vec<Synth> {
    let mut rng = Rng(0x5EED_CA7A_1060_2026);
    let mut v = Vec::with_capacity(30_000);
    shell(&mut v, Group::ShellA, 550.0, 1.5, 53.0, 72, 60, &mut rng);
    shell(&mut v, Group::ShellB, 540.0, 1.5, 97.6, 50, 40, &mut rng);
    shell(&mut v, Group::ShellC, 1200.0, 2.0, 87.9, 36, 36, &mut rng);
    shell(&mut v, Group::ShellD, 530.0, 1.5, 43.0, 28, 48, &mut rng);
    let re = EARTH_RADIUS_KM;
    for k in 0..6_000 {
        let inc = [98.5, 82.0, 74.0, 86.4, 65.0][k % 5] + rng.uniform(-1.0, 1.0);
        let rp = re + rng.uniform(750.0, 900.0);
        let e = rng.uniform(0.0, 0.01);
        let ra = rp * (1.0 + e) / (1.0 - e);
        let (raan, m, b) = (
            rng.uniform(0.0, 360.0),
            rng.uniform(0.0, 360.0),
            rng.uniform(1e-5, 5e-4),
        );
        v.push(synth(Group::Debris, 0, rp, ra, inc, raan, m, b, &mut rng));
    }
    for _ in 0..10_340 {
        // Altitude weighted towards the low end (square of a uniform).
        let u = rng.uniform(0.0, 1.0);
        let rp = re + 300.0 + 1700.0 * u * u;
        let e = rng.uniform(0.0, 0.02);
        let ra = rp * (1.0 + e) / (1.0 - e);
        let inc = rng.uniform(0.0, 110.0);
        let (raan, m, b) = (
            rng.uniform(0.0, 360.0),
            rng.uniform(0.0, 360.0),
            rng.uniform(1e-5, 3e-4),
        );
        v.push(synth(Group::OtherLeo, 0, rp, ra, inc, raan, m, b, &mut rng));
    }
    for k in 0..1_800 {
        let rp = re + rng.uniform(250.0, 700.0);
        let (ra, inc) = match k % 3 {
            0 => (
                re + 35_786.0 + rng.uniform(-500.0, 500.0),
                rng.uniform(0.0, 30.0),
            ),
            // 12-hour orbit: a = 26,560 km at the critical inclination.
            1 => (2.0 * 26_560.0 - rp, 63.4 + rng.uniform(-0.1, 0.1)),
            _ => (re + rng.uniform(1_000.0, 20_000.0), rng.uniform(0.0, 100.0)),
        };
        let (raan, m, b) = (
            rng.uniform(0.0, 360.0),
            rng.uniform(0.0, 360.0),
            rng.uniform(1e-6, 5e-5),
        );
        v.push(synth(Group::Crosser, 0, rp, ra, inc, raan, m, b, &mut rng));
    }
    for k in 0..1_200 {
        let r = re + rng.uniform(19_000.0, 23_500.0);
        let e = rng.uniform(0.0, 0.01);
        let inc = if k % 2 == 0 { 55.0 } else { 64.8 } + rng.uniform(-1.0, 1.0);
        let (raan, m) = (rng.uniform(0.0, 360.0), rng.uniform(0.0, 360.0));
        v.push(synth(
            Group::Meo,
            0,
            r * (1.0 - e),
            r * (1.0 + e),
            inc,
            raan,
            m,
            0.0,
            &mut rng,
        ));
    }
    for _ in 0..1_500 {
        let r = re + 35_786.0 + rng.uniform(-200.0, 200.0);
        let e = rng.uniform(0.0, 0.003);
        let inc = rng.uniform(0.0, 15.0);
        let (raan, m) = (rng.uniform(0.0, 360.0), rng.uniform(0.0, 360.0));
        v.push(synth(
            Group::Geo,
            0,
            r * (1.0 - e),
            r * (1.0 + e),
            inc,
            raan,
            m,
            0.0,
            &mut rng,
        ));
    }
    for _ in 0..200 {
        let rp = re + rng.uniform(1_000.0, 20_000.0);
        let ra = re + rng.uniform(40_000.0, 150_000.0);
        let inc = rng.uniform(0.0, 90.0);
        let (raan, m) = (rng.uniform(0.0, 360.0), rng.uniform(0.0, 360.0));
        v.push(synth(Group::FarHeo, 0, rp, ra, inc, raan, m, 0.0, &mut rng));
    }
    for (k, s) in v.iter_mut().enumerate() {
        s.catalog_number = 10_000 + k as u32;
        let prefix = match s.group {
            Group::ShellA => "SHELL-A",
            Group::ShellB => "SHELL-B",
            Group::ShellC => "SHELL-C",
            Group::ShellD => "SHELL-D",
            Group::Debris => "FRAG",
            Group::OtherLeo => "LEO",
            Group::Crosser => "XING",
            Group::Meo => "MEO",
            Group::Geo => "GEO",
            Group::FarHeo => "HEO",
            Group::Fleet => "FLEET",
        };
        s.name = format!("{prefix} {}", s.catalog_number);
    }
    v
}

/// An evenly spaced pick of `n` of the 30,000 (all of them for n ≥ 30,000).
pub fn realistic_synth_n(n: usize) -> Vec<Synth> {
    let all = realistic_synth();
    if n >= all.len() {
        return all;
    }
    (0..n).map(|i| all[i * all.len() / n].clone()).collect()
}

/// A dense 2,000-object subset: whole adjacent planes of shells A (900) and
/// B (400), 400 of the debris band, 200 eccentric crossers and 100 MEO/GEO/HEO.
pub fn dense_subset_synth() -> Vec<Synth> {
    let all = realistic_synth();
    let take = |pred: &dyn Fn(&Synth) -> bool, n: usize| -> Vec<Synth> {
        all.iter().filter(|s| pred(s)).take(n).cloned().collect()
    };
    let mut v = take(&|s| s.group == Group::ShellA, 900);
    v.extend(take(&|s| s.group == Group::ShellB, 400));
    v.extend(take(&|s| s.group == Group::Debris, 400));
    v.extend(take(&|s| s.group == Group::Crosser, 200));
    v.extend(take(
        &|s| matches!(s.group, Group::Meo | Group::Geo | Group::FarHeo),
        100,
    ));
    v
}

/// Ten spacecraft of an operator in sun-synchronous orbits, 500–600 km.
pub fn sso_fleet_synth() -> Vec<Synth> {
    let mut rng = Rng(0x0050_0050_0010_0010);
    (0..10)
        .map(|k| {
            let alt = rng.uniform(500.0, 600.0);
            let r = EARTH_RADIUS_KM + alt;
            // Sun-synchronous inclination for 500–600 km (from cos i = −ṅΩ/...;
            // 97.4° at 500 km to 97.8° at 600 km).
            let inc = 97.4 + 0.4 * (alt - 500.0) / 100.0;
            let (raan, m) = (rng.uniform(0.0, 360.0), rng.uniform(0.0, 360.0));
            let mut s = synth(
                Group::Fleet,
                0,
                r * 0.9995,
                r * 1.0005,
                inc,
                raan,
                m,
                1e-4,
                &mut rng,
            );
            s.catalog_number = 91_001 + k;
            s.name = format!("SSO-{:02}", k + 1);
            s
        })
        .collect()
}

/// A 100-spacecraft fleet, 450–650 km, alternately sun-synchronous and 53°.
pub fn fleet_100_synth() -> Vec<Synth> {
    let mut rng = Rng(0x0123_4567_89AB_CDEF);
    (0..100)
        .map(|k| {
            let r = EARTH_RADIUS_KM + rng.uniform(450.0, 650.0);
            let inc = if k % 2 == 0 { 97.6 } else { 53.0 };
            let (raan, m) = (rng.uniform(0.0, 360.0), rng.uniform(0.0, 360.0));
            let mut s = synth(
                Group::Fleet,
                0,
                r * 0.999,
                r * 1.001,
                inc,
                raan,
                m,
                1e-4,
                &mut rng,
            );
            s.catalog_number = 92_000 + k;
            s.name = format!("FLEET-{k:03}");
            s
        })
        .collect()
}

/// TLE exponent form of B*: " 12345-4" = 0.12345e-4.
fn bstar_field(x: f64) -> String {
    if x == 0.0 {
        return " 00000-0".into();
    }
    let sign = if x < 0.0 { '-' } else { ' ' };
    let mut e = x.abs().log10().floor() as i32 + 1;
    let mut m = (x.abs() / 10f64.powi(e) * 1e5).round() as u32;
    if m >= 100_000 {
        m /= 10;
        e += 1;
    }
    let es = if e < 0 { '-' } else { '+' };
    format!("{sign}{m:05}{es}{}", e.abs())
}

fn checksum(line: &str) -> u32 {
    line.bytes()
        .map(|b| match b {
            b'0'..=b'9' => u32::from(b - b'0'),
            b'-' => 1,
            _ => 0,
        })
        .sum::<u32>()
        % 10
}

/// Three-line TLE text of the objects (epoch 2026-12-01T00:00:00Z).
pub fn tle_text(objects: &[Synth]) -> String {
    let mut out = String::with_capacity(objects.len() * 170);
    for (k, s) in objects.iter().enumerate() {
        let intl = format!(
            "{:02}{:03}{}",
            26 - (k / 26_000) % 10,
            (k / 26) % 999 + 1,
            char::from(b'A' + (k % 26) as u8)
        );
        let l1 = format!(
            "1 {:05}U {intl:<8} {EPOCH_FIELD}  .00000000  00000-0 {} 0  999",
            s.catalog_number,
            bstar_field(s.bstar)
        );
        let l2 = format!(
            "2 {:05} {:8.4} {:8.4} {:07} {:8.4} {:8.4} {:11.8}{:5}",
            s.catalog_number,
            s.inclination_deg,
            s.raan_deg,
            (s.eccentricity * 1e7).round() as u64,
            s.arg_perigee_deg,
            s.mean_anomaly_deg,
            s.mean_motion_rev_day,
            0
        );
        debug_assert_eq!((l1.len(), l2.len()), (68, 68), "{l1}\n{l2}");
        out.push_str(&s.name);
        out.push('\n');
        out.push_str(&format!("{l1}{}\n{l2}{}\n", checksum(&l1), checksum(&l2)));
    }
    out
}

/// The objects as element sets, through the workspace's TLE loader (which
/// must accept every one).
pub fn element_sets(objects: &[Synth]) -> Vec<ElementSet> {
    let text = tle_text(objects);
    let r = passlane_orbit::elements::load(text.as_bytes(), "synthetic", Default::default());
    assert!(
        r.diagnostics.is_empty(),
        "synthetic catalog: {:?}",
        &r.diagnostics[..r.diagnostics.len().min(3)]
    );
    assert_eq!(r.sets.len(), objects.len());
    r.sets
}

/// The 30,000-object catalog of the module docs (or an evenly spaced pick of `n`).
pub fn realistic(n: usize) -> Vec<ElementSet> {
    element_sets(&realistic_synth_n(n))
}
