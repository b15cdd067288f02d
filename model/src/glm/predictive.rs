//! Predictive count distributions for a new season: Poisson and NB2 pmfs truncated at the
//! season's length and renormalised (a season cannot have more flood days than days), equal-
//! weight mixtures of them, and parameter uncertainty by drawing coefficients (and theta) from
//! their estimated sampling distribution.

use nalgebra::DVector;
use rand::Rng;
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::StandardNormal;
use serde::Serialize;

use super::fitted::linear_predictor_with;
use super::{Family, FittedGlm, GlmError};

/// Truncated probability mass above which a predictive distribution carries a note.
pub const TRUNCATION_NOTE_MASS: f64 = 1e-4;
/// Below this log-probability of zero the pmf is built in log space.
const LOG_SPACE_BELOW: f64 = -700.0;

/// A distribution over counts `0..pmf.len()`: `pmf[k] = P(N = k)`, summing to one.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CountDistribution {
    /// Probability of each count, index = count.
    pub pmf: Vec<f64>,
}

impl CountDistribution {
    /// Checks that the probabilities are finite, non-negative and sum to one within 1e-9
    /// (then renormalises away the rounding).
    pub fn new(pmf: Vec<f64>) -> Result<Self, GlmError> {
        if let Some(bad) = pmf.iter().find(|p| !(**p >= 0.0 && p.is_finite())) {
            return Err(GlmError::BadParameter {
                name: "probability",
                value: *bad,
                why: "must be finite and non-negative",
            });
        }
        let total: f64 = pmf.iter().sum();
        if !((total - 1.0).abs() <= 1e-9) {
            return Err(GlmError::BadParameter {
                name: "total probability",
                value: total,
                why: "must be 1",
            });
        }
        Ok(CountDistribution {
            pmf: pmf.into_iter().map(|p| p / total).collect(),
        })
    }

    /// The largest count with a probability slot.
    pub fn max_count(&self) -> usize {
        self.pmf.len().saturating_sub(1)
    }

    /// `E[N]`.
    pub fn mean(&self) -> f64 {
        self.pmf.iter().enumerate().map(|(k, p)| k as f64 * p).sum()
    }

    /// `Var N`.
    pub fn variance(&self) -> f64 {
        let mean = self.mean();
        self.pmf
            .iter()
            .enumerate()
            .map(|(k, p)| (k as f64 - mean).powi(2) * p)
            .sum()
    }

    /// `P(N <= k)`.
    pub fn cdf(&self, k: usize) -> f64 {
        self.pmf.iter().take(k + 1).sum::<f64>().min(1.0)
    }

    /// `P(N >= k)`.
    pub fn exceedance(&self, k: usize) -> f64 {
        self.pmf.iter().skip(k).sum::<f64>().min(1.0)
    }

    /// The smallest count `k` with `P(N <= k) >= p` (for `p` in `[0, 1]`).
    pub fn quantile(&self, p: f64) -> usize {
        let mut acc = 0.0;
        for (k, q) in self.pmf.iter().enumerate() {
            acc += q;
            if acc >= p - 1e-12 {
                return k;
            }
        }
        self.max_count()
    }

    /// The median, `quantile(0.5)`.
    pub fn median(&self) -> usize {
        self.quantile(0.5)
    }
}

/// A pmf truncated at `n_max` and renormalised, with the mass that lay beyond `n_max`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TruncatedPmf {
    /// The renormalised distribution on `0..=n_max`.
    pub distribution: CountDistribution,
    /// The probability the untruncated distribution put above `n_max`.
    pub truncated_mass: f64,
}

fn check_mean(mu: f64) -> Result<(), GlmError> {
    if !(mu > 0.0 && mu.is_finite()) {
        return Err(GlmError::BadParameter {
            name: "mean",
            value: mu,
            why: "must be positive and finite",
        });
    }
    Ok(())
}

fn check_theta(theta: f64) -> Result<(), GlmError> {
    if !(theta > 0.0 && theta.is_finite()) {
        return Err(GlmError::BadParameter {
            name: "theta",
            value: theta,
            why: "must be positive and finite",
        });
    }
    Ok(())
}

