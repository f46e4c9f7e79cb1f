//! The brute-force definition of a contact window the pass tests compare
//! with: direct SGP4 every second, "up" when the look angles say so.

use passlane_orbit::{EarthOrientation, LookAngles, Propagator, Site, UtcTime};
use passlane_plan::passes::Pass;
use passlane_plan::pointing::look_at;

/// Every interval (s since `start`, first and last second up) in which
/// `up` holds at whole seconds over `seconds` seconds.
pub fn intervals_up(
    prop: &Propagator,
    site: &Site,
    start: UtcTime,
    seconds: usize,
    up: impl Fn(&LookAngles) -> bool,
) -> Vec<(f64, f64)> {
    let eop = EarthOrientation::default();
    let mut intervals = Vec::new();
    let mut up_since: Option<f64> = None;
    for k in 0..=seconds {
        let l = look_at(prop, site, start.add_s(k as f64), &eop).unwrap();
        match (up(&l), up_since) {
            (true, None) => up_since = Some(k as f64),
            (false, Some(a)) => {
                intervals.push((a, k as f64 - 1.0));
                up_since = None;
            }
            _ => {}
        }
    }
    if let Some(a) = up_since {
        intervals.push((a, seconds as f64));
    }
    intervals
}

/// One to one: each interval has a pass whose AOS is within the second
/// before its first sample (or on the window's start) and whose LOS is
/// within the second after its last, so two intervals split by a dip below
/// a mask are two passes, not one; and each reported pass longer than 1 s
/// contains a sample.
pub fn assert_one_to_one(label: &str, intervals: &[(f64, f64)], ours: &[&Pass], start: UtcTime) {
    for (a, b) in intervals {
        let hit = ours.iter().any(|p| {
            let (aos, los) = (p.aos.s_since(start), p.los.s_since(start));
            aos <= a + 1e-3 && aos >= a - 1.0 - 1e-3 && los >= b - 1e-3 && los <= b + 1.0 + 1e-3
        });
        assert!(
            hit,
            "{label}: brute-force interval {a}..{b} s has no pass starting and ending with it"
        );
    }
    for p in ours.iter().filter(|p| p.duration_s > 1.0) {
        let (a, b) = (p.aos.s_since(start), p.los.s_since(start));
        assert!(
            intervals.iter().any(|(x, y)| *x <= b && *y >= a),
            "{label}: pass {} not seen by sampling",
            p.aos
        );
    }
}
