//! `tidetally score --input FILE`: verification scores of given count forecasts.
//!
//! Input JSON: `{"cases": [{"pmf": [p0, p1, ...], "observed": n}, ...], "exceed_days":
//! [k, ...], "category_edges": [e1, e2, ...]}`; `exceed_days` and `category_edges` may be left
//! out. Output JSON: the mean and per-case CRPS, ranked probability score over `K` categories
//! (any number of strictly increasing edges `e1 < e2 < ...` give `N < e1`, `e1 <= N < e2`, ...,
//! `N >= e_last`; without `category_edges`, the terciles of the observed counts with tied edges
//! split), logarithmic score, absolute error of the forecast mean, and for
//! each `k` the Brier score of `P(N >= k)` with its decomposition, reliability diagram, ROC
//! and 2x2 scores; plus the 2x2 scores of the upper-decile event of the observed counts.

use std::path::Path;

use anyhow::Context;
use serde::{Deserialize, Serialize};
use tidetally_model::verify::{
    self, CategoryEdges, ContingencyTable, ProbabilityBins, TercileEdges, UpperDecileEvent,
    VerifyError,
};

pub(super) fn run(args: super::ScoreArgs) -> anyhow::Result<()> {
    let report = score_file(&args.input)?;
    super::print_json(&report)
}

/// Reads and scores one input file.
fn score_file(path: &Path) -> anyhow::Result<ScoreReport> {
    let text =
        std::fs::read_to_string(path).with_context(|| format!("cannot read {}", path.display()))?;
    score_text(&text).with_context(|| format!("{}", path.display()))
}

/// What is wrong with a `score` input.
#[derive(Debug, thiserror::Error)]
pub(crate) enum ScoreInputError {
    /// Not JSON of the expected shape: the field's path, then serde's line and column.
    #[error("not a valid score input: at `{path}`: {error}")]
    Json {
        /// Where in the document, e.g. `cases[1].pmf` (`.` for the top level).
        path: String,
        /// What serde said.
        error: serde_json::Error,
    },
    /// No cases.
    #[error("`cases` is empty: nothing to score")]
    NoCases,
    /// A case whose forecast is not a probability mass function.
    #[error("case {case}: `pmf`: {reason}")]
    Pmf {
        /// Index of the case (from 0).
        case: usize,
        /// What is wrong (in the message, not chained, so it is said once).
        reason: VerifyError,
    },
    /// A case whose observation is not a non-negative integer.
    #[error("case {case}: `observed` must be a non-negative whole number of days, got {value}")]
    Observed {
        /// Index of the case (from 0).
        case: usize,
        /// The value as written.
        value: serde_json::Number,
    },
    /// Category edges out of order.
    #[error("`category_edges`: {0}")]
    Edges(VerifyError),
    /// A score that could not be computed (the checks above should rule this out).
    #[error("cannot score: {0}")]
    Score(VerifyError),
}

/// Not `#[from]`: that would also chain the error as a source and print it twice.
impl From<VerifyError> for ScoreInputError {
    fn from(error: VerifyError) -> Self {
        Self::Score(error)
    }
}

/// The input file.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct ScoreInput {
    cases: Vec<CaseInput>,
    #[serde(default)]
    exceed_days: Vec<u32>,
    #[serde(default)]
    category_edges: Option<Vec<u32>>,
}

/// One forecast and its observation, as written.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct CaseInput {
    pmf: Vec<f64>,
    observed: serde_json::Number,
}

/// The output document.
#[derive(Debug, Serialize)]
pub(crate) struct ScoreReport {
    /// Number of cases.
    cases: usize,
    /// Mean CRPS, in days.
    crps: f64,
    /// CRPS of each case.
    crps_per_case: Vec<f64>,
    /// Mean ranked probability score over the categories (normalised by K - 1).
    rps: f64,
    /// RPS of each case.
    rps_per_case: Vec<f64>,
    /// The categories the RPS used.
    categories: CategoriesReport,
    /// Mean of `-ln p(observed)`.
    log_score: f64,
    /// Probabilities below this are raised to it before the logarithm.
    log_score_floor: f64,
    /// Log score of each case.
    log_score_per_case: Vec<f64>,
    /// Mean absolute error of the forecast mean, in days.
    mean_absolute_error: f64,
    /// One entry per `exceed_days` value.
    brier: Vec<BrierReport>,
    /// 2x2 scores of the upper-decile event of the observed counts.
    upper_decile: UpperDecileReport,
}