/// Poisson(mu) pmf on `0..=n_max`, truncated and renormalised.
pub fn poisson_pmf(mu: f64, n_max: usize) -> Result<TruncatedPmf, GlmError> {
    check_mean(mu)?;
    let mut out = vec![0.0; n_max + 1];
    let truncated_mass = fill_pmf(Kernel::Poisson { mu }, &mut out);
    Ok(TruncatedPmf {
        distribution: CountDistribution { pmf: out },
        truncated_mass,
    })
}

/// NB2(mu, theta) pmf (`Var = mu + mu^2/theta`) on `0..=n_max`, truncated and renormalised.
pub fn negbin_pmf(mu: f64, theta: f64, n_max: usize) -> Result<TruncatedPmf, GlmError> {
    check_mean(mu)?;
    check_theta(theta)?;
    let mut out = vec![0.0; n_max + 1];
    let truncated_mass = fill_pmf(Kernel::Negbin { mu, theta }, &mut out);
    Ok(TruncatedPmf {
        distribution: CountDistribution { pmf: out },
        truncated_mass,
    })
}

#[derive(Debug, Clone, Copy)]
enum Kernel {
    Poisson { mu: f64 },
    Negbin { mu: f64, theta: f64 },
}

impl Kernel {
    /// `ln P(N = 0)`.
    fn log_p0(self) -> f64 {
        match self {
            Kernel::Poisson { mu } => -mu,
            Kernel::Negbin { mu, theta } => theta * (theta / (theta + mu)).ln(),
        }
    }

    /// `P(N = k + 1) / P(N = k)`.
    fn ratio(self, k: usize) -> f64 {
        let k = k as f64;
        match self {
            Kernel::Poisson { mu } => mu / (k + 1.0),
            Kernel::Negbin { mu, theta } => (k + theta) / (k + 1.0) * (mu / (mu + theta)),
        }
    }
}

/// Writes the renormalised truncated pmf into `out` and returns the truncated mass.
fn fill_pmf(kernel: Kernel, out: &mut [f64]) -> f64 {
    let lp0 = kernel.log_p0();
    if lp0 > LOG_SPACE_BELOW {
        let mut p = lp0.exp();
        let mut total = 0.0;
        for (k, slot) in out.iter_mut().enumerate() {
            *slot = p;
            total += p;
            p *= kernel.ratio(k);
        }
        if total > 1e-290 {
            out.iter_mut().for_each(|p| *p /= total);
            return (1.0 - total).max(0.0);
        }
    }
    // Log space: the mass sits far from zero.
    let mut lp = lp0;
    for (k, slot) in out.iter_mut().enumerate() {
        *slot = lp;
        lp += kernel.ratio(k).ln();
    }
    let peak = out.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
    let scaled: f64 = out.iter().map(|l| (l - peak).exp()).sum();
    let log_total = peak + scaled.ln();
    out.iter_mut().for_each(|l| *l = (*l - log_total).exp());
    (1.0 - log_total.exp()).clamp(0.0, 1.0)
}

/// As [`fill_pmf`], but stops at the first count `k` past the mode where the tail bound
/// `p_k R / (1 - R)` falls below `tail` times the mass kept so far, `R` bounding every later
/// ratio `p_{j+1} / p_j` (`j >= k`): the ratio itself for Poisson and for NB2 with
/// `theta >= 1` (both decrease in `j`), the limit `mu / (mu + theta)` for NB2 with
/// `theta < 1` (the ratios rise towards it). Returns the truncated mass (beyond `n_max`
/// or cut) and how many leading entries of `out` were written.
fn fill_pmf_cut(kernel: Kernel, out: &mut [f64], tail: f64) -> (f64, usize) {
    let lp0 = kernel.log_p0();
    if !(lp0 > LOG_SPACE_BELOW) {
        return (fill_pmf(kernel, out), out.len());
    }
    let ratio_limit = match kernel {
        Kernel::Poisson { .. } => 0.0,
        Kernel::Negbin { mu, theta } => mu / (mu + theta),
    };
    let mut p = lp0.exp();
    let mut total = 0.0;
    let mut kept = out.len();
    for (k, slot) in out.iter_mut().enumerate() {
        *slot = p;
        total += p;
        let ratio = kernel.ratio(k);
        let bound_ratio = ratio.max(ratio_limit);
        if bound_ratio < 1.0 && p * bound_ratio < tail * total * (1.0 - bound_ratio) {
            kept = k + 1;
            break;
        }
        p *= ratio;
    }
    if !(total > 1e-290) {
        return (fill_pmf(kernel, out), out.len());
    }
    out[..kept].iter_mut().for_each(|p| *p /= total);
    ((1.0 - total).max(0.0), kept)
}

