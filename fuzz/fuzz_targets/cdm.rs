//! The CDM reader, KVN or XML (chosen by the first character as the CLI does),
//! then the re-assessment of whatever parsed and both writers: a message
//! that parses must never make the geometry or Pc code panic. A message that
//! parsed is also written as XML and read back, so the XML reader sees every
//! shape the KVN reader accepts (seeds of both forms are in the corpus).
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
        let mut xml = Vec::new();
        if cdm.write_xml(&mut xml).is_ok()
            && let Ok(xml) = String::from_utf8(xml)
        {
            let _ = Cdm::parse(&xml, "fuzz.xml");
        }
    }
});
