//! The NB2 dispersion: theta by maximum likelihood at fixed means, and the alternation of
//! theta and IRLS steps that fits a negative-binomial GLM (Venables and Ripley, *Modern
//! Applied Statistics with S*, 4th ed. 2002, section 7.4, the algorithm of `MASS::glm.nb`).

use nalgebra::DMatrix;
use statrs::function::gamma::digamma;

use super::GlmError;
use super::irls::{IrlsFit, Variance, irls};
use super::special::trigamma;

/// Theta above which the data are treated as showing no overdispersion (theta -> infinity):
/// at 1e6 the NB2 variance exceeds the Poisson one by one part in a million per unit mean.
pub(super) const THETA_INFINITE: f64 = 1e6;
/// Newton steps allowed for theta at fixed means.
const THETA_MAX_ITERATIONS: usize = 100;
/// Relative Newton step at which theta has settled.
const THETA_TOLERANCE: f64 = 1e-12;
/// Alternations allowed between theta and IRLS.
const MAX_ALTERNATIONS: usize = 50;
/// Stopping value of `|dL| / d1 + |d theta| / theta`, as in `glm.nb` but tighter.
const ALTERNATION_TOLERANCE: f64 = 1e-11;

/// Theta's maximum-likelihood estimate at fixed means.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum ThetaMl {
    /// A finite estimate with its standard error `1 / sqrt(observed information)`.
    Finite {
        /// The estimate.
        theta: f64,
        /// Its standard error at fixed means.
        std_error: f64,
    },
    /// The likelihood keeps rising as theta grows: no overdispersion.
    Infinite,
}

/// Score of the NB2 log-likelihood in theta at fixed means.
fn score(theta: f64, y: &[f64], mu: &[f64]) -> f64 {
    let base = theta.ln() + 1.0 - digamma(theta);
    y.iter()
        .zip(mu)
        .map(|(&y, &m)| digamma(theta + y) + base - (theta + m).ln() - (y + theta) / (m + theta))
        .sum()
}

/// Observed information (minus the second derivative) in theta at fixed means.
fn information(theta: f64, y: &[f64], mu: &[f64]) -> f64 {
    let base = trigamma(theta) - 1.0 / theta;
    y.iter()
        .zip(mu)
        .map(|(&y, &m)| -trigamma(theta + y) + base + 2.0 / (m + theta) - (y + theta) / (m + theta).powi(2))
        .sum()
}

/// Theta by Newton's method at fixed means, from the moment estimate
/// `n / sum((y/mu - 1)^2)` (as `MASS::theta.ml`), stepping in log theta when a Newton step
/// would leave the positive half-line or the curvature is not concave.
pub(super) fn theta_ml(y: &[f64], mu: &[f64], start: Option<f64>) -> Result<ThetaMl, GlmError> {
    let n = y.len() as f64;
    let moment = n / y.iter().zip(mu).map(|(&y, &m)| (y / m - 1.0).powi(2)).sum::<f64>();
    let mut theta = match start {
        Some(t) if t.is_finite() && t > 0.0 => t,
        _ if moment.is_finite() && moment > 0.0 => moment.min(THETA_INFINITE),
        _ => 1.0,
    };
    for _ in 0..THETA_MAX_ITERATIONS {
        let s = score(theta, y, mu);
        let info = information(theta, y, mu);
        let next = if info > 0.0 && theta + s / info > 0.0 {
            theta + s / info
        } else {
            // Newton in phi = ln theta is safe when the theta step is not: move by a factor.
            theta * if s > 0.0 { 4.0 } else { 0.25 }
        };
        if !next.is_finite() {
            return Err(GlmError::Numerical("theta's Newton step became non-finite"));
        }
        if next > THETA_INFINITE {
            return Ok(ThetaMl::Infinite);
        }
        let settled = (next - theta).abs() <= THETA_TOLERANCE * theta;
        theta = next;
        if settled {
            let info = information(theta, y, mu);
            if !(info > 0.0) {
                return Err(GlmError::Numerical("theta's information is not positive"));
            }
            return Ok(ThetaMl::Finite {
                theta,
                std_error: info.sqrt().recip(),
            });
        }
    }
    Err(GlmError::NotConverged {
        stage: "theta",
        iterations: THETA_MAX_ITERATIONS,
    })
}

/// A converged negative-binomial fit.
#[derive(Debug, Clone)]
pub(super) struct NegbinFit {
    /// The IRLS fit at the final theta.
    pub irls: IrlsFit,
    /// Theta.
    pub theta: f64,
    /// Theta's standard error.
    pub theta_std_error: f64,
    /// Theta/IRLS alternations made.
    pub alternations: usize,
}

/// The outcome of a negative-binomial fit.
#[derive(Debug, Clone)]
pub(super) enum NegbinOutcome {
    /// Theta is finite.
    Fitted(NegbinFit),
    /// Theta ran to infinity: the data look Poisson.
    ThetaInfinite,
}

/// Alternates theta at fixed means with IRLS at fixed theta, starting from a Poisson fit.
pub(super) fn fit_negbin(
    design: &DMatrix<f64>,
    y: &[f64],
    offset: &[f64],
    poisson: &IrlsFit,
) -> Result<NegbinOutcome, GlmError> {
    let d1 = (2.0 * (y.len() as f64 - design.ncols() as f64).max(1.0)).sqrt();
    let mut mu = poisson.mu.clone();
    let mut theta = match theta_ml(y, &mu, None)? {
        ThetaMl::Finite { theta, .. } => theta,
        ThetaMl::Infinite => return Ok(NegbinOutcome::ThetaInfinite),
    };
    let mut theta_se;
    let mut loglik = Variance::Negbin(theta).log_likelihood(y, &mu);
    for alternation in 1..=MAX_ALTERNATIONS {
        let fit = irls(design, y, offset, Variance::Negbin(theta), &mu)?;
        mu.clone_from(&fit.mu);
        let previous = theta;
        match theta_ml(y, &mu, Some(theta))? {
            ThetaMl::Finite { theta: t, std_error } => {
                theta = t;
                theta_se = std_error;
            }
            ThetaMl::Infinite => return Ok(NegbinOutcome::ThetaInfinite),
        }
        let previous_loglik = loglik;
        loglik = Variance::Negbin(theta).log_likelihood(y, &mu);
        let change = (loglik - previous_loglik).abs() / d1 + (theta - previous).abs() / theta;
        if change < ALTERNATION_TOLERANCE {
            // One last IRLS pass at the final theta so coefficients, weights and theta agree.
            let irls = irls(design, y, offset, Variance::Negbin(theta), &mu)?;
            return Ok(NegbinOutcome::Fitted(NegbinFit {
                irls,
                theta,
                theta_std_error: theta_se,
                alternations: alternation,
            }));
        }
    }
    Err(GlmError::NotConverged {
        stage: "theta/IRLS alternation",
        iterations: MAX_ALTERNATIONS,
    })
}
