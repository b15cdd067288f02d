//! `tidetally tide risk`: a view of the water-level engine's day calendar for a coming
//! season: each local day's predicted high water (tide plus projected mean sea level), whether
//! the tide alone comes within `--margin` of the flood threshold, and the day's chance of a
//! flood day from the engine's simulation (the same one the outlook's calendar comes from).

use anyhow::Context;
use serde::Serialize;
use tidetally_model::outlook::{IssueOptions, issue::water_forecast};
use tidetally_model::season::Season;
use tidetally_model::water::GaugeWater;

use super::{TideRiskArgs, print_json};

#[derive(Debug, Serialize)]
struct RiskJson {
    gauge: String,
    season: String,
    datum: String,
    flood_threshold_m: f64,
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
    predicted_high_m: f64,
    tide_risk: bool,
    chance: f64,
}

pub(super) fn run(args: TideRiskArgs) -> anyhow::Result<()> {
    print_json(&risk_output(&args)?)
}

fn risk_output(args: &TideRiskArgs) -> anyhow::Result<RiskJson> {
    anyhow::ensure!(
        args.margin >= 0.0 && args.margin.is_finite(),
        "--margin must be a finite number of metres >= 0, got {}",
        args.margin
    );
    let prepared = super::prepare_gauge(&args.gauge)?;
    let config = &prepared.config;
    let season = match &args.season {
        Some(label) => Season::parse(label, &config.seasons.specs)?,
        None => prepared.default_target().with_context(|| {
            format!(
                "{}: the level record has no observed day",
                args.gauge.display()
            )
        })?,
    };
    let water = GaugeWater::for_gauge(&prepared, season.spec().name())
        .with_context(|| format!("the water-level engine of {}", args.gauge.display()))?;
    let forecast = water_forecast(&prepared, &water, &season, &IssueOptions::default())
        .with_context(|| format!("the water-level engine's forecast of {season}"))?;
    let threshold = config.flood_threshold_m;
    let level = |d: f64| water.sea_level.level_at(d).map(|v| v.value).ok();
    let middle = forecast
        .season
        .days
        .get(forecast.season.days.len() / 2)
        .and_then(|d| level(d.year))
        .unwrap_or(water.tide.mean);
    let days: Vec<RiskDayJson> = forecast
        .season
        .days
        .iter()
        .zip(&forecast.simulated.day_level)
        .zip(&forecast.simulated.day_chance)
        .map(|((day, &predicted_high_m), &chance)| RiskDayJson {
            date: day.date.to_string(),
            predicted_high_m,
            tide_risk: predicted_high_m >= threshold - args.margin,
            chance,
        })
        .collect();
    Ok(RiskJson {
        gauge: config.id.clone(),
        season: season.label(),
        datum: config.datum.clone(),
        flood_threshold_m: threshold,
        margin_m: args.margin,
        mean_sea_level_m: middle,
        residual_days: forecast.report.days,
        tide_risk_days: days.iter().filter(|d| d.tide_risk).count() as u32,
        expected_flood_days: days.iter().map(|d| d.chance).sum(),
        days,
        cautions: vec![
            "Each day's chance is a seasonal estimate from the predicted tide, the sea-level \
             trend and past weather, not a warning or a forecast of that day."
                .to_owned(),
            "Follow official forecasts and local emergency managers for flood warnings.".to_owned(),
        ],
    })
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
        let expected: f64 = out.days.iter().map(|d| d.chance).sum();
        assert!((expected - out.expected_flood_days).abs() < 1e-9);
        assert!(out.days.iter().all(|d| (0.0..=1.0).contains(&d.chance)));
        // A tide-risk day has its predicted high water within the margin of the threshold.
        for d in out.days.iter().filter(|d| d.tide_risk) {
            assert!(
                d.predicted_high_m >= out.flood_threshold_m - out.margin_m - 1e-9,
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
