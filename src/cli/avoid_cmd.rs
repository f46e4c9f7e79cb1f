//! `passlane avoid`: what one burn does to a close approach, or the trade of
//! burn time against in-track Δv, from element sets or from a CDM.

use std::io::Write;
use std::path::Path;

use anyhow::{Context, Result, bail};
use passlane_orbit::numerical::Drag;
use passlane_orbit::{ElementSet, Propagator, StateTeme, UtcTime};
use passlane_plan::avoid::{
    Burn, BurnEffect, Conjunction, ConsequenceRequest, ContactShift, CovarianceModel,
    EncounterFigures, FromState, Motion, NewEvent, Trade, TradeRequest, burn_consequences,
    burn_effect, trade,
};
use passlane_plan::cdm::Cdm;
use passlane_plan::conjunction::{AssumedCovariance, hard_body_radius_m};
use passlane_plan::encounter::{Mat3, earth_fixed_to_aligned_inertial};
use passlane_plan::job::EventRow;
use passlane_plan::screen::ScreeningVolume;
use serde::Serialize;

use super::args::AvoidArgs;
use super::common::{self, Format, Sources};
use super::progress::Bar;

const CAUTION: &str = "Caution: advisory only, from published elements (or the CDM's states). Coordinate any \
manoeuvre with the other operator and the responsible screening service first; this tool plans, it does not \
command a spacecraft.";

/// One burn's answer. The field names are a JSON contract.
#[derive(Serialize)]
struct BurnJson<'a> {
    primary_catalog_number: u32,
    secondary_catalog_number: u32,
    burn_time: UtcTime,
    dv_ric_m_s: [f64; 3],
    before: &'a EncounterFigures,
    after: &'a EncounterFigures,
    covariance_source: String,
    hard_body_radius_m: f64,
    hard_body_radius_source: String,
    /// Close approaches the burn creates or worsens up to the horizon, as
    /// `passlane screen` rows with what changed; absent (with a note) when
    /// they could not be looked for.
    #[serde(skip_serializing_if = "Option::is_none")]
    new_events: Option<Vec<NewEventJson<'a>>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    new_events_until: Option<UtcTime>,
    #[serde(skip_serializing_if = "Option::is_none")]
    contact_shifts: Option<&'a [ContactShift]>,
    #[serde(skip_serializing_if = "Option::is_none")]
    note: Option<String>,
}

#[derive(Serialize)]
struct NewEventJson<'a> {
    change: &'static str,
    #[serde(flatten)]
    row: EventRow<'a>,
    before_miss_distance_km: Option<f64>,
    before_pc: Option<f64>,
}

/// The trade's answer.
#[derive(Serialize)]
struct TradeJson<'a> {
    primary_catalog_number: u32,
    secondary_catalog_number: u32,
    #[serde(flatten)]
    trade: &'a Trade,
    covariance_source: String,
    hard_body_radius_m: f64,
    hard_body_radius_source: String,
}

fn list(option: &str, text: &str) -> Result<Vec<f64>> {
    text.split(',')
        .map(|p| {
            p.trim()
                .parse::<f64>()
                .ok()
                .filter(|x| x.is_finite())
                .with_context(|| format!("{option} {text:?}: {p:?} is not a number"))
        })
        .collect()
}

fn three(option: &str, text: &str) -> Result<[f64; 3]> {
    match list(option, text)?.as_slice() {
        [r, i, c] => Ok([*r, *i, *c]),
        _ => bail!("{option} {text:?}: expected three numbers R,I,C in m/s"),
    }
}

