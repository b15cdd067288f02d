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
//! - binary forecasts: the Brier score (Brier 1950) against `brier_score`.

use serde_json::Value;
use tidetally_model::verify::{
    brier_case, brier_score, crps_count, crps_ensemble, empirical_pmf, exceedance_probability,
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
        "{what}, case {case}: tidetally {got}, properscoring {expected}"
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
    for (i, case) in f["integer_ensembles"].as_array().expect("cases").iter().enumerate() {
        let members: Vec<u32> = numbers(&case["members"]).iter().map(|&m| m as u32).collect();
        let observed = case["observed"].as_u64().expect("a count") as u32;
        let pmf = empirical_pmf(&members);
        check("count CRPS", i, crps_count(&pmf, observed), case["crps"].as_f64().expect("crps"));
    }
}

#[test]
fn exceedance_brier_matches_properscoring_threshold_brier_score() {
    let f = fixture();
    let days: Vec<u32> = numbers(&f["exceed_days"]).iter().map(|&d| d as u32).collect();
    for (i, case) in f["integer_ensembles"].as_array().expect("cases").iter().enumerate() {
        let members: Vec<u32> = numbers(&case["members"]).iter().map(|&m| m as u32).collect();
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
    for (i, case) in f["real_ensembles"].as_array().expect("cases").iter().enumerate() {
        let members = numbers(&case["members"]);
        let observed = case["observed"].as_f64().expect("observation");
        let got = crps_ensemble(&members, observed).expect("valid ensemble");
        check("ensemble CRPS", i, got, case["crps"].as_f64().expect("crps"));
    }
}

#[test]
fn brier_score_matches_properscoring() {
    let f = fixture();
    let probabilities = numbers(&f["binary"]["probabilities"]);
    let outcomes: Vec<bool> = numbers(&f["binary"]["outcomes"]).iter().map(|&o| o == 1.0).collect();
    let expected = numbers(&f["binary"]["scores"]);
    for (i, ((&p, &o), &e)) in probabilities.iter().zip(&outcomes).zip(&expected).enumerate() {
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