/// An equal-weight mixture of truncated pmfs on `0..=n_max`, built one component at a time
/// (e.g. driver scenarios x parameter draws).
#[derive(Debug, Clone, PartialEq)]
pub struct PmfMixture {
    sum: Vec<f64>,
    scratch: Vec<f64>,
    components: usize,
    truncated_mass: f64,
    /// Upper tails below this share of a component's kept mass are cut (see
    /// [`PmfMixture::with_tail_cut`]); `None` builds every component out to `n_max`.
    tail_cut: Option<f64>,
}

impl PmfMixture {
    /// An empty mixture on `0..=n_max`.
    pub fn new(n_max: usize) -> Self {
        PmfMixture {
            sum: vec![0.0; n_max + 1],
            scratch: vec![0.0; n_max + 1],
            components: 0,
            truncated_mass: 0.0,
            tail_cut: None,
        }
    }

    /// An empty mixture on `0..=n_max` whose Poisson and NB2 components stop at the first
    /// count past the mode beyond which the remaining upper tail is provably below `tail`
    /// times the component's kept mass (a geometric bound on the ratio of successive
    /// probabilities); the cut tail is counted as truncated mass and each component is
    /// renormalised over what is kept, so no pmf value moves by more than `tail` relative.
    /// A `tail` that is not positive and finite builds whole components, as [`PmfMixture::new`].
    pub fn with_tail_cut(n_max: usize, tail: f64) -> Self {
        let mut mixture = Self::new(n_max);
        if tail > 0.0 && tail.is_finite() {
            mixture.tail_cut = Some(tail);
        }
        mixture
    }

    /// Adds a Poisson(mu) component.
    pub fn add_poisson(&mut self, mu: f64) -> Result<(), GlmError> {
        check_mean(mu)?;
        self.add_kernel(Kernel::Poisson { mu });
        Ok(())
    }

    /// Adds an NB2(mu, theta) component.
    pub fn add_negbin(&mut self, mu: f64, theta: f64) -> Result<(), GlmError> {
        check_mean(mu)?;
        check_theta(theta)?;
        self.add_kernel(Kernel::Negbin { mu, theta });
        Ok(())
    }

    /// Adds an already built component (e.g. another mixture); counts beyond this mixture's
    /// `n_max` are folded into its truncated mass and the component is renormalised.
    pub fn add_distribution(&mut self, component: &CountDistribution) {
        let kept: f64 = component.pmf.iter().take(self.sum.len()).sum();
        if kept > 0.0 {
            for (s, p) in self.sum.iter_mut().zip(&component.pmf) {
                *s += p / kept;
            }
            self.components += 1;
            self.truncated_mass += (1.0 - kept).max(0.0);
        }
    }

    fn add_kernel(&mut self, kernel: Kernel) {
        let (mass, kept) = match self.tail_cut {
            Some(tail) => fill_pmf_cut(kernel, &mut self.scratch, tail),
            None => (fill_pmf(kernel, &mut self.scratch), self.scratch.len()),
        };
        self.sum[..kept]
            .iter_mut()
            .zip(&self.scratch[..kept])
            .for_each(|(s, p)| *s += p);
        self.components += 1;
        self.truncated_mass += mass;
    }

    /// Components added so far.
    pub fn components(&self) -> usize {
        self.components
    }

