//! End-to-end hindcast of every gauge of the invented demo coastline (demo-data/): each gauge
//! and season name gets both schemes, scores for the driver model and both baselines, a 95%
//! interval for every skill score and a verdict in plain words; the JSON carries the fields
//! dashboards read; and `tidetally hindcast` runs on a demo gauge.

#![allow(clippy::unwrap_used, clippy::expect_used)]

use std::path::{Path, PathBuf};

use tidetally_model::fit::{self, FilesNeeded, GaugeSources, TideAnalysis};
use tidetally_model::hindcast::{self, HindcastOptions, ModelKind, VerdictKind};

const GAUGES: [&str; 4] = [
    "port-tamsin",
    "wrenmouth-inlet",
    "saltlow-sound",
    "corrin-quay",
];

fn gauge_file(id: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("demo-data")
        .join("gauges")
        .join(format!("{id}.toml"))
}

#[test]
fn every_demo_gauge_gets_a_hindcast_with_intervals_and_a_verdict() {
    let options = HindcastOptions {
        draws: 150,
        ..HindcastOptions::default()
    };
    for id in GAUGES {
        let sources = GaugeSources::read(&gauge_file(id), FilesNeeded::All).unwrap();
        let prepared = fit::prepare(&sources, TideAnalysis::AsConfigured).unwrap();
        let config = &prepared.config;
        let report = hindcast::hindcast_gauge(&prepared, &options).unwrap();
        assert!(report.not_run.is_empty(), "{id}: {:?}", report.not_run);
        assert_eq!(report.seasons.len(), config.seasons.specs.len(), "{id}");
        for season in &report.seasons {
            let what = format!("{id} {}", season.season_name);
            assert_eq!(season.schemes.len(), 2, "{what}");
            for scheme in &season.schemes {
                // Corrin Quay's record is the short one (about 20 seasons per name), so its
                // rolling origin forecasts only a few seasons after the 15 it trains on.
                assert!(
                    scheme.cases.len() >= 3,
                    "{what}: {} cases",
                    scheme.cases.len()
                );
                if scheme.scheme.name() == "leave_one_year_out" {
                    assert_eq!(
                        scheme.cases.len() + scheme.skipped.len(),
                        season.usable_seasons,
                        "{what}: every usable season is forecast or its skip explained"
                    );
                    assert!(scheme.cases.len() >= 15, "{what}");
                }
                assert_eq!(
                    scheme.models.len(),
                    4,
                    "{what}: driver model, both baselines and the water-level engine"
                );
                for m in &scheme.models {
                    assert!(m.crps > 0.0 && m.rps > 0.0 && m.log_score > 0.0, "{what}");
                    assert_eq!(m.brier.len(), config.model.exceed_days.len());
                    for b in &m.brier {
                        let counted: usize = b.bins.iter().map(|bin| bin.count).sum();
                        assert_eq!(counted, scheme.cases.len(), "{what}: every case in a bin");
                    }
                }
                // Drivers, trend and water against climatology; drivers and water against
                // the trend.
                assert_eq!(scheme.skill.len(), 5, "{what}");
                for skill in &scheme.skill {
                    assert_eq!(skill.resamples, 1000);
                    // crpss, rpss, one bss per k, log_skill, mae_skill.
                    assert_eq!(skill.scores.len(), 4 + config.model.exceed_days.len());
                    let crpss = skill.entry("crpss").unwrap();
                    let (lo, est, hi) = (
                        crpss.lower.unwrap(),
                        crpss.estimate.unwrap(),
                        crpss.upper.unwrap(),
                    );
                    assert!(lo <= est && est <= hi, "{what}: {crpss:?}");
                    assert_eq!(crpss.skilful, lo > 0.0);
                }
            }
            let v = season.verdict(ModelKind::Climatology).unwrap();
            let words = match v.verdict {
                VerdictKind::Skilful => "beat the long-term average",
                VerdictKind::NoBetter => "no better than the long-term average",
            };
            assert!(v.sentence.contains(words), "{what}: {}", v.sentence);
            assert!(season.verdict(ModelKind::TrendOnly).is_some(), "{what}");
            // Both engines side by side: the water engine's verdicts and mean CRPS too.
            assert!(
                season
                    .verdict_of(ModelKind::Water, ModelKind::Climatology)
                    .is_some(),
                "{what}"
            );
            assert_eq!(season.engines.len(), 2, "{what}");
            for engine in &season.engines {
                assert_eq!(engine.crps_by_scheme.len(), 2, "{what}");
                assert!(engine.mean_crps > 0.0, "{what}");
            }
        }
        let json = serde_json::to_value(&report).unwrap();
        let scheme = &json["seasons"][0]["schemes"][0];
        assert_eq!(scheme["scheme"]["scheme"], "leave_one_year_out");
        assert!(scheme["models"][0]["roc"][0]["points"].is_array());
        assert!(scheme["models"][0]["brier"][0]["bins"][0]["count"].is_number());
        assert!(scheme["skill"][0]["scores"][0]["lower"].is_number());
        assert!(json["seasons"][0]["verdicts"][0]["sentence"].is_string());
    }
}

#[test]
fn the_hindcast_command_runs_on_a_demo_gauge() {
    use tidetally_server::cli::{Cli, Command, EnsoArg, HindcastArgs, run};
    let command = |gauge: PathBuf, enso: EnsoArg| Cli {
        command: Command::Hindcast(HindcastArgs { gauge, enso }),
    };
    run(command(gauge_file("corrin-quay"), EnsoArg::AtIssue)).unwrap();
    assert!(
        run(command(
            PathBuf::from("no-such-gauge.toml"),
            EnsoArg::Observed
        ))
        .is_err()
    );
}
