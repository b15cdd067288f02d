//! Raw model columns ([`GlmSpec`]) and their validated, standardised form ([`GlmData`]).

use nalgebra::{DMatrix, SymmetricEigen};

use super::GlmError;

/// Relative size of the smallest eigenvalue of the standardised design's Gram matrix below
/// which the design counts as rank deficient. At 1e-10 a 45-row table with a correlation of
/// 0.99999 between two predictors still fits; an exact copy (eigenvalue ~1e-16) does not.
const RANK_TOLERANCE: f64 = 1e-10;

/// Share of the largest null-space component a column needs to be named as collinear.
const COLLINEAR_SHARE: f64 = 0.05;

/// The columns of a count model as given: unchecked.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct GlmSpec {
    /// Response counts, one per row.
    pub response: Vec<f64>,
    /// Predictor columns: name and one value per row. The intercept is added automatically.
    pub predictors: Vec<(String, Vec<f64>)>,
    /// Offset added to the linear predictor, one per row (already on the log scale).
    pub offset: Option<Vec<f64>>,
}

impl GlmSpec {
    /// Sets the offset to `ln(exposure)`, rejecting non-positive exposures with their row.
    pub fn with_log_exposure(mut self, exposure: &[f64]) -> Result<Self, GlmError> {
        let mut offset = Vec::with_capacity(exposure.len());
        for (i, &e) in exposure.iter().enumerate() {
            if !e.is_finite() {
                return Err(GlmError::NonFinite {
                    row: i + 1,
                    column: "exposure".into(),
                    value: e,
                });
            }
            if !(e > 0.0) {
                return Err(GlmError::BadExposure {
                    row: i + 1,
                    value: e,
                });
            }
            offset.push(e.ln());
        }
        self.offset = Some(offset);
        Ok(self)
    }

    /// Validates the columns: equal lengths, finite values, whole non-negative counts, not all
    /// zero, no constant predictor, and a full-rank design. Predictors are centred and scaled.
    pub fn check(self) -> Result<GlmData, GlmError> {
        let n = self.response.len();
        let q = self.predictors.len() + 1;
        if n == 0 || n < q {
            return Err(GlmError::TooFewRows {
                rows: n,
                coefficients: q,
            });
        }
        for (i, &y) in self.response.iter().enumerate() {
            if !y.is_finite() {
                return Err(GlmError::NonFinite {
                    row: i + 1,
                    column: "response".into(),
                    value: y,
                });
            }
            if !(y >= 0.0) || y.fract() != 0.0 {
                return Err(GlmError::BadCount {
                    row: i + 1,
                    value: y,
                });
            }
        }
        if self.response.iter().all(|&y| y == 0.0) {
            return Err(GlmError::AllZeroResponse);
        }
        let mut names = vec!["intercept".to_string()];
        for (name, column) in &self.predictors {
            if names.iter().any(|known| known == name) {
                return Err(GlmError::DuplicateName(name.clone()));
            }
            check_column(name, column, n)?;
            names.push(name.clone());
        }
        let offset = match self.offset {
            Some(offset) => {
                check_column("offset", &offset, n)?;
                offset
            }
            None => vec![0.0; n],
        };

        let mut centres = Vec::with_capacity(q - 1);
        let mut scales = Vec::with_capacity(q - 1);
        let mut design = DMatrix::from_element(n, q, 1.0);
        for (j, (name, column)) in self.predictors.iter().enumerate() {
            let mean = column.iter().sum::<f64>() / n as f64;
            let var = column.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / n as f64;
            let sd = var.sqrt();
            if !(sd > 1e-12 * mean.abs().max(1e-300)) {
                return Err(GlmError::ConstantPredictor(name.clone()));
            }
            for (i, x) in column.iter().enumerate() {
                design[(i, j + 1)] = (x - mean) / sd;
            }
            centres.push(mean);
            scales.push(sd);
        }
        check_rank(&design, &names)?;

        Ok(GlmData {
            names,
            raw: self.predictors.into_iter().map(|(_, c)| c).collect(),
            response: self.response,
            offset,
            design,
            centres,
            scales,
        })
    }
}

fn check_column(name: &str, column: &[f64], n: usize) -> Result<(), GlmError> {
    if column.len() != n {
        return Err(GlmError::LengthMismatch {
            column: name.to_string(),
            found: column.len(),
            expected: n,
        });
    }
    match column.iter().position(|v| !v.is_finite()) {
        Some(i) => Err(GlmError::NonFinite {
            row: i + 1,
            column: name.to_string(),
            value: column[i],
        }),
        None => Ok(()),
    }
}

/// Rejects a standardised design whose Gram matrix is (nearly) singular, naming the columns
/// that carry the null-space direction.
fn check_rank(design: &DMatrix<f64>, names: &[String]) -> Result<(), GlmError> {
    let n = design.nrows() as f64;
    let gram = design.tr_mul(design) / n;
    let eigen = SymmetricEigen::new(gram);
    let largest = eigen.eigenvalues.iter().cloned().fold(0.0_f64, f64::max);
    let (k, smallest) =
        eigen
            .eigenvalues
            .iter()
            .cloned()
            .enumerate()
            .fold(
                (0, f64::INFINITY),
                |best, (i, v)| if v < best.1 { (i, v) } else { best },
            );
    if smallest > RANK_TOLERANCE * largest {
        return Ok(());
    }
    let direction = eigen.eigenvectors.column(k);
    let peak = direction.iter().fold(0.0_f64, |m, v| m.max(v.abs()));
    let columns = direction
        .iter()
        .zip(names)
        .filter(|(v, _)| v.abs() > COLLINEAR_SHARE * peak)
        .map(|(_, name)| name.clone())
        .collect();
    Err(GlmError::RankDeficient { columns })
}

