//! Avoidance what-if: the burn's effect against the Clohessy–Wiltshire (1960)
//! linear solution, a zero burn, a designed encounter cleared by a burn, the
//! trade's smallest Δv, and the refusals.

#![allow(clippy::unwrap_used, clippy::expect_used)]

use std::path::PathBuf;

use passlane_orbit::constants::MU_WGS72_KM3_S2;
use passlane_orbit::frames::{cross, dot, norm};
use passlane_orbit::numerical::{Drag, ForceModel};
use passlane_orbit::{ElementSet, LoadOptions, Propagator, StateTeme, UtcTime, elements};
use passlane_plan::avoid::{
    Burn, Conjunction, CovarianceModel, FromState, Manoeuvred, Motion, MotionError, TradeRequest,
    burn_effect, trade,
};
use passlane_plan::conjunction::AssumedCovariance;

fn t(s: &str) -> UtcTime {
    UtcTime::parse_iso(s).unwrap()
}

/// A circular two-body orbit in the x-y plane (exact Kepler motion).
struct Circular {
    r_km: f64,
    epoch: UtcTime,
}

impl Circular {
    fn n(&self) -> f64 {
        (MU_WGS72_KM3_S2 / self.r_km.powi(3)).sqrt()
    }
}

impl Motion for Circular {
    fn state_at(&self, at: UtcTime) -> Result<StateTeme, MotionError> {
        let (n, r) = (self.n(), self.r_km);
        let th = n * at.s_since(self.epoch);
        Ok(StateTeme {
            time: at,
            position_km: [r * th.cos(), r * th.sin(), 0.0],
            velocity_km_s: [-r * n * th.sin(), r * n * th.cos(), 0.0],
        })
    }
}

/// Radial and in-track components of `d` in the frame of `s`.
fn radial_in_track(s: &StateTeme, d: &[f64; 3]) -> (f64, f64) {
    let r_hat = {
        let n = norm(&s.position_km);
        s.position_km.map(|x| x / n)
    };
    let h = cross(&s.position_km, &s.velocity_km_s);
    let c_hat = h.map(|x| x / norm(&h));
    let i_hat = cross(&c_hat, &r_hat);
    (dot(d, &r_hat), dot(d, &i_hat))
}

#[test]
fn small_in_track_burns_follow_the_clohessy_wiltshire_solution() {
    // Clohessy & Wiltshire (1960): after an in-track impulse Δv on a circular
    // orbit of mean motion n, the offset is x = (2Δv/n)(1 − cos nt) radially
    // and y = (4Δv/n) sin nt − 3Δv·t in-track. The linear theory leaves out
    // (a) the curvature of the in-track direction, which puts y²/(2r) into
    // the radial offset, and (b) terms of second order in Δv/v, below
    // 10·(Δv/v)·|y| here. The test allows exactly those plus 1 mm.
    let epoch = t("2026-12-01T00:00:00Z");
    let base = Circular {
        r_km: 6_878.137,
        epoch,
    };
    let n = base.n();
    let v = base.r_km * n;
    for dv_m_s in [0.001, 0.01, 0.1, -0.05] {
        let burn = Burn {
            time: epoch.add_s(600.0),
            dv_ric_m_s: [0.0, dv_m_s, 0.0],
        };
        let until = burn.time.add_s(86_400.0);
        let moved = Manoeuvred::with_model(&base, burn, ForceModel::two_body(), until).unwrap();
        let dv = dv_m_s / 1000.0;
        for hours in [0.5, 3.0, 12.0, 24.0] {
            let dt = hours * 3600.0;
            let at = burn.time.add_s(dt);
            let s = base.state_at(at).unwrap();
            let (dr, _) = moved.difference(at).unwrap();
            let (x, y) = radial_in_track(&s, &dr);
            let x_cw = 2.0 * dv / n * (1.0 - (n * dt).cos());
            let y_cw = 4.0 * dv / n * (n * dt).sin() - 3.0 * dv * dt;
            let neglected =
                y_cw * y_cw / (2.0 * base.r_km) + 10.0 * (dv / v).abs() * y_cw.abs() + 1e-6;
            assert!(
                (x - x_cw).abs() <= neglected && (y - y_cw).abs() <= neglected,
                "dv {dv_m_s} m/s after {hours} h: radial {x} vs {x_cw}, in-track {y} vs {y_cw} km (allowed {neglected} km)"
            );
        }
    }
}

fn demo_fleet() -> Vec<ElementSet> {
    let p = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../scenarios/demo-fleet.tle");
    let bytes = std::fs::read(p).unwrap();
    elements::load(&bytes, "demo-fleet.tle", LoadOptions::default()).sets
}

/// A secondary designed to cross the primary's path `below_km` below it
/// (radially) at `tca`, at 60° to its velocity: its state at TCA, numerically
/// propagated both ways. Invented for this test.
fn crossing_object(primary: &Propagator, tca: UtcTime) -> FromState {
    crossing_object_below(primary, tca, 0.040)
}

