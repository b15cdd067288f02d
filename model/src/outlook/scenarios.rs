//! The target season's driver scenarios:
//!
//! - ENSO from the forecast for the target season: ensemble members pooled with equal weight
//!   per model (no skill weights), or category probabilities (a category drawn with its
//!   probability, then a past season's value of that category). With `preceding` timing the
//!   value is the preceding season's observed mean, known at issue time (when its last month
//!   is not yet in the series, the mean of its months present, with a note);
//! - MJO and wind from past seasons of the same season name, resampled together (the same
//!   past season for both, keeping their relation), optionally only from past seasons of the
//!   scenario's ENSO category;
//! - the sea-level trend extrapolated to the season's middle, drawn from a normal with the
//!   trend's standard error;
//! - the tidal driver as predicted (known in advance).
//!
//! The sampling itself is the drivers module's [`ScenarioGenerator`].

use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};

use super::{DriverScenarios, OutlookError};
use crate::drivers::{
    Driver, EnsoTiming, ForecastContent, PastSeason, Resampling, ScenarioGenerator,
    enso::period_months,
};
use crate::fit::{Predictor, PreparedGauge, TIDE_MARGIN_M};
use crate::season::Season;

/// Past seasons an ENSO category needs to be resampled on its own (otherwise all past
/// seasons are used, with a note).
pub const MIN_CATEGORY_SEASONS: usize = 5;

/// The target's scenarios and notes on how they were made.
#[derive(Debug, Clone, PartialEq)]
pub struct TargetScenarios {
    /// One entry per predictor with a value (ENSO, MJO and wind share scenario indices).
    pub drivers: Vec<DriverScenarios>,
    /// Plain notes (fallbacks).
    pub notes: Vec<String>,
}

/// Draws `count` scenarios of the target season's drivers for `predictors` (plus the sea
/// level, always, for the trend-only reference), resampling MJO and wind from the past
/// seasons of the target's name that start before it.
pub fn target_scenarios(
    prepared: &PreparedGauge,
    target: &Season,
    predictors: &[Predictor],
    count: usize,
    condition_on_enso: bool,
    rng: &mut ChaCha8Rng,
) -> Result<TargetScenarios, OutlookError> {
    let before = |s: &Season| s.first_day() < target.first_day();
    target_scenarios_from(
        prepared,
        target,
        predictors,
        count,
        condition_on_enso,
        &before,
        rng,
    )
}

/// As [`target_scenarios`], resampling MJO and wind only from past seasons (of the target's
/// name) that `allowed` accepts, e.g. a hindcast's training seasons.
pub fn target_scenarios_from(
    prepared: &PreparedGauge,
    target: &Season,
    predictors: &[Predictor],
    count: usize,
    condition_on_enso: bool,
    allowed: &dyn Fn(&Season) -> bool,
    rng: &mut ChaCha8Rng,
) -> Result<TargetScenarios, OutlookError> {
    let count = count.max(1);
    let mut notes = Vec::new();
    let mut out = Vec::new();
    let wants = |p: Predictor| predictors.contains(&p);

    let needs: Vec<Driver> = [
        (Predictor::Mjo, Driver::Mjo),
        (Predictor::Wind, Driver::Wind),
    ]
    .into_iter()
    .filter_map(|(p, d)| wants(p).then_some(d))
    .collect();
    let season_name = target.spec().name();
    let past: Vec<PastSeason> = prepared
        .seasons
        .iter()
        .zip(&prepared.season_predictors)
        .filter(|(s, _)| s.season.spec().name() == season_name && allowed(&s.season))
        .map(|(_, p)| p.past_season())
        .collect();
    let resampling = if condition_on_enso {
        Resampling::SameEnsoCategory {
            min_seasons: MIN_CATEGORY_SEASONS,
        }
    } else {
        Resampling::AllSeasons
    };

    let (generator, enso_source) = if wants(Predictor::Enso) {
        enso_generator(prepared, target, &past, &needs, resampling, &mut notes)?
    } else {
        // No ENSO in the model: any known value keeps the generator's ENSO path inert.
        (
            ScenarioGenerator::with_known_enso(0.0, &past, &needs, Resampling::AllSeasons)
                .map_err(OutlookError::Scenario)?,
            String::new(),
        )
    };
    notes.extend(generator.notes().iter().cloned());
    let scenarios = generator.sample_many(rng, count);
    if wants(Predictor::Enso) {
        out.push(DriverScenarios {
            predictor: Predictor::Enso,
            values: scenarios.iter().map(|s| s.enso).collect(),
            source: enso_source,
        });
    }
    let past_words = format!(
        "resampled from past {season_name} seasons {} to {}{}",
        past.first().map_or("-", |p| p.label.as_str()),
        past.last().map_or("-", |p| p.label.as_str()),
        if condition_on_enso {
            " of the scenario's ENSO category"
        } else {
            ""
        }
    );
    for (p, pick) in [
        (
            Predictor::Mjo,
            (|s: &crate::drivers::Scenario| s.mjo_share) as fn(&_) -> _,
        ),
        (Predictor::Wind, |s: &crate::drivers::Scenario| s.wind),
    ] {
        if wants(p) {
            let values: Vec<f64> = scenarios.iter().filter_map(pick).collect();
            out.push(DriverScenarios {
                predictor: p,
                values,
                source: past_words.clone(),
            });
        }
    }

    if let Some(source) = &prepared.drivers.sea_level {
        match source.season_value(target, prepared.config.flood_threshold_m) {
            Ok(v) => {
                let values = match Normal::new(v.value, v.std_error) {
                    Ok(law) if v.std_error > 0.0 => (0..count).map(|_| law.sample(rng)).collect(),
                    _ => vec![v.value],
                };
                out.push(DriverScenarios {
                    predictor: Predictor::SeaLevel,
                    values,
                    source: format!(
                        "sea-level trend {} to the season's middle: {:+.3} m relative to the \
                         threshold, standard error {:.3} m",
                        if v.extrapolated {
                            "extrapolated"
                        } else {
                            "evaluated"
                        },
                        v.value,
                        v.std_error
                    ),
                });
            }
            Err(e) => notes.push(format!("no sea-level value for {target}: {e}")),
        }
    }
    if wants(Predictor::Tide) {
        match prepared.tidal_driver(target) {
            Some(value) => out.push(DriverScenarios {
                predictor: Predictor::Tide,
                values: vec![value],
                source: format!(
                    "predicted astronomical tide: days whose predicted high water on the record's \
                     mean level comes within {TIDE_MARGIN_M} m of the threshold"
                ),
            }),
            None => notes.push(format!("no tidal driver value for {target}")),
        }
    }
    Ok(TargetScenarios {
        drivers: out,
        notes,
    })
}

