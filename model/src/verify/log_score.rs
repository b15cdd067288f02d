//! Logarithmic score and the absolute error of the forecast mean.
//!
//! The logarithmic (ignorance) score of a count distribution is `-ln p(y)`, the negative log
//! of the probability it gave the observed count (Good 1952, J. R. Stat. Soc. B 14); lower is
//! better. A forecast that gave the observation no probability at all would score infinity,
//! so probabilities below [`LOG_SCORE_FLOOR`] are raised to it: the worst score is
//! `-ln(1e-10) = 23.03`.

use super::mass_at;

/// Smallest probability the logarithmic score takes the log of.
pub const LOG_SCORE_FLOOR: f64 = 1e-10;

/// `-ln max(p(observed), LOG_SCORE_FLOOR)`; counts past the end of `pmf` have probability 0.
pub fn log_score(pmf: &[f64], observed: u32) -> f64 {
    -mass_at(pmf, observed).max(LOG_SCORE_FLOOR).ln()
}

/// Mean of a count distribution, `sum_k k p(k)`.
pub fn forecast_mean(pmf: &[f64]) -> f64 {
    pmf.iter().enumerate().map(|(k, &p)| k as f64 * p).sum()
}

/// Absolute error of the forecast mean, `|mean - observed|`, in days.
pub fn absolute_error(pmf: &[f64], observed: u32) -> f64 {
    (forecast_mean(pmf) - f64::from(observed)).abs()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log_score_of_known_probabilities() {
        let pmf = [0.5, 0.25, 0.25];
        assert!((log_score(&pmf, 0) - std::f64::consts::LN_2).abs() < 1e-15);
        assert!((log_score(&pmf, 2) - 4f64.ln()).abs() < 1e-15);
        // Past the end, and an explicit zero: both floored.
        assert!((log_score(&pmf, 7) - 10.0 * 10f64.ln()).abs() < 1e-12);
        assert_eq!(log_score(&[1.0, 0.0], 1), log_score(&pmf, 7));
    }

    #[test]
    fn mean_and_absolute_error() {
        let pmf = [0.2, 0.3, 0.5];
        assert!((forecast_mean(&pmf) - 1.3).abs() < 1e-15);
        assert!((absolute_error(&pmf, 4) - 2.7).abs() < 1e-15);
    }
}