/// The objects and the encounter to work on.
struct Setup {
    primary: Box<dyn Motion>,
    secondary: Box<dyn Motion>,
    primary_catalog_number: u32,
    secondary_catalog_number: u32,
    tca: UtcTime,
    /// From element sets: both sets (for the assumed covariance and drag).
    sets: Option<(ElementSet, ElementSet)>,
    /// From a CDM: both RTN position covariances, m².
    given: Option<(Mat3, Mat3)>,
    assumed: AssumedCovariance,
    hbr_m: f64,
    hbr_source: String,
    /// From element sets: everything else loaded (catalog and the rest of
    /// the fleet) and the scenario, for the burn's consequences.
    others: Vec<ElementSet>,
    scenario: passlane_plan::Scenario,
}

fn from_cdm(args: &AvoidArgs, path: &Path) -> Result<Setup> {
    if args.primary.is_some() || args.secondary.is_some() || args.tca.is_some() {
        bail!("--cdm gives the objects and the TCA: leave out --primary, --secondary and --tca");
    }
    let file = path.display().to_string();
    let text = passlane_files::read_text_limited(path, passlane_plan::cdm::MAX_MESSAGE_BYTES)
        .with_context(|| format!("cannot read {file}"))?;
    let cdm = Cdm::parse(&text, &file)?;
    let tca = cdm.relative.tca;
    // The numerical propagation needs an inertial frame; an Earth-fixed state
    // gets the Earth-rotation term added back (the frame aligned with ITRF
    // at TCA). Either way the states are used only around the TCA and as the
    // start of the burn's difference, where the frame's orientation enters
    // at second order.
    let state = |o: &passlane_plan::cdm::CdmObject| {
        let s = if o.ref_frame.trim().to_ascii_uppercase().starts_with("ITRF") {
            earth_fixed_to_aligned_inertial(&o.state)
        } else {
            o.state
        };
        StateTeme {
            time: tca,
            position_km: s.position_km,
            velocity_km_s: s.velocity_km_s,
        }
    };
    let span = |orbits: f64| tca.add_s(-orbits * 6_000.0);
    let earliest = match (args.burn_time, args.trade) {
        (Some(b), _) => b.min(span(0.5)),
        (None, true) => span(3.5),
        (None, false) => span(0.5),
    };
    let latest = tca.add_s(passlane_plan::avoid::MAX_TCA_SHIFT_S + 120.0);
    let earliest = earliest.min(tca.add_s(-passlane_plan::avoid::MAX_TCA_SHIFT_S - 120.0));
    let primary = FromState::new(&state(&cdm.object1), None, earliest, latest)
        .map_err(|e| anyhow::anyhow!("{file}: OBJECT1: {e}"))?;
    let secondary = FromState::new(&state(&cdm.object2), None, earliest, latest)
        .map_err(|e| anyhow::anyhow!("{file}: OBJECT2: {e}"))?;
    let number = |d: &str| d.trim().parse::<u32>().unwrap_or(0);
    let (hbr_m, hbr_source) = match args.hard_body_radius_m {
        Some(r) => (r, "--hard-body-radius-m".to_string()),
        None => (
            10.0,
            "default 10 m (a CDM carries no hard-body radius; give --hard-body-radius-m)"
                .to_string(),
        ),
    };
    Ok(Setup {
        primary: Box::new(primary),
        secondary: Box::new(secondary),
        primary_catalog_number: number(&cdm.object1.object_designator),
        secondary_catalog_number: number(&cdm.object2.object_designator),
        tca,
        sets: None,
        given: Some((
            cdm.object1.position_covariance_rtn_m2(),
            cdm.object2.position_covariance_rtn_m2(),
        )),
        assumed: AssumedCovariance::from_scenario(&passlane_plan::Scenario::default()),
        hbr_m,
        hbr_source,
        others: Vec::new(),
        scenario: passlane_plan::Scenario::default(),
    })
}