    /// The mixture and the mean truncated mass of its components; `None` when empty.
    pub fn finish(self) -> Option<TruncatedPmf> {
        if self.components == 0 {
            return None;
        }
        let n = self.components as f64;
        Some(TruncatedPmf {
            distribution: CountDistribution {
                pmf: self.sum.into_iter().map(|s| s / n).collect(),
            },
            truncated_mass: self.truncated_mass / n,
        })
    }
}

/// One draw of the model's parameters from their estimated sampling distribution.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ParameterDraw {
    /// Coefficients on the original scale, intercept first.
    pub coefficients: Vec<f64>,
    /// Theta (negative binomial only).
    pub theta: Option<f64>,
}

impl ParameterDraw {
    /// The linear predictor of a new row under this draw.
    pub fn linear_predictor(&self, x: &[f64], offset: f64) -> Result<f64, GlmError> {
        linear_predictor_with(&self.coefficients, x, offset)
    }

    /// Adds this draw's count distribution for a new row to a mixture.
    pub fn add_to(&self, mixture: &mut PmfMixture, x: &[f64], offset: f64) -> Result<(), GlmError> {
        let mu = self.linear_predictor(x, offset)?.exp();
        match self.theta {
            Some(theta) => mixture.add_negbin(mu, theta),
            None => mixture.add_poisson(mu),
        }
    }
}

/// A predictive distribution for one new row, mixed over parameter draws.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PredictiveDistribution {
    /// The mixture, truncated at `n_max` and renormalised.
    pub distribution: CountDistribution,
    /// The largest possible count (the season's length in days).
    pub n_max: usize,
    /// Parameter draws mixed (0 = the point estimate alone).
    pub draws: usize,
    /// Mean probability the components put above `n_max` before renormalising.
    pub truncated_mass: f64,
    /// Plain notes, e.g. when truncation moved more than [`TRUNCATION_NOTE_MASS`].
    pub notes: Vec<String>,
}

impl FittedGlm {
    /// The point-estimate parameters as a draw (no sampling).
    pub fn point_parameters(&self) -> ParameterDraw {
        ParameterDraw {
            coefficients: self.coefficients.iter().map(|c| c.estimate).collect(),
            theta: self.theta.map(|t| t.estimate),
        }
    }

    /// `n` coefficient vectors drawn from the estimated normal distribution
    /// `N(beta_hat, covariance)`.
    pub fn draw_coefficients<R: Rng>(&self, rng: &mut R, n: usize) -> Vec<Vec<f64>> {
        let q = self.coefficients.len();
        let centre = DVector::from_iterator(q, self.coefficients.iter().map(|c| c.estimate));
        (0..n)
            .map(|_| {
                let e =
                    DVector::from_iterator(q, (0..q).map(|_| rng.sample::<f64, _>(StandardNormal)));
                (&centre + &self.covariance_factor * e)
                    .iter()
                    .copied()
                    .collect()
            })
            .collect()
    }

    /// `n` parameter draws: coefficients as [`FittedGlm::draw_coefficients`]; for NB, theta
    /// drawn independently with `ln theta ~ N(ln theta_hat, (se / theta_hat)^2)` (the delta
    /// method; the expected information of NB2 is block-diagonal between beta and theta).
    pub fn draw_parameters<R: Rng>(&self, rng: &mut R, n: usize) -> Vec<ParameterDraw> {
        let coefficients = self.draw_coefficients(rng, n);
        coefficients
            .into_iter()
            .map(|coefficients| ParameterDraw {
                coefficients,
                theta: self.theta.map(|t| {
                    let sd = t.std_error / t.estimate;
                    (t.estimate.ln() + sd * rng.sample::<f64, _>(StandardNormal)).exp()
                }),
            })
            .collect()
    }

