//! Limits of every sampled table the tool hands out: pointing tables
//! (`passlane track`, the hand-off's `pointing/*.csv`), states on a grid
//! (`passlane ephemeris`) and OEM files.
//!
//! Two limits, checked before any sample is computed, so a step that cannot
//! advance or a table that cannot fit in memory is a clear error instead of a
//! hang, an allocation failure or an empty file:
//!
//! - [`MIN_STEP_S`] = 1 ms: every table prints its times with milliseconds
//!   (pointing rows lie on whole milliseconds, ephemeris and OEM epochs are
//!   written to the millisecond), so a finer step only repeats printed times;
//!   below about 1e-7 s the step no longer even moves a time near 2026
//!   (`UtcTime` holds seconds since J2000 in an `f64`, whose spacing there is
//!   2^-23 s ≈ 1.2e-7 s) and the table never advances.
//! - [`MAX_SAMPLES`] = 10 million rows per table (and for the whole set of
//!   pointing tables of a hand-off, which is built in memory): a row takes
//!   ~100 bytes as a number record or as text, so the cap keeps a table near
//!   1 GB; a week at one row per second per spacecraft is 0.6 million.
//!
//! The shells name the flag (`--step-s`, `--pointing-step-s`) in front of
//! these messages.

use std::fmt;

use passlane_orbit::{PropagationError, TimeGrid, UtcTime};

/// The smallest sampling step, s: the printed time resolution (1 ms).
pub const MIN_STEP_S: f64 = 1e-3;

/// The largest number of rows of one table (see the module docs).
pub const MAX_SAMPLES: usize = 10_000_000;

/// Why a table cannot be sampled at the step asked for.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum StepError {
    /// Zero, negative or not a number.
    NotPositive { step_s: f64 },
    /// Positive but below [`MIN_STEP_S`].
    BelowResolution { step_s: f64 },
    /// More than [`MAX_SAMPLES`] rows (`rows` may be astronomically large).
    TooManySamples { rows: f64, step_s: f64 },
}

impl fmt::Display for StepError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            StepError::NotPositive { step_s } => {
                write!(
                    f,
                    "the step must be a positive number of seconds, not {step_s}"
                )
            }
            StepError::BelowResolution { step_s } => write!(
                f,
                "a step of {step_s} s is below the 1 ms resolution of the printed times \
                 (the smallest step is {MIN_STEP_S} s)"
            ),
            StepError::TooManySamples { rows, step_s } => write!(
                f,
                "a step of {step_s} s gives {rows:.0} rows, more than the cap of {MAX_SAMPLES}: \
                 raise the step or shorten the window"
            ),
        }
    }
}

impl std::error::Error for StepError {}

/// Checks a step against [`MIN_STEP_S`] (and that it is a positive number).
pub fn check_step(step_s: f64) -> Result<(), StepError> {
    if step_s.is_nan() || step_s <= 0.0 || step_s.is_infinite() {
        return Err(StepError::NotPositive { step_s });
    }
    if step_s < MIN_STEP_S {
        return Err(StepError::BelowResolution { step_s });
    }
    Ok(())
}

/// Rows of a table over `span_s` at `step_s`, both ends included
/// (`floor(span / step) + 2` at most), checked against both limits. The
/// count is formed in `f64`, so a huge ratio is reported, never wrapped.
pub fn row_count(span_s: f64, step_s: f64) -> Result<usize, StepError> {
    check_step(step_s)?;
    let rows = (span_s.max(0.0) / step_s).floor() + 2.0;
    if rows.is_nan() || rows > MAX_SAMPLES as f64 {
        return Err(StepError::TooManySamples { rows, step_s });
    }
    Ok(rows as usize)
}

/// The regular grid from `start` to `end` at `step_s`, checked.
pub fn grid(start: UtcTime, end: UtcTime, step_s: f64) -> Result<TimeGrid, StepError> {
    row_count(end.s_since(start), step_s)?;
    Ok(TimeGrid::covering(start, end, step_s))
}

/// Why a sampled table could not be made.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum TableError {
    Step(StepError),
    Propagation(PropagationError),
}

impl fmt::Display for TableError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            TableError::Step(e) => e.fmt(f),
            TableError::Propagation(e) => e.fmt(f),
        }
    }
}

impl std::error::Error for TableError {}

impl From<StepError> for TableError {
    fn from(e: StepError) -> Self {
        TableError::Step(e)
    }
}

impl From<PropagationError> for TableError {
    fn from(e: PropagationError) -> Self {
        TableError::Propagation(e)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn limits() {
        assert!(check_step(1e-3).is_ok());
        for bad in [0.0, -1.0, f64::NAN, f64::INFINITY] {
            assert!(matches!(
                check_step(bad),
                Err(StepError::NotPositive { .. })
            ));
        }
        for tiny in [1e-9, 1e-17, 1e-300, 9.99e-4] {
            assert!(matches!(
                check_step(tiny),
                Err(StepError::BelowResolution { .. })
            ));
        }
        assert_eq!(row_count(10.0, 1.0), Ok(12));
        assert_eq!(row_count(0.0, 1.0), Ok(2));
        // A day at 1 ms is 86.4 million rows: over the cap.
        assert!(matches!(
            row_count(86_400.0, 1e-3),
            Err(StepError::TooManySamples { .. })
        ));
    }
}
