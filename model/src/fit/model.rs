//! Fitting one season name's design: the GLM by the requested family, with the coefficient
//! table turned into incidence-rate ratios per driver step.

use serde::Serialize;

use super::FitError;
use super::design::{Design, LeftOut};
use crate::glm::{self, FamilyChoice, FamilyRequest, FittedGlm, GlmData, GlmError, GlmSpec};
use crate::predictor::Predictor;

/// One coefficient of a gauge model, with its rate ratio when it belongs to a driver.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CoefficientReport {
    /// `intercept` or the predictor's name.
    pub name: String,
    /// The estimate on the log-rate scale, per unit of the predictor.
    pub estimate: f64,
    /// Its standard error.
    pub std_error: f64,
    /// Two-sided Wald p-value.
    pub p_value: f64,
    /// The predictor's unit (`per observed day` for the intercept).
    pub unit: &'static str,
    /// Incidence-rate ratio `exp(estimate * step)` per [`CoefficientReport::per`]; for the
    /// intercept, the flood-day rate per observed day with every driver at zero.
    pub rate_ratio: f64,
    /// 95% Wald interval of the rate ratio.
    pub rate_ratio_ci: [f64; 2],
    /// The step the rate ratio is per, in words.
    pub per: &'static str,
}

/// The seasons a model was fitted on.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FitPeriod {
    /// The first fitted season's label.
    pub first: String,
    /// The last fitted season's label.
    pub last: String,
    /// The number of seasons fitted.
    pub seasons: usize,
}

/// A fitted model of one season name at one gauge. Only [`fit_design`] makes one.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct GaugeModel {
    /// The season name, e.g. `DJF`.
    pub season_name: String,
    /// The family fitted (`poisson` or `negbin`).
    pub family: glm::Family,
    /// The family asked for.
    pub family_requested: FamilyRequest,
    /// NB2 theta and its standard error (negative binomial only).
    pub theta: Option<glm::ThetaEstimate>,
    /// The likelihood-ratio test of Poisson against negative binomial, when `auto` was asked.
    pub family_test: Option<FamilyChoice>,
    /// The predictors in the model, in coefficient order (after the intercept).
    pub predictors: Vec<Predictor>,
    /// The coefficient table, intercept first.
    pub coefficients: Vec<CoefficientReport>,
    /// Each predictor's mean over the fitted seasons, in [`GaugeModel::predictors`] order.
    pub predictor_means: Vec<f64>,
    /// The seasons fitted.
    pub fit_period: FitPeriod,
    /// The seasons of this name left out, and why.
    pub left_out: Vec<LeftOut>,
    /// Residual deviance, its degrees of freedom, log-likelihood and AIC.
    pub deviance: f64,
    /// Residual degrees of freedom.
    pub df_residual: usize,
    /// Maximised log-likelihood.
    pub log_likelihood: f64,
    /// Akaike information criterion.
    pub aic: f64,
    /// Plain notes about the fit (dropped predictors, family fallbacks).
    pub notes: Vec<String>,
    /// The fitted GLM, for predictions and parameter draws.
    #[serde(skip)]
    pub glm: FittedGlm,
}

/// The fewest seasons a model is fitted on: fewer leave no honest degrees of freedom.
pub const MIN_SEASONS: usize = 8;

/// A design made ready for the GLM: predictors constant over its seasons dropped (they
/// cannot be told apart from the intercept), each with a note, and ln(observed days) as the
/// offset.
pub(crate) struct GlmInput {
    /// The design with the kept predictors only.
    pub design: Design,
    /// The checked GLM data.
    pub data: GlmData,
    /// One note per dropped predictor.
    pub notes: Vec<String>,
}

/// Checks `design` for the GLM: fewer than [`MIN_SEASONS`] usable seasons (or too few for its
/// predictors) is an error; constant predictors are dropped with a note.
pub(crate) fn glm_input(design: &Design) -> Result<GlmInput, FitError> {
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
    let mut notes = Vec::new();
    let mut kept = Vec::new();
    for (j, &p) in design.predictors.iter().enumerate() {
        let first = rows[0].x[j];
        if rows.iter().all(|r| r.x[j] == first) {
            notes.push(format!(
                "{p} is {first} in every fitted {} season, so it was left out of the model",
                design.season_name
            ));
        } else {
            kept.push(p);
        }
    }
    let design = design.select(&kept);
    let exposure: Vec<f64> = design
        .rows
        .iter()
        .map(|r| f64::from(r.observed_days))
        .collect();
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
    .map_err(|source| FitError::Glm {
        season_name: design.season_name.clone(),
        source,
    })?;
    Ok(GlmInput {
        design,
        data,
        notes,
    })
}