#[derive(Debug, Serialize)]
struct CategoriesReport {
    /// `given` or `observed sample terciles`.
    source: &'static str,
    /// Number of categories `K` (one more than the edges).
    count: usize,
    edges: Vec<u32>,
    /// Share of the mass at each edge count counted in the lower category.
    lower_shares: Vec<f64>,
}

#[derive(Debug, Serialize)]
struct BrierReport {
    days: u32,
    score: f64,
    base_rate: f64,
    reliability: f64,
    resolution: f64,
    uncertainty: f64,
    within_bin: f64,
    reliability_diagram: Vec<BinReport>,
    /// `null` when every case or no case had the event.
    roc: Option<RocReport>,
    /// "Yes" when the forecast probability exceeds the observed base rate.
    contingency: ContingencyReport,
}

#[derive(Debug, Serialize)]
struct BinReport {
    lower: f64,
    upper: f64,
    count: usize,
    mean_forecast: Option<f64>,
    observed_frequency: Option<f64>,
}

#[derive(Debug, Serialize)]
struct RocReport {
    area: f64,
    points: Vec<RocPointReport>,
}

#[derive(Debug, Serialize)]
struct RocPointReport {
    /// `null` for the never-"yes" start of the curve.
    threshold: Option<f64>,
    hit_rate: f64,
    false_alarm_rate: f64,
}

#[derive(Debug, Serialize)]
struct ContingencyReport {
    /// The forecast says "yes" when its probability exceeds this.
    yes_above: f64,
    hits: u64,
    false_alarms: u64,
    misses: u64,
    correct_negatives: u64,
    hit_rate: Option<f64>,
    false_alarm_rate: Option<f64>,
    /// `null` when the hit or false-alarm rate is 0 or 1.
    sedi: Option<f64>,
}

#[derive(Debug, Serialize)]
struct UpperDecileReport {
    /// The event is a count above this (the observed counts' 90th percentile).
    percentile_90: u32,
    contingency: ContingencyReport,
}

/// A checked case.
struct Case {
    pmf: Vec<f64>,
    observed: u32,
}

/// Parses and checks the input, then computes every score.
pub(crate) fn score_text(text: &str) -> Result<ScoreReport, ScoreInputError> {
    let mut reader = serde_json::Deserializer::from_str(text);
    let input: ScoreInput =
        serde_path_to_error::deserialize(&mut reader).map_err(|e| ScoreInputError::Json {
            path: e.path().to_string(),
            error: e.into_inner(),
        })?;
    reader.end().map_err(|error| ScoreInputError::Json {
        path: ".".into(),
        error,
    })?;
    if input.cases.is_empty() {
        return Err(ScoreInputError::NoCases);
    }
    let cases = input
        .cases
        .into_iter()
        .enumerate()
        .map(|(case, c)| check_case(case, c))
        .collect::<Result<Vec<_>, _>>()?;
    let observed: Vec<u32> = cases.iter().map(|c| c.observed).collect();

    let crps_per_case: Vec<f64> = cases
        .iter()
        .map(|c| verify::crps_count(&c.pmf, c.observed))
        .collect();

    let (rps_per_case, categories) = match input.category_edges {
        Some(given) => {
            let edges = CategoryEdges::new(given).map_err(ScoreInputError::Edges)?;
            let scores: Vec<f64> = cases
                .iter()
                .map(|c| edges.rps(&c.pmf, c.observed))
                .collect();
            let report = CategoriesReport {
                source: "given",
                count: edges.categories(),
                edges: edges.edges().to_vec(),
                lower_shares: vec![0.0; edges.edges().len()],
            };
            (scores, report)
        }
        None => {
            let edges = TercileEdges::from_sample(&observed)?;
            let scores: Vec<f64> = cases
                .iter()
                .map(|c| edges.rps(&c.pmf, c.observed))
                .collect();
            let report = CategoriesReport {
                source: "observed sample terciles",
                count: 3,
                edges: edges.edges().to_vec(),
                lower_shares: edges.lower_shares().to_vec(),
            };
            (scores, report)
        }
    };

    let log_score_per_case: Vec<f64> = cases
        .iter()
        .map(|c| verify::log_score(&c.pmf, c.observed))
        .collect();
    let absolute_errors: Vec<f64> = cases
        .iter()
        .map(|c| verify::absolute_error(&c.pmf, c.observed))
        .collect();

    let brier = input
        .exceed_days
        .iter()
        .map(|&k| brier_report(&cases, k))
        .collect::<Result<Vec<_>, _>>()?;

    let climatology = verify::empirical_pmf(&observed);
    let event = UpperDecileEvent::from_reference(&climatology)?;
    let table = event.table(cases.iter().map(|c| (c.pmf.as_slice(), c.observed)));

    Ok(ScoreReport {
        cases: cases.len(),
        crps: mean(&crps_per_case),
        crps_per_case,
        rps: mean(&rps_per_case),
        rps_per_case,
        categories,
        log_score: mean(&log_score_per_case),
        log_score_floor: verify::LOG_SCORE_FLOOR,
        log_score_per_case,
        mean_absolute_error: mean(&absolute_errors),
        brier,
        upper_decile: UpperDecileReport {
            percentile_90: event.percentile_90,
            contingency: contingency_report(&table, event.base_rate),
        },
    })
}

