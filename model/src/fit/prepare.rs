//! Preparing a gauge for fitting and outlooks, once: from its [`GaugeSources`] (the TOML text
//! and each file's bytes, each parsed exactly once here) to its decoded readings, season table,
//! every driver's value per season (with the reason when one is missing), the driver series
//! and forecast kept for the target season's scenarios, and the last observed day.

use chrono::NaiveDate;

use super::design::{DriverValue, SeasonData};
use super::sources::{ByteSource, GaugeSources};
use crate::drivers::{
    self, Coast, Driver, DriverInputs, EnsoForecast, EnsoSeries, MonthlyMeanLevel, PhaseSet,
    PredictorSettings, RmmSeries, SeaLevelSetting, SeaLevelSource, SeasonPredictors, TrendError,
    WindSeries, WindStatistic,
};
use crate::gauge::{self, GaugeConfig, LevelRecord};
use crate::ingest::{self, LevelSeries};
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
    /// The gauge TOML, or the record built from its level file.
    #[error(transparent)]
    Gauge(#[from] gauge::GaugeError),
    /// The level file is unreadable or malformed.
    #[error(transparent)]
    Levels(#[from] ingest::IngestError),
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
    /// The gauge's sea-level source (`[sea_level]`: by default a trend fitted to its own
    /// monthly means); `None` when a trend cannot be fitted.
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
    /// The tidal driver of `season`: days whose predicted higher high water on the record's
    /// mean level (the tide alone: the sea-level trend is the `sea_level` predictor's, so the
    /// two do not overlap) reaches the threshold minus [`TIDE_MARGIN_M`].
    pub fn value(&self, season: &Season) -> f64 {
        f64::from(self.rule.tidal_driver(&self.model, season, self.model.mean))
    }
}

/// A gauge ready to fit: decoded readings, season table with drivers, driver series and
/// settings.
#[derive(Debug, Clone)]
pub struct PreparedGauge {
    /// The gauge's validated description.
    pub config: GaugeConfig,
    /// Every reading of the level file (times in unix seconds, metres), sorted by time.
    pub levels: LevelSeries,
    /// The daily record and season table built from those readings.
    pub record: LevelRecord,
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

/// Whether [`prepare`] runs the harmonic analysis behind the tidal driver.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TideAnalysis {
    /// When the gauge's model uses the tide.
    AsConfigured,
    /// Never (the season history does without the tidal driver).
    Skip,
}

/// A gauge's description with its decoded readings and level record, before any driver.
#[derive(Debug, Clone)]
pub struct RecordedGauge {
    /// The gauge's validated description.
    pub config: GaugeConfig,
    /// Every reading of the level file, sorted by time.
    pub levels: LevelSeries,
    /// The daily record and season table.
    pub record: LevelRecord,
}

/// Decodes the level file (once) and builds the level record from the decoded readings.
pub fn record_gauge(sources: &GaugeSources) -> Result<RecordedGauge, PrepareError> {
    let config = sources.config().clone();
    let name = &sources.levels.name;
    let (levels, summary) = ingest::decode_levels(
        sources.levels.bytes.as_slice(),
        &config.ingest_options(),
        name,
    )?;
    let record = LevelRecord::new(&config, summary, name)?;
    Ok(RecordedGauge {
        config,
        levels,
        record,
    })
}

/// Prepares a gauge from its sources (TOML already validated), parsing each file exactly
/// once: the level file, each driver series and the ENSO forecast.
pub fn prepare(sources: &GaugeSources, tide: TideAnalysis) -> Result<PreparedGauge, PrepareError> {
    let recorded = record_gauge(sources)?;
    let drivers = parse_drivers(sources, &recorded, tide)?;
    let mut prepared = assemble(recorded, drivers)?;
    prepared.set_enso_forecast(sources.enso_forecast.as_ref())?;
    Ok(prepared)
}

/// The gauge's sea-level source from its `[sea_level]` setting; a trend is fitted to the
/// record's monthly means (an error when the record is too short to fit one).
pub fn sea_level_source(
    setting: &SeaLevelSetting,
    record: &LevelRecord,
) -> Result<SeaLevelSource, TrendError> {
    setting.resolve(&monthly_levels(record))
}

/// The record's monthly means as the sea-level fits take them.
pub fn monthly_levels(record: &LevelRecord) -> Vec<MonthlyMeanLevel> {
    record
        .summary
        .monthly
        .iter()
        .map(|m| MonthlyMeanLevel {
            year: m.year,
            month: m.month,
            mean_m: m.mean_m,
            readings: u32::try_from(m.readings).unwrap_or(u32::MAX),
        })
        .collect()
}

/// Parses the driver series of `sources` (the forecast is set by
/// [`PreparedGauge::set_enso_forecast`]), resolves the sea-level source and, when asked,
/// analyses the tide of the decoded readings.
fn parse_drivers(
    sources: &GaugeSources,
    recorded: &RecordedGauge,
    tide: TideAnalysis,
) -> Result<GaugeDrivers, PrepareError> {
    let config = &recorded.config;
    let enso = match &sources.enso {
        Some(s) => Some(EnsoSeries::parse(s.bytes.as_slice(), &s.name)?),
        None => None,
    };
    let rmm = match &sources.rmm {
        Some(s) => Some(RmmSeries::parse(s.bytes.as_slice(), &s.name)?),
        None => None,
    };
    let wind = match &sources.wind {
        Some(s) => Some(WindSeries::parse(
            s.bytes.as_slice(),
            &s.name,
            config.utc_offset,
        )?),
        None => None,
    };
    let mut notes = Vec::new();
    let sea_level = match sea_level_source(&config.sea_level, &recorded.record) {
        Ok(source) => Some(source),
        Err(TrendError::TooFewMonths { .. }) => {
            notes.push("the level record is too short to fit a sea-level trend".to_owned());
            None
        }
        Err(e) => {
            notes.push(format!("no sea-level trend: {e}"));
            None
        }
    };
    // The tide model serves the tidal driver and the water-level engine alike; a gauge whose
    // count model does not use the tide still prepares when the analysis fails.
    let uses_tide = config.model.predictors.contains(&Predictor::Tide);
    let tide = if tide == TideAnalysis::AsConfigured {
        match tidal_driver(config, &recorded.levels.times, &recorded.levels.levels_m) {
            Ok(t) => Some(t),
            Err(e) if !uses_tide => {
                notes.push(format!("no tide model, so no water-level engine: {e}"));
                None
            }
            Err(e) => return Err(e),
        }
    } else {
        None
    };
    Ok(GaugeDrivers {
        enso,
        rmm,
        wind,
        sea_level,
        enso_forecast: None,
        tide,
        notes,
    })
}

/// The tidal driver from a gauge's readings (times in unix seconds, levels in metres): a
/// harmonic analysis (constituents by the Rayleigh criterion and the mean only, so the
/// sea-level trend is counted once, by the sea-level source) and the count rule at the
/// gauge's threshold.
pub fn tidal_driver(
    config: &GaugeConfig,
    times: &[i64],
    levels_m: &[f64],
) -> Result<TidalDriver, PrepareError> {
    let model = AnalysisParams {
        trend: false,
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

/// A recorded gauge with its parsed driver series -> the prepared gauge: each season's driver
/// values (or why one is missing), the upcoming seasons' tidal driver.
fn assemble(recorded: RecordedGauge, drivers: GaugeDrivers) -> Result<PreparedGauge, PrepareError> {
    let RecordedGauge {
        config,
        levels,
        record,
    } = recorded;
    let settings = predictor_settings(&config)?;
    let inputs = DriverInputs {
        enso: drivers.enso.as_ref(),
        rmm: drivers.rmm.as_ref(),
        wind: drivers.wind.as_ref(),
        sea_level: drivers.sea_level.as_ref(),
    };
    let notes = drivers.notes.clone();
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
                    Some(tide) => DriverValue::Known(tide.value(&row.season)),
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
                let v = tide.value(&s);
                (s, v)
            })
            .collect(),
        _ => Vec::new(),
    };
    Ok(PreparedGauge {
        config,
        levels,
        record,
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

/// The start of the note that carries an ENSO forecast's free-text note.
const FORECAST_NOTE: &str = "ENSO forecast note: ";

impl PreparedGauge {
    /// Parses `forecast` (read against the gauge's seasons) as the gauge's ENSO forecast,
    /// replacing any earlier one; its free-text note goes into [`PreparedGauge::notes`].
    /// `None` leaves the gauge without a forecast.
    pub fn set_enso_forecast(&mut self, forecast: Option<&ByteSource>) -> Result<(), PrepareError> {
        let parsed = match forecast {
            Some(s) => Some(EnsoForecast::parse(
                s.bytes.as_slice(),
                &s.name,
                &self.config.seasons.specs,
            )?),
            None => None,
        };
        self.notes.retain(|n| !n.starts_with(FORECAST_NOTE));
        self.drivers.notes.retain(|n| !n.starts_with(FORECAST_NOTE));
        if let Some(note) = parsed.as_ref().and_then(|f| f.note.as_ref()) {
            let note = format!("{FORECAST_NOTE}{note}");
            self.drivers.notes.push(note.clone());
            self.notes.push(note);
        }
        self.drivers.enso_forecast = parsed;
        Ok(())
    }

    /// The record's monthly means as the sea-level fits take them.
    pub fn monthly_means(&self) -> Vec<MonthlyMeanLevel> {
        monthly_levels(&self.record)
    }

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
        Some(known.unwrap_or_else(|| tide.value(season)))
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

#[cfg(test)]
#[allow(clippy::unwrap_used)] // a failed unwrap is a failed test
mod tests {
    use super::*;
    use crate::fit::sources::{GaugeToml, TextSource};

    /// `days` days of six-hourly readings (invented: a flat 0.2 m with a daily bump).
    fn levels_csv(days: i64) -> Vec<u8> {
        let start = chrono::NaiveDate::from_ymd_opt(2020, 12, 1)
            .unwrap()
            .and_hms_opt(0, 0, 0)
            .unwrap()
            .and_utc()
            .timestamp();
        let mut text = String::from("time,level\n");
        for k in 0..(4 * days) {
            let t = chrono::DateTime::from_timestamp(start + k * 6 * 3600, 0).unwrap();
            let level = if k % 4 == 2 { 0.6 } else { 0.2 };
            text.push_str(&format!("{},{level}\n", t.to_rfc3339()));
        }
        text.into_bytes()
    }

    fn sources(extra_toml: &str) -> GaugeSources {
        sources_of(730, extra_toml)
    }

    fn sources_of(days: i64, extra_toml: &str) -> GaugeSources {
        let toml = format!(
            "id = \"g1\"\nname = \"G\"\nlatitude = 10\nlongitude = -30\ndatum = \"MHHW\"\n\
             flood_threshold_m = 0.5\nutc_offset = \"+00:00\"\ncoast_orientation_deg = 0\n\
             [levels]\nfile = \"levels.csv\"\nunits = \"m\"\n\
             [model]\npredictors = [\"sea_level\"]\n{extra_toml}"
        );
        let text = TextSource {
            name: "g1.toml".into(),
            text: toml,
        };
        GaugeSources {
            toml: GaugeToml::parse(text, std::path::Path::new("")).unwrap(),
            levels: ByteSource {
                name: "levels of g1".into(),
                bytes: levels_csv(days),
            },
            enso: None,
            rmm: None,
            wind: None,
            enso_forecast: None,
        }
    }

    #[test]
    fn the_sea_level_setting_reaches_every_season() {
        let toml = "[sea_level]\nsource = \"rate\"\nrate_m_per_yr = 0.01\n\
                    reference_year = 2020.0\nreference_level_m = 0.3\n";
        let prepared = prepare(&sources(toml), TideAnalysis::AsConfigured).unwrap();
        assert_eq!(prepared.levels.times.len(), 4 * 730);
        assert!(!prepared.seasons.is_empty());
        for season in &prepared.seasons {
            let Some(DriverValue::Known(v)) = season.driver(Predictor::SeaLevel) else {
                panic!("{}: no sea-level value", season.season);
            };
            let expected = 0.3 + 0.01 * (season.season.mid_year() - 2020.0) - 0.5;
            assert!((v - expected).abs() < 1e-12, "{}", season.season);
        }
        // Ten months of monthly means are too few for the default trend: said, not hidden.
        let prepared = prepare(&sources_of(300, ""), TideAnalysis::AsConfigured).unwrap();
        assert!(prepared.drivers.sea_level.is_none());
        assert!(prepared.notes.iter().any(|n| n.contains("too short")));
    }

    #[test]
    fn the_forecast_and_its_note_are_parsed_once_and_replaced_whole() {
        let mut s = sources("");
        s.enso_forecast = Some(ByteSource {
            name: "forecast.json".into(),
            bytes: br#"{"season": "2022-DJF", "issued": "2022-11-15", "note": "trial run",
                "models": [{"name": "a", "members": [0.5, 0.7]}]}"#
                .to_vec(),
        });
        let mut prepared = prepare(&s, TideAnalysis::AsConfigured).unwrap();
        let forecast = prepared.drivers.enso_forecast.as_ref().unwrap();
        assert_eq!(forecast.season.label(), "2022-DJF");
        assert!(
            prepared
                .notes
                .contains(&"ENSO forecast note: trial run".to_owned())
        );
        prepared.set_enso_forecast(None).unwrap();
        assert!(prepared.drivers.enso_forecast.is_none());
        assert!(!prepared.notes.iter().any(|n| n.contains("trial run")));
    }

    #[test]
    fn errors_name_the_source() {
        let mut s = sources("");
        s.levels.bytes.extend_from_slice(b"not a time,1\n");
        let err = prepare(&s, TideAnalysis::AsConfigured)
            .unwrap_err()
            .to_string();
        assert!(err.contains("levels of g1"), "{err}");
        let mut s = sources("");
        s.enso_forecast = Some(ByteSource {
            name: "forecast.json".into(),
            bytes: b"{".to_vec(),
        });
        let err = prepare(&s, TideAnalysis::AsConfigured)
            .unwrap_err()
            .to_string();
        assert!(err.contains("forecast.json"), "{err}");
    }
}
