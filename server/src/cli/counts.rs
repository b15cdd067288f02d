//! `tidetally counts --gauge FILE [--csv | --predictors]`: the gauge's season table (flood
//! days, observed days and completeness per season) as JSON, or as CSV with `--csv`; with
//! `--predictors`, the full predictor table the count model is fitted on, as CSV.

use anyhow::Context;
use serde::Serialize;
use tidetally_model::fit::{FilesNeeded, GaugeSources};
use tidetally_model::gauge::{GaugeConfig, LevelRecord};
use tidetally_model::ingest;
use tidetally_model::season::SeasonRow;

/// The JSON printed by `counts`.
#[derive(Debug, Serialize)]
struct CountsOutput<'a> {
    gauge: &'a str,
    name: &'a str,
    datum: &'a str,
    flood_threshold_m: f64,
    min_day_completeness: f64,
    min_season_completeness: f64,
    sampling_interval_s: i64,
    first_day: String,
    last_day: String,
    seasons: Vec<SeasonOutput>,
}

/// One season in the `counts` JSON.
#[derive(Debug, Serialize)]
struct SeasonOutput {
    season: String,
    first_day: String,
    last_day: String,
    flood_days: u32,
    observed_days: u32,
    calendar_days: u32,
    completeness: f64,
    used_in_fit: bool,
    left_out_reason: Option<String>,
    max_level_m: Option<f64>,
}

impl From<&SeasonRow> for SeasonOutput {
    fn from(row: &SeasonRow) -> Self {
        Self {
            season: row.label.clone(),
            first_day: row.season.first_day().to_string(),
            last_day: row.season.last_day().to_string(),
            flood_days: row.flood_days,
            observed_days: row.observed_days,
            calendar_days: row.calendar_days,
            completeness: row.completeness,
            used_in_fit: row.included,
            left_out_reason: row.exclusion.clone(),
            max_level_m: row.max_level_m,
        }
    }
}

fn output<'a>(config: &'a GaugeConfig, record: &LevelRecord) -> CountsOutput<'a> {
    CountsOutput {
        gauge: &config.id,
        name: &config.name,
        datum: &config.datum,
        flood_threshold_m: config.flood_threshold_m,
        min_day_completeness: record.daily.min_day_completeness,
        min_season_completeness: record.seasons.min_completeness,
        sampling_interval_s: record.daily.sampling_interval_s,
        first_day: record.daily.first_date().to_string(),
        last_day: record.daily.last_date().to_string(),
        seasons: record.seasons.rows.iter().map(SeasonOutput::from).collect(),
    }
}

pub(super) fn run(args: super::GaugeArgs) -> anyhow::Result<()> {
    if args.predictors {
        return super::print_text(&predictor_table(&args.gauge)?);
    }
    let (config, record) = load(&args)?;
    if args.csv {
        let mut csv = Vec::new();
        record
            .seasons
            .write_csv(&mut csv)
            .context("writing the season table")?;
        super::print_text(&String::from_utf8_lossy(&csv))
    } else {
        super::print_json(&output(&config, &record))
    }
}

/// The predictor table of the gauge at `path` as CSV text (the gauge is prepared as `fit`
/// prepares it, so the table holds exactly the values the fit sees).
fn predictor_table(path: &std::path::Path) -> anyhow::Result<String> {
    let prepared = super::prepare_gauge(path)?;
    let mut csv = Vec::new();
    tidetally_model::fit::write_predictor_table(&prepared, &mut csv)
        .context("writing the predictor table")?;
    Ok(String::from_utf8(csv)?)
}

/// Loads the gauge description and builds its record with the streaming summary of its
/// level file (the readings themselves are not kept).
fn load(args: &super::GaugeArgs) -> anyhow::Result<(GaugeConfig, LevelRecord)> {
    let sources = GaugeSources::read(&args.gauge, FilesNeeded::Levels)?;
    let config = sources.config().clone();
    let levels = &sources.levels;
    let summary = ingest::summarize(
        levels.bytes.as_slice(),
        &config.ingest_options(),
        &levels.name,
    )?;
    let record = LevelRecord::new(&config, summary, &levels.name)?;
    Ok((config, record))
}

#[cfg(test)]
mod tests {
    use std::path::PathBuf;

    use super::*;
    use crate::cli::GaugeArgs;

    fn fixture(name: &str) -> PathBuf {
        // The root package's fixtures, shared with tests/ingest_reference.rs.
        PathBuf::from(env!("CARGO_MANIFEST_DIR"))
            .join("../tests/fixtures/ingest")
            .join(name)
    }

    /// What `counts` prints for a fixture gauge, as JSON or CSV text.
    fn counts(gauge: &str, csv: bool) -> anyhow::Result<String> {
        let args = GaugeArgs {
            gauge: fixture(gauge),
            csv,
            predictors: false,
        };
        let (config, record) = load(&args)?;
        if csv {
            let mut out = Vec::new();
            record.seasons.write_csv(&mut out)?;
            Ok(String::from_utf8(out)?)
        } else {
            Ok(serde_json::to_string_pretty(&output(&config, &record))?)
        }
    }

    // Expected values counted by hand from tests/fixtures/ingest/harbour-levels.csv; the
    // day-by-day count is written out in harbour.toml.
    #[test]
    fn json_carries_gauge_threshold_datum_and_seasons() {
        let json: serde_json::Value =
            serde_json::from_str(&counts("harbour.toml", false).unwrap()).unwrap();
        assert_eq!(json["gauge"], "harbour-test");
        assert_eq!(json["datum"], "TESTDATUM");
        assert_eq!(json["flood_threshold_m"], 0.9144);
        assert_eq!(json["sampling_interval_s"], 21600);
        let seasons = json["seasons"].as_array().unwrap();
        let labels: Vec<&str> = seasons
            .iter()
            .map(|s| s["season"].as_str().unwrap())
            .collect();
        assert_eq!(labels, ["2025-SON", "2025-DJF"]);
        assert_eq!(seasons[1]["first_day"], "2025-12-01");
        assert_eq!(seasons[1]["last_day"], "2026-02-28");
        assert_eq!(seasons[0]["flood_days"], 2);
        assert_eq!(seasons[0]["observed_days"], 2);
        assert_eq!(seasons[1]["flood_days"], 1);
        assert_eq!(seasons[1]["observed_days"], 2);
        assert_eq!(seasons[1]["used_in_fit"], false);
    }

    #[test]
    fn csv_has_one_row_per_season() {
        let text = counts("harbour.toml", true).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines.len(), 3);
        assert!(lines[0].starts_with("season,flood_days,observed_days,calendar_days"));
        assert!(lines[1].starts_with("2025-SON,2,2,91,"));
        assert!(lines[2].starts_with("2025-DJF,1,2,90,"));
    }

    #[test]
    fn errors_name_the_file() {
        let err = counts("no-such-gauge.toml", false).unwrap_err();
        assert!(format!("{err:#}").contains("no-such-gauge.toml"), "{err:#}");
        let err = counts("bad-row.toml", false).unwrap_err();
        let text = format!("{err:#}");
        assert!(
            text.contains("bad-row-levels.csv: line 4: field `level`"),
            "{text}"
        );
        assert!(!text.contains('\n'), "one line: {text}");
    }
}
