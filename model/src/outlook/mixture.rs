//! The equal-weight mixture of count distributions that makes an outlook: one Poisson or NB2
//! component per (driver scenario, parameter draw), each truncated at the season's length and
//! renormalised, then averaged.
//!
//! The component pmfs are built by the usual ratio recurrences (p(k) / p(k-1) = mu / k for the
//! Poisson, (k - 1 + theta) / k * mu / (mu + theta) for NB2), fused into the accumulation so a
//! 2,000-component mixture over a 90-day season costs a few hundred thousand multiplications.
//! A component whose zero term would underflow is built in logarithms instead.

/// The count law of one mixture component.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ComponentLaw {
    /// Poisson with the component's mean.
    Poisson,
    /// Negative binomial NB2 (`Var = mu + mu^2 / theta`) with this `theta > 0`.
    NegBin {
        /// The NB2 size parameter.
        theta: f64,
    },
}

/// An equal-weight mixture of count distributions over `0..=n_max`, built one component at a
/// time.
#[derive(Debug, Clone, PartialEq)]
pub struct Mixture {
    sum: Vec<f64>,
    components: usize,
    scratch: Vec<f64>,
}

impl Mixture {
    /// An empty mixture over counts `0..=n_max`.
    pub fn new(n_max: u32) -> Self {
        let len = n_max as usize + 1;
        Self {
            sum: vec![0.0; len],
            components: 0,
            scratch: vec![0.0; len],
        }
    }

    /// Adds one component with mean `mu` (>= 0, finite; 0 is a point mass at no days) and law
    /// `law`, truncated at `n_max` and renormalised. Returns `false` (adding nothing) when
    /// `mu` or `theta` is not a valid finite number.
    pub fn add(&mut self, mu: f64, law: ComponentLaw) -> bool {
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
        let (log_p0, c, d, q) = match law {
            ComponentLaw::Poisson => (-mu, mu, 0.0, 1.0),
            ComponentLaw::NegBin { theta } => {
                if !(theta > 0.0 && theta.is_finite()) {
                    return false;
                }
                (
                    theta * (theta / (mu + theta)).ln(),
                    theta - 1.0,
                    1.0,
                    mu / (mu + theta),
                )
            }
        };
        let ratio = |k: f64| (c + d * k) * q / k;
        let p = &mut self.scratch;
        if log_p0 > -600.0 {
            p[0] = log_p0.exp();
            for k in 1..p.len() {
                p[k] = p[k - 1] * ratio(k as f64);
            }
        } else {
            // Logarithms, shifted by the largest term before exponentiating.
            p[0] = log_p0;
            for k in 1..p.len() {
                p[k] = p[k - 1] + ratio(k as f64).ln();
            }
            let top = p.iter().copied().fold(f64::NEG_INFINITY, f64::max);
            for v in p.iter_mut() {
                *v = (*v - top).exp();
            }
        }
        let total: f64 = p.iter().sum();
        if !(total > 0.0 && total.is_finite()) {
            return false;
        }
        for (s, v) in self.sum.iter_mut().zip(p.iter()) {
            *s += v / total;
        }
        self.components += 1;
        true
    }

    /// Components added so far.
    pub fn components(&self) -> usize {
        self.components
    }

    /// The mixture's pmf over `0..=n_max` (all zeros when no component was added).
    pub fn pmf(&self) -> Vec<f64> {
        if self.components == 0 {
            return self.sum.clone();
        }
        let n = self.components as f64;
        self.sum.iter().map(|s| s / n).collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use statrs::distribution::{Discrete, NegativeBinomial, Poisson};

    /// Tolerance for agreement with statrs: both evaluate the same closed forms in double
    /// precision; 1e-12 absolute leaves room for the recurrence's rounding over 90 terms.
    const TOL: f64 = 1e-12;

    fn single(mu: f64, law: ComponentLaw, n_max: u32) -> Vec<f64> {
        let mut m = Mixture::new(n_max);
        assert!(m.add(mu, law));
        m.pmf()
    }

    // Reference: statrs (crates.io, general-purpose distributions library), Poisson pmf.
    #[test]
    fn poisson_component_matches_statrs_renormalised() {
        let (mu, n_max) = (7.3, 40);
        let reference = Poisson::new(mu).unwrap();
        let raw: Vec<f64> = (0..=n_max).map(|k| reference.pmf(k)).collect();
        let total: f64 = raw.iter().sum();
        let ours = single(mu, ComponentLaw::Poisson, n_max as u32);
        for k in 0..=n_max as usize {
            assert!((ours[k] - raw[k] / total).abs() < TOL, "k={k}");
        }
    }

    // Reference: statrs NegativeBinomial(r, p) counts failures before the r-th success with
    // success probability p; NB2 with mean mu and size theta is r = theta, p = theta/(theta+mu).
    #[test]
    fn negbin_component_matches_statrs_renormalised() {
        for (mu, theta) in [(3.0, 0.7), (12.5, 4.0), (0.2, 50.0)] {
            let n_max = 90u64;
            let reference = NegativeBinomial::new(theta, theta / (theta + mu)).unwrap();
            let raw: Vec<f64> = (0..=n_max).map(|k| reference.pmf(k)).collect();
            let total: f64 = raw.iter().sum();
            let ours = single(mu, ComponentLaw::NegBin { theta }, n_max as u32);
            for k in 0..=n_max as usize {
                assert!((ours[k] - raw[k] / total).abs() < TOL, "mu={mu} theta={theta} k={k}");
            }
        }
    }

    #[test]
    fn huge_mean_piles_up_at_the_season_length() {
        let p = single(5000.0, ComponentLaw::Poisson, 90);
        assert!((p[90] - 1.0).abs() < 1e-3 && p[90] > p[89]);
        assert!((p.iter().sum::<f64>() - 1.0).abs() < 1e-12);
    }

    #[test]
    fn equal_weights_average_components_and_bad_means_are_refused() {
        let mut m = Mixture::new(30);
        assert!(m.add(2.0, ComponentLaw::Poisson));
        assert!(m.add(9.0, ComponentLaw::Poisson));
        assert!(!m.add(f64::NAN, ComponentLaw::Poisson));
        assert!(!m.add(3.0, ComponentLaw::NegBin { theta: -1.0 }));
        assert_eq!(m.components(), 2);
        let a = single(2.0, ComponentLaw::Poisson, 30);
        let b = single(9.0, ComponentLaw::Poisson, 30);
        for (k, v) in m.pmf().iter().enumerate() {
            assert!((v - 0.5 * (a[k] + b[k])).abs() < 1e-15);
        }
    }
}
