//! A fitted count model: the coefficient table on the original scale, theta, goodness of fit
//! and likelihood summaries, and the linear predictor for new rows.

use nalgebra::DMatrix;
use serde::Serialize;
use statrs::function::erf::erfc;

use super::data::GlmData;
use super::irls::{IrlsFit, Variance, irls, ln_factorial_sum, separated_rows};
use super::{Family, FamilyChoice, GlmError};

/// The 97.5% quantile of the standard normal, for 95% Wald intervals.
const Z_975: f64 = 1.959_963_984_540_054;

/// One row of the coefficient table, on the original scale of its predictor.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Coefficient {
    /// `intercept` or the predictor's name.
    pub name: String,
    /// The estimate.
    pub estimate: f64,
    /// Its standard error from the Fisher information.
    pub std_error: f64,
    /// Wald statistic `estimate / std_error`.
    pub z: f64,
    /// Two-sided p-value of the Wald statistic against the standard normal.
    pub p_value: f64,
    /// Lower end of the 95% Wald interval.
    pub ci_low: f64,
    /// Upper end of the 95% Wald interval.
    pub ci_high: f64,
}

/// Theta of an NB2 fit and its standard error.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct ThetaEstimate {
    /// The maximum-likelihood estimate.
    pub estimate: f64,
    /// Standard error from the observed information in theta at the fitted means.
    pub std_error: f64,
}

/// A converged count model. Only [`super::fit`] makes one.
#[derive(Debug, Clone, PartialEq)]
pub struct FittedGlm {
    /// The family fitted.
    pub family: Family,
    /// The coefficient table, intercept first.
    pub coefficients: Vec<Coefficient>,
    /// Theta (negative binomial only).
    pub theta: Option<ThetaEstimate>,
    /// Residual deviance.
    pub deviance: f64,
    /// Deviance of the intercept-and-offset model (at the same theta for NB).
    pub null_deviance: f64,
    /// Rows minus coefficients.
    pub df_residual: usize,
    /// Rows fitted.
    pub rows: usize,
    /// Pearson chi-square `sum (y - mu)^2 / Var(mu)`.
    pub pearson_chi2: f64,
    /// `pearson_chi2 / df_residual` (1 when no degrees of freedom remain).
    pub dispersion: f64,
    /// Maximised log-likelihood.
    pub log_likelihood: f64,
    /// Akaike information criterion (theta counts as a parameter).
    pub aic: f64,
    /// Bayesian information criterion.
    pub bic: f64,
    /// IRLS iterations (Poisson) or theta/IRLS alternations (negative binomial).
    pub iterations: usize,
    /// Fitted means per row.
    pub fitted_means: Vec<f64>,
    /// Plain notes about the fit (e.g. a fallback to Poisson).
    pub notes: Vec<String>,
    /// How the family was chosen when `auto` was asked for.
    pub family_choice: Option<FamilyChoice>,
    /// Covariance matrix of the coefficients on the original scale.
    pub covariance: Vec<Vec<f64>>,
    /// A square root `S` of the covariance (`S S' = covariance`), for drawing coefficients.
    pub(super) covariance_factor: DMatrix<f64>,
}

