//! Ordinary least squares of daily high-water residuals on their drivers, with a covariance
//! of the coefficients that respects day-to-day persistence.
//!
//! Residuals of nearby days are correlated (a storm lasts several days; a season's wind
//! regime lasts weeks), so the textbook OLS covariance `s^2 (X'X)^-1` is too narrow. The
//! covariance here is the sandwich `(X'X)^-1 S (X'X)^-1` with
//! `S = sum over blocks b, days t, u in b with |t - u| <= L of w(|t - u|) e_t e_u x_t x_u'`:
//! - with Bartlett weights `w(j) = 1 - j / (L + 1)` on one block this is the Newey-West (1987)
//!   HAC estimator; on several blocks it is its panel form (autocovariances within a block
//!   only, as statsmodels' `hac-panel`);
//! - with `L` at least the longest block and unit weights it is the cluster-robust estimator
//!   of Liang and Zeger (1986) with seasons as clusters, which allows any correlation within a
//!   season and none between seasons. This is the engine's choice: a season's days share its
//!   weather regime for weeks, beyond any short lag window.
//!
//! The small-sample factor follows statsmodels 0.15 defaults: none for HAC, and
//! `G / (G - 1) * (n - 1) / (n - k)` for clusters.

use nalgebra::{DMatrix, DVector};
use serde::Serialize;

/// Why a regression could not be fitted.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum RegressionError {
    /// Fewer observations than coefficients (or no degrees of freedom left).
    #[error("{rows} days for {columns} coefficients: too few to fit")]
    TooFewRows {
        /// Observations.
        rows: usize,
        /// Coefficients.
        columns: usize,
    },
    /// `X'X` is singular: a column is constant or a copy of others.
    #[error("the drivers' columns are collinear ({columns}): one is constant or a copy of others")]
    Collinear {
        /// The column names.
        columns: String,
    },
    /// A value that is not finite.
    #[error("row {row}, column {column}: value {value} is not finite")]
    NotFinite {
        /// The row.
        row: usize,
        /// The column name (or `response`).
        column: String,
        /// The value.
        value: f64,
    },
    /// Rows and blocks disagree in length.
    #[error("{rows} rows but {blocks} block labels")]
    BlockLength {
        /// Rows.
        rows: usize,
        /// Labels.
        blocks: usize,
    },
}

/// How the coefficients' covariance allows for correlated residuals.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum Covariance {
    /// Newey-West with Bartlett weights up to `max_lag` rows, within each block.
    NeweyWest {
        /// The largest lag, rows.
        max_lag: usize,
    },
    /// Any correlation within a block, none between blocks.
    Cluster,
}

/// One fitted coefficient.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Coefficient {
    /// The column's name.
    pub name: String,
    /// The least-squares estimate.
    pub estimate: f64,
    /// Its standard error under the chosen covariance.
    pub std_error: f64,
    /// The plain OLS standard error (independent days), for comparison.
    pub ols_std_error: f64,
    /// The 97.5 % quantile the 95 % interval uses: Student t with `G - 1` degrees of freedom
    /// for `G` clusters (Cameron and Miller 2015, J. Human Resources 50, 317), the normal's
    /// 1.96 for Newey-West.
    pub critical: f64,
}

impl Coefficient {
    /// The 95 % interval, estimate +/- `critical` standard errors.
    pub fn interval95(&self) -> (f64, f64) {
        (
            self.estimate - self.critical * self.std_error,
            self.estimate + self.critical * self.std_error,
        )
    }
}

fn critical_value(rule: Covariance, groups: usize) -> f64 {
    use statrs::distribution::{ContinuousCDF, StudentsT};
    match rule {
        Covariance::Cluster if groups > 1 => {
            StudentsT::new(0.0, 1.0, (groups - 1) as f64).map_or(1.96, |t| t.inverse_cdf(0.975))
        }
        _ => 1.96,
    }
}

/// A fitted least-squares regression.
#[derive(Debug, Clone, PartialEq)]
pub struct Regression {
    /// Coefficients in column order.
    pub coefficients: Vec<Coefficient>,
    /// Covariance of the estimates (row-major, `k x k`).
    pub covariance: DMatrix<f64>,
    /// Residual standard deviation (divisor `n - k`).
    pub residual_sd: f64,
    /// Observations used.
    pub rows: usize,
    /// Blocks (seasons) the observations fall in.
    pub blocks: usize,
    /// The covariance rule.
    pub rule: Covariance,
}

impl Regression {
    /// The estimate of column `name`.
    pub fn coefficient(&self, name: &str) -> Option<&Coefficient> {
        self.coefficients.iter().find(|c| c.name == name)
    }

