//! The engine at one gauge and season name: its daily table, its full-record fit, the ENSO
//! scenarios of a target season, and the report a researcher reads.

use rand_chacha::ChaCha8Rng;
use serde::Serialize;

use super::WaterError;
use super::days::{DayDrivers, DayGrid, SeasonWater, season_days};
use super::engine::{Columns, WaterConfig, WaterFit};
use super::simulate::{SeasonPlan, Simulated, simulate};
use crate::daily::DailyRecord;
use crate::drivers::{
    EnsoForecast, EnsoSeries, EnsoTiming, MonthlyMeanLevel, PastSeason, Resampling,
    ScenarioGenerator, SeaLevelSetting, SeaLevelSource,
};
use crate::fit::{Predictor, PreparedGauge};
use crate::ingest::LevelSeries;
use crate::season::{Season, SeasonSpec};
use crate::tide::TideModel;

/// What the engine is built from (borrowed from a prepared gauge).
#[derive(Debug, Clone, Copy)]
pub struct WaterInputs<'a> {
    /// Every reading, metres.
    pub levels: &'a LevelSeries,
    /// The daily record (the completeness rule).
    pub daily: &'a DailyRecord,
    /// The tide model, fitted with its mean only.
    pub tide: &'a TideModel,
    /// The season name's definition.
    pub spec: &'a SeasonSpec,
    /// Reading grid and local time.
    pub grid: DayGrid,
    /// The drivers.
    pub drivers: DayDrivers<'a>,
    /// Which drivers enter the regression.
    pub columns: Columns,
    /// Flood threshold, m.
    pub threshold_m: f64,
    /// The record's monthly means (for trend refits).
    pub monthly: &'a [MonthlyMeanLevel],
    /// The gauge's `[sea_level]` choice.
    pub sea_level: &'a SeaLevelSetting,
}

/// The engine of one season name at a gauge.
#[derive(Debug, Clone)]
pub struct GaugeWater {
    /// The season name.
    pub season_name: String,
    /// The checked settings.
    pub config: WaterConfig,
    /// The reading grid.
    pub grid: DayGrid,
    /// The tide model (mean only).
    pub tide: TideModel,
    /// Every season of the name overlapping the record, in order.
    pub seasons: Vec<SeasonWater>,
    /// The record's monthly means.
    pub monthly: Vec<MonthlyMeanLevel>,
    /// The `[sea_level]` choice.
    pub sea_level_setting: SeaLevelSetting,
    /// The sea-level source from the whole record.
    pub sea_level: SeaLevelSource,
}

impl GaugeWater {
    /// Builds the daily table and the full-record sea-level source.
    pub fn new(inputs: &WaterInputs<'_>) -> Result<Self, WaterError> {
        let config = super::WaterParams::new(inputs.columns, inputs.threshold_m).check()?;
        let seasons = season_days(
            inputs.levels,
            inputs.daily,
            inputs.tide,
            inputs.spec,
            inputs.grid,
            inputs.threshold_m,
            &inputs.drivers,
        );
        let sea_level = inputs.sea_level.resolve(inputs.monthly)?;
        Ok(Self {
            season_name: inputs.spec.name().to_owned(),
            config,
            grid: inputs.grid,
            tide: inputs.tide.clone(),
            seasons,
            monthly: inputs.monthly.to_vec(),
            sea_level_setting: inputs.sea_level.clone(),
            sea_level,
        })
    }

    /// The index of `season` in the table.
    pub fn index_of(&self, season: &Season) -> Option<usize> {
        self.seasons.iter().position(|s| s.season == *season)
    }

    /// Indices of the seasons usable for training: at least half their days observed.
    pub fn usable(&self) -> Vec<usize> {
        (0..self.seasons.len())
            .filter(|&i| {
                let s = &self.seasons[i];
                s.observed_days() * 2 >= s.days.len()
            })
            .collect()
    }

    /// The fit on every usable season before `before` (all of them with `None`).
    pub fn fit_before(&self, before: Option<&Season>) -> Result<WaterFit, WaterError> {
        let training: Vec<usize> = self
            .usable()
            .into_iter()
            .filter(|&i| before.is_none_or(|b| self.seasons[i].season.first_day() < b.first_day()))
            .collect();
        self.config
            .fit(&self.seasons, &training, &self.sea_level, self.tide.mean)
    }

    /// The fit on `training`, with the sea-level source refitted on the months `months`
    /// accepts (a hindcast keeps its target out of the trend).
    pub fn fit_on(
        &self,
        training: &[usize],
        months: impl Fn(&MonthlyMeanLevel) -> bool,
    ) -> Result<WaterFit, WaterError> {
        let kept: Vec<MonthlyMeanLevel> =
            self.monthly.iter().filter(|m| months(m)).cloned().collect();
        let source = self.sea_level_setting.resolve(&kept)?;
        self.config
            .fit(&self.seasons, training, &source, self.tide.mean)
    }

