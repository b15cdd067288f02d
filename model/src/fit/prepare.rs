//! Preparing a gauge for fitting and outlooks, once: its season table, every driver's value
//! per season (with the reason when one is missing), the driver series and forecast kept for
//! the target season's scenarios, and the last observed day.

use std::fs::File;
use std::io::BufReader;
use std::path::Path;

use chrono::NaiveDate;

use super::design::{DriverValue, SeasonData};
use crate::drivers::{
    self, Coast, Driver, DriverInputs, EnsoForecast, EnsoSeries, MonthlyMeanLevel, PhaseSet,
    PredictorSettings, RmmSeries, SeaLevelSource, SeasonPredictors, SeasonalCycle, TrendShape,
    WindSeries, WindStatistic,
};
use crate::gauge::{self, GaugeConfig, GaugeRecord};
use crate::predictor::Predictor;
use crate::season::Season;
use crate::tide::risk::{RiskConfig, RiskParams};
use crate::tide::{AnalysisParams, TideModel};

/// The tidal driver counts days whose predicted higher high water plus the season's mean sea
/// level comes within this margin of the flood threshold (metres). A stated choice: wide
/// enough that a typical storm surge of a few decimetres on such a day floods, so the count
/// varies between seasons with the nodal and perigean cycles.
pub const TIDE_MARGIN_M: f64 = 0.25;