    /// The estimates in column order.
    pub fn estimates(&self) -> Vec<f64> {
        self.coefficients.iter().map(|c| c.estimate).collect()
    }
}

/// Fits `y = X b + e` by least squares. `x` is row-major with `names.len()` columns;
/// `blocks[t]` labels the block (season) of row `t`, and rows of a block are consecutive
/// and in time order.
pub fn fit(
    names: &[&str],
    x: &[f64],
    y: &[f64],
    blocks: &[usize],
    rule: Covariance,
) -> Result<Regression, RegressionError> {
    let k = names.len();
    let n = y.len();
    if blocks.len() != n {
        return Err(RegressionError::BlockLength {
            rows: n,
            blocks: blocks.len(),
        });
    }
    if n <= k || k == 0 || x.len() != n * k {
        return Err(RegressionError::TooFewRows {
            rows: n,
            columns: k,
        });
    }
    for (t, &v) in y.iter().enumerate() {
        if !v.is_finite() {
            return Err(RegressionError::NotFinite {
                row: t,
                column: "response".to_owned(),
                value: v,
            });
        }
    }
    for (i, &v) in x.iter().enumerate() {
        if !v.is_finite() {
            return Err(RegressionError::NotFinite {
                row: i / k,
                column: names[i % k].to_owned(),
                value: v,
            });
        }
    }
    let design = DMatrix::from_row_slice(n, k, x);
    let response = DVector::from_column_slice(y);
    let xtx = design.transpose() * &design;
    let collinear = || RegressionError::Collinear {
        columns: names.join(", "),
    };
    let inverse = nalgebra::Cholesky::new(xtx.clone())
        .ok_or_else(collinear)?
        .inverse();
    // A near-singular X'X passes Cholesky with a huge inverse; check the conditioning.
    let diagonal_ok = (0..k).all(|j| (inverse[(j, j)] * xtx[(j, j)]).is_finite());
    if !diagonal_ok || inverse.iter().any(|v| !v.is_finite()) {
        return Err(collinear());
    }
    let beta = &inverse * (design.transpose() * &response);
    let fitted = &design * &beta;
    let e: Vec<f64> = (0..n).map(|t| response[t] - fitted[t]).collect();
    let rss: f64 = e.iter().map(|v| v * v).sum();
    let dof = (n - k) as f64;
    let residual_sd = (rss / dof).sqrt();

    let meat = sandwich_meat(&design, &e, blocks, rule);
    let groups = count_blocks(blocks);
    let factor = match rule {
        Covariance::NeweyWest { .. } => 1.0,
        Covariance::Cluster if groups > 1 => {
            groups as f64 / (groups as f64 - 1.0) * (n as f64 - 1.0) / dof
        }
        Covariance::Cluster => f64::INFINITY,
    };
    let covariance = (&inverse * meat * &inverse) * factor;
    let critical = critical_value(rule, groups);
    let coefficients = names
        .iter()
        .enumerate()
        .map(|(j, name)| Coefficient {
            name: (*name).to_owned(),
            estimate: beta[j],
            std_error: covariance[(j, j)].max(0.0).sqrt(),
            ols_std_error: (residual_sd * residual_sd * inverse[(j, j)])
                .max(0.0)
                .sqrt(),
            critical,
        })
        .collect();
    Ok(Regression {
        coefficients,
        covariance,
        residual_sd,
        rows: n,
        blocks: groups,
        rule,
    })
}

fn count_blocks(blocks: &[usize]) -> usize {
    let mut count = 0;
    let mut previous = None;
    for &b in blocks {
        if previous != Some(b) {
            count += 1;
            previous = Some(b);
        }
    }
    count
}

/// `S` of the sandwich: score products within blocks, weighted by lag.
fn sandwich_meat(
    design: &DMatrix<f64>,
    e: &[f64],
    blocks: &[usize],
    rule: Covariance,
) -> DMatrix<f64> {
    let (n, k) = design.shape();
    let mut meat = DMatrix::<f64>::zeros(k, k);
    let score = |t: usize| -> DVector<f64> { design.row(t).transpose() * e[t] };
    let mut start = 0;
    while start < n {
        let mut end = start + 1;
        while end < n && blocks[end] == blocks[start] {
            end += 1;
        }
        match rule {
            Covariance::Cluster => {
                let mut sum = DVector::<f64>::zeros(k);
                for t in start..end {
                    sum += score(t);
                }
                meat += &sum * sum.transpose();
            }
            Covariance::NeweyWest { max_lag } => {
                let scores: Vec<DVector<f64>> = (start..end).map(score).collect();
                for (t, s) in scores.iter().enumerate() {
                    meat += s * s.transpose();
                    for lag in 1..=max_lag.min(scores.len().saturating_sub(t + 1)) {
                        let w = 1.0 - lag as f64 / (max_lag as f64 + 1.0);
                        let u = &scores[t + lag];
                        meat += (s * u.transpose() + u * s.transpose()) * w;
                    }
                }
            }
        }
        start = end;
    }
    meat
}

