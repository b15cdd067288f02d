//! A case's refit on its training seasons, warm-started from the system's full-record fit.
//!
//! The steps are those of [`crate::fit::fit_design`]: too few seasons is an error, a
//! predictor constant over the training seasons is left out, the offset is ln(observed
//! days), and a negative-binomial iteration that does not settle falls back to Poisson. The
//! GLM then starts from the full-record coefficients and theta ([`crate::glm::fit_from`]),
//! which reaches the same fit as a cold start in fewer iterations. The coefficient report of
//! a [`crate::fit::GaugeModel`] is not built: a hindcast only draws from the fit.

use crate::fit::{Design, FitError, GaugeModel, MIN_SEASONS, Predictor};
use crate::glm::{self, FamilyRequest, FittedGlm, GlmError, GlmSpec, ParameterDraw};

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
    let rows = &design.rows;
    let needed = MIN_SEASONS.max(design.predictors.len() + 2);
    if rows.len() < needed {
        return Err(FitError::TooFewSeasons {
            season_name: design.season_name.clone(),
            usable: rows.len(),
            needed,
            left_out: design.left_out.len(),
        });
    }
    let kept: Vec<Predictor> = design
        .predictors
        .iter()
        .enumerate()
        .filter(|&(j, _)| rows.iter().any(|r| r.x[j] != rows[0].x[j]))
        .map(|(_, &p)| p)
        .collect();
    let design = design.select(&kept);
    let glm_error = |source| FitError::Glm {
        season_name: design.season_name.clone(),
        source,
    };
    let exposure: Vec<f64> = rows_exposure(&design);
    let data = GlmSpec {
        response: design.response(),
        predictors: design
            .predictors
            .iter()
            .enumerate()
            .map(|(j, p)| {
                (
                    p.as_str().to_owned(),
                    design.rows.iter().map(|r| r.x[j]).collect(),
                )
            })
            .collect(),
        offset: None,
    }
    .with_log_exposure(&exposure)
    .and_then(GlmSpec::check)
    .map_err(glm_error)?;
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

fn rows_exposure(design: &Design) -> Vec<f64> {
    design
        .rows
        .iter()
        .map(|r| f64::from(r.observed_days))
        .collect()
}
