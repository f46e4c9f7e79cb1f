//! Writing a CDM in KVN, keywords in the standard's order.

use passlane_orbit::UtcTime;

use super::Cdm;
use super::keywords::{COVARIANCE_KEYS, HEADER_KEYS, OBJECT_KEYS, RELATIVE_KEYS, Spec, Unit};

/// Numbers in the shortest form that reads back to the same f64: plain
/// decimals in the everyday range, `1.234E-7` style outside it (KVN accepts
/// both).
pub(super) fn fmt_num(v: f64) -> String {
    let a = v.abs();
    if a == 0.0 || (1e-4..1e9).contains(&a) {
        format!("{v}")
    } else {
        format!("{v:E}")
    }
}

pub(super) fn fmt_time(t: UtcTime) -> String {
    // CCSDS time code "YYYY-MM-DDThh:mm:ss.sss"; the trailing Z is allowed.
    t.to_iso_ms()
}

pub(super) struct KvnWriter<'a, W: std::io::Write> {
    pub(super) w: &'a mut W,
}

impl<W: std::io::Write> KvnWriter<'_, W> {
    fn comments(&mut self, c: &[String]) -> std::io::Result<()> {
        for line in c {
            writeln!(self.w, "COMMENT {line}")?;
        }
        Ok(())
    }

    fn put(
        &mut self,
        table: &[Spec],
        key: &str,
        value: &str,
        unit: Option<&str>,
    ) -> std::io::Result<()> {
        let unit = unit.map(str::to_string).or_else(|| {
            table
                .iter()
                .find(|s| s.key == key)
                .and_then(|s| match s.unit {
                    Unit::Exact(u) => Some(u.to_string()),
                    _ => None,
                })
        });
        match unit {
            Some(u) => writeln!(self.w, "{key:<28} = {value} [{u}]"),
            None => writeln!(self.w, "{key:<28} = {value}"),
        }
    }
}

impl Cdm {
    /// Writes the message as KVN: keywords in the standard's order, units in
    /// brackets as the standard shows them, states in km and km/s and the
    /// covariance in m², m²/s, m²/s².
    pub fn write_kvn(&self, w: &mut impl std::io::Write) -> std::io::Result<()> {
        let mut k = KvnWriter { w };
        let h = &self.header;
        k.comments(&h.comments)?;
        let hdr: Vec<(&str, Option<String>)> = vec![
            ("CCSDS_CDM_VERS", Some(h.ccsds_cdm_vers.clone())),
            ("CREATION_DATE", Some(fmt_time(h.creation_date))),
            ("ORIGINATOR", Some(h.originator.clone())),
            ("MESSAGE_FOR", h.message_for.clone()),
            ("MESSAGE_ID", Some(h.message_id.clone())),
        ];
        for (key, v) in hdr {
            if let Some(v) = v {
                k.put(HEADER_KEYS, key, &v, None)?;
            }
        }

        let r = &self.relative;
        k.comments(&r.comments)?;
        let n = |x: Option<f64>| x.map(fmt_num);
        let t = |x: Option<UtcTime>| x.map(fmt_time);
        let rel: Vec<(&str, Option<String>)> = vec![
            ("TCA", Some(fmt_time(r.tca))),
            ("MISS_DISTANCE", Some(fmt_num(r.miss_distance_m))),
            ("RELATIVE_SPEED", n(r.relative_speed_m_s)),
            ("RELATIVE_POSITION_R", n(r.relative_position_rtn_m[0])),
            ("RELATIVE_POSITION_T", n(r.relative_position_rtn_m[1])),
            ("RELATIVE_POSITION_N", n(r.relative_position_rtn_m[2])),
            ("RELATIVE_VELOCITY_R", n(r.relative_velocity_rtn_m_s[0])),
            ("RELATIVE_VELOCITY_T", n(r.relative_velocity_rtn_m_s[1])),
            ("RELATIVE_VELOCITY_N", n(r.relative_velocity_rtn_m_s[2])),
            ("START_SCREEN_PERIOD", t(r.start_screen_period)),
            ("STOP_SCREEN_PERIOD", t(r.stop_screen_period)),
            ("SCREEN_VOLUME_FRAME", r.screen_volume_frame.clone()),
            ("SCREEN_VOLUME_SHAPE", r.screen_volume_shape.clone()),
            ("SCREEN_VOLUME_X", n(r.screen_volume_xyz_m[0])),
            ("SCREEN_VOLUME_Y", n(r.screen_volume_xyz_m[1])),
            ("SCREEN_VOLUME_Z", n(r.screen_volume_xyz_m[2])),
            ("SCREEN_ENTRY_TIME", t(r.screen_entry_time)),
            ("SCREEN_EXIT_TIME", t(r.screen_exit_time)),
            ("COLLISION_PROBABILITY", n(r.collision_probability)),
            (
                "COLLISION_PROBABILITY_METHOD",
                r.collision_probability_method.clone(),
            ),
        ];
        for (key, v) in rel {
            if let Some(v) = v {
                k.put(RELATIVE_KEYS, key, &v, None)?;
            }
        }

        for o in [&self.object1, &self.object2] {
            k.comments(&o.comments)?;
            for s in OBJECT_KEYS {
                let typed: Option<String> = match s.key {
                    "OBJECT" => Some(o.object.clone()),
                    "OBJECT_DESIGNATOR" => Some(o.object_designator.clone()),
                    "CATALOG_NAME" => Some(o.catalog_name.clone()),
                    "OBJECT_NAME" => Some(o.object_name.clone()),
                    "INTERNATIONAL_DESIGNATOR" => Some(o.international_designator.clone()),
                    "EPHEMERIS_NAME" => Some(o.ephemeris_name.clone()),
                    "COVARIANCE_METHOD" => Some(o.covariance_method.clone()),
                    "MANEUVERABLE" => Some(o.maneuverable.clone()),
                    "REF_FRAME" => Some(o.ref_frame.clone()),
                    "X" => Some(fmt_num(o.state.position_km[0])),
                    "Y" => Some(fmt_num(o.state.position_km[1])),
                    "Z" => Some(fmt_num(o.state.position_km[2])),
                    "X_DOT" => Some(fmt_num(o.state.velocity_km_s[0])),
                    "Y_DOT" => Some(fmt_num(o.state.velocity_km_s[1])),
                    "Z_DOT" => Some(fmt_num(o.state.velocity_km_s[2])),
                    key => COVARIANCE_KEYS
                        .iter()
                        .position(|c| *c == key)
                        .map(|i| fmt_num(o.covariance_rtn[i])),
                };
                if let Some(v) = typed {
                    k.put(OBJECT_KEYS, s.key, &v, None)?;
                } else if let Some(f) = o.other.iter().find(|f| f.keyword == s.key) {
                    k.put(OBJECT_KEYS, s.key, &f.value, f.unit.as_deref())?;
                }
            }
        }
        Ok(())
    }
}
