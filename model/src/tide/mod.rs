//! Tides: the constituent table, astronomical arguments and nodal corrections, harmonic
//! analysis by least squares, prediction, tidal datums, the derived minor flood threshold,
//! tide-driven risk days for a future season and the tidal driver of the count model.
//!
//! The library takes plain slices: times as unix seconds (`i64`, UTC) and levels in metres
//! (`f64`, NaN = missing). Reading files is left to the caller.

pub mod analysis;
pub mod astro;
pub mod constituents;
pub mod datums;
pub mod predict;
pub mod risk;
pub mod threshold;

pub use analysis::{AnalysisConfig, AnalysisParams};
pub use constituents::{Constituent, STANDARD};
pub use datums::{Datums, DatumsConfig, DatumsParams, Epoch, HighLow};

pub use predict::{ConstituentValue, FitSummary, FittedConstituent, TideModel};
pub use risk::{DailyHigh, RiskConfig, RiskParams};
pub use threshold::{DerivedThreshold, derived_minor_threshold};

/// Errors of tidal analysis, prediction and datums.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum TideError {
    /// Times and levels of different lengths.
    #[error("{times} times but {levels} levels")]
    LengthMismatch {
        /// Number of times.
        times: usize,
        /// Number of levels.
        levels: usize,
    },
    /// Times not strictly increasing.
    #[error(
        "times must be strictly increasing: sample {index} (unix time {time}) is not after the one before"
    )]
    Unsorted {
        /// Index of the offending sample.
        index: usize,
        /// Its time, unix seconds.
        time: i64,
    },
    /// Fewer valid samples than parameters to fit.
    #[error("{samples} valid samples are too few to fit {parameters} parameters")]
    TooFewSamples {
        /// Valid (non-missing) samples.
        samples: usize,
        /// Parameters of the fit.
        parameters: usize,
    },
    /// The record is too short to resolve any constituent.
    #[error(
        "a record of {span_hours:.1} hours resolves no tidal constituent (at least ~13 hours needed)"
    )]
    NoConstituents {
        /// Record span in hours.
        span_hours: f64,
    },
    /// A constituent name not in the standard table.
    #[error("unknown tidal constituent {0:?}")]
    UnknownConstituent(String),
    /// The same constituent named twice.
    #[error("tidal constituent {0:?} given twice")]
    DuplicateConstituent(String),
    /// The normal equations are singular: gaps leave some constituents unresolved.
    #[error(
        "the normal equations are singular: the record's gaps leave some of the {constituents} constituents unresolved"
    )]
    Singular {
        /// Number of constituents in the fit.
        constituents: usize,
    },
    /// A parameter outside its range (NaN included).
    #[error("{name} = {value} is out of range ({expected})")]
    BadParameter {
        /// The parameter's name.
        name: &'static str,
        /// The value given.
        value: f64,
        /// The accepted range, in words.
        expected: &'static str,
    },
    /// Too few high and low waters to compute datums.
    #[error("only {found} high/low waters found; at least {needed} are needed for datums")]
    TooFewTides {
        /// High and low waters found.
        found: usize,
        /// The minimum.
        needed: usize,
    },
}

/// Seconds per hour.
pub(crate) const HOUR: f64 = 3600.0;
/// Hours per Julian year, the unit of trends.
pub(crate) const HOURS_PER_YEAR: f64 = 8766.0;

/// Checks that `times` and `levels` match in length and times strictly increase.
pub(crate) fn check_series(times: &[i64], levels: &[f64]) -> Result<(), TideError> {
    if times.len() != levels.len() {
        return Err(TideError::LengthMismatch {
            times: times.len(),
            levels: levels.len(),
        });
    }
    for (index, pair) in times.windows(2).enumerate() {
        if pair[1] <= pair[0] {
            return Err(TideError::Unsorted {
                index: index + 1,
                time: pair[1],
            });
        }
    }
    Ok(())
}