fn crossing_object_below(primary: &Propagator, tca: UtcTime, below_km: f64) -> FromState {
    let p = primary.state_at(tca).unwrap();
    let r_hat = p.position_km.map(|x| x / norm(&p.position_km));
    let v = p.velocity_km_s;
    let h = cross(&p.position_km, &v);
    let c_hat = h.map(|x| x / norm(&h));
    let i_hat = cross(&c_hat, &r_hat);
    let speed = norm(&v);
    let (s60, c60) = (60f64.to_radians().sin(), 60f64.to_radians().cos());
    let state = StateTeme {
        time: tca,
        position_km: std::array::from_fn(|k| p.position_km[k] - below_km * r_hat[k]),
        velocity_km_s: std::array::from_fn(|k| speed * (c60 * i_hat[k] + s60 * c_hat[k])),
    };
    FromState::new(&state, None, tca.add_s(-6.0 * 3600.0), tca.add_s(3600.0)).unwrap()
}

fn conjunction<'a>(
    primary: &'a Propagator,
    secondary: &'a FromState,
    set: &'a ElementSet,
) -> Conjunction<'a> {
    Conjunction {
        primary,
        secondary,
        covariance: CovarianceModel::Assumed {
            // A tight covariance, as a fresh orbit determination would give.
            assumed: AssumedCovariance {
                sigma_at_epoch_m: [30.0, 150.0, 30.0],
                growth_m_per_day: [10.0, 100.0, 10.0],
            },
            primary: set,
            secondary: set,
        },
        hard_body_radius_m: 10.0,
        primary_drag: Drag::from_bstar(set.bstar_per_earth_radii),
    }
}

#[test]
fn a_zero_burn_gives_exactly_the_unmanoeuvred_encounter() {
    let fleet = demo_fleet();
    let set = &fleet[0];
    let prop = Propagator::new(set).unwrap();
    let tca = set.epoch.add_s(86_400.0);
    let other = crossing_object(&prop, tca);
    let conj = conjunction(&prop, &other, set);
    let e = burn_effect(&conj, tca, Burn::none(tca.add_s(-5_000.0))).unwrap();
    assert_eq!(e.before, e.after);
    assert!(
        (e.before.miss_distance_km - 0.040).abs() < 1e-4,
        "{:?}",
        e.before
    );
    assert!(e.before.tca.s_since(tca).abs() < 1e-3);
}

#[test]
fn a_designed_encounter_is_cleared_by_an_in_track_burn() {
    let fleet = demo_fleet();
    let set = &fleet[0];
    let prop = Propagator::new(set).unwrap();
    let tca = set.epoch.add_s(86_400.0);
    let other = crossing_object(&prop, tca);
    let conj = conjunction(&prop, &other, set);
    // 5 cm/s prograde two orbits ahead: Clohessy–Wiltshire puts the primary
    // about 3·Δv·t ≈ 1.7 km behind where it was, i.e. the secondary crosses
    // its track well ahead of it.
    let period_s = 86_400.0 / set.mean_motion_rev_day;
    let burn = Burn {
        time: tca.add_s(-2.0 * period_s),
        dv_ric_m_s: [0.0, 0.05, 0.0],
    };
    let e = burn_effect(&conj, tca, burn).unwrap();
    let before_pc = e.before.pc.unwrap();
    let after_pc = e.after.pc.unwrap();
    assert!(
        before_pc > 1e-4,
        "the designed encounter is a real risk: {before_pc}"
    );
    assert!(e.after.miss_distance_km > 0.8, "{:?}", e.after);
    assert!(after_pc < before_pc * 1e-2, "{before_pc} -> {after_pc}");
    // The TCA moves by the in-track shift over the relative speed: seconds.
    assert!(e.after.tca.s_since(e.before.tca).abs() < 5.0);

    // The trade finds a smaller burn that meets Pc < 1e-4 and miss > 0.2 km,
    // and that burn does meet them when applied on its own.
    let req = TradeRequest {
        orbits_before: vec![1.0, 2.0],
        dv_m_s: vec![-0.1, -0.01, 0.01, 0.1],
        target_pc: 1e-4,
        target_miss_km: 0.2,
    };
    let tr = trade(&conj, tca, &req).unwrap();
    assert_eq!(tr.trade.len(), 8);
    for s in &tr.smallest {
        let dv = s
            .dv_in_track_m_s
            .expect("a burn of at most 0.1 m/s clears it");
        assert!(dv.abs() <= 0.1 && dv.abs() > 0.0);
        let check = burn_effect(
            &conj,
            tca,
            Burn {
                time: s.burn_time,
                dv_ric_m_s: [0.0, dv, 0.0],
            },
        )
        .unwrap();
        assert!(check.after.pc.unwrap() < 1e-4 && check.after.miss_distance_km > 0.2);
    }
    // Burning earlier needs less: the drift grows with the time to TCA.
    let dv1 = tr.smallest[0].dv_in_track_m_s.unwrap().abs();
    let dv2 = tr.smallest[1].dv_in_track_m_s.unwrap().abs();
    assert!(dv2 < dv1, "{dv2} (2 orbits) vs {dv1} (1 orbit)");
}