    /// The days of a coming season (no observation), with drivers where the series have them.
    pub fn future(
        &self,
        season: &Season,
        drivers: &DayDrivers<'_>,
    ) -> Result<SeasonWater, WaterError> {
        if !season.spec().name().eq_ignore_ascii_case(&self.season_name) {
            return Err(WaterError::SeasonMismatch {
                season: season.label(),
                season_name: self.season_name.clone(),
            });
        }
        // A season the table holds (the one after the record, say) keeps its lead-in.
        match self.index_of(season) {
            Some(i) => {
                let mut known = self.seasons[i].clone();
                for day in &mut known.days {
                    day.residual = None;
                    day.flood = false;
                }
                Ok(known)
            }
            None => Ok(self.grid.future_days(&self.tide, season, drivers)),
        }
    }

    /// Simulates `season` (counting every calendar day) under `fit`.
    pub fn forecast(
        &self,
        fit: &WaterFit,
        season: &SeasonWater,
        enso: &[f64],
        simulations: usize,
        rng: &mut ChaCha8Rng,
    ) -> Result<Simulated, WaterError> {
        simulate(
            fit,
            SeasonPlan {
                season,
                observed_only: false,
            },
            enso,
            simulations,
            rng,
        )
    }

    /// The water-level engine of `season_name` at a prepared gauge (its decoded readings,
    /// daily record, tide model, drivers and `[sea_level]` setting).
    pub fn for_gauge(
        prepared: &PreparedGauge,
        season_name: &str,
    ) -> Result<GaugeWater, WaterError> {
        let spec = prepared
            .config
            .seasons
            .specs
            .iter()
            .find(|s| s.name().eq_ignore_ascii_case(season_name))
            .ok_or_else(|| WaterError::SeasonMismatch {
                season: season_name.to_owned(),
                season_name: season_name.to_owned(),
            })?;
        let tide = &prepared
            .drivers
            .tide
            .as_ref()
            .ok_or(WaterError::NoTideModel)?
            .model;
        let wants = |p: Predictor| prepared.config.model.predictors.contains(&p);
        let drivers = day_drivers(prepared);
        let columns = Columns {
            enso: wants(Predictor::Enso) && drivers.enso.is_some(),
            mjo: wants(Predictor::Mjo) && drivers.rmm.is_some(),
            wind: wants(Predictor::Wind) && drivers.wind.is_some(),
        };
        let monthly = prepared.monthly_means();
        GaugeWater::new(&WaterInputs {
            levels: &prepared.levels,
            daily: &prepared.record.daily,
            tide,
            spec,
            grid: DayGrid {
                utc_offset_seconds: prepared.config.utc_offset.local_minus_utc(),
                step_seconds: prepared.record.daily.sampling_interval_s,
            },
            drivers,
            columns,
            threshold_m: prepared.config.flood_threshold_m,
            monthly: &monthly,
            sea_level: &prepared.config.sea_level,
        })
    }
}

fn day_drivers(prepared: &PreparedGauge) -> DayDrivers<'_> {
    DayDrivers {
        enso: prepared.drivers.enso.as_ref(),
        rmm: prepared
            .drivers
            .rmm
            .as_ref()
            .map(|r| (r, &prepared.settings.mjo_phases)),
        wind: match (&prepared.drivers.wind, &prepared.settings.coast) {
            (Some(w), Some(c)) => Some((w, c)),
            _ => None,
        },
    }
}

/// ENSO of a season as known when its outlook is issued, before the season begins: the last
/// month before the season carried forward, plus an error drawn from past seasons' errors of
/// that persistence (the season's mean minus the month before it), `count` values.
///
/// Persistence is the reference forecast of the trade for a slowly varying index (common
/// practice); its error is taken from `past` seasons only, so a hindcast stays out of sample.
pub fn enso_at_issue(
    series: &EnsoSeries,
    target: &Season,
    past: &[Season],
    count: usize,
    rng: &mut ChaCha8Rng,
) -> Result<Vec<f64>, WaterError> {
    use rand::Rng;
    let persisted = |s: &Season| -> Option<f64> {
        let (y, m) = month_before(s);
        series.get(y, m)
    };
    let start = persisted(target).ok_or_else(|| WaterError::NoEnso {
        season: target.label(),
        why: "the month before it is not in the ENSO index".to_owned(),
    })?;
    let errors: Vec<f64> = past
        .iter()
        .filter_map(|s| {
            let own = series.seasonal(s, EnsoTiming::Concurrent).ok()?;
            Some(own.value - persisted(s)?)
        })
        .collect();
    if errors.is_empty() {
        return Ok(vec![start]);
    }
    Ok((0..count.max(1))
        .map(|_| start + errors[rng.gen_range(0..errors.len())])
        .collect())
}

fn month_before(season: &Season) -> (i32, u32) {
    let (y, m) = season.months()[0];
    if m == 1 { (y - 1, 12) } else { (y, m - 1) }
}

