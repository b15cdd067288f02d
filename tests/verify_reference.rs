//! Verification scores checked against a general-purpose verification library.
//!
//! The fixture `tests/fixtures/verify/properscoring.json` was made by
//! `tests/reference/verify_properscoring.py` with the PyPI package properscoring (versions
//! recorded in the fixture) from seeded synthetic cases:
//! - integer ensembles: the empirical distribution of integer members is a count
//!   distribution, so the discrete CRPS `sum_k (F(k) - 1{y <= k})^2` (Czado, Gneiting and Held
//!   2009) equals properscoring's `crps_ensemble`, and the Brier score of `P(N >= k)` equals
//!   its `threshold_brier_score` at `k - 0.5`;
//! - real-valued ensembles: the continuous ensemble CRPS (Hersbach 2000) against
//!   `crps_ensemble`;
//! - binary forecasts: the Brier score (Brier 1950) against `brier_score`;
//! - ROC points and trapezoid area against scikit-learn's `roc_curve` (all thresholds kept)
//!   and `roc_auc_score`.

use serde_json::Value;
use tidetally_model::verify::{
    brier_case, brier_score, crps_count, crps_ensemble, empirical_pmf, exceedance_probability,
    roc_curve,
};

/// Agreement asked of two double-precision evaluations of the same finite sums: the sums have
/// at most a few hundred terms of order one, so rounding stays many orders below this.
const TOLERANCE: f64 = 1e-9;

fn fixture() -> Value {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/verify/properscoring.json"
    );
    let text = std::fs::read_to_string(path).expect("fixture is committed with the tests");
    serde_json::from_str(&text).expect("fixture is valid JSON")
}

fn numbers(value: &Value) -> Vec<f64> {
    value
        .as_array()
        .expect("an array")
        .iter()
        .map(|v| v.as_f64().expect("a number"))
        .collect()
}

/// The one comparison helper: `got` must match the library's `expected` within TOLERANCE.
fn check(what: &str, case: usize, got: f64, expected: f64) {
    assert!(
        (got - expected).abs() <= TOLERANCE,
        "{what}, case {case}: tidetally {got}, reference library {expected}"
    );
}

#[test]
fn fixture_records_its_library_versions() {
    let f = fixture();
    assert!(f["versions"]["properscoring"].is_string());
    assert!(f["versions"]["numpy"].is_string());
    assert!(f["integer_ensembles"].as_array().expect("cases").len() >= 50);
}

#[test]
fn count_crps_matches_properscoring_crps_ensemble_of_integer_members() {
    let f = fixture();
    for (i, case) in f["integer_ensembles"]
        .as_array()
        .expect("cases")
        .iter()
        .enumerate()
    {
        let members: Vec<u32> = numbers(&case["members"])
            .iter()
            .map(|&m| m as u32)
            .collect();
        let observed = case["observed"].as_u64().expect("a count") as u32;
        let pmf = empirical_pmf(&members);
        check(
            "count CRPS",
            i,
            crps_count(&pmf, observed),
            case["crps"].as_f64().expect("crps"),
        );
    }
}

#[test]
fn exceedance_brier_matches_properscoring_threshold_brier_score() {
    let f = fixture();
    let days: Vec<u32> = numbers(&f["exceed_days"])
        .iter()
        .map(|&d| d as u32)
        .collect();
    for (i, case) in f["integer_ensembles"]
        .as_array()
        .expect("cases")
        .iter()
        .enumerate()
    {
        let members: Vec<u32> = numbers(&case["members"])
            .iter()
            .map(|&m| m as u32)
            .collect();
        let observed = case["observed"].as_u64().expect("a count") as u32;
        let pmf = empirical_pmf(&members);
        for (&k, expected) in days.iter().zip(numbers(&case["brier"])) {
            let got = brier_case(exceedance_probability(&pmf, k), observed >= k);
            check("Brier of P(N >= k)", i, got, expected);
        }
    }
}