fn from_elements(args: &AvoidArgs) -> Result<Setup> {
    let (Some(p), Some(s), Some(tca)) = (args.primary, args.secondary, args.tca) else {
        bail!("give --primary CATNUM, --secondary CATNUM and --tca ISO (or --cdm FILE)");
    };
    let sources = Sources {
        scenario: args.fleet.scenario.as_deref(),
        elements: &args.fleet.elements,
        ephemerides: &args.fleet.ephemeris,
        stations: &[],
        start: None,
        end: None,
        lenient: args.fleet.lenient,
        allow_stale: args.allow_stale,
        ut1_utc_s: None,
    };
    let inputs = common::gather(&sources, false)?;
    let mut catalog_paths = args.catalog.clone();
    if catalog_paths.is_empty()
        && let Some((path, sc)) = &inputs.scenario
    {
        catalog_paths = sc
            .catalog_files
            .iter()
            .map(|f| common::resolve(path, f))
            .collect();
    }
    let catalog = if catalog_paths.is_empty() {
        Vec::new()
    } else {
        common::load_fleet(&catalog_paths, args.fleet.lenient)?
    };
    let find = |n: u32, option: &str| -> Result<ElementSet> {
        inputs
            .sets
            .iter()
            .chain(&catalog)
            .find(|x| x.catalog_number == n)
            .cloned()
            .with_context(|| {
                format!("{option} {n}: no element set with that catalog number was loaded")
            })
    };
    let (ps, ss) = (find(p, "--primary")?, find(s, "--secondary")?);
    common::check_element_age(
        &[ps.clone(), ss.clone()],
        tca,
        tca,
        args.allow_stale,
        "the TCA",
    )?;
    // SGP4 running backwards far from epoch is a guess; common practice is a
    // few days to a couple of weeks of trust either side of the epoch.
    const MAX_BACKWARDS_DAYS: f64 = 14.0;
    if let Some(b) = args.burn_time
        && ps.epoch.s_since(b) > MAX_BACKWARDS_DAYS * 86_400.0
    {
        bail!(
            "--burn-time {b}: more than {MAX_BACKWARDS_DAYS} days before the primary's element epoch {}",
            ps.epoch
        );
    }
    let scenario = inputs
        .scenario
        .as_ref()
        .map(|(_, s)| s.clone())
        .unwrap_or_default();
    let (hbr_m, hbr_source) = match args.hard_body_radius_m {
        Some(r) => (r, "--hard-body-radius-m".to_string()),
        None => (
            hard_body_radius_m(&scenario, p) + hard_body_radius_m(&scenario, s),
            if inputs.scenario.is_some() {
                "the scenario's radii of the two objects (summed)".to_string()
            } else {
                "default 5 m per object (summed)".to_string()
            },
        ),
    };
    let primary = Propagator::new(&ps).map_err(|e| anyhow::anyhow!("--primary {p}: {e}"))?;
    let secondary = Propagator::new(&ss).map_err(|e| anyhow::anyhow!("--secondary {s}: {e}"))?;
    let others: Vec<ElementSet> = inputs
        .sets
        .iter()
        .chain(&catalog)
        .filter(|x| x.catalog_number != p)
        .cloned()
        .collect();
    Ok(Setup {
        primary: Box::new(primary),
        secondary: Box::new(secondary),
        primary_catalog_number: p,
        secondary_catalog_number: s,
        tca,
        sets: Some((ps, ss)),
        given: None,
        assumed: AssumedCovariance::from_scenario(&scenario),
        hbr_m,
        hbr_source,
        others,
        scenario,
    })
}