#[cfg(test)]
mod tests {
    use super::*;

    /// One helper for this module's checks: fits and returns the estimates and errors.
    fn check(x: &[f64], y: &[f64], blocks: &[usize], rule: Covariance) -> Regression {
        fit(&["intercept", "x"], x, y, blocks, rule).expect("fits")
    }

    #[test]
    fn a_straight_line_is_recovered_exactly() {
        // y = 2 + 3x with no noise: estimates exact, residual sd zero (common practice).
        let xs: Vec<f64> = (0..20).map(f64::from).collect();
        let x: Vec<f64> = xs.iter().flat_map(|&v| [1.0, v]).collect();
        let y: Vec<f64> = xs.iter().map(|&v| 2.0 + 3.0 * v).collect();
        let r = check(&x, &y, &[0; 20], Covariance::Cluster);
        assert!((r.coefficients[0].estimate - 2.0).abs() < 1e-10);
        assert!((r.coefficients[1].estimate - 3.0).abs() < 1e-10);
        assert!(r.residual_sd < 1e-9);
    }

    #[test]
    fn with_one_row_per_block_cluster_equals_hc1() {
        // Clusters of one observation reduce the cluster-robust covariance to White's HC
        // estimator; with the factor G/(G-1) (n-1)/(n-k) = n/(n-k) it is HC1 (MacKinnon and
        // White 1985). HC1 is checked here against its closed form for a simple regression.
        let xs = [0.0, 1.0, 2.0, 3.0, 5.0, 8.0];
        let y = [1.0, 2.5, 2.0, 4.5, 6.0, 9.5];
        let x: Vec<f64> = xs.iter().flat_map(|&v| [1.0, v]).collect();
        let blocks: Vec<usize> = (0..6).collect();
        let r = check(&x, &y, &blocks, Covariance::Cluster);
        let n = xs.len() as f64;
        let mean = xs.iter().sum::<f64>() / n;
        let sxx: f64 = xs.iter().map(|v| (v - mean).powi(2)).sum();
        let slope = r.coefficients[1].estimate;
        let intercept = r.coefficients[0].estimate;
        let hc0: f64 = xs
            .iter()
            .zip(&y)
            .map(|(&xv, &yv)| {
                let e = yv - intercept - slope * xv;
                (xv - mean).powi(2) * e * e
            })
            .sum::<f64>()
            / (sxx * sxx);
        let hc1 = hc0 * n / (n - 2.0);
        assert!((r.coefficients[1].std_error - hc1.sqrt()).abs() < 1e-12);
    }

    #[test]
    fn collinear_columns_are_refused() {
        let x = [1.0, 2.0, 1.0, 2.0, 1.0, 2.0];
        let y = [1.0, 2.0, 3.0];
        let err = fit(&["a", "b"], &x, &y, &[0, 0, 0], Covariance::Cluster).unwrap_err();
        assert!(matches!(err, RegressionError::Collinear { .. }), "{err}");
    }

    #[test]
    fn non_finite_values_name_their_row_and_column() {
        let x = [1.0, 0.0, 1.0, f64::NAN, 1.0, 2.0];
        let err = fit(
            &["intercept", "wind"],
            &x,
            &[0.0, 1.0, 2.0],
            &[0, 0, 0],
            Covariance::Cluster,
        )
        .unwrap_err();
        assert_eq!(
            err.to_string(),
            "row 1, column wind: value NaN is not finite"
        );
    }

    #[test]
    fn persistence_widens_the_errors() {
        // A slowly varying regressor with persistent noise: the block-robust error must be
        // wider than the naive one (common practice: positive autocorrelation of both the
        // regressor and the residual inflates the variance of the estimate).
        let n = 400;
        let mut x = Vec::new();
        let mut y = Vec::new();
        let mut blocks = Vec::new();
        let mut noise: f64 = 0.0;
        let mut state: u64 = 7;
        for t in 0..n {
            state = state
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1);
            let u = ((state >> 11) as f64 / (1u64 << 53) as f64) - 0.5;
            noise = 0.95 * noise + u;
            let xv = ((t / 20) % 2) as f64;
            x.extend([1.0, xv]);
            y.push(noise);
            blocks.push(t / 100);
        }
        let r = check(&x, &y, &blocks, Covariance::NeweyWest { max_lag: 30 });
        assert!(
            r.coefficients[1].std_error > 1.5 * r.coefficients[1].ols_std_error,
            "{:?}",
            r.coefficients[1]
        );
    }
}
