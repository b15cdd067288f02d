//! Brier score of an event `N >= k` and its Murphy decomposition.
//!
//! The Brier score (Brier 1950, Monthly Weather Review 78) is the mean over cases of
//! `(p - o)^2`, with `p` the forecast probability of the event and `o` one if it happened,
//! zero if not. Murphy (1973, J. Appl. Meteor. 12) splits it, over bins of forecast
//! probability, into `reliability - resolution + uncertainty`:
//!
//! - reliability `= sum_b n_b (pbar_b - obar_b)^2 / N` (lower is better),
//! - resolution `= sum_b n_b (obar_b - obar)^2 / N` (higher is better),
//! - uncertainty `= obar (1 - obar)`,
//!
//! with `n_b`, `pbar_b`, `obar_b` the count, mean forecast and observed frequency in bin `b`
//! (bins as in [`ProbabilityBins`]) and `obar` the overall base rate. The split is exact when
//! every forecast in a bin has the same value; otherwise the remainder, the within-bin terms of
//! Stephenson, Coelho and Jolliffe (2008, Weather and Forecasting 23), is reported as
//! [`BrierDecomposition::within_bin`] so the parts always add up to the score. The Brier
//! skill score is `BSS = 1 - BS / BS_reference` ([`super::skill_score`]); against the
//! sample climatology, `BS_reference` is the uncertainty term.

use super::reliability::{ProbabilityBins, ReliabilityBin, reliability_diagram};
use super::{VerifyError, check_event_forecasts};

/// Probability that the count is at least `days`: `sum_{j >= days} pmf[j]`, clamped to
/// `[0, 1]` against rounding.
pub fn exceedance_probability(pmf: &[f64], days: u32) -> f64 {
    let start = (days as usize).min(pmf.len());
    // A fold from +0.0: an empty float sum is -0.0, which would print as "-0.0".
    pmf[start..]
        .iter()
        .fold(0.0, |sum, p| sum + p)
        .clamp(0.0, 1.0)
}

/// Brier score of one case.
pub fn brier_case(probability: f64, happened: bool) -> f64 {
    let o = if happened { 1.0 } else { 0.0 };
    (probability - o) * (probability - o)
}

/// Mean Brier score of paired forecast probabilities and outcomes.
///
/// # Errors
/// Unequal lengths, no cases, or a probability outside `[0, 1]`.
pub fn brier_score(probabilities: &[f64], outcomes: &[bool]) -> Result<f64, VerifyError> {
    check_event_forecasts("Brier score", probabilities, outcomes)?;
    let total: f64 = probabilities
        .iter()
        .zip(outcomes)
        .map(|(&p, &o)| brier_case(p, o))
        .sum();
    Ok(total / probabilities.len() as f64)
}

/// The Brier score and its Murphy (1973) decomposition over probability bins.
#[derive(Debug, Clone, PartialEq)]
pub struct BrierDecomposition {
    /// The Brier score.
    pub score: f64,
    /// Reliability term (lower is better).
    pub reliability: f64,
    /// Resolution term (higher is better).
    pub resolution: f64,
    /// Uncertainty term: base rate times one minus it.
    pub uncertainty: f64,
    /// What is left when forecasts in a bin differ: `score - (reliability - resolution +
    /// uncertainty)`; zero when every forecast takes its bin's single value.
    pub within_bin: f64,
    /// Observed frequency of the event over all cases.
    pub base_rate: f64,
    /// The bins the decomposition was taken over.
    pub bins: Vec<ReliabilityBin>,
}

