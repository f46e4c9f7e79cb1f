//! The scenario reader (JSON, migration, validation), then its writer.
#![no_main]

use libfuzzer_sys::fuzz_target;
use passlane_plan::scenario::Scenario;

fuzz_target!(|data: &[u8]| {
    // The CLI and GUI read the file as UTF-8 first; non-UTF-8 never reaches the parser.
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    if let Ok(scenario) = Scenario::from_json(text, "fuzz.json") {
        let _ = scenario.to_json();
    }
});