pub fn run(args: &AvoidArgs, out: &mut dyn Write) -> Result<()> {
    let format = Format::from(args.format);
    let setup = match &args.cdm {
        Some(path) => from_cdm(args, path)?,
        None => from_elements(args)?,
    };
    if !(setup.hbr_m.is_finite() && setup.hbr_m > 0.0) {
        bail!("--hard-body-radius-m must be positive");
    }
    let covariance = match (&setup.sets, &setup.given) {
        (Some((p, s)), _) => CovarianceModel::Assumed {
            assumed: setup.assumed,
            primary: p,
            secondary: s,
        },
        (None, Some((c1, c2))) => CovarianceModel::Given {
            primary_rtn_m2: *c1,
            secondary_rtn_m2: *c2,
            source: "the CDM's covariances",
        },
        (None, None) => bail!("no covariance for the encounter"),
    };
    let conj = Conjunction {
        primary: setup.primary.as_ref(),
        secondary: setup.secondary.as_ref(),
        covariance,
        hard_body_radius_m: setup.hbr_m,
        primary_drag: setup
            .sets
            .as_ref()
            .and_then(|(p, _)| Drag::from_bstar(p.bstar_per_earth_radii)),
    };
    let label = conj.covariance.label();
    if args.trade {
        let mut req = TradeRequest::default();
        if let Some(o) = &args.orbits_before {
            req.orbits_before = list("--orbits-before", o)?;
        }
        if let Some(d) = &args.dv_m_s {
            req.dv_m_s = list("--dv-m-s", d)?;
        }
        req.target_pc = args.target_pc;
        req.target_miss_km = args.target_miss_km;
        let t = trade(&conj, setup.tca, &req)?;
        match format {
            Format::Json => {
                common::write_json(
                    &mut *out,
                    &TradeJson {
                        primary_catalog_number: setup.primary_catalog_number,
                        secondary_catalog_number: setup.secondary_catalog_number,
                        trade: &t,
                        covariance_source: label,
                        hard_body_radius_m: setup.hbr_m,
                        hard_body_radius_source: setup.hbr_source,
                    },
                )?;
            }
            _ => write_trade_table(out, &setup, &t, &req, &label)?,
        }
        return Ok(());
    }
    let (Some(burn_time), Some(dv)) = (args.burn_time, &args.dv_ric_m_s) else {
        bail!("give --burn-time ISO and --dv-ric-m-s R,I,C for one burn, or --trade");
    };
    let burn = Burn {
        time: burn_time,
        dv_ric_m_s: three("--dv-ric-m-s", dv)?,
    };
    let e = burn_effect(&conj, setup.tca, burn)?;
    // What else the burn changes, over the days after it (element sets only:
    // a CDM carries no catalog to screen against).
    let horizon = burn.time.add_s(args.horizon_days * 86_400.0);
    let contacts_until = burn.time.add_s(args.contact_hours * 3_600.0).min(horizon);
    let consequences_of = |ps: &ElementSet| -> Result<(Vec<NewEvent>, Vec<ContactShift>)> {
        let bar = Bar::new("new close approaches", args.quiet.quiet);
        let out = burn_consequences(
            &ConsequenceRequest {
                primary: ps,
                others: &setup.others,
                scenario: &setup.scenario,
                volume: ScreeningVolume::Sphere {
                    radius_km: setup.scenario.screening.threshold_km,
                },
                from: burn.time,
                to: horizon,
                avoided: Some((setup.secondary_catalog_number, e.before.tca)),
                stations: &setup.scenario.stations,
                contacts_until,
            },
            burn,
            conj.primary_drag,
            &bar,
        );
        bar.finish();
        out.map_err(|err| anyhow::anyhow!("--horizon-days: {err}"))
    };
    if !(args.horizon_days.is_finite() && args.horizon_days > 0.0 && args.horizon_days <= 30.0) {
        bail!("--horizon-days must be above 0 and at most 30");
    }
    if !(args.contact_hours.is_finite() && args.contact_hours >= 0.0) {
        bail!("--contact-hours must not be negative");
    }
    let (found, note) = match &setup.sets {
        Some((ps, _)) => (Some(consequences_of(ps)?), None),
        None => (
            None,
            Some(
                "new close approaches and contact shifts need the primary's element set and a \
                 catalog: give --elements/--catalog or --scenario with --primary/--secondary/--tca"
                    .to_string(),
            ),
        ),
    };
    match format {
        Format::Json => {
            common::write_json(
                &mut *out,
                &BurnJson {
                    primary_catalog_number: setup.primary_catalog_number,
                    secondary_catalog_number: setup.secondary_catalog_number,
                    burn_time: e.burn.time,
                    dv_ric_m_s: e.burn.dv_ric_m_s,
                    before: &e.before,
                    after: &e.after,
                    covariance_source: label,
                    hard_body_radius_m: setup.hbr_m,
                    hard_body_radius_source: setup.hbr_source.clone(),
                    new_events: found.as_ref().map(|(n, _)| {
                        n.iter()
                            .map(|x| NewEventJson {
                                change: x.change,
                                row: EventRow::new(&x.event, &x.risk),
                                before_miss_distance_km: x.before_miss_distance_km,
                                before_pc: x.before_pc,
                            })
                            .collect()
                    }),
                    new_events_until: found.as_ref().map(|_| horizon),
                    contact_shifts: found.as_ref().map(|(_, c)| c.as_slice()),
                    note: note.clone(),
                },
            )?;
        }
        _ => {
            write_burn_table(out, &setup, &e, &label)?;
            write_consequences(out, found.as_ref(), note.as_deref(), horizon)?;
        }
    }
    Ok(())
}