fn check_case(case: usize, input: CaseInput) -> Result<Case, ScoreInputError> {
    verify::validate_pmf(&input.pmf).map_err(|reason| ScoreInputError::Pmf { case, reason })?;
    let observed = whole_days(&input.observed).ok_or(ScoreInputError::Observed {
        case,
        value: input.observed.clone(),
    })?;
    Ok(Case {
        pmf: input.pmf,
        observed,
    })
}

/// A JSON number that is a non-negative whole number fitting `u32` (`3` or `3.0`).
fn whole_days(value: &serde_json::Number) -> Option<u32> {
    if let Some(n) = value.as_u64() {
        return u32::try_from(n).ok();
    }
    let x = value.as_f64()?;
    (x >= 0.0 && x.fract() == 0.0 && x <= f64::from(u32::MAX)).then_some(x as u32)
}

fn brier_report(cases: &[Case], days: u32) -> Result<BrierReport, ScoreInputError> {
    let probabilities: Vec<f64> = cases
        .iter()
        .map(|c| verify::exceedance_probability(&c.pmf, days))
        .collect();
    let outcomes: Vec<bool> = cases.iter().map(|c| c.observed >= days).collect();
    let d = verify::brier_decomposition(&probabilities, &outcomes, ProbabilityBins::default())?;
    let roc = match verify::roc_curve(&probabilities, &outcomes) {
        Ok(curve) => Some(RocReport {
            area: curve.area,
            points: curve
                .points
                .iter()
                .map(|p| RocPointReport {
                    threshold: p.threshold.is_finite().then_some(p.threshold),
                    hit_rate: p.hit_rate,
                    false_alarm_rate: p.false_alarm_rate,
                })
                .collect(),
        }),
        Err(VerifyError::NoContrast { .. }) => None,
        Err(other) => return Err(other.into()),
    };
    let table = ContingencyTable::from_probabilities(&probabilities, &outcomes, d.base_rate)?;
    Ok(BrierReport {
        days,
        score: d.score,
        base_rate: d.base_rate,
        reliability: d.reliability,
        resolution: d.resolution,
        uncertainty: d.uncertainty,
        within_bin: d.within_bin,
        reliability_diagram: d
            .bins
            .iter()
            .map(|b| BinReport {
                lower: b.lower,
                upper: b.upper,
                count: b.count,
                mean_forecast: b.mean_forecast,
                observed_frequency: b.observed_frequency,
            })
            .collect(),
        roc,
        contingency: contingency_report(&table, d.base_rate),
    })
}

