//! Reliability-diagram bins: forecast probabilities grouped into bins, with each bin's mean
//! forecast and observed frequency. A perfectly reliable forecast lies on the diagonal
//! (common practice).

use super::{VerifyError, check_event_forecasts};

/// Equal-width bins of forecast probability over `[0, 1]`: bin `i` of `n` holds
/// `i/n <= p < (i+1)/n`, and the last bin also holds `p = 1`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ProbabilityBins {
    count: usize,
}

impl ProbabilityBins {
    /// `count` equal-width bins.
    ///
    /// # Errors
    /// Zero bins.
    pub fn equal_width(count: usize) -> Result<Self, VerifyError> {
        if count == 0 {
            return Err(VerifyError::NoBins);
        }
        Ok(Self { count })
    }

    /// Number of bins.
    pub fn count(&self) -> usize {
        self.count
    }

    /// The bin holding probability `p` (in `[0, 1]`).
    pub fn index(&self, p: f64) -> usize {
        ((p * self.count as f64) as usize).min(self.count - 1)
    }

    /// Lower and upper probability of bin `index`.
    pub fn bounds(&self, index: usize) -> (f64, f64) {
        let n = self.count as f64;
        (index as f64 / n, (index + 1) as f64 / n)
    }
}

impl Default for ProbabilityBins {
    /// Ten bins of width 0.1.
    fn default() -> Self {
        Self { count: 10 }
    }
}

/// One bin of a reliability diagram.
#[derive(Debug, Clone, PartialEq)]
pub struct ReliabilityBin {
    /// Lowest forecast probability of the bin.
    pub lower: f64,
    /// Upper end of the bin (exclusive, except 1 for the last bin).
    pub upper: f64,
    /// Number of forecasts in the bin.
    pub count: usize,
    /// Mean forecast probability in the bin; `None` when it is empty.
    pub mean_forecast: Option<f64>,
    /// Share of the bin's cases in which the event happened; `None` when it is empty.
    pub observed_frequency: Option<f64>,
}

/// Reliability diagram of paired forecast probabilities and outcomes over `bins`.
///
/// # Errors
/// Unequal lengths, no cases, or a probability outside `[0, 1]`.
pub fn reliability_diagram(
    probabilities: &[f64],
    outcomes: &[bool],
    bins: ProbabilityBins,
) -> Result<Vec<ReliabilityBin>, VerifyError> {
    check_event_forecasts("reliability diagram", probabilities, outcomes)?;
    let mut counts = vec![0usize; bins.count];
    let mut forecast_sums = vec![0.0; bins.count];
    let mut event_counts = vec![0usize; bins.count];
    for (&p, &o) in probabilities.iter().zip(outcomes) {
        let b = bins.index(p);
        counts[b] += 1;
        forecast_sums[b] += p;
        event_counts[b] += usize::from(o);
    }
    Ok((0..bins.count)
        .map(|b| {
            let (lower, upper) = bins.bounds(b);
            let n = counts[b];
            let (mean_forecast, observed_frequency) = if n == 0 {
                (None, None)
            } else {
                (
                    Some(forecast_sums[b] / n as f64),
                    Some(event_counts[b] as f64 / n as f64),
                )
            };
            ReliabilityBin {
                lower,
                upper,
                count: n,
                mean_forecast,
                observed_frequency,
            }
        })
        .collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bins_hold_their_edges() {
        let bins = ProbabilityBins::equal_width(10).expect("ten bins");
        assert_eq!(bins.index(0.0), 0);
        assert_eq!(bins.index(0.1), 1);
        assert_eq!(bins.index(0.999), 9);
        assert_eq!(bins.index(1.0), 9);
        assert!(ProbabilityBins::equal_width(0).is_err());
    }

    #[test]
    fn diagram_counts_means_and_frequencies() {
        let probs = [0.05, 0.08, 0.9, 0.95, 1.0];
        let outcomes = [false, true, true, true, false];
        let bins = ProbabilityBins::equal_width(10).expect("ten bins");
        let diagram = reliability_diagram(&probs, &outcomes, bins).expect("valid");
        assert_eq!(diagram.len(), 10);
        assert_eq!(diagram[0].count, 2);
        assert!((diagram[0].mean_forecast.expect("filled") - 0.065).abs() < 1e-15);
        assert_eq!(diagram[0].observed_frequency, Some(0.5));
        assert_eq!(diagram[9].count, 3);
        assert!((diagram[9].observed_frequency.expect("filled") - 2.0 / 3.0).abs() < 1e-15);
        assert_eq!(diagram[5].mean_forecast, None);
    }

    /// Poisson pmf over `0..=n_max` by the recurrence `p(k) = p(k-1) * lambda / k`, with the
    /// tail beyond `n_max` added to the last entry so it sums to one.
    fn poisson_pmf(lambda: f64, n_max: usize) -> Vec<f64> {
        let mut pmf = Vec::with_capacity(n_max + 1);
        let mut p = (-lambda).exp();
        for k in 0..=n_max {
            if k > 0 {
                p *= lambda / k as f64;
            }
            pmf.push(p);
        }
        let sum: f64 = pmf.iter().sum();
        pmf[n_max] += 1.0 - sum;
        pmf
    }

    /// Reliability diagram of `P(N >= 5)` when counts come from Poisson(lambda_i) and the
    /// forecast for each case is Poisson(scale * lambda_i).
    fn synthetic_diagram(scale: f64) -> Vec<ReliabilityBin> {
        use crate::verify::exceedance_probability;
        use rand::{Rng, SeedableRng};
        use rand_distr::{Distribution, Poisson};
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(2026);
        let mut probs = Vec::new();
        let mut outcomes = Vec::new();
        for _ in 0..20_000 {
            let lambda: f64 = rng.gen_range(0.5..12.0);
            let observed: f64 = Poisson::new(lambda)
                .expect("positive rate")
                .sample(&mut rng);
            let pmf = poisson_pmf(scale * lambda, 80);
            probs.push(exceedance_probability(&pmf, 5));
            outcomes.push(observed >= 5.0);
        }
        let bins = ProbabilityBins::equal_width(10).expect("ten bins");
        reliability_diagram(&probs, &outcomes, bins).expect("valid")
    }

    /// Largest distance from the diagonal in binomial standard errors over bins with at least
    /// 100 cases.
    fn worst_departure(diagram: &[ReliabilityBin]) -> f64 {
        diagram
            .iter()
            .filter(|b| b.count >= 100)
            .map(|b| {
                let p = b.mean_forecast.expect("filled");
                let o = b.observed_frequency.expect("filled");
                let se = (p * (1.0 - p) / b.count as f64).sqrt().max(1e-3);
                (o - p).abs() / se
            })
            .fold(0.0, f64::max)
    }

    #[test]
    fn forecasts_from_the_true_model_lie_on_the_diagonal() {
        // Common practice: a perfectly reliable forecast lies on the diagonal; with forecasts
        // drawn from the model that made the data, each bin's observed frequency is within
        // sampling error of its mean forecast. 4 standard errors over 10 bins: a false alarm
        // has probability below 1e-3 (and the seed is fixed).
        let truth = synthetic_diagram(1.0);
        assert!(truth.iter().filter(|b| b.count >= 100).count() >= 8);
        assert!(worst_departure(&truth) < 4.0, "{truth:?}");
        // The same check catches a forecast whose rates are a quarter too high.
        assert!(worst_departure(&synthetic_diagram(1.25)) > 4.0);
    }
}
