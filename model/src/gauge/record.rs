//! A gauge's level record: daily maxima with observed flags and the season table, built from
//! the summary of its decoded readings.

use super::{GaugeConfig, GaugeError};
use crate::daily::DailyRecord;
use crate::ingest::LevelSummary;
use crate::season::{SeasonTable, season_table};

/// A gauge's level record, from the readings' summary to the season table.
#[derive(Debug, Clone, PartialEq)]
pub struct LevelRecord {
    /// What the pass over the readings kept (per-day totals, monthly means, interval).
    pub summary: LevelSummary,
    /// Daily maxima with observed flags.
    pub daily: DailyRecord,
    /// Flood days and exposure per season.
    pub seasons: SeasonTable,
}

impl LevelRecord {
    /// Builds the daily record and season table from the summary of the gauge's level file;
    /// `levels_name` labels messages.
    pub fn new(
        config: &GaugeConfig,
        summary: LevelSummary,
        levels_name: &str,
    ) -> Result<Self, GaugeError> {
        let daily = DailyRecord::new(
            &summary.days,
            summary.sampling_interval_s,
            config.levels.min_day_completeness,
        )
        .map_err(|error| GaugeError::Daily {
            path: levels_name.to_owned(),
            error,
        })?;
        let seasons = season_table(
            &daily,
            &config.seasons.specs,
            config.flood_threshold_m,
            config.seasons.min_completeness,
        )
        .map_err(|error| GaugeError::Seasons {
            source_name: config.source_name.clone(),
            error,
        })?;
        Ok(Self {
            summary,
            daily,
            seasons,
        })
    }
}
