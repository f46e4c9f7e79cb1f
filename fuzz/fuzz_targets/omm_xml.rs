//! The OMM XML reader: an input whose first non-blank byte is not `<` gets one
//! in front so that the format detection picks XML.
#![no_main]

use libfuzzer_sys::fuzz_target;
use passlane_orbit::elements::{LoadOptions, load};

fuzz_target!(|data: &[u8]| {
    let first = data
        .iter()
        .find(|b| !b.is_ascii_whitespace() && !matches!(b, 0xEF | 0xBB | 0xBF));
    if first == Some(&b'<') {
        let _ = load(data, "fuzz.xml", LoadOptions::default());
    } else {
        let mut input = b"<".to_vec();
        input.extend_from_slice(data);
        let _ = load(&input, "fuzz.xml", LoadOptions::default());
    }
});
