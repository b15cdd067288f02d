//! The predictive distribution of a target season's flood days: an equal-weight mixture over
//! (driver scenario, parameter draw) pairs.

use rand::Rng;
use serde::Serialize;

use super::OutlookError;
use super::draws::ParameterSampler;
use super::mixture::Mixture;
use crate::fit::{GaugeModel, Predictor};

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

/// The mixture pmf over `0..=season_days` for `model` with the target's drivers, `draws`
/// components (scenario `d`, parameter draw `d`), exposure = the season's calendar days.
/// With `draws == 0` there is no parameter uncertainty: one component per scenario of the
/// longest driver list at the estimated coefficients.
pub fn predictive_pmf(
    model: &GaugeModel,
    drivers: &[DriverScenarios],
    season_days: u32,
    draws: usize,
    rng: &mut impl Rng,
) -> Result<Vec<f64>, OutlookError> {
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
    let sampler = ParameterSampler::new(model);
    let mut mixture = Mixture::new(season_days);
    let exposure = f64::from(season_days);
    let mut x = vec![0.0; columns.len()];
    let (components, random) = if draws == 0 {
        (columns.iter().map(|c| c.values.len()).max().unwrap_or(1), false)
    } else {
        (draws, true)
    };
    for d in 0..components {
        for (slot, column) in x.iter_mut().zip(&columns) {
            *slot = column.values[d % column.values.len()];
        }
        let parameters = if random {
            sampler.draw(rng)
        } else {
            sampler.point()
        };
        // A draw whose mean is not finite (an absurd coefficient draw) is skipped; the count
        // of skipped draws is checked below.
        mixture.add(parameters.mean(&x, exposure), parameters.law);
    }
    if mixture.components() * 2 < components {
        return Err(OutlookError::DegenerateDraws {
            used: mixture.components(),
            drawn: components,
        });
    }
    Ok(mixture.pmf())
}
