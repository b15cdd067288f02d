//! Fitting a requested family, and choosing between Poisson and negative binomial by a
//! boundary-corrected likelihood-ratio test (Cameron and Trivedi, *Regression Analysis of
//! Count Data*, 2nd ed. 2013, section 3.4: under the null theta^-1 = 0 sits on the boundary,
//! so the statistic is a 50:50 mixture of a point mass at zero and chi-square(1), and the
//! p-value is half the chi-square(1) tail; the book and its section number are cited from
//! memory).

use std::str::FromStr;

use serde::Serialize;
use statrs::distribution::{ChiSquared, ContinuousCDF};

use super::data::GlmData;
use super::fitted::{FittedGlm, ThetaEstimate};
use super::irls::{IrlsFit, Variance, irls};
use super::negbin::{NegbinOutcome, fit_negbin};
use super::{Family, GlmError};

/// Size of the likelihood-ratio test used by [`FamilyRequest::Auto`].
pub const AUTO_TEST_LEVEL: f64 = 0.05;

/// The family asked for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum FamilyRequest {
    /// Poisson.
    Poisson,
    /// Negative binomial; falls back to Poisson (with a note) when theta runs to infinity.
    Negbin,
    /// Whichever the likelihood-ratio test at [`AUTO_TEST_LEVEL`] prefers.
    Auto,
}

impl FromStr for FamilyRequest {
    type Err = GlmError;

    fn from_str(s: &str) -> Result<Self, Self::Err> {
        match s {
            "poisson" => Ok(FamilyRequest::Poisson),
            "negbin" => Ok(FamilyRequest::Negbin),
            "auto" => Ok(FamilyRequest::Auto),
            other => Err(GlmError::UnknownFamily(other.to_string())),
        }
    }
}

/// The evidence behind an automatic family choice.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FamilyChoice {
    /// The family chosen.
    pub chosen: Family,
    /// `2 (loglik_NB - loglik_Poisson)`, 0 when theta ran to infinity.
    pub lr_statistic: f64,
    /// Boundary-corrected p-value: half the chi-square(1) upper tail (1 when the statistic is 0).
    pub p_value: f64,
    /// AIC of the Poisson fit.
    pub aic_poisson: f64,
    /// AIC of the negative-binomial fit, when theta is finite.
    pub aic_negbin: Option<f64>,
    /// The choice in one plain sentence.
    pub reason: String,
}

/// Fits the requested family to validated data.
pub fn fit(data: &GlmData, request: FamilyRequest) -> Result<FittedGlm, GlmError> {
    let start: Vec<f64> = data.response().iter().map(|y| y + 0.1).collect();
    fit_starting(data, request, &start, None)
}

/// [`fit`] with IRLS starting from the means `start` and, when `theta_start` is given, the
/// theta iteration starting from it. A cold fit (no theta) fits Poisson first and starts the
/// negative binomial from its means; a warm negative-binomial request starts from `start`
/// directly and fits Poisson only if theta runs to infinity.
pub(super) fn fit_starting(
    data: &GlmData,
    request: FamilyRequest,
    start: &[f64],
    theta_start: Option<f64>,
) -> Result<FittedGlm, GlmError> {
    let poisson_irls = |start: &[f64]| {
        irls(
            data.design(),
            data.response(),
            data.offset(),
            Variance::Poisson,
            start,
        )
    };
    let poisson_fit = |fit: IrlsFit| -> Result<FittedGlm, GlmError> {
        let iterations = fit.iterations;
        FittedGlm::from_irls(data, fit, None, iterations)
    };
    let warm_negbin = request == FamilyRequest::Negbin && theta_start.is_some();
    let poisson = if warm_negbin {
        None
    } else {
        Some(poisson_irls(start)?)
    };
    if request == FamilyRequest::Poisson {
        return poisson_fit(poisson.expect("a Poisson request always fits Poisson first"));
    }
    let negbin_start = poisson.as_ref().map_or(start, |p| p.mu.as_slice());
    let negbin = match fit_negbin(
        data.design(),
        data.response(),
        data.offset(),
        negbin_start,
        theta_start,
    )? {
        NegbinOutcome::Fitted(nb) => Some(FittedGlm::from_irls(
            data,
            nb.irls,
            Some(ThetaEstimate {
                estimate: nb.theta,
                std_error: nb.theta_std_error,
            }),
            nb.alternations,
        )?),
        NegbinOutcome::ThetaInfinite => None,
    };
    let negbin = match (request, negbin) {
        (FamilyRequest::Negbin, Some(nb)) => return Ok(nb),
        (_, negbin) => negbin,
    };
    let poisson = poisson_fit(match poisson {
        Some(p) => p,
        None => poisson_irls(start)?,
    })?;
    if request == FamilyRequest::Negbin {
        let mut fit = poisson;
        fit.notes.push(THETA_INFINITE_NOTE.to_string());
        return Ok(fit);
    }
    Ok(choose(poisson, negbin))
}

