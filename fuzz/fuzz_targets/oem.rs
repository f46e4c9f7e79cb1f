//! The OEM reader (KVN and XML), then interpolation over every usable span
//! of whatever loaded: a message that loads must never make the interpolator
//! panic or loop.
#![no_main]

use libfuzzer_sys::fuzz_target;
use passlane_orbit::ephemeris::load_oem;
use passlane_orbit::EarthOrientation;

fuzz_target!(|data: &[u8]| {
    let (eph, _diagnostics) = load_oem(data, "fuzz.oem", &EarthOrientation::default());
    if let Some(eph) = eph {
        for span in eph.spans() {
            let _ = eph.state_at(span.start);
            let _ = eph.state_at(span.start.add_s(0.5 * span.stop.s_since(span.start)));
            let _ = eph.state_at(span.stop);
        }
        let _ = eph.radius_range_km();
    }
});