/// Brier score with its decomposition over `bins`.
///
/// # Errors
/// As [`brier_score`].
pub fn brier_decomposition(
    probabilities: &[f64],
    outcomes: &[bool],
    bins: ProbabilityBins,
) -> Result<BrierDecomposition, VerifyError> {
    let score = brier_score(probabilities, outcomes)?;
    let diagram = reliability_diagram(probabilities, outcomes, bins)?;
    let n = probabilities.len() as f64;
    let base_rate = outcomes.iter().filter(|&&o| o).count() as f64 / n;
    let mut reliability = 0.0;
    let mut resolution = 0.0;
    for bin in &diagram {
        if let (Some(p), Some(o)) = (bin.mean_forecast, bin.observed_frequency) {
            let weight = bin.count as f64 / n;
            reliability += weight * (p - o) * (p - o);
            resolution += weight * (o - base_rate) * (o - base_rate);
        }
    }
    let uncertainty = base_rate * (1.0 - base_rate);
    Ok(BrierDecomposition {
        score,
        reliability,
        resolution,
        uncertainty,
        within_bin: score - (reliability - resolution + uncertainty),
        base_rate,
        bins: diagram,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exceedance_sums_the_upper_tail() {
        let pmf = [0.1, 0.2, 0.3, 0.4];
        assert!((exceedance_probability(&pmf, 2) - 0.7).abs() < 1e-15);
        assert_eq!(exceedance_probability(&pmf, 0), 1.0);
        let beyond = exceedance_probability(&pmf, 9);
        assert!(beyond == 0.0 && beyond.is_sign_positive());
    }

    #[test]
    fn brier_of_sure_forecasts() {
        // Brier (1950): 0 for sure and right, 1 for sure and wrong.
        assert_eq!(brier_score(&[1.0, 0.0], &[true, false]), Ok(0.0));
        assert_eq!(brier_score(&[0.0, 1.0], &[true, false]), Ok(1.0));
        assert!(brier_score(&[1.5], &[true]).is_err());
        assert!(brier_score(&[0.5], &[]).is_err());
        assert!(brier_score(&[], &[]).is_err());
    }

    #[test]
    fn decomposition_is_exact_when_forecasts_take_bin_values() {
        // Ten equal-width bins; forecasts only at bin centres, so each bin holds one value
        // and Murphy's identity BS = REL - RES + UNC holds exactly.
        let values = [0.05, 0.15, 0.35, 0.65, 0.95];
        let mut probs = Vec::new();
        let mut outcomes = Vec::new();
        for (i, &p) in values.iter().enumerate() {
            for j in 0..(7 + i) {
                probs.push(p);
                outcomes.push((j * 3 + i) % 4 == 0);
            }
        }
        let bins = ProbabilityBins::equal_width(10).expect("ten bins");
        let d = brier_decomposition(&probs, &outcomes, bins).expect("valid forecasts");
        assert!(d.within_bin.abs() < 1e-15, "within-bin {}", d.within_bin);
        assert!((d.reliability - d.resolution + d.uncertainty - d.score).abs() < 1e-15);
        assert!(d.reliability > 0.0 && d.resolution > 0.0);
    }

    #[test]
    fn decomposition_keeps_a_within_bin_remainder_otherwise() {
        let probs = [0.01, 0.09, 0.5, 0.52];
        let outcomes = [false, true, true, false];
        let bins = ProbabilityBins::equal_width(10).expect("ten bins");
        let d = brier_decomposition(&probs, &outcomes, bins).expect("valid forecasts");
        assert!(d.within_bin.abs() > 1e-6);
        let sum = d.reliability - d.resolution + d.uncertainty + d.within_bin;
        assert!((sum - d.score).abs() < 1e-15);
    }

    #[test]
    fn sample_climatology_scores_the_uncertainty_term() {
        // Forecasting the base rate every time: BS = obar (1 - obar), reliability and
        // resolution both zero (Murphy 1973).
        let outcomes = [true, false, false, true, false, false, false, true];
        let probs = [3.0 / 8.0; 8];
        let bins = ProbabilityBins::equal_width(10).expect("ten bins");
        let d = brier_decomposition(&probs, &outcomes, bins).expect("valid forecasts");
        assert!((d.score - 15.0 / 64.0).abs() < 1e-15);
        assert!((d.uncertainty - d.score).abs() < 1e-15);
        assert!(d.reliability.abs() < 1e-15 && d.resolution.abs() < 1e-15);
    }
}
