//! The bundled coastline outline (Natural Earth, public domain; see
//! `assets/NOTICE.md`), decoded once from the compact binary asset.
//!
//! Format: magic `PLCL`, u32 LE polyline count, then per polyline a u32 LE point
//! count and that many (i16 LE longitude, i16 LE latitude) pairs in hundredths of
//! a degree. Lines are already split at the antimeridian.

/// The asset, embedded so the map works wherever the binary is copied.
pub const COASTLINES_BIN: &[u8] = include_bytes!("../../../assets/coastlines-50m.bin");

/// One line strip of (longitude_deg, latitude_deg) points.
pub type Polyline = Vec<[f32; 2]>;

/// Decodes the binary asset; `None` when it is truncated or has the wrong magic.
pub fn decode(bytes: &[u8]) -> Option<Vec<Polyline>> {
    let mut rest = bytes.strip_prefix(b"PLCL")?;
    let count = take_u32(&mut rest)? as usize;
    // Cap the preallocation by what the bytes could possibly hold.
    let mut lines = Vec::with_capacity(count.min(rest.len() / 4));
    for _ in 0..count {
        let n = take_u32(&mut rest)? as usize;
        if rest.len() < n * 4 {
            return None;
        }
        let (points, tail) = rest.split_at(n * 4);
        rest = tail;
        let line = points
            .chunks_exact(4)
            .map(|c| {
                let lon = i16::from_le_bytes([c[0], c[1]]);
                let lat = i16::from_le_bytes([c[2], c[3]]);
                [f32::from(lon) / 100.0, f32::from(lat) / 100.0]
            })
            .collect();
        lines.push(line);
    }
    Some(lines)
}

fn take_u32(rest: &mut &[u8]) -> Option<u32> {
    let (head, tail) = rest.split_first_chunk::<4>()?;
    *rest = tail;
    Some(u32::from_le_bytes(*head))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bundled_asset_decodes_into_plausible_lines() {
        let lines = decode(COASTLINES_BIN).unwrap_or_default();
        assert!(lines.len() > 100, "{} lines", lines.len());
        let points: usize = lines.iter().map(Vec::len).sum();
        assert!(points > 10_000, "{points} points");
        for p in lines.iter().flatten() {
            assert!((-180.0..=180.0).contains(&p[0]) && (-90.0..=90.0).contains(&p[1]));
        }
    }

    #[test]
    fn truncated_asset_is_rejected() {
        assert!(decode(&COASTLINES_BIN[..COASTLINES_BIN.len() - 3]).is_none());
        assert!(decode(b"XXXX").is_none());
    }
}