/// Why a gauge could not be prepared.
#[derive(Debug, thiserror::Error)]
pub enum PrepareError {
    /// The gauge's level record.
    #[error(transparent)]
    Gauge(#[from] gauge::GaugeError),
    /// A driver file that cannot be opened. The cause is in the message once (it is not
    /// also a `source`, which error reports would print a second time).
    #[error("{path} (TOML key {key}): cannot open: {error}")]
    Io {
        /// The file.
        path: String,
        /// The gauge TOML key that names it, e.g. `drivers.enso`.
        key: &'static str,
        /// The I/O error.
        error: std::io::Error,
    },
    /// A driver file that cannot be parsed.
    #[error(transparent)]
    Driver(#[from] drivers::DriverParseError),
    /// The ENSO forecast file.
    #[error(transparent)]
    Forecast(#[from] drivers::ForecastError),
    /// The harmonic analysis behind the tidal driver.
    #[error("tidal driver: {0}")]
    Tide(#[from] crate::tide::TideError),
    /// The gauge's settings for the drivers (phases, coast).
    #[error("{source_name}: {message}")]
    Settings {
        /// The gauge TOML.
        source_name: String,
        /// What is wrong.
        message: String,
    },
}

/// The driver series and forecast of a gauge (any may be absent).
#[derive(Debug, Clone, Default)]
pub struct GaugeDrivers {
    /// Monthly ENSO index.
    pub enso: Option<EnsoSeries>,
    /// Daily RMM index.
    pub rmm: Option<RmmSeries>,
    /// Along-shore wind at the gauge.
    pub wind: Option<WindSeries>,
    /// The sea-level trend (fitted to the gauge's own monthly means).
    pub sea_level: Option<SeaLevelSource>,
    /// The ENSO forecast for a target season.
    pub enso_forecast: Option<EnsoForecast>,
    /// The tide model and settings of the tidal driver (when the gauge uses `tide`).
    pub tide: Option<TidalDriver>,
    /// Notes from reading the drivers (e.g. a forecast's free-text note).
    pub notes: Vec<String>,
}

/// The tidal driver of a gauge: its harmonic tide model and the count rule.
#[derive(Debug, Clone)]
pub struct TidalDriver {
    /// Constituents from the harmonic analysis of the gauge's own record.
    pub model: TideModel,
    /// Threshold, margin and local time of the count.
    pub rule: RiskConfig,
}

impl TidalDriver {
    /// The tidal driver of `season`: days whose predicted higher high water plus the
    /// season's mean sea level (the trend at its middle, or the tide model's mean without a
    /// trend) reaches the threshold minus [`TIDE_MARGIN_M`].
    pub fn value(&self, season: &Season, sea_level: Option<&SeaLevelSource>) -> f64 {
        let msl = sea_level
            .and_then(|s| s.level_at(season.mid_year()).ok())
            .map_or(self.model.mean, |v| v.value);
        f64::from(self.model_value(season, msl))
    }

    fn model_value(&self, season: &Season, msl: f64) -> u32 {
        self.rule.tidal_driver(&self.model, season, msl)
    }
}

/// A gauge ready to fit: season table with drivers, driver series and settings.
#[derive(Debug, Clone)]
pub struct PreparedGauge {
    /// The gauge's validated description.
    pub config: GaugeConfig,
    /// Every season of the record, with every driver's value or the reason it is missing.
    pub seasons: Vec<SeasonData>,
    /// The drivers' own per-season values (same order as `seasons`), kept for resampling
    /// past seasons.
    pub season_predictors: Vec<SeasonPredictors>,
    /// The driver series and forecast.
    pub drivers: GaugeDrivers,
    /// The gauge's settings for the drivers.
    pub settings: PredictorSettings,
    /// The last observed day of the level record.
    pub last_observed_day: Option<NaiveDate>,
    /// The tidal driver of the seasons in the two years after the record (precomputed: the
    /// tide prediction is the costly part of an outlook's drivers).
    pub upcoming_tide: Vec<(Season, f64)>,
    /// Notes on preparation (e.g. a driver that could not be built).
    pub notes: Vec<String>,
}

/// Prepares a gauge from its TOML description: reads its level record and the driver files
/// it names (the only place the model opens files).
pub fn prepare(config: &GaugeConfig) -> Result<PreparedGauge, PrepareError> {
    let record = gauge::load_record(config)?;
    let drivers = load_drivers(config, &record)?;
    prepare_from(config.clone(), &record, drivers)
}

fn open(path: &Path, key: &'static str) -> Result<BufReader<File>, PrepareError> {
    File::open(path)
        .map(BufReader::new)
        .map_err(|error| PrepareError::Io {
            path: path.display().to_string(),
            key,
            error,
        })
}

/// The gauge's sea-level trend: a linear least-squares fit of the record's monthly means
/// (seasonal cycle fitted as nuisance terms); `None` when the record is too short to fit one.
pub fn sea_level_from_record(record: &GaugeRecord) -> Option<SeaLevelSource> {
    let months: Vec<MonthlyMeanLevel> = record
        .summary
        .monthly
        .iter()
        .map(|m| MonthlyMeanLevel {
            year: m.year,
            month: m.month,
            mean_m: m.mean_m,
            readings: u32::try_from(m.readings).unwrap_or(u32::MAX),
        })
        .collect();
    drivers::fit_trend(&months, TrendShape::Linear, SeasonalCycle::default())
        .ok()
        .map(SeaLevelSource::Fitted)
}

/// Reads the driver files a gauge names, and fits its sea-level trend (linear least squares
/// on the record's monthly means).
pub fn load_drivers(
    config: &GaugeConfig,
    record: &GaugeRecord,
) -> Result<GaugeDrivers, PrepareError> {
    let files = &config.drivers;
    let name = |p: &Path| p.display().to_string();
    let enso = match &files.enso {
        Some(p) => Some(EnsoSeries::parse(open(p, "drivers.enso")?, &name(p))?),
        None => None,
    };
    let rmm = match &files.rmm {
        Some(p) => Some(RmmSeries::parse(open(p, "drivers.rmm")?, &name(p))?),
        None => None,
    };
    let wind = match &files.wind {
        Some(p) => Some(WindSeries::parse(
            open(p, "drivers.wind")?,
            &name(p),
            config.utc_offset,
        )?),
        None => None,
    };
    let mut notes = Vec::new();
    let enso_forecast = match &files.enso_forecast {
        Some(p) => {
            let text = std::fs::read_to_string(p).map_err(|error| PrepareError::Io {
                path: name(p),
                key: "drivers.enso_forecast",
                error,
            })?;
            let forecast = EnsoForecast::parse(text.as_bytes(), &name(p), &config.seasons.specs)?;
            if let Some(note) = &forecast.note {
                notes.push(format!("ENSO forecast note: {note}"));
            }
            Some(forecast)
        }
        None => None,
    };
    let sea_level = sea_level_from_record(record);
    let tide = if config.model.predictors.contains(&Predictor::Tide) {
        let series = gauge::load_levels(config)?;
        Some(tidal_driver(config, &series.times, &series.levels_m)?)
    } else {
        None
    };
    Ok(GaugeDrivers {
        enso,
        rmm,
        wind,
        sea_level,
        enso_forecast,
        tide,
        notes,
    })
}

/// The tidal driver from a gauge's readings (times in unix seconds, levels in metres): a
/// harmonic analysis (constituents by the Rayleigh criterion, mean and linear trend) and the
/// count rule at the gauge's threshold.
pub fn tidal_driver(
    config: &GaugeConfig,
    times: &[i64],
    levels_m: &[f64],
) -> Result<TidalDriver, PrepareError> {
    let model = AnalysisParams {
        trend: true,
        ..AnalysisParams::default()
    }
    .check()?
    .fit(times, levels_m)?;
    let rule = RiskParams {
        threshold: config.flood_threshold_m,
        margin: TIDE_MARGIN_M,
        utc_offset_seconds: config.utc_offset.local_minus_utc(),
        min_day_completeness: config.levels.min_day_completeness,
    }
    .check()?;
    Ok(TidalDriver { model, rule })
}

/// The drivers' settings from a gauge's description.
pub fn predictor_settings(config: &GaugeConfig) -> Result<PredictorSettings, PrepareError> {
    let phases: Vec<i64> = config
        .model
        .mjo_phases
        .iter()
        .map(|&p| i64::from(p))
        .collect();
    let mjo_phases = PhaseSet::new(&phases).map_err(|e| PrepareError::Settings {
        source_name: config.source_name.clone(),
        message: format!("key `model.mjo_phases`: {e}"),
    })?;
    Ok(PredictorSettings {
        enso_timing: match config.model.enso_timing {
            gauge::EnsoTiming::Preceding => drivers::EnsoTiming::Preceding,
            gauge::EnsoTiming::Concurrent => drivers::EnsoTiming::Concurrent,
        },
        mjo_phases,
        wind_statistic: match config.model.wind_statistic {
            gauge::WindStatistic::Mean => WindStatistic::Mean,
            gauge::WindStatistic::Positive => WindStatistic::Positive,
        },
        coast: Coast::new(config.coast_orientation_deg, config.latitude).ok(),
        flood_threshold_m: config.flood_threshold_m,
    })
}

/// The drivers module's driver for a model predictor (`None` for the tide, which the tide
/// module provides).
pub fn driver_of(p: Predictor) -> Option<Driver> {
    match p {
        Predictor::Enso => Some(Driver::Enso),
        Predictor::Mjo => Some(Driver::Mjo),
        Predictor::Wind => Some(Driver::Wind),
        Predictor::SeaLevel => Some(Driver::SeaLevel),
        Predictor::Tide => None,
    }
}

/// Prepares a gauge from an already read record and driver series (e.g. uploads).
pub fn prepare_from(
    config: GaugeConfig,
    record: &GaugeRecord,
    drivers: GaugeDrivers,
) -> Result<PreparedGauge, PrepareError> {
    let settings = predictor_settings(&config)?;
    let inputs = DriverInputs {
        enso: drivers.enso.as_ref(),
        rmm: drivers.rmm.as_ref(),
        wind: drivers.wind.as_ref(),
        sea_level: drivers.sea_level.as_ref(),
    };
    let mut notes = drivers.notes.clone();
    if drivers.sea_level.is_none() {
        notes.push("the level record is too short to fit a sea-level trend".to_owned());
    }
    let mut seasons = Vec::with_capacity(record.seasons.rows.len());
    let mut season_predictors = Vec::with_capacity(record.seasons.rows.len());
    for row in &record.seasons.rows {
        let values = drivers::season_predictors(&row.season, &inputs, &settings, &Driver::ALL);
        let mut driver_values = Vec::with_capacity(Predictor::ALL.len());
        for p in Predictor::ALL {
            let value = match driver_of(p) {
                Some(d) => match values.value(d) {
                    Some(v) => DriverValue::Known(v),
                    None => DriverValue::Missing(
                        values
                            .missing
                            .iter()
                            .find(|s| s.driver == d)
                            .map_or_else(|| format!("{d}: no value"), ToString::to_string),
                    ),
                },
                None => match &drivers.tide {
                    Some(tide) => {
                        DriverValue::Known(tide.value(&row.season, drivers.sea_level.as_ref()))
                    }
                    None => DriverValue::Missing("tide: the gauge does not use it".to_owned()),
                },
            };
            driver_values.push((p, value));
        }
        seasons.push(SeasonData {
            season: row.season.clone(),
            flood_days: row.flood_days,
            observed_days: row.observed_days,
            calendar_days: row.calendar_days,
            incomplete: if row.included {
                None
            } else {
                Some(row.exclusion.clone().unwrap_or_else(|| {
                    format!("completeness {:.2} below the minimum", row.completeness)
                }))
            },
            drivers: driver_values,
        });
        season_predictors.push(values);
    }
    let last_observed_day = record
        .daily
        .days
        .iter()
        .rev()
        .find(|d| d.observed)
        .map(|d| d.date);
    let upcoming_tide = match (&drivers.tide, last_observed_day) {
        (Some(tide), Some(last)) => upcoming_seasons(&config, last, 2)
            .into_iter()
            .map(|s| {
                let v = tide.value(&s, drivers.sea_level.as_ref());
                (s, v)
            })
            .collect(),
        _ => Vec::new(),
    };
    Ok(PreparedGauge {
        config,
        seasons,
        season_predictors,
        drivers,
        settings,
        last_observed_day,
        upcoming_tide,
        notes,
    })
}

/// The seasons of the gauge's definitions starting after `last` and within `years` years of
/// it, in order of their first day.
fn upcoming_seasons(config: &GaugeConfig, last: NaiveDate, years: i32) -> Vec<Season> {
    let year = chrono::Datelike::year(&last);
    let mut out: Vec<Season> = config
        .seasons
        .specs
        .iter()
        .flat_map(|spec| (0..=years).filter_map(move |k| Season::new(year + k, spec.clone()).ok()))
        .filter(|s| {
            s.first_day() > last
                && s.first_day() <= last + chrono::Duration::days(366 * i64::from(years))
        })
        .collect();
    out.sort_by_key(Season::first_day);
    out
}

impl PreparedGauge {
    /// The model predictors the gauge's TOML asks for.
    pub fn requested_predictors(&self) -> Vec<Predictor> {
        self.config.model.predictors.clone()
    }

    /// The tidal driver of `season`: from the record's seasons or the precomputed upcoming
    /// ones, else predicted now; `None` when the gauge does not use the tide.
    pub fn tidal_driver(&self, season: &Season) -> Option<f64> {
        let tide = self.drivers.tide.as_ref()?;
        let known = self
            .season(&season.label())
            .and_then(|s| match s.driver(Predictor::Tide) {
                Some(DriverValue::Known(v)) => Some(*v),
                _ => None,
            })
            .or_else(|| {
                self.upcoming_tide
                    .iter()
                    .find(|(s, _)| s == season)
                    .map(|(_, v)| *v)
            });
        Some(known.unwrap_or_else(|| tide.value(season, self.drivers.sea_level.as_ref())))
    }

    /// The default target season: the first season (of the gauge's definitions) starting
    /// after the record's last observed day, e.g. 2026-DJF for a record ending 2026-11-30.
    pub fn default_target(&self) -> Option<Season> {
        let last = self.last_observed_day?;
        self.config
            .seasons
            .specs
            .iter()
            .filter_map(|spec| {
                [0, 1].into_iter().find_map(|offset| {
                    let s =
                        Season::new(chrono::Datelike::year(&last) + offset, spec.clone()).ok()?;
                    (s.first_day() > last).then_some(s)
                })
            })
            .min_by_key(Season::first_day)
    }

    /// The season data of `label`, if the record has it.
    pub fn season(&self, label: &str) -> Option<&SeasonData> {
        self.seasons.iter().find(|s| s.season.label() == label)
    }
}
