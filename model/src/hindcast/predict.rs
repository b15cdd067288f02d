//! The predictive distribution of one held-out season, built by the outlook's own function
//! ([`crate::outlook::predictive::mix_draws`], so the skill quoted is the skill of what is
//! served): an equal-weight mixture of `draws` components, component `d` pairing parameter
//! draw `d` of the training fit with driver scenario `d`. In a scenario, drivers known at
//! issue time take the season's own value; the others take the value of one training season
//! drawn at random (the same season for all of them, so MJO and wind stay paired as they
//! happened). The exposure is the season's observed days, and the distribution is truncated
//! there, so it is the distribution of the count that was actually observed.

use rand::Rng;

use super::HindcastError;
use crate::fit::{DesignRow, Predictor};
use crate::glm::FittedGlm;

/// Where each of a model's predictors takes its value from in a scenario.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Source {
    /// Column `usize` of the target season's own row.
    Target(usize),
    /// Column `usize` of a resampled training season's row.
    Resampled(usize),
    /// The value given for the draw (ENSO as known at issue time).
    Given,
}

/// Where a predictor's value comes from, before it is tied to a design column.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum SourceKind {
    /// The target season's own value (known at issue time).
    Target,
    /// A resampled training season's value.
    Resampled,
    /// A value given per draw.
    Given,
}

/// Sources of a model's `predictors` (in its coefficient order), given the design's columns.
pub(crate) fn sources(
    predictors: &[Predictor],
    columns: &[Predictor],
    kind: impl Fn(Predictor) -> SourceKind,
) -> Vec<Source> {
    predictors
        .iter()
        .map(|&p| {
            let column = columns
                .iter()
                .position(|&c| c == p)
                .expect("a model is fitted on a selection of the design's columns");
            match kind(p) {
                SourceKind::Target => Source::Target(column),
                SourceKind::Resampled => Source::Resampled(column),
                SourceKind::Given => Source::Given,
            }
        })
        .collect()
}

/// The predictive pmf (index = days, `0..=observed days`) of `target` under the fit `glm`;
/// `scenario_rows[d]` is the training season that scenario `d` resamples (cycled when
/// shorter than `draws`); `given[d]` is draw `d`'s value of a [`Source::Given`] predictor
/// (cycled).
pub(crate) fn case_pmf(
    glm: &FittedGlm,
    sources: &[Source],
    target: &DesignRow,
    scenario_rows: &[&DesignRow],
    given: &[f64],
    draws: usize,
    rng: &mut impl Rng,
) -> Result<Vec<f64>, HindcastError> {
    let n_max = target.observed_days as usize;
    let offset = f64::from(target.observed_days).ln();
    let parameters = glm.draw_parameters(rng, draws);
    crate::outlook::predictive::mix_draws(&parameters, n_max, offset, |d, x| {
        let past = scenario_rows[d % scenario_rows.len()];
        for (slot, source) in x.iter_mut().zip(sources) {
            *slot = match *source {
                Source::Target(c) => target.x[c],
                Source::Resampled(c) => past.x[c],
                Source::Given => given
                    .get(d % given.len().max(1))
                    .copied()
                    .unwrap_or(f64::NAN),
            };
        }
    })
    .map(|mixed| mixed.pmf)
    .map_err(|(used, drawn)| HindcastError::DegenerateDraws {
        season: target.season.label(),
        used,
        drawn,
    })
}
