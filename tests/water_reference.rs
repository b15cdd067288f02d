//! The water-level engine's regression errors against a general-purpose reference library:
//! statsmodels 0.15.0 (PyPI), whose OLS with `cov_type="HAC"` (Newey and West 1987, Bartlett
//! weights) and `cov_type="cluster"` (Liang and Zeger 1986) gives the fixture
//! `tests/fixtures/water/hac-statsmodels.json`, made by
//! `tests/reference/water_hac_statsmodels.py` (versions recorded in the fixture).

use serde_json::Value;
use tidetally_model::water::regression::{self, Covariance};

/// Relative tolerance: both sides are double-precision linear algebra on 360 rows; 1e-9
/// leaves room for the different summation orders only.
const TOLERANCE: f64 = 1e-9;

fn fixture() -> Value {
    let text = include_str!("fixtures/water/hac-statsmodels.json");
    serde_json::from_str(text).expect("fixture is JSON")
}

fn numbers(v: &Value) -> Vec<f64> {
    v.as_array()
        .expect("array")
        .iter()
        .map(|x| x.as_f64().expect("number"))
        .collect()
}

/// One helper: fits the fixture's regression under `rule` with `blocks` and compares the
/// estimates and standard errors with the fixture's `errors_key`.
fn check(rule: Covariance, blocks: &[usize], errors_key: &str) {
    let f = fixture();
    let x: Vec<f64> = f["x"]
        .as_array()
        .expect("rows")
        .iter()
        .flat_map(numbers)
        .collect();
    let y = numbers(&f["y"]);
    let fit = regression::fit(&["const", "x1", "x2"], &x, &y, blocks, rule).expect("fits");
    let estimates = numbers(&f["estimates"]);
    let errors = numbers(&f[errors_key]);
    for (j, c) in fit.coefficients.iter().enumerate() {
        let rel = |a: f64, b: f64| (a - b).abs() / b.abs();
        assert!(
            rel(c.estimate, estimates[j]) < TOLERANCE,
            "{}: estimate {} vs statsmodels {}",
            c.name,
            c.estimate,
            estimates[j]
        );
        assert!(
            rel(c.std_error, errors[j]) < TOLERANCE,
            "{}: {errors_key} {} vs statsmodels {}",
            c.name,
            c.std_error,
            errors[j]
        );
    }
}

#[test]
fn newey_west_matches_statsmodels_hac() {
    let f = fixture();
    let n = f["y"].as_array().expect("y").len();
    let lags = f["hac_maxlags"].as_u64().expect("lags") as usize;
    // statsmodels' plain HAC treats the rows as one series.
    check(
        Covariance::NeweyWest { max_lag: lags },
        &vec![0; n],
        "hac_std_errors",
    );
}

#[test]
fn season_clusters_match_statsmodels_cluster() {
    let f = fixture();
    let groups: Vec<usize> = f["groups"]
        .as_array()
        .expect("groups")
        .iter()
        .map(|g| g.as_u64().expect("group") as usize)
        .collect();
    check(Covariance::Cluster, &groups, "cluster_std_errors");
}
