//! TLE reader (placeholder: being written).
use super::{LoadOptions, LoadReport};

pub fn tle_checksum(line: &[u8]) -> u8 {
    let mut sum = 0u32;
    for &b in line.iter().take(68) {
        if b.is_ascii_digit() {
            sum += u32::from(b - b'0');
        } else if b == b'-' {
            sum += 1;
        }
    }
    (sum % 10) as u8
}

pub(super) fn load_tle(_bytes: &[u8], _file: &str, _options: LoadOptions, _report: &mut LoadReport) {}
