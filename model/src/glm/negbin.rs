//! The NB2 dispersion: theta by maximum likelihood at fixed means, and the alternation of
//! theta and IRLS steps that fits a negative-binomial GLM (Venables and Ripley, *Modern
//! Applied Statistics with S*, 4th ed. 2002, section 7.4, the algorithm of `MASS::glm.nb`).

use nalgebra::DMatrix;
use statrs::function::gamma::digamma;

use super::GlmError;
use super::irls::{INTERMEDIATE_TOLERANCE, IrlsFit, Variance, irls, irls_to};
use super::special::trigamma;

/// Theta above which the data are treated as showing no overdispersion (theta -> infinity):
/// at 1e6 the NB2 variance exceeds the Poisson one by one part in a million per unit mean.
pub(super) const THETA_INFINITE: f64 = 1e6;
/// Newton steps allowed for theta at fixed means.
const THETA_MAX_ITERATIONS: usize = 100;
/// Relative Newton step at which theta has settled (the reference checks need 1e-4).
const THETA_TOLERANCE: f64 = 1e-10;
/// Score per row below which theta has settled: the score sums O(1) log and rational terms
/// that cancel, so below ~1e-13 per row it is rounding noise and Newton steps only cycle.
const SCORE_NOISE_PER_ROW: f64 = 1e-13;
/// Alternations allowed between theta and IRLS.
const MAX_ALTERNATIONS: usize = 50;
/// Stopping value of `|dL| / d1 + |d theta| / se(theta)`, as in `glm.nb` (which divides the
/// theta change by 1) but measuring theta's change against its own uncertainty: for a large,
/// weakly identified theta, rounding in the score moves theta by parts in 1e9 while the
/// likelihood is flat.
const ALTERNATION_TOLERANCE: f64 = 1e-9;

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

/// Counts above this use digamma/trigamma differences instead of exact finite sums.
const FINITE_SUM_MAX: f64 = 200.0;

/// `(digamma(theta + y) - digamma(theta), trigamma(theta) - trigamma(theta + y))` for a whole
/// count `y`: exact finite sums `sum_{j<y} 1/(theta+j)` and `sum 1/(theta+j)^2` for small
/// counts (no cancellation when theta is large), special functions otherwise.
fn gamma_differences(theta: f64, y: f64) -> (f64, f64) {
    if y <= FINITE_SUM_MAX {
        let mut s1 = 0.0;
        let mut s2 = 0.0;
        let mut j = 0.0;
        while j < y {
            let r = 1.0 / (theta + j);
            s1 += r;
            s2 += r * r;
            j += 1.0;
        }
        (s1, s2)
    } else {
        (
            digamma(theta + y) - digamma(theta),
            trigamma(theta) - trigamma(theta + y),
        )
    }
}

/// Score of the NB2 log-likelihood in theta at fixed means, per row
/// `psi(theta+y) - psi(theta) - ln(1 + mu/theta) + (mu - y)/(mu + theta)`, with the observed
/// information (minus the derivative of the score)
/// `psi'(theta) - psi'(theta+y) - mu/(theta (theta+mu)) + (mu - y)/(mu+theta)^2`;
/// algebraically the terms of `MASS::theta.ml`, arranged to avoid cancellation at large theta.
fn score_and_information(theta: f64, y: &[f64], mu: &[f64]) -> (f64, f64) {
    let mut score = 0.0;
    let mut info = 0.0;
    for (&y, &m) in y.iter().zip(mu) {
        let (d1, d2) = gamma_differences(theta, y);
        let tm = theta + m;
        score += d1 - (m / theta).ln_1p() + (m - y) / tm;
        info += d2 - m / (theta * tm) + (m - y) / (tm * tm);
    }
    (score, info)
}

/// Theta by Newton's method at fixed means, from the moment estimate
/// `n / sum((y/mu - 1)^2)` (as `MASS::theta.ml`), stepping in log theta when a Newton step
/// would leave the positive half-line or the curvature is not concave.
pub(super) fn theta_ml(y: &[f64], mu: &[f64], start: Option<f64>) -> Result<ThetaMl, GlmError> {
    let n = y.len() as f64;
    let moment = n / y
        .iter()
        .zip(mu)
        .map(|(&y, &m)| (y / m - 1.0).powi(2))
        .sum::<f64>();
    let mut theta = match start {
        Some(t) if t.is_finite() && t > 0.0 => t,
        _ if moment.is_finite() && moment > 0.0 => moment.min(THETA_INFINITE),
        _ => 1.0,
    };
    for _ in 0..THETA_MAX_ITERATIONS {
        let (s, info) = score_and_information(theta, y, mu);
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
        let settled =
            (next - theta).abs() <= THETA_TOLERANCE * theta || s.abs() <= SCORE_NOISE_PER_ROW * n;
        theta = next;
        if settled {
            let (_, info) = score_and_information(theta, y, mu);
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

/// Alternates theta at fixed means with IRLS at fixed theta, starting from the means
/// `start` (a Poisson fit's, or a warm start's) and, when given, from `theta_start`.
pub(super) fn fit_negbin(
    design: &DMatrix<f64>,
    y: &[f64],
    offset: &[f64],
    start: &[f64],
    theta_start: Option<f64>,
) -> Result<NegbinOutcome, GlmError> {
    let d1 = (2.0 * (y.len() as f64 - design.ncols() as f64).max(1.0)).sqrt();
    let mut mu = start.to_vec();
    let mut theta = match theta_ml(y, &mu, theta_start)? {
        ThetaMl::Finite { theta, .. } => theta,
        ThetaMl::Infinite => return Ok(NegbinOutcome::ThetaInfinite),
    };
    let mut theta_se;
    let mut loglik = Variance::Negbin(theta).log_likelihood_kernel(y, &mu);
    for alternation in 1..=MAX_ALTERNATIONS {
        let fit = irls_to(
            design,
            y,
            offset,
            Variance::Negbin(theta),
            &mu,
            INTERMEDIATE_TOLERANCE,
        )?;
        mu.clone_from(&fit.mu);
        let previous = theta;
        match theta_ml(y, &mu, Some(theta))? {
            ThetaMl::Finite {
                theta: t,
                std_error,
            } => {
                theta = t;
                theta_se = std_error;
            }
            ThetaMl::Infinite => return Ok(NegbinOutcome::ThetaInfinite),
        }
        let previous_loglik = loglik;
        loglik = Variance::Negbin(theta).log_likelihood_kernel(y, &mu);
        let change = (loglik - previous_loglik).abs() / d1 + (theta - previous).abs() / theta_se;
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