fn pc_text(p: Option<f64>) -> String {
    p.map(|p| format!("{p:.2e}")).unwrap_or_else(|| "-".into())
}

fn write_burn_table(out: &mut dyn Write, s: &Setup, e: &BurnEffect, label: &str) -> Result<()> {
    writeln!(
        out,
        "Burn of {} / {} / {} m/s (radial / in-track / cross-track) at {} by {} against {}\n",
        e.burn.dv_ric_m_s[0],
        e.burn.dv_ric_m_s[1],
        e.burn.dv_ric_m_s[2],
        e.burn.time.to_iso_ms(),
        s.primary_catalog_number,
        s.secondary_catalog_number
    )?;
    writeln!(out, "{:<22} {:>26} {:>26}", "", "before", "after")?;
    let row = |out: &mut dyn Write, name: &str, a: String, b: String| -> std::io::Result<()> {
        writeln!(out, "{name:<22} {a:>26} {b:>26}")
    };
    let (b, a) = (&e.before, &e.after);
    row(out, "TCA (UTC)", b.tca.to_iso_ms(), a.tca.to_iso_ms())?;
    row(
        out,
        "miss distance km",
        format!("{:.3}", b.miss_distance_km),
        format!("{:.3}", a.miss_distance_km),
    )?;
    row(
        out,
        "R / I / C km",
        format!(
            "{:.3} / {:.3} / {:.3}",
            b.radial_km, b.in_track_km, b.cross_track_km
        ),
        format!(
            "{:.3} / {:.3} / {:.3}",
            a.radial_km, a.in_track_km, a.cross_track_km
        ),
    )?;
    row(
        out,
        "relative speed km/s",
        format!("{:.3}", b.relative_speed_km_s),
        format!("{:.3}", a.relative_speed_km_s),
    )?;
    row(out, "Pc", pc_text(b.pc), pc_text(a.pc))?;
    row(out, "Pc max", pc_text(b.pc_max), pc_text(a.pc_max))?;
    writeln!(
        out,
        "\nPc with {label}; hard-body radius {} m ({}).",
        s.hbr_m, s.hbr_source
    )?;
    writeln!(
        out,
        "The burn's effect: numerical propagation (J2-J4, drag from B*) added to the usual trajectory."
    )?;
    writeln!(out, "{CAUTION}")?;
    Ok(())
}