    /// The predictive count distribution of a new row with predictors `x` and `offset`,
    /// truncated at `n_max`: the point estimate when `draws == 0`, else an equal-weight mixture
    /// over `draws` parameter draws from a `ChaCha8Rng` seeded with `seed` (reproducible).
    pub fn predictive(
        &self,
        x: &[f64],
        offset: f64,
        n_max: usize,
        draws: usize,
        seed: u64,
    ) -> Result<PredictiveDistribution, GlmError> {
        let mut mixture = PmfMixture::new(n_max);
        if draws == 0 {
            self.point_parameters().add_to(&mut mixture, x, offset)?;
        } else {
            let mut rng = ChaCha8Rng::seed_from_u64(seed);
            for draw in self.draw_parameters(&mut rng, draws) {
                draw.add_to(&mut mixture, x, offset)?;
            }
        }
        let mixed = mixture.finish().expect("at least one component was added");
        let mut notes = Vec::new();
        if mixed.truncated_mass > TRUNCATION_NOTE_MASS {
            notes.push(format!(
                "{:.2}% of the probability lay above the season's {n_max} days and was \
                 redistributed over 0 to {n_max} days",
                100.0 * mixed.truncated_mass
            ));
        }
        Ok(PredictiveDistribution {
            distribution: mixed.distribution,
            n_max,
            draws,
            truncated_mass: mixed.truncated_mass,
            notes,
        })
    }

    /// The family's pmf at the point estimate for a new row (no parameter uncertainty).
    pub fn point_pmf(
        &self,
        x: &[f64],
        offset: f64,
        n_max: usize,
    ) -> Result<TruncatedPmf, GlmError> {
        let mu = self.mean(x, offset)?;
        match (self.family, self.theta) {
            (Family::Negbin, Some(t)) => negbin_pmf(mu, t.estimate, n_max),
            _ => poisson_pmf(mu, n_max),
        }
    }
}

/// `ln P(N = k)` of NB2(mu, theta), for tests of the recurrence.
#[cfg(test)]
fn negbin_log_pmf(k: f64, mu: f64, theta: f64) -> f64 {
    use statrs::function::gamma::ln_gamma;
    ln_gamma(k + theta) - ln_gamma(theta) - ln_gamma(k + 1.0)
        + theta * (theta / (theta + mu)).ln()
        + k * (mu / (theta + mu)).ln()
}

#[cfg(test)]
mod tests {
    use super::*;
    use statrs::distribution::{Discrete, NegativeBinomial, Poisson};

    /// statrs as the reference: its NegativeBinomial(r, p) counts failures before the r-th
    /// success, which is NB2 with r = theta and p = theta / (theta + mu).
    #[test]
    fn pmfs_match_statrs() {
        let (mu, theta) = (7.3, 2.4);
        let nb = NegativeBinomial::new(theta, theta / (theta + mu)).expect("valid");
        let po = Poisson::new(mu).expect("valid");
        let t = negbin_pmf(mu, theta, 400).expect("valid");
        let p = poisson_pmf(mu, 400).expect("valid");
        for k in 0..60u64 {
            let rel = |a: f64, b: f64| (a - b).abs() / b;
            assert!(
                rel(t.distribution.pmf[k as usize], nb.pmf(k)) < 1e-10,
                "nb k={k}"
            );
            assert!(
                rel(p.distribution.pmf[k as usize], po.pmf(k)) < 1e-10,
                "poisson k={k}"
            );
            assert!(
                (negbin_log_pmf(k as f64, mu, theta) - nb.ln_pmf(k)).abs() < 1e-10,
                "log k={k}"
            );
        }
        assert!(t.truncated_mass < 1e-12);
    }

    #[test]
    fn truncation_renormalises_and_reports() {
        // Poisson(10) above 10: P(N >= 11) = 1 - 0.583040 = 0.416960 (Poisson CDF table,
        // e.g. NIST/SEMATECH e-Handbook; value recalled from memory, cross-checked by statrs).
        let t = poisson_pmf(10.0, 10).expect("valid");
        let cdf10 = statrs::distribution::DiscreteCDF::cdf(&Poisson::new(10.0).expect("ok"), 10);
        assert!((t.truncated_mass - (1.0 - cdf10)).abs() < 1e-12);
        assert!((t.truncated_mass - 0.416_960).abs() < 1e-5);
        assert!((t.distribution.pmf.iter().sum::<f64>() - 1.0).abs() < 1e-12);
        // Far beyond the window (log-space path) the conditional pmf rises towards n_max.
        let far = negbin_pmf(1e5, 3.0, 30).expect("valid");
        assert!(far.truncated_mass > 0.999);
        assert!(far.distribution.pmf.windows(2).all(|w| w[1] > w[0]));
        assert!((far.distribution.pmf.iter().sum::<f64>() - 1.0).abs() < 1e-12);
        let far = poisson_pmf(5000.0, 30).expect("valid");
        assert!(far.distribution.pmf[30] > 0.99);
        assert!((far.distribution.pmf.iter().sum::<f64>() - 1.0).abs() < 1e-12);
    }

