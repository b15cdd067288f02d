//! Verification scores of seasonal count forecasts.
//!
//! A forecast is a count distribution: a probability mass function over `0..=n_max` whose
//! index is the number of flood days; an observation is the count that happened. This module
//! owns the scores that compare the two, case by case, and the resampling that turns paired
//! per-case scores into a skill interval:
//!
//! - [`crps`]: continuous ranked probability score of a count distribution (and of an ensemble);
//! - [`terciles`]: tercile edges of a reference climatology (with the tie-splitting rule) and
//!   the ranked probability score over the three categories;
//! - [`brier`]: Brier score of `P(N >= k)` and its Murphy decomposition;
//! - [`reliability`]: reliability-diagram bins;
//! - [`roc`]: relative operating characteristic points and area;
//! - [`sedi`]: 2x2 contingency tables and the symmetric extremal dependence index;
//! - [`log_score`](mod@log_score): logarithmic (ignorance) score, and the absolute error of the forecast mean;
//! - [`skill`]: skill score `1 - score / reference`;
//! - [`cases`]: all per-case scores of one forecast system, computed once;
//! - [`bootstrap`]: seeded case resampling of precomputed per-case scores into a 95 % interval
//!   and a plain verdict.
//!
//! Every per-case score is a plain function of one forecast and one observation, so a hindcast
//! computes each case once and the bootstrap only resamples the resulting arrays.

pub mod bootstrap;
pub mod brier;
pub mod cases;
pub mod categories;
pub mod crps;
pub mod log_score;
pub mod reliability;
pub mod roc;
pub mod sedi;
pub mod skill;
pub mod terciles;

pub use bootstrap::{Bootstrap, MIN_RESAMPLES, ScoreGroup, SkillInterval, Verdict, verdict};
pub use brier::{
    BrierDecomposition, brier_case, brier_decomposition, brier_score, exceedance_probability,
};
pub use cases::CaseScores;
pub use categories::CategoryEdges;
pub use crps::{crps_count, crps_ensemble};
pub use log_score::{LOG_SCORE_FLOOR, absolute_error, forecast_mean, log_score};
pub use reliability::{ProbabilityBins, ReliabilityBin, reliability_diagram};
pub use roc::{RocCurve, RocPoint, roc_curve};
pub use sedi::{ContingencyTable, UpperDecileEvent};
pub use skill::{mean_skill_score, skill_score};
pub use terciles::{TercileEdges, rps};

/// Tolerance on the total probability of a forecast's mass function.
pub const PMF_SUM_TOLERANCE: f64 = 1e-6;

/// What can be wrong with the inputs of a score.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum VerifyError {
    /// A probability mass function with no entries.
    #[error("the probability mass function is empty")]
    EmptyPmf,
    /// A probability that is negative, NaN or infinite.
    #[error("probability of {days} days is {value}: it must be finite and non-negative")]
    BadProbability {
        /// The count (index) of the bad entry.
        days: usize,
        /// The bad value.
        value: f64,
    },
    /// Probabilities that do not add up to one.
    #[error("probabilities sum to {sum}, not 1 (tolerance {PMF_SUM_TOLERANCE})")]
    PmfSum {
        /// The sum found.
        sum: f64,
    },
    /// A forecast probability of an event outside `[0, 1]` or NaN.
    #[error("event probability {value} of case {case} is not in [0, 1]")]
    BadEventProbability {
        /// Index of the case.
        case: usize,
        /// The bad value.
        value: f64,
    },
    /// Arrays that must pair up case by case have different lengths.
    #[error("{what}: {left} forecasts but {right} observations or reference scores")]
    LengthMismatch {
        /// Which pairing.
        what: &'static str,
        /// Length of the first array.
        left: usize,
        /// Length of the second array.
        right: usize,
    },
    /// A score needs at least one case.
    #[error("{what} needs at least one case")]
    NoCases {
        /// Which score.
        what: &'static str,
    },
    /// No category edge given.
    #[error("at least one category edge is needed")]
    NoCategoryEdges,
    /// A category edge not above the one before it.
    #[error("edge {index} ({edge}) must be above edge {} ({previous}): edges increase", index - 1)]
    EdgeNotIncreasing {
        /// Index of the edge (from 0).
        index: usize,
        /// Its value.
        edge: u32,
        /// The edge before it.
        previous: u32,
    },
    /// Category edges out of order.
    #[error("category edges [{lower}, {upper}] must satisfy lower <= upper")]
    EdgesOutOfOrder {
        /// The lower edge.
        lower: u32,
        /// The upper edge.
        upper: u32,
    },
    /// A skill score against a reference whose score is zero, negative or not finite.
    #[error("reference score {reference} must be finite and positive for a skill score")]
    BadReferenceScore {
        /// The reference score.
        reference: f64,
    },
    /// A score value (per-case) that is NaN or infinite.
    #[error("score of case {case} is {value}: it must be finite")]
    BadScore {
        /// Index of the case.
        case: usize,
        /// The bad value.
        value: f64,
    },
    /// Too few bootstrap resamples to trust a 95 % percentile interval.
    #[error("{resamples} bootstrap resamples requested; at least {min} are needed")]
    TooFewResamples {
        /// Resamples asked for.
        resamples: usize,
        /// The minimum.
        min: usize,
    },
    /// An ensemble member or an observation that is NaN or infinite.
    #[error("{what} {value} is not finite")]
    NotFinite {
        /// Which value.
        what: &'static str,
        /// The bad value.
        value: f64,
    },
    /// ROC needs both events and non-events among the cases.
    #[error("{events} events and {non_events} non-events: hit and false-alarm rates need both")]
    NoContrast {
        /// Cases where the event happened.
        events: usize,
        /// Cases where it did not.
        non_events: usize,
    },
    /// Zero probability bins for a reliability diagram.
    #[error("a reliability diagram needs at least one probability bin")]
    NoBins,
}