#[test]
fn ensemble_crps_matches_properscoring_for_real_members() {
    let f = fixture();
    for (i, case) in f["real_ensembles"]
        .as_array()
        .expect("cases")
        .iter()
        .enumerate()
    {
        let members = numbers(&case["members"]);
        let observed = case["observed"].as_f64().expect("observation");
        let got = crps_ensemble(&members, observed).expect("valid ensemble");
        check(
            "ensemble CRPS",
            i,
            got,
            case["crps"].as_f64().expect("crps"),
        );
    }
}

#[test]
fn brier_score_matches_properscoring() {
    let f = fixture();
    let probabilities = numbers(&f["binary"]["probabilities"]);
    let outcomes: Vec<bool> = numbers(&f["binary"]["outcomes"])
        .iter()
        .map(|&o| o == 1.0)
        .collect();
    let expected = numbers(&f["binary"]["scores"]);
    for (i, ((&p, &o), &e)) in probabilities
        .iter()
        .zip(&outcomes)
        .zip(&expected)
        .enumerate()
    {
        check("Brier score", i, brier_case(p, o), e);
    }
    let mean = expected.iter().sum::<f64>() / expected.len() as f64;
    check(
        "mean Brier score",
        0,
        brier_score(&probabilities, &outcomes).expect("valid"),
        mean,
    );
}

#[test]
fn roc_points_and_area_match_scikit_learn() {
    let f = fixture();
    let roc = &f["roc"];
    let probabilities = numbers(&roc["probabilities"]);
    let outcomes: Vec<bool> = numbers(&roc["outcomes"])
        .iter()
        .map(|&o| o == 1.0)
        .collect();
    let curve = roc_curve(&probabilities, &outcomes).expect("both classes present");
    let hit_rates = numbers(&roc["hit_rate"]);
    let false_alarm_rates = numbers(&roc["false_alarm_rate"]);
    assert_eq!(
        curve.points.len(),
        hit_rates.len(),
        "one point per distinct threshold"
    );
    for (i, point) in curve.points.iter().enumerate() {
        check("ROC hit rate", i, point.hit_rate, hit_rates[i]);
        check(
            "ROC false-alarm rate",
            i,
            point.false_alarm_rate,
            false_alarm_rates[i],
        );
        match roc["thresholds"][i].as_f64() {
            Some(t) => check("ROC threshold", i, point.threshold, t),
            None => assert!(point.threshold.is_infinite(), "point {i} starts the curve"),
        }
    }
    check(
        "ROC area",
        0,
        curve.area,
        roc["area"].as_f64().expect("area"),
    );
}

/// Runs `tidetally score --input FILE` through the command dispatcher on `json`.
fn run_score(name: &str, json: &str) -> Result<(), String> {
    use tidetally_server::cli::{Cli, Command, ScoreArgs, run};
    let input = std::env::temp_dir().join(format!("tidetally-{}-{name}.json", std::process::id()));
    std::fs::write(&input, json).expect("temp dir is writable");
    let result = run(Cli {
        command: Command::Score(ScoreArgs {
            input: input.clone(),
        }),
    });
    std::fs::remove_file(&input).expect("just written");
    result.map_err(|e| format!("{e:#}"))
}

#[test]
fn score_command_scores_valid_input_and_names_the_bad_case() {
    // The input shape fixed in DESIGN.md (`score --input FILE`).
    let good = r#"{"cases": [{"pmf": [0.5, 0.3, 0.2], "observed": 1},
                             {"pmf": [0.1, 0.2, 0.3, 0.4], "observed": 3}],
                   "exceed_days": [2], "category_edges": [1, 3]}"#;
    assert_eq!(run_score("good", good), Ok(()));
    let bad = r#"{"cases": [{"pmf": [1.0], "observed": 0}, {"pmf": [0.6, 0.6], "observed": 1}]}"#;
    let err = run_score("bad", bad).expect_err("pmf sums to 1.2");
    assert!(err.contains("case 1") && err.contains("pmf"), "{err}");
}
