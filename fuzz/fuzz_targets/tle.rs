//! The TLE reader, through `elements::load` in both strict and lenient mode.
//! Inputs that the format detection would send to an OMM reader are skipped
//! (those readers have their own targets).
#![no_main]

use libfuzzer_sys::fuzz_target;
use passlane_orbit::elements::{LoadOptions, load};

fuzz_target!(|data: &[u8]| {
    let first = data.iter().find(|b| !b.is_ascii_whitespace());
    if matches!(first, Some(b'<' | b'[' | b'{')) || data.windows(14).any(|w| w == b"CCSDS_OMM_VERS")
    {
        return;
    }
    let _ = load(data, "fuzz.tle", LoadOptions { lenient: false });
    let _ = load(data, "fuzz.tle", LoadOptions { lenient: true });
});