    #[test]
    fn summaries_of_a_count_distribution() {
        let d = CountDistribution::new(vec![0.1, 0.2, 0.3, 0.4]).expect("valid");
        assert!((d.mean() - 2.0).abs() < 1e-12);
        assert!((d.variance() - 1.0).abs() < 1e-12);
        assert_eq!(d.median(), 2);
        assert_eq!(d.quantile(0.3), 1);
        assert!((d.exceedance(2) - 0.7).abs() < 1e-12);
        assert!((d.cdf(1) - 0.3).abs() < 1e-12);
        assert!(CountDistribution::new(vec![0.5, 0.6]).is_err());
        assert!(CountDistribution::new(vec![f64::NAN, 1.0]).is_err());
    }

    #[test]
    fn mixture_is_the_equal_weight_average() {
        let mut m = PmfMixture::new(40);
        m.add_poisson(3.0).expect("valid");
        m.add_negbin(8.0, 1.5).expect("valid");
        let mixed = m.finish().expect("two components");
        let a = poisson_pmf(3.0, 40).expect("valid");
        let b = negbin_pmf(8.0, 1.5, 40).expect("valid");
        for k in 0..=40 {
            let want = 0.5 * (a.distribution.pmf[k] + b.distribution.pmf[k]);
            assert!((mixed.distribution.pmf[k] - want).abs() < 1e-15);
        }
        let mut again = PmfMixture::new(40);
        again.add_distribution(&a.distribution);
        again.add_distribution(&b.distribution);
        let again = again.finish().expect("two").distribution;
        for (x, y) in again.pmf.iter().zip(&mixed.distribution.pmf) {
            assert!((x - y).abs() < 1e-15);
        }
        assert!(PmfMixture::new(5).finish().is_none());
        assert!(PmfMixture::with_tail_cut(5, 1e-12).finish().is_none());
        assert!(PmfMixture::new(5).add_negbin(1.0, f64::NAN).is_err());
    }

    #[test]
    fn a_tail_cut_mixture_matches_the_whole_one_within_the_cut() {
        // Poisson and NB2 with theta on both sides of 1, means small and large against n_max.
        let n_max = 92;
        let mut whole = PmfMixture::new(n_max);
        let mut cut = PmfMixture::with_tail_cut(n_max, 1e-12);
        for &mu in &[0.3, 4.0, 17.5, 60.0, 150.0] {
            whole.add_poisson(mu).expect("valid");
            cut.add_poisson(mu).expect("valid");
            for &theta in &[0.4, 1.0, 3.0, 40.0] {
                whole.add_negbin(mu, theta).expect("valid");
                cut.add_negbin(mu, theta).expect("valid");
            }
        }
        let whole = whole.finish().expect("components");
        let cut = cut.finish().expect("components");
        assert_eq!(whole.distribution.pmf.len(), cut.distribution.pmf.len());
        for (a, b) in whole.distribution.pmf.iter().zip(&cut.distribution.pmf) {
            assert!((a - b).abs() <= 1e-11 * a.max(1e-300) + 1e-15, "{a} vs {b}");
        }
        assert!((whole.truncated_mass - cut.truncated_mass).abs() < 1e-11);
        // A tight mean cuts the pmf short: the entries far in the tail are exactly zero.
        let mut small = PmfMixture::with_tail_cut(n_max, 1e-12);
        small.add_poisson(2.0).expect("valid");
        let small = small.finish().expect("one component");
        assert_eq!(small.distribution.pmf[40], 0.0);
        assert!((small.distribution.pmf.iter().sum::<f64>() - 1.0).abs() < 1e-14);
    }
}
