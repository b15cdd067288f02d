//! Iteratively reweighted least squares for a log-link count model at a fixed variance
//! function (Poisson, or NB2 with theta held fixed).

use nalgebra::{DMatrix, DVector};
use statrs::function::gamma::ln_gamma;

use super::GlmError;

/// Relative change in deviance at which IRLS stops (R's `glm.control` uses 1e-8; tighter here
/// because IRLS converges quadratically and the reference checks compare to 1e-6).
const DEVIANCE_TOLERANCE: f64 = 1e-12;
/// IRLS iterations allowed.
const MAX_ITERATIONS: usize = 100;
/// Fitted means below this where the count is zero signal perfect separation.
const SEPARATION_MU: f64 = 1e-8;
/// Largest linear predictor allowed before `exp` is considered an overflow.
const MAX_ETA: f64 = 600.0;
/// Largest linear predictor of a usable warm start (the same bound as a fitted mean's).
pub(super) const MAX_START_ETA: f64 = MAX_ETA;

/// The variance function: Poisson (`Var = mu`) or NB2 at fixed theta
/// (`Var = mu + mu^2 / theta`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum Variance {
    /// `Var = mu`.
    Poisson,
    /// `Var = mu + mu^2 / theta`.
    Negbin(f64),
}

impl Variance {
    /// The IRLS weight of a log-link model, `(dmu/deta)^2 / Var = mu^2 / Var`.
    fn weight(self, mu: f64) -> f64 {
        match self {
            Variance::Poisson => mu,
            Variance::Negbin(theta) => mu / (1.0 + mu / theta),
        }
    }

    /// `Var(mu)`.
    pub(super) fn variance(self, mu: f64) -> f64 {
        match self {
            Variance::Poisson => mu,
            Variance::Negbin(theta) => mu + mu * mu / theta,
        }
    }

    /// The unit deviance `d(y, mu)`.
    pub(super) fn unit_deviance(self, y: f64, mu: f64) -> f64 {
        let ylog = if y > 0.0 { y * (y / mu).ln() } else { 0.0 };
        match self {
            Variance::Poisson => 2.0 * (ylog - (y - mu)),
            Variance::Negbin(theta) => {
                2.0 * (ylog - (y + theta) * ((y + theta) / (mu + theta)).ln())
            }
        }
    }

    /// The log-probability of count `y` at mean `mu`, without the `-ln y!` term (a constant
    /// of the data, see [`ln_factorial_sum`]).
    pub(super) fn log_density_kernel(self, y: f64, mu: f64) -> f64 {
        let ylogmu = if y > 0.0 { y * mu.ln() } else { 0.0 };
        match self {
            Variance::Poisson => ylogmu - mu,
            Variance::Negbin(theta) => {
                // ln Gamma(theta+y) - ln Gamma(theta) - y ln(theta+mu) is, for a whole count,
                // ln prod_{j<y} (theta+j)/(theta+mu): exact and free of the cancellation that
                // ln Gamma differences suffer at large theta. Logs are taken every 16 factors
                // so the product can neither overflow nor underflow.
                let ratio_terms = if y <= 400.0 {
                    let denominator = theta + mu;
                    let mut acc = 0.0;
                    let mut product = 1.0;
                    let mut j = 0.0;
                    let mut pending = 0;
                    while j < y {
                        product *= (theta + j) / denominator;
                        j += 1.0;
                        pending += 1;
                        if pending == 16 {
                            acc += product.ln();
                            product = 1.0;
                            pending = 0;
                        }
                    }
                    acc + product.ln()
                } else {
                    ln_gamma(theta + y) - ln_gamma(theta) - y * (theta + mu).ln()
                };
                ratio_terms + ylogmu - theta * (mu / theta).ln_1p()
            }
        }
    }

    /// The deviance of fitted means `mu`.
    pub(super) fn deviance(self, y: &[f64], mu: &[f64]) -> f64 {
        y.iter()
            .zip(mu)
            .map(|(&y, &m)| self.unit_deviance(y, m))
            .sum()
    }

    /// The log-likelihood of fitted means `mu` without the constant `-sum ln y!`.
    pub(super) fn log_likelihood_kernel(self, y: &[f64], mu: &[f64]) -> f64 {
        y.iter()
            .zip(mu)
            .map(|(&y, &m)| self.log_density_kernel(y, m))
            .sum()
    }
}

/// `sum ln y!`, the data's constant in every count log-likelihood.
pub(super) fn ln_factorial_sum(y: &[f64]) -> f64 {
    y.iter().map(|&y| ln_gamma(y + 1.0)).sum()
}