const THETA_INFINITE_NOTE: &str = "the negative-binomial theta ran to infinity (no \
    overdispersion beyond Poisson), so the Poisson fit is reported";

/// Picks between the two fits by the boundary-corrected likelihood-ratio test.
fn choose(poisson: FittedGlm, negbin: Option<FittedGlm>) -> FittedGlm {
    let Some(negbin) = negbin else {
        let mut fit = poisson;
        let choice = FamilyChoice {
            chosen: Family::Poisson,
            lr_statistic: 0.0,
            p_value: 1.0,
            aic_poisson: fit.aic,
            aic_negbin: None,
            reason: format!("Poisson chosen: {THETA_INFINITE_NOTE}"),
        };
        fit.notes.push(THETA_INFINITE_NOTE.to_string());
        fit.family_choice = Some(choice);
        return fit;
    };
    let statistic = (2.0 * (negbin.log_likelihood - poisson.log_likelihood)).max(0.0);
    let p_value = boundary_lr_p_value(statistic);
    let chosen = if p_value < AUTO_TEST_LEVEL {
        Family::Negbin
    } else {
        Family::Poisson
    };
    let reason = match chosen {
        Family::Negbin => format!(
            "negative binomial chosen: the likelihood-ratio test against Poisson gives \
             statistic {statistic:.3}, boundary-corrected p = {p_value:.3e} < {AUTO_TEST_LEVEL} \
             (AIC {:.2} against Poisson's {:.2})",
            negbin.aic, poisson.aic
        ),
        Family::Poisson => format!(
            "Poisson chosen: the likelihood-ratio test finds no significant overdispersion \
             (statistic {statistic:.3}, boundary-corrected p = {p_value:.3} >= {AUTO_TEST_LEVEL}; \
             AIC {:.2} against negative binomial's {:.2})",
            poisson.aic, negbin.aic
        ),
    };
    let choice = FamilyChoice {
        chosen,
        lr_statistic: statistic,
        p_value,
        aic_poisson: poisson.aic,
        aic_negbin: Some(negbin.aic),
        reason,
    };
    let mut fit = if chosen == Family::Negbin {
        negbin
    } else {
        poisson
    };
    fit.family_choice = Some(choice);
    fit
}

/// Half the chi-square(1) upper tail of a non-negative statistic; 1 at zero.
pub(super) fn boundary_lr_p_value(statistic: f64) -> f64 {
    if !(statistic > 0.0) {
        return 1.0;
    }
    let chi1 = ChiSquared::new(1.0).expect("one degree of freedom is valid");
    0.5 * chi1.sf(statistic)
}

#[cfg(test)]
mod tests {
    use super::boundary_lr_p_value;

    /// chi-square(1) upper 10% point is 2.705543 (any chi-square table, e.g. NIST/SEMATECH
    /// e-Handbook 1.3.6.7.4), so the boundary-corrected p-value there is 0.05; 3.841459 gives
    /// 0.025.
    #[test]
    fn boundary_correction_halves_the_tail() {
        assert!((boundary_lr_p_value(2.705_543) - 0.05).abs() < 1e-6);
        assert!((boundary_lr_p_value(3.841_459) - 0.025).abs() < 1e-6);
        assert_eq!(boundary_lr_p_value(0.0), 1.0);
    }
}
