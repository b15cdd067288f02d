//! The predictive distribution of a target season's flood days: an equal-weight mixture over
//! (driver scenario, parameter draw) pairs, with the count models' parameter draws
//! ([`crate::glm::FittedGlm::draw_parameters`]) and the outlook's [`Mixture`].

use rand::Rng;
use serde::Serialize;

use super::OutlookError;
use super::mixture::Mixture;
use crate::fit::{GaugeModel, Predictor};
use crate::glm::CountDistribution;

/// One driver's values for the target season: one value per scenario (draw), or a single
/// value when it is known in advance.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DriverScenarios {
    /// The predictor.
    pub predictor: Predictor,
    /// The scenario values; draw `d` uses `values[d % values.len()]`.
    pub values: Vec<f64>,
    /// Where the values come from, in words.
    pub source: String,
}

/// The mixture distribution over `0..=season_days` for `model` with the target's drivers: `draws`
/// components, component `d` pairing scenario `d` with parameter draw `d`; the exposure is
/// the season's calendar days (every day observed). With `draws == 0` there is no parameter
/// uncertainty: one component per scenario (of the longest driver list) at the estimates.
pub fn predictive_pmf(
    model: &GaugeModel,
    drivers: &[DriverScenarios],
    season_days: u32,
    draws: usize,
    rng: &mut impl Rng,
) -> Result<CountDistribution, OutlookError> {
    let columns: Vec<&DriverScenarios> = model
        .predictors
        .iter()
        .map(|p| {
            drivers
                .iter()
                .find(|d| d.predictor == *p && !d.values.is_empty())
                .ok_or(OutlookError::NoScenario {
                    predictor: *p,
                    season_name: model.season_name.clone(),
                })
        })
        .collect::<Result<_, _>>()?;
    let parameters = if draws == 0 {
        let n = columns.iter().map(|c| c.values.len()).max().unwrap_or(1);
        vec![model.glm.point_parameters(); n]
    } else {
        model.glm.draw_parameters(rng, draws)
    };
    let offset = f64::from(season_days).ln();
    mix_draws(&parameters, season_days as usize, offset, |d, x| {
        for (slot, column) in x.iter_mut().zip(&columns) {
            *slot = column.values[d % column.values.len()];
        }
    })
    .map_err(|(used, drawn)| OutlookError::DegenerateDraws { used, drawn })
}

/// The one predictive path of the count model, for the outlook and every hindcast case: an
/// equal-weight mixture on `0..=n_max` with one component per parameter draw `d`, at the
/// predictor row `fill(d, x)` writes and the exposure `offset` (ln days). A draw whose mean
/// is not finite (an absurd coefficient draw) is skipped; when more than half are skipped
/// the result is `Err((used, drawn))`.
pub fn mix_draws(
    parameters: &[crate::glm::ParameterDraw],
    n_max: usize,
    offset: f64,
    mut fill: impl FnMut(usize, &mut [f64]),
) -> Result<CountDistribution, (usize, usize)> {
    let width = parameters
        .first()
        .map_or(0, |p| p.coefficients.len().saturating_sub(1));
    let mut mixture = Mixture::new(n_max);
    let mut x = vec![0.0; width];
    for (d, draw) in parameters.iter().enumerate() {
        fill(d, &mut x);
        if let Ok(eta) = draw.linear_predictor(&x, offset) {
            mixture.add(eta.exp(), draw.theta);
        }
    }
    let used = mixture.components();
    if used * 2 < parameters.len() {
        return Err((used, parameters.len()));
    }
    mixture.finish().ok_or((0, parameters.len()))
}