fn enso_generator(
    prepared: &PreparedGauge,
    target: &Season,
    past: &[PastSeason],
    needs: &[Driver],
    resampling: Resampling,
    notes: &mut Vec<String>,
) -> Result<(ScenarioGenerator, String), OutlookError> {
    match prepared.settings.enso_timing {
        EnsoTiming::Concurrent => {
            let forecast = prepared
                .drivers
                .enso_forecast
                .as_ref()
                .filter(|f| f.season == *target);
            // A past target whose own ENSO is already in the index needs no forecast.
            let observed = prepared
                .drivers
                .enso
                .as_ref()
                .and_then(|series| series.seasonal(target, EnsoTiming::Concurrent).ok());
            if let (None, Some(observed)) = (forecast, observed) {
                let generator =
                    ScenarioGenerator::with_known_enso(observed.value, past, needs, resampling)
                        .map_err(OutlookError::Scenario)?;
                return Ok((
                    generator,
                    format!("observed ENSO index of {target} (already in the index)"),
                ));
            }
            let forecast = forecast.ok_or_else(|| OutlookError::NoEnsoForecast {
                target: target.label(),
                available: prepared
                    .drivers
                    .enso_forecast
                    .as_ref()
                    .map(|f| f.season.label()),
            })?;
            let source = match &forecast.content {
                ForecastContent::Members(models) => format!(
                    "ENSO forecast issued {}: {} members from {} models, pooled with equal \
                     weight per model",
                    forecast.issued,
                    models.iter().map(|m| m.members.len()).sum::<usize>(),
                    models.len()
                ),
                ForecastContent::Probabilities(p) => format!(
                    "ENSO forecast issued {}: La Nina {:.0}%, neutral {:.0}%, El Nino {:.0}%; \
                     values drawn from past seasons of each category",
                    forecast.issued,
                    p.la_nina * 100.0,
                    p.neutral * 100.0,
                    p.el_nino * 100.0
                ),
            };
            let generator = ScenarioGenerator::from_forecast(forecast, past, needs, resampling)
                .map_err(OutlookError::Scenario)?;
            Ok((generator, source))
        }
        EnsoTiming::Preceding => {
            let series = prepared
                .drivers
                .enso
                .as_ref()
                .ok_or(OutlookError::NoEnsoSeries)?;
            let months = period_months(target, EnsoTiming::Preceding);
            let present: Vec<((i32, u32), f64)> = months
                .iter()
                .filter_map(|&m| series.get(m.0, m.1).map(|v| (m, v)))
                .collect();
            if present.is_empty() {
                return Err(OutlookError::NoPrecedingEnso {
                    target: target.label(),
                });
            }
            let value = present.iter().map(|(_, v)| v).sum::<f64>() / present.len() as f64;
            let words: Vec<String> = present
                .iter()
                .map(|((y, m), _)| format!("{y}-{m:02}"))
                .collect();
            if present.len() < months.len() {
                notes.push(format!(
                    "the preceding season's ENSO is not complete yet: the mean of {} is used",
                    words.join(", ")
                ));
            }
            let generator = ScenarioGenerator::with_known_enso(value, past, needs, resampling)
                .map_err(OutlookError::Scenario)?;
            Ok((
                generator,
                format!(
                    "observed ENSO index of the preceding months ({})",
                    words.join(", ")
                ),
            ))
        }
    }
}
