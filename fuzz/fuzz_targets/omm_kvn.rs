//! The OMM KVN reader: every input is made to look like KVN by a leading
//! `CCSDS_OMM_VERS` line unless it already names the keyword.
#![no_main]

use libfuzzer_sys::fuzz_target;
use passlane_orbit::elements::{LoadOptions, load};

fuzz_target!(|data: &[u8]| {
    let first = data.iter().find(|b| !b.is_ascii_whitespace());
    let is_kvn = !matches!(first, Some(b'<' | b'[' | b'{'))
        && data.windows(14).any(|w| w == b"CCSDS_OMM_VERS");
    if is_kvn {
        let _ = load(data, "fuzz.kvn", LoadOptions::default());
    } else {
        let mut input = b"CCSDS_OMM_VERS = 2.0\n".to_vec();
        input.extend_from_slice(data);
        let _ = load(&input, "fuzz.kvn", LoadOptions::default());
    }
});
