//! The numeric fields of a TLE: catalog numbers (with Alpha-5), counts,
//! decimals, the assumed-point and assumed-exponent forms, and the epoch.

use chrono::{NaiveDate, TimeDelta};

use crate::time::UtcTime;

/// Catalog number: up to five digits, or Alpha-5 (a letter A-Z other than I
/// and O standing for 10-33, then four digits: `A0001` = 100001; common
/// practice for numbers above 99999).
pub(super) fn parse_catalog(s: &str) -> Result<u32, String> {
    let t = s.trim_start();
    let bad =
        || format!("{s:?} is not a catalog number (five digits, or a letter and four digits)");
    let mut chars = t.chars();
    match chars.next() {
        None => Err("the catalog number is blank".to_string()),
        Some(c) if c.is_ascii_uppercase() && c != 'I' && c != 'O' && t.len() == 5 => {
            let rest = chars.as_str();
            if !rest.bytes().all(|b| b.is_ascii_digit()) {
                return Err(bad());
            }
            let mut v = u32::from(c) - u32::from('A');
            if c > 'I' {
                v -= 1;
            }
            if c > 'O' {
                v -= 1;
            }
            let digits: u32 = rest.parse().map_err(|_| bad())?;
            Ok((10 + v) * 10_000 + digits)
        }
        Some(_) if t.bytes().all(|b| b.is_ascii_digit()) => t.parse().map_err(|_| bad()),
        Some(_) => Err(bad()),
    }
}

/// Unsigned count (element set number, revolution number, ephemeris type);
/// blank means 0.
pub(super) fn parse_count(s: &str) -> Result<u32, String> {
    let t = s.trim();
    if t.is_empty() {
        return Ok(0);
    }
    if !t.bytes().all(|b| b.is_ascii_digit()) {
        return Err(format!("{s:?} is not a whole number"));
    }
    t.parse()
        .map_err(|_| format!("{s:?} is not a whole number"))
}

/// A plain decimal number: optional sign, digits, at most one point.
/// (Rust's own float parser would also take `inf` and `NaN`; a TLE never
/// holds those.)
pub(super) fn parse_decimal(s: &str) -> Result<f64, String> {
    let t = s.trim();
    let body = t.strip_prefix(['-', '+']).unwrap_or(t);
    let digits = body.bytes().filter(u8::is_ascii_digit).count();
    let points = body.bytes().filter(|&b| b == b'.').count();
    if digits == 0 || points > 1 || digits + points != body.len() {
        return Err(format!("{s:?} is not a decimal number"));
    }
    t.parse()
        .map_err(|_| format!("{s:?} is not a decimal number"))
}

/// Eccentricity: digits with the leading decimal point assumed (`0010170` = 0.0010170).
pub(super) fn parse_assumed_point(s: &str) -> Result<f64, String> {
    let t = s.trim();
    if t.is_empty() || !t.bytes().all(|b| b.is_ascii_digit()) {
        return Err(format!(
            "{s:?} is not an eccentricity (digits with an assumed leading decimal point)"
        ));
    }
    format!("0.{t}")
        .parse()
        .map_err(|_| format!("{s:?} is not a number"))
}

/// Assumed-decimal exponent form: `-11606-4` = -0.11606e-4; blank means 0.
pub(super) fn parse_exponent_form(s: &str) -> Result<f64, String> {
    let t = s.trim();
    if t.is_empty() {
        return Ok(0.0);
    }
    let bad = || {
        format!(
            "{s:?} is not in the assumed-decimal exponent form (e.g. \" 12345-4\" = 0.12345e-4)"
        )
    };
    let b = t.as_bytes();
    if b.len() < 3 {
        return Err(bad());
    }
    let (mantissa, exponent) = t.split_at(b.len() - 2);
    let exp_sign = exponent.as_bytes()[0];
    let exp_digit = exponent.as_bytes()[1];
    if !matches!(exp_sign, b'+' | b'-' | b' ') || !exp_digit.is_ascii_digit() {
        return Err(bad());
    }
    let exp_sign = if exp_sign == b'-' { "-" } else { "" };
    let (sign, digits) = match mantissa.strip_prefix('-') {
        Some(rest) => ("-", rest),
        None => ("", mantissa.strip_prefix('+').unwrap_or(mantissa)),
    };
    let digits = digits.trim_start();
    let text = if let Some(frac) = digits.strip_prefix('.') {
        if frac.is_empty() || !frac.bytes().all(|b| b.is_ascii_digit()) {
            return Err(bad());
        }
        format!("{sign}0.{frac}e{exp_sign}{}", char::from(exp_digit))
    } else {
        if digits.is_empty() || !digits.bytes().all(|b| b.is_ascii_digit()) {
            return Err(bad());
        }
        format!("{sign}0.{digits}e{exp_sign}{}", char::from(exp_digit))
    };
    text.parse().map_err(|_| bad())
}

