//! Reading a count model's columns from a CSV table with a header row. Every error names the
//! source, the line and the column.

use std::io::Read;

use super::GlmSpec;

/// Which columns of a table form the model.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ColumnSpec {
    /// The response column (non-negative whole counts).
    pub response: String,
    /// Predictor columns, in order.
    pub predictors: Vec<String>,
    /// The offset column, if any.
    pub offset: Option<OffsetColumn>,
}

/// An offset column and how it enters the linear predictor.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum OffsetColumn {
    /// Added as is.
    AsIs(String),
    /// Added as `ln(value)` (an exposure such as observed days); values must be positive.
    Log(String),
}

/// Why a table could not be read into model columns.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum TableError {
    /// The CSV itself is malformed.
    #[error("{source_name}: line {line}: {message}")]
    Csv {
        /// The file or stream name.
        source_name: String,
        /// 1-based line.
        line: u64,
        /// What the CSV reader found.
        message: String,
    },
    /// A named column is not in the header.
    #[error("{source_name}: line 1: no column {column:?} in the header (columns: {available})")]
    MissingColumn {
        /// The file or stream name.
        source_name: String,
        /// The missing column.
        column: String,
        /// The header's columns, comma separated.
        available: String,
    },
    /// A cell that is not a valid value for its column.
    #[error("{source_name}: line {line}: column {column:?}: {value:?} {problem}")]
    BadCell {
        /// The file or stream name.
        source_name: String,
        /// 1-based line.
        line: u64,
        /// The column.
        column: String,
        /// The cell as written.
        value: String,
        /// What is wrong, e.g. "is not a finite number".
        problem: &'static str,
    },
}

/// Reads the model's columns from CSV text with a header row. `source_name` names the input
/// in errors (usually the file path).
pub fn read_table(
    reader: impl Read,
    source_name: &str,
    columns: &ColumnSpec,
) -> Result<GlmSpec, TableError> {
    let mut csv = csv::ReaderBuilder::new()
        .trim(csv::Trim::All)
        .from_reader(reader);
    let csv_error = |e: csv::Error| TableError::Csv {
        source_name: source_name.to_string(),
        line: e.position().map_or(0, |p| p.line()),
        message: e.to_string(),
    };
    let header = csv.headers().map_err(csv_error)?.clone();
    let find = |name: &str| {
        header
            .iter()
            .position(|h| h == name)
            .ok_or_else(|| TableError::MissingColumn {
                source_name: source_name.to_string(),
                column: name.to_string(),
                available: header.iter().collect::<Vec<_>>().join(", "),
            })
    };
    let response_at = find(&columns.response)?;
    let predictor_at = columns
        .predictors
        .iter()
        .map(|p| find(p))
        .collect::<Result<Vec<_>, _>>()?;
    let offset_at = match &columns.offset {
        Some(OffsetColumn::AsIs(name)) | Some(OffsetColumn::Log(name)) => Some(find(name)?),
        None => None,
    };
    let log_offset = matches!(columns.offset, Some(OffsetColumn::Log(_)));

    let mut spec = GlmSpec {
        response: Vec::new(),
        predictors: columns
            .predictors
            .iter()
            .map(|p| (p.clone(), Vec::new()))
            .collect(),
        offset: offset_at.map(|_| Vec::new()),
    };
    for record in csv.records() {
        let record = record.map_err(csv_error)?;
        let line = record.position().map_or(0, |p| p.line());
        let cell = |at: usize, column: &str, problem_if: fn(f64) -> Option<&'static str>| {
            let text = record.get(at).unwrap_or("");
            let bad = |problem| TableError::BadCell {
                source_name: source_name.to_string(),
                line,
                column: column.to_string(),
                value: text.to_string(),
                problem,
            };
            let value: f64 = text.parse().map_err(|_| bad("is not a number"))?;
            if !value.is_finite() {
                return Err(bad("is not a finite number"));
            }
            match problem_if(value) {
                Some(problem) => Err(bad(problem)),
                None => Ok(value),
            }
        };
        spec.response
            .push(cell(response_at, &columns.response, |v| {
                (!(v >= 0.0) || v.fract() != 0.0).then_some("is not a non-negative whole count")
            })?);
        for ((name, values), &at) in spec.predictors.iter_mut().zip(&predictor_at) {
            values.push(cell(at, name, |_| None)?);
        }
        if let (Some(at), Some(values), Some(column)) =
            (offset_at, spec.offset.as_mut(), &columns.offset)
        {
            let name = match column {
                OffsetColumn::AsIs(n) | OffsetColumn::Log(n) => n,
            };
            if log_offset {
                values.push(
                    cell(at, name, |v| {
                        (!(v > 0.0)).then_some("must be positive to take its logarithm")
                    })?
                    .ln(),
                );
            } else {
                values.push(cell(at, name, |_| None)?);
            }
        }
    }
    Ok(spec)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn columns(offset: Option<OffsetColumn>) -> ColumnSpec {
        ColumnSpec {
            response: "n".into(),
            predictors: vec!["x".into()],
            offset,
        }
    }

    #[test]
    fn reads_columns_and_logs_the_exposure() {
        let text = "n,x,days\n3,0.5,90\n0,1.5,45\n";
        let spec = read_table(
            text.as_bytes(),
            "t.csv",
            &columns(Some(OffsetColumn::Log("days".into()))),
        )
        .expect("valid table");
        assert_eq!(spec.response, [3.0, 0.0]);
        assert_eq!(spec.predictors[0].1, [0.5, 1.5]);
        let offset = spec.offset.expect("offset given");
        assert!((offset[0] - 90f64.ln()).abs() < 1e-15);
    }

    #[test]
    fn errors_name_file_line_and_column() {
        let text = "n,x\n3,0.5\n2,abc\n";
        let err = read_table(text.as_bytes(), "t.csv", &columns(None)).expect_err("abc");
        assert_eq!(
            err.to_string(),
            "t.csv: line 3: column \"x\": \"abc\" is not a number"
        );
        let err = read_table("n,x\n1.5,2\n".as_bytes(), "t.csv", &columns(None)).expect_err("1.5");
        assert!(
            err.to_string().starts_with("t.csv: line 2: column \"n\""),
            "{err}"
        );
        let err = read_table("n,x\n1,NaN\n".as_bytes(), "t.csv", &columns(None)).expect_err("NaN");
        assert!(err.to_string().contains("line 2") && err.to_string().contains("finite"));
        let err = read_table("n,y\n1,2\n".as_bytes(), "t.csv", &columns(None)).expect_err("no x");
        assert!(matches!(err, TableError::MissingColumn { .. }));
        let err = read_table(
            "n,x,d\n1,2,0\n".as_bytes(),
            "t.csv",
            &columns(Some(OffsetColumn::Log("d".into()))),
        )
        .expect_err("log 0");
        assert!(err.to_string().contains("column \"d\""), "{err}");
    }
}