/// Fits `design` by `family`. Predictors constant over the fitted seasons are dropped with a
/// note (they cannot be told apart from the intercept); fewer than [`MIN_SEASONS`] usable
/// seasons, or a GLM failure, is an error.
pub fn fit_design(design: &Design, family: FamilyRequest) -> Result<GaugeModel, FitError> {
    let GlmInput {
        design,
        data: spec,
        mut notes,
    } = glm_input(design)?;
    let fitted = match glm::fit(&spec, family) {
        Ok(fitted) => Ok(fitted),
        // The negative-binomial theta iteration can fail to settle when the counts are close
        // to Poisson (theta heading to infinity); the Poisson fit is then the answer, said in a note.
        Err(GlmError::NotConverged { stage, iterations }) if family != FamilyRequest::Poisson => {
            notes.push(format!(
                "the negative-binomial fit did not converge ({stage} after {iterations} \
                 iterations), so the Poisson model is used"
            ));
            glm::fit(&spec, FamilyRequest::Poisson)
        }
        Err(other) => Err(other),
    }
    .map_err(|source| FitError::Glm {
        season_name: design.season_name.clone(),
        source,
    })?;
    notes.extend(fitted.notes.iter().cloned());
    Ok(model_from_fit(&design, family, fitted, notes))
}

fn model_from_fit(
    design: &Design,
    family: FamilyRequest,
    fitted: FittedGlm,
    notes: Vec<String>,
) -> GaugeModel {
    let n = design.rows.len() as f64;
    let predictor_means = (0..design.predictors.len())
        .map(|j| design.rows.iter().map(|r| r.x[j]).sum::<f64>() / n)
        .collect();
    let coefficients = fitted
        .coefficients
        .iter()
        .enumerate()
        .map(|(i, c)| {
            let predictor = i.checked_sub(1).map(|j| design.predictors[j]);
            let step = predictor.map_or(1.0, Predictor::report_step);
            CoefficientReport {
                name: c.name.clone(),
                estimate: c.estimate,
                std_error: c.std_error,
                p_value: c.p_value,
                unit: predictor.map_or("per observed day", Predictor::unit),
                rate_ratio: (c.estimate * step).exp(),
                rate_ratio_ci: [(c.ci_low * step).exp(), (c.ci_high * step).exp()],
                per: predictor.map_or("flood days per observed day, drivers at zero", |p| {
                    p.step_words()
                }),
            }
        })
        .collect();
    let first = design
        .rows
        .first()
        .map(|r| r.season.label())
        .unwrap_or_default();
    let last = design
        .rows
        .last()
        .map(|r| r.season.label())
        .unwrap_or_default();
    GaugeModel {
        season_name: design.season_name.clone(),
        family: fitted.family,
        family_requested: family,
        theta: fitted.theta,
        family_test: fitted.family_choice.clone(),
        predictors: design.predictors.clone(),
        coefficients,
        predictor_means,
        fit_period: FitPeriod {
            first,
            last,
            seasons: design.rows.len(),
        },
        left_out: design.left_out.clone(),
        deviance: fitted.deviance,
        df_residual: fitted.df_residual,
        log_likelihood: fitted.log_likelihood,
        aic: fitted.aic,
        notes,
        glm: fitted,
    }
}

impl GaugeModel {
    /// The coefficient report of `predictor`, if the model uses it.
    pub fn coefficient(&self, predictor: Predictor) -> Option<&CoefficientReport> {
        self.predictors
            .iter()
            .position(|&p| p == predictor)
            .map(|j| &self.coefficients[j + 1])
    }

    /// The expected flood days of a season with `observed_days` days and predictor values `x`
    /// (in [`GaugeModel::predictors`] order), at the estimated coefficients.
    pub fn expected_days(&self, x: &[f64], observed_days: u32) -> Result<f64, FitError> {
        self.glm
            .mean(x, f64::from(observed_days).ln())
            .map_err(|source| FitError::Glm {
                season_name: self.season_name.clone(),
                source,
            })
    }
}