/// A converged IRLS fit, on the scale of the design it was given.
#[derive(Debug, Clone)]
pub(super) struct IrlsFit {
    /// Coefficients.
    pub coefficients: DVector<f64>,
    /// Inverse of the Fisher information `X'WX` at the final weights.
    pub covariance: DMatrix<f64>,
    /// Fitted means.
    pub mu: Vec<f64>,
    /// Deviance at the fitted means.
    pub deviance: f64,
    /// Iterations made.
    pub iterations: usize,
}

/// Relative deviance change for the intermediate IRLS passes inside the theta alternation
/// (R's default); the final pass uses the tight tolerance.
pub(super) const INTERMEDIATE_TOLERANCE: f64 = 1e-8;

/// Fits `y ~ design` with a log link and the offset by IRLS, starting from the means `start`.
pub(super) fn irls(
    design: &DMatrix<f64>,
    y: &[f64],
    offset: &[f64],
    variance: Variance,
    start: &[f64],
) -> Result<IrlsFit, GlmError> {
    irls_to(design, y, offset, variance, start, DEVIANCE_TOLERANCE)
}

/// [`irls`] stopping at relative deviance change `tolerance`.
pub(super) fn irls_to(
    design: &DMatrix<f64>,
    y: &[f64],
    offset: &[f64],
    variance: Variance,
    start: &[f64],
    tolerance: f64,
) -> Result<IrlsFit, GlmError> {
    let (n, q) = design.shape();
    let mut mu = start.to_vec();
    let mut eta: Vec<f64> = mu.iter().map(|m| m.ln()).collect();
    let mut dev_old = variance.deviance(y, &mu);
    let mut xtwx = DMatrix::zeros(q, q);
    let mut xtwz = DVector::zeros(q);
    let mut weights = vec![0.0; n];
    let mut working = vec![0.0; n];
    for iteration in 1..=MAX_ITERATIONS {
        for i in 0..n {
            weights[i] = variance.weight(mu[i]);
            working[i] = eta[i] - offset[i] + (y[i] - mu[i]) / mu[i];
        }
        weighted_normal_equations(design, &weights, &working, &mut xtwx, &mut xtwz);
        let chol = nalgebra::Cholesky::new(xtwx.clone()).ok_or(GlmError::Numerical(
            "the weighted information matrix X'WX is singular",
        ))?;
        let coefficients = chol.solve(&xtwz);
        let linear = design * &coefficients;
        for i in 0..n {
            eta[i] = linear[i] + offset[i];
            if !(eta[i] < MAX_ETA) {
                return Err(GlmError::Numerical("a fitted mean overflowed"));
            }
            mu[i] = eta[i].exp();
        }
        let dev = variance.deviance(y, &mu);
        if !dev.is_finite() {
            return Err(GlmError::Numerical("the deviance became non-finite"));
        }
        if (dev - dev_old).abs() / (dev.abs() + 0.1) < tolerance {
            for i in 0..n {
                weights[i] = variance.weight(mu[i]);
            }
            weighted_normal_equations(design, &weights, &working, &mut xtwx, &mut xtwz);
            let covariance = nalgebra::Cholesky::new(xtwx.clone())
                .ok_or(GlmError::Numerical(
                    "the information matrix X'WX is singular",
                ))?
                .inverse();
            return Ok(IrlsFit {
                coefficients,
                covariance,
                mu,
                deviance: dev,
                iterations: iteration,
            });
        }
        dev_old = dev;
    }
    Err(GlmError::NotConverged {
        stage: "IRLS",
        iterations: MAX_ITERATIONS,
    })
}

/// Fills `X'WX` and `X'Wz`.
fn weighted_normal_equations(
    design: &DMatrix<f64>,
    weights: &[f64],
    working: &[f64],
    xtwx: &mut DMatrix<f64>,
    xtwz: &mut DVector<f64>,
) {
    let (n, q) = design.shape();
    xtwx.fill(0.0);
    xtwz.fill(0.0);
    for a in 0..q {
        let ca = design.column(a);
        let mut s = 0.0;
        for i in 0..n {
            s += ca[i] * weights[i] * working[i];
        }
        xtwz[a] = s;
        for b in 0..=a {
            let cb = design.column(b);
            let mut s = 0.0;
            for i in 0..n {
                s += ca[i] * weights[i] * cb[i];
            }
            xtwx[(a, b)] = s;
            xtwx[(b, a)] = s;
        }
    }
}

/// Rows with zero counts whose fitted mean collapsed towards zero.
pub(super) fn separated_rows(y: &[f64], mu: &[f64]) -> usize {
    y.iter()
        .zip(mu)
        .filter(|&(&y, &m)| y == 0.0 && m < SEPARATION_MU)
        .count()
}