/// ENSO scenarios of an outlook's target: the forecast's members pooled with equal weight per
/// model (or its category probabilities), else the observed value when the index already has
/// the season, else persistence with its past error. Returns the values and their source in
/// words.
pub fn enso_scenarios(
    forecast: Option<&EnsoForecast>,
    series: Option<&EnsoSeries>,
    target: &Season,
    past: &[PastSeason],
    past_seasons: &[Season],
    count: usize,
    rng: &mut ChaCha8Rng,
) -> Result<(Vec<f64>, String), WaterError> {
    if let Some(forecast) = forecast.filter(|f| f.season == *target) {
        let generator =
            ScenarioGenerator::from_forecast(forecast, past, &[], Resampling::AllSeasons).map_err(
                |e| WaterError::NoEnso {
                    season: target.label(),
                    why: e.to_string(),
                },
            )?;
        let values = generator
            .sample_many(rng, count.max(1))
            .into_iter()
            .map(|s| s.enso)
            .collect();
        return Ok((
            values,
            format!(
                "ENSO forecast issued {}, pooled with equal weight per model",
                forecast.issued
            ),
        ));
    }
    let series = series.ok_or_else(|| WaterError::NoEnso {
        season: target.label(),
        why: "the gauge names no ENSO index".to_owned(),
    })?;
    if let Ok(observed) = series.seasonal(target, EnsoTiming::Concurrent) {
        return Ok((
            vec![observed.value],
            format!("observed ENSO index of {target}"),
        ));
    }
    let values = enso_at_issue(series, target, past_seasons, count, rng)?;
    Ok((
        values,
        "the ENSO index of the month before the season carried forward, with the error of that \
         persistence in past seasons"
            .to_owned(),
    ))
}

/// One driver's estimated effect on the daily high water, as reported.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EffectReport {
    /// The regression column.
    pub name: String,
    /// What one unit of it is.
    pub per: &'static str,
    /// Estimated effect on the day's high water, m per unit.
    pub estimate_m: f64,
    /// Season-clustered standard error, m.
    pub std_error_m: f64,
    /// Naive standard error (independent days), m, for comparison.
    pub ols_std_error_m: f64,
    /// 95 % interval, m.
    pub interval95_m: [f64; 2],
    /// Whether the interval excludes zero.
    pub distinct_from_zero: bool,
}

/// What the engine's full-record fit says, for researchers.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WaterReport {
    /// The season name.
    pub season_name: String,
    /// Days in the regression.
    pub days: usize,
    /// Seasons pooled for resampling.
    pub seasons: usize,
    /// Residual standard deviation of the regression, m.
    pub residual_sd_m: f64,
    /// The drivers' effects (the intercept left out).
    pub effects: Vec<EffectReport>,
    /// Whether no driver's effect is distinct from zero.
    pub drivers_add_nothing: bool,
    /// The damped persistence of the weather just before the season, when past seasons show
    /// one (else the lead-in is treated as unknown).
    pub persistence: Option<super::Persistence>,
    /// The mean block length of the resampling, days (Politis and White 2004).
    pub block_days: f64,
    /// How the errors were computed, in words.
    pub errors: String,
    /// How the residual is defined, in words.
    pub residual: String,
}

impl WaterReport {
    /// The report of a fit.
    pub fn of(fit: &WaterFit, season_name: &str) -> Self {
        let effects: Vec<EffectReport> = fit
            .regression
            .coefficients
            .iter()
            .filter(|c| c.name != "intercept")
            .map(|c| {
                let (lo, hi) = c.interval95();
                EffectReport {
                    name: c.name.clone(),
                    per: match c.name.as_str() {
                        "enso" => "deg C of the month's ENSO anomaly",
                        "wind" => "m/s of along-shore wind",
                        "mjo_in_phases" => "active MJO day in the gauge's phases",
                        _ => "active MJO day in the opposite phases",
                    },
                    estimate_m: c.estimate,
                    std_error_m: c.std_error,
                    ols_std_error_m: c.ols_std_error,
                    interval95_m: [lo, hi],
                    distinct_from_zero: lo > 0.0 || hi < 0.0,
                }
            })
            .collect();
        Self {
            season_name: season_name.to_owned(),
            days: fit.regression.rows,
            seasons: fit.pool_seasons(),
            residual_sd_m: fit.regression.residual_sd,
            drivers_add_nothing: !effects.iter().any(|e| e.distinct_from_zero),
            persistence: fit.persistence,
            block_days: fit.block_days,
            effects,
            errors: "least squares; standard errors clustered by season (any correlation \
                     between days of one season, none between seasons; Liang and Zeger 1986)"
                .to_owned(),
            residual: "each observed day's highest reading minus the highest tide prediction \
                       at the same readings, the calendar-day form of the skew surge, less the \
                       sea-level trend beyond the tide model's mean"
                .to_owned(),
        }
    }
}