fn write_consequences(
    out: &mut dyn Write,
    found: Option<&(Vec<NewEvent>, Vec<ContactShift>)>,
    note: Option<&str>,
    horizon: UtcTime,
) -> Result<()> {
    let Some((events, shifts)) = found else {
        if let Some(n) = note {
            writeln!(out, "\nNot looked for: {n}.")?;
        }
        return Ok(());
    };
    writeln!(
        out,
        "\nClose approaches the burn creates or worsens until {}: {}",
        horizon.to_iso_s(),
        if events.is_empty() { "none found" } else { "" }
    )?;
    for x in events {
        let e = &x.event;
        writeln!(
            out,
            "  {:<9} {} / {} at {}: miss {:.3} km{}, Pc {}",
            x.change,
            e.primary,
            e.secondary,
            e.tca.to_iso_ms(),
            e.miss_distance_km,
            x.before_miss_distance_km
                .map(|m| format!(" (was {m:.3} km)"))
                .unwrap_or_default(),
            pc_text(x.risk.as_ref().ok().map(|r| r.pc))
        )?;
    }
    writeln!(
        out,
        "\nContact windows after the burn (shift of AOS / LOS):"
    )?;
    for c in shifts {
        match (c.aos_before, c.aos_after) {
            (Some(b), Some(_)) => writeln!(
                out,
                "  {:<14} {}  AOS {:+.1} s, LOS {:+.1} s, max elevation {:.1} -> {:.1} deg",
                c.station,
                b.to_iso_s(),
                c.aos_shift_s.unwrap_or(0.0),
                c.los_shift_s.unwrap_or(0.0),
                c.max_elevation_before_deg.unwrap_or(f64::NAN),
                c.max_elevation_after_deg.unwrap_or(f64::NAN)
            )?,
            (Some(b), None) => writeln!(out, "  {:<14} {}  gone", c.station, b.to_iso_s())?,
            (None, Some(a)) => writeln!(out, "  {:<14} {}  new", c.station, a.to_iso_s())?,
            (None, None) => {}
        }
    }
    Ok(())
}

fn write_trade_table(
    out: &mut dyn Write,
    s: &Setup,
    t: &Trade,
    req: &TradeRequest,
    label: &str,
) -> Result<()> {
    writeln!(
        out,
        "Trade for {} against {}: TCA {}, miss {:.3} km, Pc {} now\n",
        s.primary_catalog_number,
        s.secondary_catalog_number,
        t.before.tca.to_iso_ms(),
        t.before.miss_distance_km,
        pc_text(t.before.pc)
    )?;
    writeln!(
        out,
        "Pc after an in-track burn (rows: orbits before TCA; columns: dv m/s)"
    )?;
    write!(out, "{:>8}", "orbits")?;
    for d in &req.dv_m_s {
        write!(out, " {d:>9}")?;
    }
    writeln!(out)?;
    for &o in &req.orbits_before {
        write!(out, "{o:>8}")?;
        for d in &req.dv_m_s {
            let cell = t
                .trade
                .iter()
                .find(|r| r.orbits_before == o && r.dv_in_track_m_s == *d)
                .map(|r| pc_text(r.pc))
                .unwrap_or_default();
            write!(out, " {cell:>9}")?;
        }
        writeln!(out)?;
    }
    writeln!(
        out,
        "\nSmallest in-track dv for Pc < {:.1e} and miss > {} km:",
        req.target_pc, req.target_miss_km
    )?;
    for m in &t.smallest {
        match m.dv_in_track_m_s {
            Some(dv) => writeln!(
                out,
                "  {:>4} orbits before ({}): {dv:+.4} m/s -> miss {:.3} km, Pc {}",
                m.orbits_before,
                m.burn_time.to_iso_ms(),
                m.miss_distance_km.unwrap_or(f64::NAN),
                pc_text(m.pc)
            )?,
            None => writeln!(
                out,
                "  {:>4} orbits before ({}): none up to the largest dv of the grid",
                m.orbits_before,
                m.burn_time.to_iso_ms()
            )?,
        }
    }
    writeln!(
        out,
        "\nPc with {label}; hard-body radius {} m ({}).",
        s.hbr_m, s.hbr_source
    )?;
    writeln!(out, "{CAUTION}")?;
    Ok(())
}