impl FittedGlm {
    /// Builds the fitted model from a converged IRLS fit on the standardised design.
    pub(super) fn from_irls(
        data: &GlmData,
        fit: IrlsFit,
        theta: Option<ThetaEstimate>,
        iterations: usize,
    ) -> Result<Self, GlmError> {
        let variance = match theta {
            Some(t) => Variance::Negbin(t.estimate),
            None => Variance::Poisson,
        };
        let y = data.response();
        let separated = separated_rows(y, &fit.mu);
        if separated > 0 {
            let mut order: Vec<usize> = (1..data.names().len()).collect();
            order.sort_by(|&a, &b| {
                fit.coefficients[b]
                    .abs()
                    .total_cmp(&fit.coefficients[a].abs())
            });
            let columns = if order.is_empty() {
                vec!["intercept".to_string()]
            } else {
                order
                    .iter()
                    .take_while(|&&j| {
                        fit.coefficients[j].abs() > 0.5 * fit.coefficients[order[0]].abs()
                    })
                    .map(|&j| data.names()[j].clone())
                    .collect()
            };
            return Err(GlmError::PerfectSeparation {
                rows: separated,
                columns,
            });
        }
        let a = data.to_original();
        let beta = &a * &fit.coefficients;
        let cov = &a * &fit.covariance * a.transpose();
        let factor = nalgebra::Cholesky::new(fit.covariance.clone())
            .ok_or(GlmError::Numerical(
                "the coefficient covariance is not positive definite",
            ))?
            .l();
        let covariance_factor = &a * factor;
        let coefficients = data
            .names()
            .iter()
            .enumerate()
            .map(|(j, name)| {
                let estimate = beta[j];
                let std_error = cov[(j, j)].sqrt();
                let z = estimate / std_error;
                Coefficient {
                    name: name.clone(),
                    estimate,
                    std_error,
                    z,
                    p_value: erfc(z.abs() / std::f64::consts::SQRT_2),
                    ci_low: estimate - Z_975 * std_error,
                    ci_high: estimate + Z_975 * std_error,
                }
            })
            .collect();

        let n = data.rows();
        let q = data.names().len();
        let df_residual = n - q;
        let pearson_chi2 = y
            .iter()
            .zip(&fit.mu)
            .map(|(&y, &m)| (y - m).powi(2) / variance.variance(m))
            .sum::<f64>();
        let log_likelihood = variance.log_likelihood_kernel(y, &fit.mu) - ln_factorial_sum(y);
        let k = (q + usize::from(theta.is_some())) as f64;
        let null = null_deviance(data, variance)?;
        Ok(FittedGlm {
            family: if theta.is_some() {
                Family::Negbin
            } else {
                Family::Poisson
            },
            coefficients,
            theta,
            deviance: fit.deviance,
            null_deviance: null,
            df_residual,
            rows: n,
            pearson_chi2,
            dispersion: if df_residual > 0 {
                pearson_chi2 / df_residual as f64
            } else {
                1.0
            },
            log_likelihood,
            aic: -2.0 * log_likelihood + 2.0 * k,
            bic: -2.0 * log_likelihood + k * (n as f64).ln(),
            iterations,
            fitted_means: fit.mu,
            notes: Vec::new(),
            family_choice: None,
            covariance: (0..q)
                .map(|i| (0..q).map(|j| cov[(i, j)]).collect())
                .collect(),
            covariance_factor,
        })
    }

    /// Number of predictors (coefficients without the intercept).
    pub fn predictor_count(&self) -> usize {
        self.coefficients.len() - 1
    }

    /// The linear predictor `intercept + sum beta_j x_j + offset` of a new row at the
    /// estimated coefficients. `x` holds the predictors in the fitted order.
    pub fn linear_predictor(&self, x: &[f64], offset: f64) -> Result<f64, GlmError> {
        let beta: Vec<f64> = self.coefficients.iter().map(|c| c.estimate).collect();
        linear_predictor_with(&beta, x, offset)
    }

    /// The expected count `exp(linear predictor)` of a new row.
    pub fn mean(&self, x: &[f64], offset: f64) -> Result<f64, GlmError> {
        self.linear_predictor(x, offset).map(f64::exp)
    }
}

/// `beta_0 + sum beta_j x_j + offset`, checking the number of predictors and finiteness.
pub(super) fn linear_predictor_with(beta: &[f64], x: &[f64], offset: f64) -> Result<f64, GlmError> {
    if x.len() + 1 != beta.len() {
        return Err(GlmError::PredictorCount {
            expected: beta.len() - 1,
            found: x.len(),
        });
    }
    if let Some(bad) = x.iter().chain([&offset]).find(|v| !v.is_finite()) {
        return Err(GlmError::BadParameter {
            name: "predictor value",
            value: *bad,
            why: "must be finite",
        });
    }
    Ok(beta[0] + beta[1..].iter().zip(x).map(|(b, x)| b * x).sum::<f64>() + offset)
}

/// Deviance of the intercept-and-offset model at the same variance function.
fn null_deviance(data: &GlmData, variance: Variance) -> Result<f64, GlmError> {
    let y = data.response();
    let offset = data.offset();
    let exposure: f64 = offset.iter().map(|o| o.exp()).sum();
    let rate = y.iter().sum::<f64>() / exposure;
    let start: Vec<f64> = offset.iter().map(|o| rate * o.exp()).collect();
    Ok(irls(&data.intercept_only(), y, offset, variance, &start)?.deviance)
}
