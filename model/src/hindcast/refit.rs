//! A case's refit on its training seasons, warm-started from the system's full-record fit.
//!
//! The design is made ready by the same step as [`crate::fit::fit_design`] (too few seasons
//! is an error, a predictor constant over the training seasons is left out, the offset is
//! ln(observed days)), and a negative-binomial iteration that does not settle falls back to
//! Poisson. The
//! GLM then starts from the full-record coefficients and theta ([`crate::glm::fit_from`]),
//! which reaches the same fit as a cold start in fewer iterations. The coefficient report of
//! a [`crate::fit::GaugeModel`] is not built: a hindcast only draws from the fit.

use crate::fit::{Design, FitError, GaugeModel, Predictor};
use crate::fit::{GlmInput, glm_input};
use crate::glm::{self, FamilyRequest, FittedGlm, GlmError, ParameterDraw};

/// The full-record fit a system's refits start from.
#[derive(Debug, Clone)]
pub(crate) struct WarmStart {
    /// Coefficient names, intercept first.
    names: Vec<String>,
    /// The point estimates.
    start: ParameterDraw,
}

impl WarmStart {
    /// The start given by a full-record model.
    pub(crate) fn of(model: &GaugeModel) -> Self {
        WarmStart {
            names: model
                .glm
                .coefficients
                .iter()
                .map(|c| c.name.clone())
                .collect(),
            start: model.glm.point_parameters(),
        }
    }

    /// The start for a model of `predictors` (intercept first), when the full fit has them all.
    fn for_predictors(&self, predictors: &[Predictor]) -> Option<ParameterDraw> {
        let intercept = self.start.coefficients.first().copied()?;
        let mut coefficients = vec![intercept];
        for p in predictors {
            let i = self.names.iter().position(|n| n == p.as_str())?;
            coefficients.push(self.start.coefficients[i]);
        }
        Some(ParameterDraw {
            coefficients,
            theta: self.start.theta,
        })
    }
}

/// A refitted count model and the predictors it uses, in coefficient order.
pub(crate) struct Refit {
    /// The fit.
    pub glm: FittedGlm,
    /// Its predictors (after the intercept).
    pub predictors: Vec<Predictor>,
}

/// Refits `design` (a case's training seasons) with `family`, starting from `start`.
pub(crate) fn refit(
    design: &Design,
    family: FamilyRequest,
    start: &WarmStart,
) -> Result<Refit, FitError> {
    let GlmInput { design, data, .. } = glm_input(design)?;
    let glm_error = |source| FitError::Glm {
        season_name: design.season_name.clone(),
        source,
    };
    let fit = |request| match start.for_predictors(&design.predictors) {
        Some(from) => glm::fit_from(&data, request, &from),
        None => glm::fit(&data, request),
    };
    let fitted = match fit(family) {
        Ok(fitted) => Ok(fitted),
        Err(GlmError::NotConverged { .. }) if family != FamilyRequest::Poisson => {
            fit(FamilyRequest::Poisson)
        }
        Err(other) => Err(other),
    }
    .map_err(glm_error)?;
    Ok(Refit {
        glm: fitted,
        predictors: design.predictors,
    })
}