/// Validated model columns: counts, a full-rank standardised design (intercept first), the
/// offset, and the centring and scaling needed to report on the original scale.
#[derive(Debug, Clone, PartialEq)]
pub struct GlmData {
    names: Vec<String>,
    raw: Vec<Vec<f64>>,
    response: Vec<f64>,
    offset: Vec<f64>,
    design: DMatrix<f64>,
    centres: Vec<f64>,
    scales: Vec<f64>,
}

impl GlmData {
    /// Coefficient names: `intercept`, then the predictors in the order given.
    pub fn names(&self) -> &[String] {
        &self.names
    }

    /// Number of rows.
    pub fn rows(&self) -> usize {
        self.response.len()
    }

    /// The response counts.
    pub fn response(&self) -> &[f64] {
        &self.response
    }

    /// The offset per row (zeros when none was given).
    pub fn offset(&self) -> &[f64] {
        &self.offset
    }

    /// Predictor values of one row on the original scale (without the intercept).
    pub fn predictor_row(&self, row: usize) -> Vec<f64> {
        self.raw.iter().map(|c| c[row]).collect()
    }

    /// The same model columns without the rows listed (e.g. leave-one-out), re-validated and
    /// re-standardised.
    pub fn without_rows(&self, rows: &[usize]) -> Result<GlmData, GlmError> {
        let keep = |i: &usize| !rows.contains(i);
        let pick = |v: &[f64]| -> Vec<f64> {
            v.iter()
                .enumerate()
                .filter(|(i, _)| keep(i))
                .map(|(_, x)| *x)
                .collect()
        };
        GlmSpec {
            response: pick(&self.response),
            predictors: self.names[1..]
                .iter()
                .cloned()
                .zip(self.raw.iter().map(|c| pick(c)))
                .collect(),
            offset: Some(pick(&self.offset)),
        }
        .check()
    }

    pub(super) fn design(&self) -> &DMatrix<f64> {
        &self.design
    }

    /// The matrix `A` with `beta_original = A * b_standardised`.
    pub(super) fn to_original(&self) -> DMatrix<f64> {
        let q = self.names.len();
        let mut a = DMatrix::identity(q, q);
        for j in 0..q - 1 {
            a[(0, j + 1)] = -self.centres[j] / self.scales[j];
            a[(j + 1, j + 1)] = 1.0 / self.scales[j];
        }
        a
    }

    /// The standardised design restricted to the intercept column.
    pub(super) fn intercept_only(&self) -> DMatrix<f64> {
        DMatrix::from_element(self.rows(), 1, 1.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spec(columns: Vec<(&str, Vec<f64>)>) -> GlmSpec {
        GlmSpec {
            response: vec![1.0, 0.0, 3.0, 2.0, 5.0, 4.0],
            predictors: columns
                .into_iter()
                .map(|(n, c)| (n.to_string(), c))
                .collect(),
            offset: None,
        }
    }

    #[test]
    fn collinear_columns_are_named() {
        let a = vec![1.0, 2.0, 3.0, 4.0, 5.0, 7.0];
        let b = vec![0.5, 0.1, 0.3, 0.9, 0.2, 0.4];
        let c: Vec<f64> = a.iter().zip(&b).map(|(x, y)| 2.0 * x - y).collect();
        let err = spec(vec![
            ("a", a),
            ("b", b),
            ("c", c),
            ("d", vec![1., 0., 1., 0., 0., 1.]),
        ])
        .check()
        .expect_err("c = 2a - b");
        match err {
            GlmError::RankDeficient { columns } => assert_eq!(columns, ["a", "b", "c"]),
            other => panic!("unexpected {other:?}"),
        }
    }

    #[test]
    fn bad_inputs_name_their_row() {
        let mut s = spec(vec![("a", vec![1.0, 2.0, f64::NAN, 4.0, 5.0, 6.0])]);
        assert!(matches!(
            s.clone().check(),
            Err(GlmError::NonFinite { row: 3, .. })
        ));
        s.predictors[0].1[2] = 3.0;
        s.response[4] = 2.5;
        assert!(matches!(
            s.clone().check(),
            Err(GlmError::BadCount { row: 5, .. })
        ));
        s.response = vec![0.0; 6];
        assert_eq!(s.clone().check(), Err(GlmError::AllZeroResponse));
        let s = spec(vec![("k", vec![2.0; 6])]);
        assert_eq!(s.check(), Err(GlmError::ConstantPredictor("k".into())));
        let e = spec(vec![]).with_log_exposure(&[1.0, 2.0, 0.0, 1.0, 1.0, 1.0]);
        assert!(matches!(e, Err(GlmError::BadExposure { row: 3, .. })));
    }
}