/// Checks a forecast's probability mass function: at least one entry, every entry finite and
/// non-negative, and the total within [`PMF_SUM_TOLERANCE`] of one.
pub fn validate_pmf(pmf: &[f64]) -> Result<(), VerifyError> {
    if pmf.is_empty() {
        return Err(VerifyError::EmptyPmf);
    }
    for (days, &value) in pmf.iter().enumerate() {
        if !(value.is_finite() && value >= 0.0) {
            return Err(VerifyError::BadProbability { days, value });
        }
    }
    let sum: f64 = pmf.iter().sum();
    // Every entry is finite, so the sum is too and a plain comparison is NaN-safe.
    if (sum - 1.0).abs() > PMF_SUM_TOLERANCE {
        return Err(VerifyError::PmfSum { sum });
    }
    Ok(())
}

/// The empirical probability mass function of a sample of counts (index = count).
///
/// Returns an empty vector for an empty sample.
pub fn empirical_pmf(counts: &[u32]) -> Vec<f64> {
    let Some(&max) = counts.iter().max() else {
        return Vec::new();
    };
    let mut pmf = vec![0.0; max as usize + 1];
    let weight = 1.0 / counts.len() as f64;
    for &count in counts {
        pmf[count as usize] += weight;
    }
    pmf
}

/// The `q` quantile of a count distribution: the smallest count `k` with `F(k) >= q` (the
/// mass is taken as given; pass a validated pmf). Returns the last index when rounding leaves
/// `F` just short of `q`.
pub fn quantile_count(pmf: &[f64], q: f64) -> u32 {
    let mut cdf = 0.0;
    for (k, &p) in pmf.iter().enumerate() {
        cdf += p;
        if cdf >= q - QUANTILE_TOLERANCE {
            return k as u32;
        }
    }
    pmf.len().saturating_sub(1) as u32
}

/// Rounding allowance when a cumulative probability is compared with a quantile level.
pub(crate) const QUANTILE_TOLERANCE: f64 = 1e-12;

/// Probability of a count in a mass function, zero beyond its end.
pub(crate) fn mass_at(pmf: &[f64], days: u32) -> f64 {
    pmf.get(days as usize).copied().unwrap_or(0.0)
}

/// Checks paired forecast probabilities and outcomes: equal lengths, at least one case, every
/// probability in `[0, 1]`.
pub(crate) fn check_event_forecasts(
    what: &'static str,
    probabilities: &[f64],
    outcomes: &[bool],
) -> Result<(), VerifyError> {
    if probabilities.len() != outcomes.len() {
        return Err(VerifyError::LengthMismatch {
            what,
            left: probabilities.len(),
            right: outcomes.len(),
        });
    }
    if probabilities.is_empty() {
        return Err(VerifyError::NoCases { what });
    }
    for (case, &value) in probabilities.iter().enumerate() {
        if !((0.0..=1.0).contains(&value)) {
            return Err(VerifyError::BadEventProbability { case, value });
        }
    }
    Ok(())
}

/// Mean of a slice (NaN for an empty slice; callers check emptiness).
pub(crate) fn mean(values: &[f64]) -> f64 {
    values.iter().sum::<f64>() / values.len() as f64
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn validate_pmf_rejects_bad_entries_and_sums() {
        assert_eq!(validate_pmf(&[]), Err(VerifyError::EmptyPmf));
        assert!(matches!(
            validate_pmf(&[0.5, f64::NAN, 0.5]),
            Err(VerifyError::BadProbability { days: 1, .. })
        ));
        assert!(matches!(
            validate_pmf(&[1.2, -0.2]),
            Err(VerifyError::BadProbability { days: 1, .. })
        ));
        assert!(matches!(
            validate_pmf(&[0.5, 0.4]),
            Err(VerifyError::PmfSum { .. })
        ));
        assert_eq!(validate_pmf(&[0.25, 0.75 + 5e-7]), Ok(()));
    }

    #[test]
    fn empirical_pmf_counts_each_value() {
        let pmf = empirical_pmf(&[0, 0, 2, 3]);
        assert_eq!(pmf, vec![0.5, 0.0, 0.25, 0.25]);
        assert!(empirical_pmf(&[]).is_empty());
    }
}
