//! The demo outlooks against the true distribution of next season's flood days.
//!
//! `demo-data/truth-2026-DJF.json` holds, for every demo gauge, the true 2026-DJF count
//! distribution: the demo generator (an implementation that does not use tidetally-model)
//! continues every random process from its state at the record's end, 4,000 times, with ENSO
//! drawn from the demo's forecast members as the outlook uses them (equal weight per model).
//! The outlook is judged as a probabilistic forecast of that truth:
//! - its expected CRPS, `E_truth[CRPS(outlook, N)]`, within 1.15x of the truth's own
//!   `E_truth[CRPS(truth, N)]` (the CRPS of a count forecast as in `verify::crps_count`,
//!   Hersbach 2000's definition on the integers);
//! - its p10-p90 interval holding a share of the true replicates within 0.06 of the share the
//!   truth's own p10-p90 holds (a discrete interval holds more than 80%).
//!
//! The count model's figures are printed beside the leading engine's.

#![allow(clippy::unwrap_used, clippy::expect_used)]

use std::path::{Path, PathBuf};

use rayon::prelude::*;
use serde_json::Value;
use tidetally_model::fit::{self, FilesNeeded, GaugeSources, TideAnalysis};
use tidetally_model::outlook::{self, Engine, IssueOptions};
use tidetally_model::season::Season;
use tidetally_model::verify::crps_count;

/// The bar the leading engine must clear: expected CRPS over the truth's own.
const CRPS_RATIO_LIMIT: f64 = 1.15;
/// How far the outlook's p10-p90 coverage of the truth may sit from the truth's own.
const COVERAGE_GAP_LIMIT: f64 = 0.06;

fn demo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data")
}

fn truth() -> Value {
    let text = std::fs::read_to_string(demo().join("truth-2026-DJF.json")).unwrap();
    serde_json::from_str(&text).unwrap()
}

fn pmf_of(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

fn expected_crps(forecast: &[f64], truth: &[f64]) -> f64 {
    truth
        .iter()
        .enumerate()
        .map(|(y, p)| p * crps_count(forecast, y as u32))
        .sum()
}

fn quantile(pmf: &[f64], q: f64) -> usize {
    let mut c = 0.0;
    for (k, p) in pmf.iter().enumerate() {
        c += p;
        if c >= q - 1e-12 {
            return k;
        }
    }
    pmf.len() - 1
}

fn share_within(truth: &[f64], lo: usize, hi: usize) -> f64 {
    truth.iter().take(hi + 1).skip(lo).sum()
}

/// One gauge's figures: (engine led, its CRPS ratio, coverage gap, count model's ratio).
struct Figures {
    id: String,
    engine: Engine,
    ratio: f64,
    share: f64,
    truth_share: f64,
    count_ratio: f64,
    count_share: f64,
    mean: f64,
    truth_mean: f64,
}

fn figures(id: &str, gauge: &Value) -> Figures {
    let path = demo().join("gauges").join(format!("{id}.toml"));
    let sources = GaugeSources::read(&path, FilesNeeded::All).unwrap();
    let prepared = fit::prepare(&sources, TideAnalysis::AsConfigured).unwrap();
    let target = Season::parse("2026-DJF", &prepared.config.seasons.specs).unwrap();
    let issued = outlook::issue(&prepared, &target, &IssueOptions::default()).unwrap();
    let members = &gauge["scenarios"]["members"];
    let truth_pmf = pmf_of(&members["pmf"]);
    let own = expected_crps(&truth_pmf, &truth_pmf);
    let lead = &issued.outlook;
    let count_pmf: Vec<f64> = match lead.engine {
        Engine::Count => lead.pmf.clone(),
        Engine::Water => {
            let forced = outlook::issue(
                &prepared,
                &target,
                &IssueOptions {
                    engine: outlook::EngineRequest::Count,
                    skip_hindcast: true,
                    ..IssueOptions::default()
                },
            )
            .unwrap();
            forced.outlook.pmf
        }
    };
    let (c10, c90) = (quantile(&count_pmf, 0.1), quantile(&count_pmf, 0.9));
    Figures {
        id: id.to_owned(),
        engine: lead.engine,
        ratio: expected_crps(&lead.pmf, &truth_pmf) / own,
        share: share_within(&truth_pmf, lead.p10 as usize, lead.p90 as usize),
        truth_share: members["share_within_p10_p90"].as_f64().unwrap(),
        count_ratio: expected_crps(&count_pmf, &truth_pmf) / own,
        count_share: share_within(&truth_pmf, c10, c90),
        mean: lead.mean,
        truth_mean: members["mean"].as_f64().unwrap(),
    }
}

#[test]
fn each_demo_outlook_is_close_to_the_true_distribution() {
    let t = truth();
    let gauges = t["gauges"].as_array().unwrap();
    let all: Vec<Figures> = gauges
        .par_iter()
        .map(|g| figures(g["id"].as_str().unwrap(), g))
        .collect();
    let mut failures = Vec::new();
    for f in &all {
        eprintln!(
            "{}: leads with {:?}: mean {:.2} (truth {:.2}), expected CRPS {:.3}x the truth's own, \
             p10-p90 holds {:.3} of the truth (the truth's own {:.3}); count model {:.3}x, holds {:.3}",
            f.id,
            f.engine,
            f.mean,
            f.truth_mean,
            f.ratio,
            f.share,
            f.truth_share,
            f.count_ratio,
            f.count_share
        );
        if f.ratio > CRPS_RATIO_LIMIT {
            failures.push(format!("{}: CRPS ratio {:.3}", f.id, f.ratio));
        }
        if (f.share - f.truth_share).abs() > COVERAGE_GAP_LIMIT {
            failures.push(format!(
                "{}: p10-p90 holds {:.3}, the truth's own {:.3}",
                f.id, f.share, f.truth_share
            ));
        }
    }
    assert!(failures.is_empty(), "{failures:?}");
}
