//! Preparing a gauge for fitting and outlooks, once: its season table, every driver's value
//! per season (with the reason when one is missing), the driver series and forecast kept for
//! the target season's scenarios, and the last observed day.

use std::fs::File;
use std::io::BufReader;
use std::path::Path;

use chrono::NaiveDate;

use super::design::{DriverValue, SeasonData};
use super::predictor::Predictor;
use crate::drivers::{
    self, Coast, Driver, DriverInputs, EnsoForecast, EnsoSeries, MonthlyMeanLevel, PhaseSet,
    PredictorSettings, RmmSeries, SeaLevelSource, SeasonPredictors, TrendShape, WindSeries,
    WindStatistic,
};
use crate::gauge::{self, GaugeConfig, GaugeRecord};
use crate::season::Season;

/// Why a gauge could not be prepared.
#[derive(Debug, thiserror::Error)]
pub enum PrepareError {
    /// The gauge's level record.
    #[error(transparent)]
    Gauge(#[from] gauge::GaugeError),
    /// A driver file that cannot be opened.
    #[error("{path}: cannot open: {error}")]
    Io {
        /// The file.
        path: String,
        /// The I/O error.
        #[source]
        error: std::io::Error,
    },
    /// A driver file that cannot be parsed.
    #[error(transparent)]
    Driver(#[from] drivers::DriverParseError),
    /// The ENSO forecast file.
    #[error(transparent)]
    Forecast(#[from] drivers::ForecastError),
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

fn open(path: &Path) -> Result<BufReader<File>, PrepareError> {
    File::open(path)
        .map(BufReader::new)
        .map_err(|error| PrepareError::Io {
            path: path.display().to_string(),
            error,
        })
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
        Some(p) => Some(EnsoSeries::parse(open(p)?, &name(p))?),
        None => None,
    };
    let rmm = match &files.rmm {
        Some(p) => Some(RmmSeries::parse(open(p)?, &name(p))?),
        None => None,
    };
    let wind = match &files.wind {
        Some(p) => Some(WindSeries::parse(open(p)?, &name(p), config.utc_offset)?),
        None => None,
    };
    let enso_forecast = match &files.enso_forecast {
        Some(p) => Some(EnsoForecast::parse(open(p)?, &name(p), &config.seasons.specs)?),
        None => None,
    };
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
    let sea_level = drivers::fit_trend(&months, TrendShape::Linear)
        .ok()
        .map(SeaLevelSource::Fitted);
    Ok(GaugeDrivers {
        enso,
        rmm,
        wind,
        sea_level,
        enso_forecast,
    })
}

/// The drivers' settings from a gauge's description.
pub fn predictor_settings(config: &GaugeConfig) -> Result<PredictorSettings, PrepareError> {
    let phases: Vec<i64> = config.model.mjo_phases.iter().map(|&p| i64::from(p)).collect();
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

/// The model's predictor for a gauge TOML predictor.
pub fn predictor_of(p: gauge::Predictor) -> Predictor {
    match p {
        gauge::Predictor::Enso => Predictor::Enso,
        gauge::Predictor::Mjo => Predictor::Mjo,
        gauge::Predictor::Wind => Predictor::Wind,
        gauge::Predictor::SeaLevel => Predictor::SeaLevel,
        gauge::Predictor::Tide => Predictor::Tide,
    }
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
    let mut notes = Vec::new();
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
                None => DriverValue::Missing(
                    "tide: the tidal driver is not available in this build".to_owned(),
                ),
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
    Ok(PreparedGauge {
        config,
        seasons,
        season_predictors,
        drivers,
        settings,
        last_observed_day,
        notes,
    })
}

impl PreparedGauge {
    /// The model predictors the gauge's TOML asks for.
    pub fn requested_predictors(&self) -> Vec<Predictor> {
        self.config
            .model
            .predictors
            .iter()
            .map(|&p| predictor_of(p))
            .collect()
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
                    let s = Season::new(chrono::Datelike::year(&last) + offset, spec.clone())
                        .ok()?;
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
