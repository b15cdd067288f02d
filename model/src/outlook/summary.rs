//! Summaries of a count pmf: mean, quantiles and exceedance probabilities.

use serde::Serialize;

/// `P(N >= days)`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Exceedance {
    /// The number of days `k`.
    pub days: u32,
    /// `P(N >= k)`.
    pub probability: f64,
}

/// The mean of a pmf over `0..`.
pub fn mean(pmf: &[f64]) -> f64 {
    pmf.iter().enumerate().map(|(k, p)| k as f64 * p).sum()
}

/// The smallest count whose cumulative probability reaches `q` (the usual lower quantile of a
/// discrete distribution). A tiny tolerance (1e-12) keeps rounding in the cumulative sum from
/// moving a quantile that sits exactly on a step.
pub fn quantile(pmf: &[f64], q: f64) -> u32 {
    let mut cumulative = 0.0;
    for (k, p) in pmf.iter().enumerate() {
        cumulative += p;
        if cumulative >= q - 1e-12 {
            return k as u32;
        }
    }
    pmf.len().saturating_sub(1) as u32
}

/// `P(N >= k)` for each `k` in `days`.
pub fn exceedance(pmf: &[f64], days: &[u32]) -> Vec<Exceedance> {
    days.iter()
        .map(|&k| Exceedance {
            days: k,
            probability: pmf.iter().skip(k as usize).sum::<f64>().clamp(0.0, 1.0),
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    // A fair six-sided die shifted to 0..=5: mean 2.5, median 2 (P(N <= 2) = 1/2 exactly),
    // P(N >= 5) = 1/6.
    #[test]
    fn uniform_die_summaries() {
        let pmf = [1.0 / 6.0; 6];
        assert!((mean(&pmf) - 2.5).abs() < 1e-12);
        assert_eq!(quantile(&pmf, 0.5), 2);
        assert_eq!(quantile(&pmf, 0.1), 0);
        assert_eq!(quantile(&pmf, 0.9), 5);
        let e = exceedance(&pmf, &[0, 5, 9]);
        assert!((e[0].probability - 1.0).abs() < 1e-12);
        assert!((e[1].probability - 1.0 / 6.0).abs() < 1e-12);
        assert_eq!(e[2].probability, 0.0);
    }
}
