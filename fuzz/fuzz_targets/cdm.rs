//! The CDM (KVN) reader, then the re-assessment of whatever parsed: a message
//! that parses must never make the geometry or Pc code panic.
#![no_main]

use libfuzzer_sys::fuzz_target;
use passlane_plan::cdm::Cdm;

fuzz_target!(|data: &[u8]| {
    // The CLI reads the file as UTF-8 first; non-UTF-8 never reaches the parser.
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    if let Ok(cdm) = Cdm::parse(text, "fuzz.cdm") {
        let _ = cdm.recompute(10.0);
        let mut out = Vec::new();
        let _ = cdm.write_kvn(&mut out);
    }
});