fn contingency_report(table: &ContingencyTable, yes_above: f64) -> ContingencyReport {
    ContingencyReport {
        yes_above,
        hits: table.hits,
        false_alarms: table.false_alarms,
        misses: table.misses,
        correct_negatives: table.correct_negatives,
        hit_rate: table.hit_rate(),
        false_alarm_rate: table.false_alarm_rate(),
        sedi: table.sedi(),
    }
}

/// Mean of a non-empty slice (cases are checked non-empty first).
fn mean(values: &[f64]) -> f64 {
    values.iter().sum::<f64>() / values.len() as f64
}

#[cfg(test)]
mod tests {
    use super::*;

    fn scored(text: &str) -> serde_json::Value {
        let report = score_text(text).expect("valid input");
        serde_json::to_value(report).expect("serialisable")
    }

    fn error(text: &str) -> String {
        score_text(text).expect_err("invalid input").to_string()
    }

    fn close(value: &serde_json::Value, expected: f64) -> bool {
        (value.as_f64().expect("a number") - expected).abs() < 1e-12
    }

    #[test]
    fn scores_two_cases_by_hand() {
        // Case 0: pmf [0.5, 0.5], observed 1: CRPS (0.5 - 0)^2 = 0.25 (k = 0; F(1) = 1).
        // Case 1: pmf [0.2, 0.3, 0.5], observed 0: CRPS (0.2-1)^2 + (0.5-1)^2 = 0.89.
        let v = scored(
            r#"{"cases": [{"pmf": [0.5, 0.5], "observed": 1},
                          {"pmf": [0.2, 0.3, 0.5], "observed": 0}],
                "exceed_days": [1, 2], "category_edges": [1, 2]}"#,
        );
        assert!(close(&v["crps_per_case"][0], 0.25));
        assert!(close(&v["crps_per_case"][1], 0.89));
        assert!(close(&v["crps"], (0.25 + 0.89) / 2.0));
        // Categories N < 1, 1 <= N < 2, N >= 2. Case 0: [0.5, 0.5, 0], observed near:
        // ((0.5-0)^2 + (1-1)^2) / 2 = 0.125. Case 1: [0.2, 0.3, 0.5], observed below:
        // ((0.2-1)^2 + (0.5-1)^2) / 2 = 0.445.
        assert!(close(&v["rps_per_case"][0], 0.125));
        assert!(close(&v["rps_per_case"][1], 0.445));
        assert_eq!(v["categories"]["source"], "given");
        // Log score: -ln 0.5 and -ln 0.2.
        assert!(close(&v["log_score"], (2f64.ln() + 5f64.ln()) / 2.0));
        // Means 0.5 and 1.3 against 1 and 0: errors 0.5 and 1.3.
        assert!(close(&v["mean_absolute_error"], 0.9));
        // P(N >= 1) = 0.5 and 0.8 against outcomes 1 and 0: ((0.5)^2 + 0.8^2) / 2 = 0.445.
        assert_eq!(v["brier"][0]["days"], 1);
        assert!(close(&v["brier"][0]["score"], 0.445));
        // P(N >= 2) = 0 and 0.5, neither happened: (0 + 0.25) / 2; no events so no ROC.
        assert!(close(&v["brier"][1]["score"], 0.125));
        assert!(v["brier"][1]["roc"].is_null());
        assert_eq!(
            v["brier"][0]["reliability_diagram"]
                .as_array()
                .expect("bins")
                .len(),
            10
        );
    }

    #[test]
    fn without_edges_uses_split_terciles_of_the_observations() {
        let v = scored(
            r#"{"cases": [{"pmf": [1.0], "observed": 0}, {"pmf": [1.0], "observed": 0},
                          {"pmf": [0.0, 1.0], "observed": 3}]}"#,
        );
        assert_eq!(v["categories"]["source"], "observed sample terciles");
        // Observed 0, 0, 3: the 1/3 and 2/3 quantiles both fall on 0, which holds 2/3.
        assert_eq!(v["categories"]["edges"], serde_json::json!([0, 0]));
        assert!(close(&v["categories"]["lower_shares"][0], 0.5));
        assert!(close(&v["categories"]["lower_shares"][1], 1.0));
        assert_eq!(v["brier"], serde_json::json!([]));
    }

    #[test]
    fn bad_inputs_name_the_case_and_field() {
        let sum = error(
            r#"{"cases": [{"pmf": [1.0], "observed": 0}, {"pmf": [0.5, 0.4], "observed": 1}]}"#,
        );
        assert!(
            sum.contains("case 1") && sum.contains("pmf") && sum.contains("sum"),
            "{sum}"
        );
        let negative = error(r#"{"cases": [{"pmf": [1.2, -0.2], "observed": 0}]}"#);
        assert!(
            negative.contains("case 0") && negative.contains("-0.2"),
            "{negative}"
        );
        let fractional = error(r#"{"cases": [{"pmf": [1.0], "observed": 2.5}]}"#);
        assert!(
            fractional.contains("case 0") && fractional.contains("observed"),
            "{fractional}"
        );
        let below_zero = error(r#"{"cases": [{"pmf": [1.0], "observed": -1}]}"#);
        assert!(below_zero.contains("observed"), "{below_zero}");
        assert!(error(r#"{"cases": []}"#).contains("empty"));
        let typo = error(r#"{"cases": [{"pmf": [1.0], "observed": 0}], "exceed_day": [1]}"#);
        assert!(
            typo.contains("exceed_day") && typo.contains("line"),
            "{typo}"
        );
        let edges =
            error(r#"{"cases": [{"pmf": [1.0], "observed": 0}], "category_edges": [3, 1]}"#);
        assert!(edges.contains("category_edges"), "{edges}");
    }

    #[test]
    fn any_number_of_increasing_edges_gives_the_k_category_score() {
        // Five categories from edges 1, 2, 4, 6; pmf over 0..=6, observed 3: cumulative
        // forecast 0.1, 0.3, 0.7, 0.9 against 0, 0, 1, 1, so
        // RPS = (0.01 + 0.09 + 0.09 + 0.01) / 4 = 0.05 (hand sum, Epstein 1969 definition).
        let v = scored(
            r#"{"cases": [{"pmf": [0.1, 0.2, 0.2, 0.2, 0.1, 0.1, 0.1], "observed": 3}],
                "category_edges": [1, 2, 4, 6]}"#,
        );
        assert!(close(&v["rps"], 0.05), "{}", v["rps"]);
        assert_eq!(v["categories"]["count"], 5);
        assert_eq!(v["categories"]["edges"], serde_json::json!([1, 2, 4, 6]));
        let one_edge =
            scored(r#"{"cases": [{"pmf": [0.25, 0.75], "observed": 0}], "category_edges": [1]}"#);
        // Two categories: (0.25 - 1)^2 / 1.
        assert!(close(&one_edge["rps"], 0.5625));
    }

    #[test]
    fn malformed_inputs_name_the_field() {
        let repeated =
            error(r#"{"cases": [{"pmf": [1.0], "observed": 0}], "category_edges": [1, 3, 3, 7]}"#);
        assert!(
            repeated.contains("category_edges") && repeated.contains("edge 2"),
            "{repeated}"
        );
        let text = error(
            r#"{"cases": [{"pmf": [1.0], "observed": 0}], "category_edges": [1, 2, "x", 7]}"#,
        );
        assert!(text.contains("category_edges[2]"), "{text}");
        let pmf =
            error(r#"{"cases": [{"pmf": [1.0], "observed": 0}, {"pmf": "a", "observed": 1}]}"#);
        assert!(pmf.contains("cases[1].pmf"), "{pmf}");
        let trailing = error(r#"{"cases": [{"pmf": [1.0], "observed": 0}]} ]"#);
        assert!(trailing.contains("trailing"), "{trailing}");
    }

    #[test]
    fn whole_number_observations_may_be_written_as_floats() {
        let v = scored(r#"{"cases": [{"pmf": [0.0, 0.0, 1.0], "observed": 2.0}]}"#);
        assert!(close(&v["crps"], 0.0));
    }

    #[test]
    fn unreadable_file_names_the_path() {
        let err =
            score_file(Path::new("/nonexistent/tidetally-score.json")).expect_err("no such file");
        assert!(format!("{err:#}").contains("/nonexistent/tidetally-score.json"));
    }
}