/// Epoch `YYDDD.DDDDDDDD`: two-digit year (57-99 → 19xx, else 20xx; common
/// practice) and day of year with fraction, day 1 = 1 January.
///
/// The fraction is turned into whole microseconds with integer arithmetic and
/// the instant is built through the same calendar path as ISO text, so an OMM
/// whose EPOCH carries the same instant to the microsecond gives the very same
/// [`UtcTime`]. (The field resolves 1e-8 day = 864 µs, so nothing is lost.)
pub(super) fn parse_epoch(s: &str) -> Result<UtcTime, String> {
    let bad = |why: &str| format!("{s:?} is not an epoch YYDDD.DDDDDDDD: {why}");
    let (yy, day) = s.split_at(2.min(s.len()));
    if yy.len() != 2 || !yy.bytes().all(|b| b.is_ascii_digit()) {
        return Err(bad("the year (columns 19-20) must be two digits"));
    }
    let yy: i32 = yy.parse().map_err(|_| bad("year"))?;
    let year = if yy >= 57 { 1900 + yy } else { 2000 + yy };
    let day = day.trim();
    let (whole, frac) = day.split_once('.').unwrap_or((day, ""));
    if whole.is_empty()
        || !whole.bytes().all(|b| b.is_ascii_digit())
        || !frac.bytes().all(|b| b.is_ascii_digit())
        || frac.len() > 12
    {
        return Err(bad(
            "the day of year must be digits with an optional fraction",
        ));
    }
    let whole: u32 = whole.parse().map_err(|_| bad("day of year"))?;
    let date = NaiveDate::from_yo_opt(year, whole)
        .ok_or_else(|| bad(&format!("day {whole} does not exist in {year}")))?;
    let frac_value: u128 = if frac.is_empty() {
        0
    } else {
        frac.parse().map_err(|_| bad("fraction"))?
    };
    let scale = 10u128.pow(frac.len() as u32);
    let us = (frac_value * 86_400_000_000 + scale / 2) / scale;
    let us = i64::try_from(us).map_err(|_| bad("fraction"))?;
    let midnight = date.and_hms_opt(0, 0, 0).ok_or_else(|| bad("date"))?;
    Ok(UtcTime::from_naive(midnight + TimeDelta::microseconds(us)))
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    #[test]
    fn alpha5_catalog_numbers() {
        // Alpha-5 (common practice): A=10 ... H=17, J=18 (I skipped), P=23 (O skipped), Z=33.
        assert_eq!(parse_catalog("A0001"), Ok(100_001));
        assert_eq!(parse_catalog("J0000"), Ok(180_000));
        assert_eq!(parse_catalog("P1234"), Ok(231_234));
        assert_eq!(parse_catalog("Z9999"), Ok(339_999));
        assert_eq!(parse_catalog("90001"), Ok(90_001));
        assert_eq!(parse_catalog("  123"), Ok(123));
        assert!(parse_catalog("I0001").is_err());
        assert!(parse_catalog("O0001").is_err());
        assert!(parse_catalog("9x001").is_err());
    }

    #[test]
    fn exponent_form() {
        assert_eq!(parse_exponent_form(" 21000-3"), Ok(0.21e-3));
        assert_eq!(parse_exponent_form("-11606-4"), Ok(-0.11606e-4));
        assert_eq!(parse_exponent_form(" 00000-0"), Ok(0.0));
        assert_eq!(parse_exponent_form(" 00000+0"), Ok(0.0));
        assert_eq!(parse_exponent_form("        "), Ok(0.0));
        assert!(parse_exponent_form(" 2100x-3").is_err());
        assert!(parse_exponent_form("     inf").is_err());
    }

    #[test]
    fn decimals_reject_words() {
        assert_eq!(parse_decimal(" .00000876"), Ok(0.00000876));
        assert_eq!(parse_decimal("-.00000084"), Ok(-0.00000084));
        assert!(parse_decimal("     inf").is_err());
        assert!(parse_decimal("     NaN").is_err());
        assert!(parse_decimal("  1.2.3 ").is_err());
        assert!(parse_decimal("        ").is_err());
    }

    #[test]
    fn epoch_year_pivot_and_fraction() {
        // Two-digit year pivot 57 (common practice): 57 -> 1957, 56 -> 2056.
        assert_eq!(parse_epoch("57001.00000000").unwrap().year(), 1957);
        assert_eq!(parse_epoch("56001.00000000").unwrap().year(), 2056);
        // 26335.5 = 2026-12-01T12:00Z (1 December is day 335 of a common year).
        assert_eq!(
            parse_epoch("26335.50000000").unwrap().to_iso_ms(),
            "2026-12-01T12:00:00.000Z"
        );
        assert_eq!(
            parse_epoch("26335.21354167").unwrap(),
            UtcTime::parse_iso("2026-12-01T05:07:30.000288Z").unwrap()
        );
        assert!(parse_epoch("26366.00000000").is_err());
        assert!(parse_epoch("24366.00000000").is_ok()); // leap year
        assert!(parse_epoch("26000.50000000").is_err());
    }

    #[test]
    fn checksum_of_a_demo_line() {
        let l = b"1 90001U 26901A   26335.21354167  .00000876  00000-0  21000-3 0  9993";
        assert_eq!(super::super::tle_checksum(l), 3);
    }
}
