//! The outlook's equal-weight mixture of count distributions on `0..=n_max`: one Poisson or
//! NB2 component per (driver scenario, parameter draw), each truncated at the season's length
//! and renormalised, then averaged.
//!
//! The count models offer the same mixture ([`crate::glm::PmfMixture`]); this one is the
//! outlook's hot loop (three mixtures of 2,000 components per outlook, and many per
//! hindcast), so it is written for speed: the ratio recurrence p(k) / p(k-1) uses a table of
//! 1/k instead of a division per term, and each component is scaled into the sum in one pass.
//! It is checked against statrs's Poisson and negative-binomial pmfs below. A component
//! whose zero term would underflow is built in logarithms.

use crate::glm::CountDistribution;

/// `ln p(0)` below which a component is built in logarithms.
const LOG_SPACE_BELOW: f64 = -600.0;

/// An equal-weight mixture of truncated, renormalised count distributions.
#[derive(Debug, Clone, PartialEq)]
pub struct Mixture {
    sum: Vec<f64>,
    scratch: Vec<f64>,
    inverse: Vec<f64>,
    components: usize,
}

impl Mixture {
    /// An empty mixture on `0..=n_max`.
    pub fn new(n_max: usize) -> Self {
        let len = n_max + 1;
        Self {
            sum: vec![0.0; len],
            scratch: vec![0.0; len],
            inverse: (0..len)
                .map(|k| if k == 0 { 0.0 } else { 1.0 / k as f64 })
                .collect(),
            components: 0,
        }
    }

    /// Adds a Poisson (`theta = None`) or NB2 (`Var = mu + mu^2 / theta`) component with
    /// mean `mu`. Returns `false`, adding nothing, unless `mu >= 0` and `theta > 0` are
    /// finite; `mu = 0` is a point mass at no days.
    pub fn add(&mut self, mu: f64, theta: Option<f64>) -> bool {
        if !(mu >= 0.0 && mu.is_finite()) {
            return false;
        }
        if mu == 0.0 {
            self.sum[0] += 1.0;
            self.components += 1;
            return true;
        }
        // p(k) / p(k-1) = (c + d k) q / k: Poisson c = mu, d = 0, q = 1; NB2 c = theta - 1,
        // d = 1, q = mu / (mu + theta).
        let (log_p0, c, d, q) = match theta {
            None => (-mu, mu, 0.0, 1.0),
            Some(theta) => {
                if !(theta > 0.0 && theta.is_finite()) {
                    return false;
                }
                let q = mu / (mu + theta);
                (theta * (-q).ln_1p(), theta - 1.0, 1.0, q)
            }
        };
        let p = &mut self.scratch;
        let inverse = &self.inverse;
        let mut total;
        if log_p0 > LOG_SPACE_BELOW {
            let mut term = log_p0.exp();
            p[0] = term;
            total = term;
            for k in 1..p.len() {
                term *= (c + d * k as f64) * q * inverse[k];
                p[k] = term;
                total += term;
            }
        } else {
            let mut term = log_p0;
            p[0] = term;
            let mut top = term;
            for k in 1..p.len() {
                term += ((c + d * k as f64) * q * inverse[k]).ln();
                p[k] = term;
                top = top.max(term);
            }
            total = 0.0;
            for v in p.iter_mut() {
                *v = (*v - top).exp();
                total += *v;
            }
        }
        if !(total > 0.0 && total.is_finite()) {
            return false;
        }
        let scale = 1.0 / total;
        for (s, v) in self.sum.iter_mut().zip(p.iter()) {
            *s += v * scale;
        }
        self.components += 1;
        true
    }

    /// Components added so far.
    pub fn components(&self) -> usize {
        self.components
    }

    /// The mixture; `None` when no component was added.
    pub fn finish(&self) -> Option<CountDistribution> {
        if self.components == 0 {
            return None;
        }
        let n = self.components as f64;
        Some(CountDistribution {
            pmf: self.sum.iter().map(|s| s / n).collect(),
        })
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use statrs::distribution::{Discrete, NegativeBinomial, Poisson};

    /// Agreement with statrs: both evaluate the same closed forms in double precision; 1e-12
    /// absolute leaves room for rounding along a 90-term recurrence.
    const TOL: f64 = 1e-12;

    fn single(mu: f64, theta: Option<f64>, n_max: usize) -> Vec<f64> {
        let mut m = Mixture::new(n_max);
        assert!(m.add(mu, theta));
        m.finish().unwrap().pmf
    }

    fn renormalised(raw: Vec<f64>) -> Vec<f64> {
        let total: f64 = raw.iter().sum();
        raw.into_iter().map(|p| p / total).collect()
    }

    // Reference: statrs (crates.io), Poisson pmf, truncated at n_max and renormalised.
    #[test]
    fn poisson_component_matches_statrs() {
        for (mu, n_max) in [(7.3, 40u64), (0.05, 90), (60.0, 90)] {
            let reference = Poisson::new(mu).unwrap();
            let expected = renormalised((0..=n_max).map(|k| reference.pmf(k)).collect());
            let ours = single(mu, None, n_max as usize);
            for (k, (a, b)) in ours.iter().zip(&expected).enumerate() {
                assert!((a - b).abs() < TOL, "mu={mu} k={k}: {a} vs {b}");
            }
        }
    }

    // Reference: statrs NegativeBinomial(r, p) counts failures before the r-th success with
    // success probability p; NB2 with mean mu and size theta is r = theta,
    // p = theta / (theta + mu).
    #[test]
    fn negbin_component_matches_statrs() {
        for (mu, theta) in [(3.0, 0.7), (12.5, 4.0), (0.2, 50.0), (40.0, 1.5)] {
            let n_max = 90u64;
            let reference = NegativeBinomial::new(theta, theta / (theta + mu)).unwrap();
            let expected = renormalised((0..=n_max).map(|k| reference.pmf(k)).collect());
            let ours = single(mu, Some(theta), n_max as usize);
            for (k, (a, b)) in ours.iter().zip(&expected).enumerate() {
                assert!(
                    (a - b).abs() < TOL,
                    "mu={mu} theta={theta} k={k}: {a} vs {b}"
                );
            }
        }
    }

    #[test]
    fn a_huge_mean_takes_the_log_path_and_keeps_the_poisson_ratio() {
        // e^-5000 underflows; p(89) / p(90) = 90 / mu must survive the log path.
        let p = single(5000.0, None, 90);
        assert!((p[89] / p[90] - 90.0 / 5000.0).abs() < 1e-12);
        assert!((p.iter().sum::<f64>() - 1.0).abs() < 1e-12);
    }

    #[test]
    fn components_weigh_equally_and_bad_parameters_are_refused() {
        let mut m = Mixture::new(30);
        assert!(m.add(2.0, None));
        assert!(m.add(9.0, Some(3.0)));
        assert!(m.add(0.0, None));
        assert!(!m.add(f64::NAN, None));
        assert!(!m.add(3.0, Some(-1.0)));
        assert!(!m.add(3.0, Some(f64::INFINITY)));
        assert_eq!(m.components(), 3);
        let (a, b) = (single(2.0, None, 30), single(9.0, Some(3.0), 30));
        let mixed = m.finish().unwrap().pmf;
        for k in 0..=30 {
            let point = if k == 0 { 1.0 } else { 0.0 };
            assert!((mixed[k] - (a[k] + b[k] + point) / 3.0).abs() < 1e-15);
        }
    }
}