#[test]
fn bad_requests_name_the_option() {
    let fleet = demo_fleet();
    let set = &fleet[0];
    let prop = Propagator::new(set).unwrap();
    let tca = set.epoch.add_s(86_400.0);
    let other = crossing_object(&prop, tca);
    let conj = conjunction(&prop, &other, set);
    let after_tca = Burn {
        time: tca.add_s(60.0),
        dv_ric_m_s: [0.0, 0.01, 0.0],
    };
    assert_eq!(
        burn_effect(&conj, tca, after_tca).unwrap_err().option,
        "--burn-time"
    );
    let huge = Burn {
        time: tca.add_s(-3000.0),
        dv_ric_m_s: [0.0, 120.0, 0.0],
    };
    assert_eq!(
        burn_effect(&conj, tca, huge).unwrap_err().option,
        "--dv-ric-m-s"
    );
    // An object 300 km higher never comes within 100 km: no close approach.
    let low = crossing_object_below(&prop, tca, -300.0);
    let conj = conjunction(&prop, &low, set);
    let e = burn_effect(&conj, tca, Burn::none(tca.add_s(-100.0))).unwrap_err();
    assert_eq!(e.option, "--tca", "{e}");
}

#[test]
fn an_encounter_designed_to_be_created_by_a_burn_is_listed_as_new() {
    use passlane_plan::Scenario;
    use passlane_plan::avoid::{ConsequenceRequest, consequences, manoeuvred_entry, motion_entry};
    use passlane_plan::screen::ScreeningVolume;

    let fleet = demo_fleet();
    let set = &fleet[0];
    let prop = Propagator::new(set).unwrap();
    let burn = Burn {
        time: set.epoch.add_s(3_600.0),
        dv_ric_m_s: [0.0, 0.5, 0.0],
    };
    let horizon = burn.time.add_s(2.0 * 86_400.0);
    let moved = Manoeuvred::new(
        &prop,
        burn,
        Drag::from_bstar(set.bstar_per_earth_radii),
        horizon,
    )
    .unwrap();
    // An invented object crossing the *manoeuvred* track 40 m below it, a
    // day after the burn: the usual track is ~100 km away from there then
    // (Clohessy–Wiltshire: 3·Δv·t).
    let meet = burn.time.add_s(86_400.0);
    let p = moved.state_at(meet).unwrap();
    let r_hat = p.position_km.map(|x| x / norm(&p.position_km));
    let h = cross(&p.position_km, &p.velocity_km_s);
    let c_hat = h.map(|x| x / norm(&h));
    let i_hat = cross(&c_hat, &r_hat);
    let speed = norm(&p.velocity_km_s);
    let (s60, c60) = (60f64.to_radians().sin(), 60f64.to_radians().cos());
    let crossing = FromState::new(
        &StateTeme {
            time: meet,
            position_km: std::array::from_fn(|k| p.position_km[k] - 0.040 * r_hat[k]),
            velocity_km_s: std::array::from_fn(|k| speed * (c60 * i_hat[k] + s60 * c_hat[k])),
        },
        None,
        burn.time,
        horizon,
    )
    .unwrap();
    let other = motion_entry("DESIGNED 99901", 99901, None, &crossing, burn.time, horizon).unwrap();
    let before_gap = norm(&passlane_orbit::frames::sub(
        &prop.state_at(meet).unwrap().position_km,
        &p.position_km,
    ));
    assert!(before_gap > 20.0, "{before_gap} km");
    let entry = manoeuvred_entry(set, &moved, burn.time, horizon).unwrap();
    let scenario = Scenario::default();
    let others = [other];
    let (new_events, _) = consequences(
        &ConsequenceRequest {
            primary: set,
            others: &others,
            scenario: &scenario,
            volume: ScreeningVolume::Sphere { radius_km: 5.0 },
            from: burn.time,
            to: horizon,
            avoided: None,
            stations: &[],
            contacts_until: burn.time,
        },
        &entry,
        &passlane_plan::Silent,
    );
    let created: Vec<_> = new_events
        .iter()
        .filter(|e| e.change == "created" && e.event.secondary_catalog_number == 99901)
        .collect();
    assert_eq!(created.len(), 1, "{new_events:?}");
    let e = &created[0].event;
    assert!(e.tca.s_since(meet).abs() < 0.01, "{}", e.tca);
    assert!(
        (e.miss_distance_km - 0.040).abs() < 0.005,
        "{}",
        e.miss_distance_km
    );
}
