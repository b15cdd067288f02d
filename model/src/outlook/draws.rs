//! Parameter uncertainty: coefficient vectors drawn from the fitted model's estimated normal
//! distribution (estimate, covariance), and NB2 theta drawn log-normally around its estimate
//! with the delta-method spread `sd(ln theta) = se(theta) / theta`.

use nalgebra::{DMatrix, DVector};
use rand::Rng;
use rand_distr::StandardNormal;

use super::mixture::ComponentLaw;
use crate::fit::GaugeModel;
use crate::glm::Family;

/// Draws of a gauge model's parameters.
#[derive(Debug, Clone)]
pub struct ParameterSampler {
    estimate: DVector<f64>,
    factor: DMatrix<f64>,
    theta: Option<(f64, f64)>,
}

/// One draw: coefficients (intercept first) and the component law.
#[derive(Debug, Clone, PartialEq)]
pub struct ParameterDraw {
    /// Coefficients, intercept first, in the model's predictor order.
    pub coefficients: Vec<f64>,
    /// Poisson, or NB2 with the drawn theta.
    pub law: ComponentLaw,
}

impl ParameterSampler {
    /// The sampler of `model`'s parameters. A covariance that is not positive definite (it is
    /// by construction of a converged fit) falls back to its diagonal.
    pub fn new(model: &GaugeModel) -> Self {
        let q = model.glm.coefficients.len();
        let estimate = DVector::from_iterator(q, model.glm.coefficients.iter().map(|c| c.estimate));
        let cov = DMatrix::from_fn(q, q, |i, j| model.glm.covariance[i][j]);
        let factor = match nalgebra::Cholesky::new(cov.clone()) {
            Some(ch) => ch.l(),
            None => DMatrix::from_fn(q, q, |i, j| {
                if i == j { cov[(i, i)].max(0.0).sqrt() } else { 0.0 }
            }),
        };
        let theta = match (model.glm.family, model.glm.theta) {
            (Family::Negbin, Some(t)) => {
                let sd = if t.std_error.is_finite() && t.estimate > 0.0 {
                    t.std_error / t.estimate
                } else {
                    0.0
                };
                Some((t.estimate.ln(), sd))
            }
            _ => None,
        };
        Self {
            estimate,
            factor,
            theta,
        }
    }

    /// The parameters at their estimates, no uncertainty.
    pub fn point(&self) -> ParameterDraw {
        ParameterDraw {
            coefficients: self.estimate.iter().copied().collect(),
            law: match self.theta {
                Some((log_theta, _)) => ComponentLaw::NegBin {
                    theta: log_theta.exp(),
                },
                None => ComponentLaw::Poisson,
            },
        }
    }

    /// One random draw.
    pub fn draw(&self, rng: &mut impl Rng) -> ParameterDraw {
        let q = self.estimate.len();
        let z = DVector::from_iterator(q, (0..q).map(|_| rng.sample::<f64, _>(StandardNormal)));
        let beta = &self.estimate + &self.factor * z;
        let law = match self.theta {
            Some((log_theta, sd)) => ComponentLaw::NegBin {
                theta: (log_theta + sd * rng.sample::<f64, _>(StandardNormal)).exp(),
            },
            None => ComponentLaw::Poisson,
        };
        ParameterDraw {
            coefficients: beta.iter().copied().collect(),
            law,
        }
    }
}

impl ParameterDraw {
    /// The expected count `exp(b0 + sum b_j x_j + ln exposure)`.
    pub fn mean(&self, x: &[f64], exposure_days: f64) -> f64 {
        let eta = self.coefficients[0]
            + self.coefficients[1..]
                .iter()
                .zip(x)
                .map(|(b, v)| b * v)
                .sum::<f64>();
        (eta + exposure_days.ln()).exp()
    }
}
