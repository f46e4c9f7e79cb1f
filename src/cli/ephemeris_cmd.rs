//! `passlane ephemeris`: states on a regular time grid.

use std::io::Write;

use anyhow::{Result, bail};
use passlane_orbit::frames::earth_fixed_to_geodetic;
use passlane_orbit::{EarthOrientation, Propagator, TemeToEarthFixed, UtcTime};
use serde::Serialize;

use super::args::{EphemerisArgs, Frame};
use super::common::{self, Format, Sources};

#[derive(Serialize)]
#[serde(untagged)]
enum Row {
    Cartesian {
        catalog_number: u32,
        time: UtcTime,
        position_km: [f64; 3],
        velocity_km_s: [f64; 3],
    },
    Geodetic {
        catalog_number: u32,
        time: UtcTime,
        latitude_deg: f64,
        longitude_deg: f64,
        altitude_km: f64,
    },
}

pub fn run(args: &EphemerisArgs, out: &mut dyn Write) -> Result<()> {
    let inputs = common::gather(
        &Sources::new(&args.fleet, Some(&args.window))
            .with_ut1_utc_s(args.earth_orientation.ut1_utc_s),
        false,
    )?;
    let (start, end) = common::window(&inputs)?;
    let step_s = args.step_s;
    passlane_plan::sampling::check_step(step_s).map_err(|e| anyhow::anyhow!("--step-s: {e}"))?;
    let frame = args.frame;
    let format = Format::from(args.format);
    let eop = EarthOrientation {
        ut1_utc_s: args.earth_orientation.ut1_utc_s.unwrap_or(
            inputs
                .scenario
                .as_ref()
                .map(|(_, s)| s.earth_orientation.ut1_utc_s)
                .unwrap_or(0.0),
        ),
        ..EarthOrientation::default()
    };
    let sets = match &args.satellite {
        Some(k) => vec![common::pick_satellite(&inputs.sets, k)?.clone()],
        None => inputs.sets.clone(),
    };
    // One table of every satellite's rows: the row cap holds for all of them.
    let grid = passlane_plan::sampling::grid(start, end, step_s)
        .and_then(|g| {
            passlane_plan::sampling::row_count(end.s_since(start) * sets.len() as f64, step_s)
                .map(|_| g)
        })
        .map_err(|e| anyhow::anyhow!("--step-s: {e}"))?;
    let mut rows = Vec::new();
    let mut failures = 0;
    for set in &sets {
        let prop = match Propagator::new(set) {
            Ok(p) => p,
            Err(e) => {
                common::say(format!("{}: {e}", set.name));
                failures += 1;
                continue;
            }
        };
        let mut cursor = prop.cursor();
        for k in 0..grid.count {
            let t = grid.time(k);
            let s = match cursor.state_at(t) {
                Ok(s) => s,
                Err(e) => {
                    common::say(format!(
                        "{}: {e}; no further states for this satellite",
                        set.name
                    ));
                    failures += 1;
                    break;
                }
            };
            rows.push(match frame {
                Frame::Teme => Row::Cartesian {
                    catalog_number: set.catalog_number,
                    time: t,
                    position_km: s.position_km,
                    velocity_km_s: s.velocity_km_s,
                },
                Frame::EarthFixed | Frame::Geodetic => {
                    let ef = TemeToEarthFixed::at(t, &eop).state(&s.position_km, &s.velocity_km_s);
                    if frame == Frame::EarthFixed {
                        Row::Cartesian {
                            catalog_number: set.catalog_number,
                            time: t,
                            position_km: ef.position_km,
                            velocity_km_s: ef.velocity_km_s,
                        }
                    } else {
                        let g = earth_fixed_to_geodetic(&ef.position_km);
                        Row::Geodetic {
                            catalog_number: set.catalog_number,
                            time: t,
                            latitude_deg: g.latitude_deg,
                            longitude_deg: g.longitude_deg,
                            altitude_km: g.height_km,
                        }
                    }
                }
            });
        }
    }
    match format {
        Format::Json => {
            common::write_json(&mut *out, &rows)?;
        }
        _ => {
            if frame == Frame::Geodetic {
                writeln!(
                    out,
                    "catalog_number,time,latitude_deg,longitude_deg,altitude_km"
                )?;
            } else {
                writeln!(
                    out,
                    "catalog_number,time,x_km,y_km,z_km,vx_km_s,vy_km_s,vz_km_s"
                )?;
            }
            for r in &rows {
                match r {
                    Row::Cartesian {
                        catalog_number,
                        time,
                        position_km: p,
                        velocity_km_s: v,
                    } => writeln!(
                        out,
                        "{catalog_number},{time},{:.6},{:.6},{:.6},{:.9},{:.9},{:.9}",
                        p[0], p[1], p[2], v[0], v[1], v[2]
                    )?,
                    Row::Geodetic {
                        catalog_number,
                        time,
                        latitude_deg,
                        longitude_deg,
                        altitude_km,
                    } => writeln!(
                        out,
                        "{catalog_number},{time},{latitude_deg:.6},{longitude_deg:.6},{altitude_km:.6}"
                    )?,
                }
            }
        }
    }
    if failures > 0 && rows.is_empty() {
        bail!("no states could be computed");
    }
    Ok(())
}
