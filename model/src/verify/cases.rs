//! Per-case scores of a set of count forecasts, computed once so that a hindcast's bootstrap
//! only resamples these arrays.

use super::brier::{brier_case, exceedance_probability};
use super::crps::crps_count;
use super::log_score::{absolute_error, log_score};
use super::terciles::TercileEdges;
use super::{VerifyError, mean};

/// Every per-case score of one forecast system over the same cases, in case order.
#[derive(Debug, Clone, PartialEq)]
pub struct CaseScores {
    /// CRPS of each case, in days.
    pub crps: Vec<f64>,
    /// Ranked probability score over the three categories of each case.
    pub rps: Vec<f64>,
    /// Logarithmic score of each case.
    pub log: Vec<f64>,
    /// Absolute error of the forecast mean of each case, in days.
    pub absolute_error: Vec<f64>,
    /// For each `exceed_days` value (same order), the Brier score of `P(N >= k)` per case.
    pub brier: Vec<Vec<f64>>,
    /// The `k` of each entry of `brier`.
    pub exceed_days: Vec<u32>,
}

impl CaseScores {
    /// Scores each forecast pmf against the observed count of the same index. Pmfs should
    /// have passed [`super::validate_pmf`].
    ///
    /// # Errors
    /// Different numbers of forecasts and observations.
    pub fn compute<P: AsRef<[f64]>>(
        pmfs: &[P],
        observed: &[u32],
        edges: &TercileEdges,
        exceed_days: &[u32],
    ) -> Result<Self, VerifyError> {
        if pmfs.len() != observed.len() {
            return Err(VerifyError::LengthMismatch {
                what: "case scores",
                left: pmfs.len(),
                right: observed.len(),
            });
        }
        let n = pmfs.len();
        let mut scores = Self {
            crps: Vec::with_capacity(n),
            rps: Vec::with_capacity(n),
            log: Vec::with_capacity(n),
            absolute_error: Vec::with_capacity(n),
            brier: vec![Vec::with_capacity(n); exceed_days.len()],
            exceed_days: exceed_days.to_vec(),
        };
        for (pmf, &y) in pmfs.iter().zip(observed) {
            let pmf = pmf.as_ref();
            scores.crps.push(crps_count(pmf, y));
            scores.rps.push(edges.rps(pmf, y));
            scores.log.push(log_score(pmf, y));
            scores.absolute_error.push(absolute_error(pmf, y));
            for (brier, &k) in scores.brier.iter_mut().zip(exceed_days) {
                brier.push(brier_case(exceedance_probability(pmf, k), y >= k));
            }
        }
        Ok(scores)
    }

    /// Number of cases.
    pub fn len(&self) -> usize {
        self.crps.len()
    }

    /// Whether there are no cases.
    pub fn is_empty(&self) -> bool {
        self.crps.is_empty()
    }

    /// Mean CRPS (NaN without cases).
    pub fn mean_crps(&self) -> f64 {
        mean(&self.crps)
    }

    /// Mean RPS (NaN without cases).
    pub fn mean_rps(&self) -> f64 {
        mean(&self.rps)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn case_scores_match_the_single_scores() {
        let pmfs = vec![vec![0.5, 0.5], vec![0.2, 0.3, 0.5]];
        let observed = [1, 0];
        let edges = TercileEdges::from_counts(1, 2).expect("ordered");
        let s = CaseScores::compute(&pmfs, &observed, &edges, &[1, 2]).expect("paired");
        assert_eq!(s.len(), 2);
        assert!((s.crps[1] - 0.89).abs() < 1e-12);
        assert!((s.rps[0] - 0.125).abs() < 1e-12);
        assert!((s.brier[0][1] - 0.64).abs() < 1e-12);
        assert!((s.brier[1][1] - 0.25).abs() < 1e-12);
        assert!((s.absolute_error[1] - 1.3).abs() < 1e-12);
        assert!(CaseScores::compute(&pmfs, &[1], &edges, &[]).is_err());
    }
}
