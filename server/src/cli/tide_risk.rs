//! `tidetally tide risk`: the days of a coming season when the astronomical tide alone brings
//! the water near the flood threshold, and each day's chance of a flood day from the
//! non-tidal residuals seen on past days of the same season.

use anyhow::Context;
use chrono::{DateTime, NaiveDate};
use serde::Serialize;
use tidetally_model::fit::{self, FilesNeeded, GaugeSources};
use tidetally_model::gauge::GaugeConfig;
use tidetally_model::season::{Season, season_of};
use tidetally_model::tide::{AnalysisParams, RiskCalendar, RiskParams};

use super::{TideRiskArgs, print_json};

#[derive(Debug, Serialize)]
struct RiskJson {
    gauge_id: String,
    season: String,
    datum: String,
    threshold_m: f64,
    margin_m: f64,
    mean_sea_level_m: f64,
    residual_days: usize,
    tide_risk_days: u32,
    expected_flood_days: f64,
    days: Vec<RiskDayJson>,
    cautions: Vec<String>,
}

#[derive(Debug, Serialize)]
struct RiskDayJson {
    date: String,
    high_water_time: String,
    predicted_high_m: f64,
    tide_risk: bool,
    flood_probability: f64,
}

pub(super) fn run(args: TideRiskArgs) -> anyhow::Result<()> {
    print_json(&risk_output(&args)?)
}

fn risk_output(args: &TideRiskArgs) -> anyhow::Result<RiskJson> {
    let sources = GaugeSources::read(&args.gauge, FilesNeeded::Levels)?;
    let fit::RecordedGauge {
        config,
        levels: series,
        ..
    } = fit::record_gauge(&sources)?;
    let last = *series
        .times
        .last()
        .with_context(|| format!("{}: the level record has no readings", args.gauge.display()))?;
    let season = match &args.season {
        Some(label) => Season::parse(label, &config.seasons.specs)?,
        None => season_after(last, &config)?,
    };
    let model = AnalysisParams {
        trend: true,
        ..Default::default()
    }
    .check()?
    .fit(&series.times, &series.levels_m)?;
    let risk = RiskParams {
        threshold: config.flood_threshold_m,
        margin: args.margin,
        utc_offset_seconds: config.utc_offset.local_minus_utc(),
        min_day_completeness: config.levels.min_day_completeness,
    }
    .check()?;
    let residuals =
        risk.residual_climatology(&model, &series.times, &series.levels_m, season.spec())?;
    let middle = season.first_day() + chrono::Duration::days(i64::from(season.calendar_days() / 2));
    let middle_time = middle
        .and_hms_opt(12, 0, 0)
        .map_or(last, |t| t.and_utc().timestamp());
    let calendar = risk.calendar(
        &model,
        &season,
        model.mean_level_at(middle_time),
        &residuals,
    )?;
    Ok(to_json(&config, &calendar))
}

/// The first season that starts after the last reading's local day.
fn season_after(last: i64, config: &GaugeConfig) -> anyhow::Result<Season> {
    let local = DateTime::from_timestamp(last, 0)
        .context("the last reading's time is out of range")?
        .with_timezone(&config.utc_offset)
        .date_naive();
    let next_day: NaiveDate = local
        .succ_opt()
        .context("the record ends at the end of time")?;
    let containing = season_of(next_day, &config.seasons.specs)
        .context("no defined season follows the record")?;
    if containing.first_day() == next_day {
        return Ok(containing);
    }
    season_of(containing.end_exclusive(), &config.seasons.specs)
        .context("no defined season follows the record")
}

fn to_json(config: &GaugeConfig, calendar: &RiskCalendar) -> RiskJson {
    RiskJson {
        gauge_id: config.id.clone(),
        season: calendar.season.clone(),
        datum: config.datum.clone(),
        threshold_m: calendar.threshold,
        margin_m: calendar.margin,
        mean_sea_level_m: calendar.mean_sea_level,
        residual_days: calendar.residual_days,
        tide_risk_days: calendar.tide_risk_days,
        expected_flood_days: calendar.expected_flood_days,
        days: calendar
            .days
            .iter()
            .map(|d| RiskDayJson {
                date: d.date.to_string(),
                high_water_time: DateTime::from_timestamp(d.high_water_time, 0)
                    .map(|t| t.to_rfc3339())
                    .unwrap_or_default(),
                predicted_high_m: d.predicted_high,
                tide_risk: d.tide_risk,
                flood_probability: d.flood_probability,
            })
            .collect(),
        cautions: calendar.cautions.clone(),
    }
}

#[cfg(test)]
mod tests {
    use std::path::PathBuf;

    use super::*;

    fn demo(id: &str) -> PathBuf {
        PathBuf::from(env!("CARGO_MANIFEST_DIR"))
            .join("../demo-data/gauges")
            .join(format!("{id}.toml"))
    }

    #[test]
    fn demo_gauge_gets_next_seasons_risk_days() {
        let args = TideRiskArgs {
            gauge: demo("port-tamsin"),
            season: None,
            margin: 0.25,
        };
        let out = risk_output(&args).expect("risk days");
        // The demo record ends on 2026-11-30 (demo-data/README.md), so the next season is
        // 2026-DJF: 31 + 31 + 28 days (Gregorian calendar).
        assert_eq!(out.season, "2026-DJF");
        assert_eq!(out.days.len(), 90);
        assert_eq!(out.days[0].date, "2026-12-01");
        let risky = out.days.iter().filter(|d| d.tide_risk).count();
        assert_eq!(risky as u32, out.tide_risk_days);
        let expected: f64 = out.days.iter().map(|d| d.flood_probability).sum();
        assert!((expected - out.expected_flood_days).abs() < 1e-9);
        assert!(
            out.days
                .iter()
                .all(|d| (0.0..=1.0).contains(&d.flood_probability))
        );
        // A tide-risk day has its predicted high water within the margin of the threshold.
        for d in out.days.iter().filter(|d| d.tide_risk) {
            assert!(
                d.predicted_high_m >= out.threshold_m - out.margin_m - 1e-9,
                "{d:?}"
            );
        }
        assert!(!out.cautions.is_empty());
    }

    #[test]
    fn bad_season_label_is_an_error() {
        let args = TideRiskArgs {
            gauge: demo("port-tamsin"),
            season: Some("2026-XYZ".into()),
            margin: 0.25,
        };
        let err = format!("{:#}", risk_output(&args).expect_err("unknown season"));
        assert!(err.contains("2026-XYZ"), "{err}");
    }
}
