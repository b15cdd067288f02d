//! Reading a driver CSV into trimmed rows with their line numbers, checking the header.

use std::io::BufRead;

use super::DriverParseError;

/// A data row: its 1-based line number and its trimmed fields.
pub(crate) struct Row {
    pub line: u64,
    pub fields: Vec<String>,
}

/// The header (trimmed, lowercase) and the data rows of a CSV source. Blank lines are skipped.
pub(crate) fn read_rows(
    reader: impl BufRead,
    source: &str,
) -> Result<(Vec<String>, Vec<Row>), DriverParseError> {
    let mut csv = csv::ReaderBuilder::new()
        .has_headers(true)
        .trim(csv::Trim::All)
        .flexible(false)
        .from_reader(reader);
    let read_error = |e: csv::Error| DriverParseError::Read {
        source_name: source.to_owned(),
        message: e.to_string(),
    };
    let header: Vec<String> = csv
        .headers()
        .map_err(read_error)?
        .iter()
        .map(|h| h.trim_start_matches('\u{feff}').to_ascii_lowercase())
        .collect();
    let mut rows = Vec::new();
    for record in csv.records() {
        let record = record.map_err(read_error)?;
        let line = record.position().map_or(0, |p| p.line());
        rows.push(Row {
            line,
            fields: record.iter().map(str::to_owned).collect(),
        });
    }
    if rows.is_empty() {
        return Err(DriverParseError::Empty {
            source_name: source.to_owned(),
        });
    }
    Ok((header, rows))
}

/// Checks that `header` is exactly `expected`.
pub(crate) fn expect_header(
    header: &[String],
    expected: &[&str],
    source: &str,
) -> Result<(), DriverParseError> {
    if header
        .iter()
        .map(String::as_str)
        .eq(expected.iter().copied())
    {
        Ok(())
    } else {
        Err(DriverParseError::BadHeader {
            source_name: source.to_owned(),
            found: header.join(","),
            expected: expected.join(","),
        })
    }
}

/// A field error at `row`.
pub(crate) fn bad_field(
    source: &str,
    row: &Row,
    field: &str,
    value: &str,
    problem: &str,
) -> DriverParseError {
    DriverParseError::BadField {
        source_name: source.to_owned(),
        line: row.line,
        field: field.to_owned(),
        value: value.to_owned(),
        problem: problem.to_owned(),
    }
}

/// Parses a numeric field; empty or `NaN` (any case) is missing (`None`); infinities and
/// other text are errors.
pub(crate) fn optional_number(
    source: &str,
    row: &Row,
    field: &str,
    text: &str,
) -> Result<Option<f64>, DriverParseError> {
    if text.is_empty() || text.eq_ignore_ascii_case("nan") {
        return Ok(None);
    }
    match text.parse::<f64>() {
        Ok(x) if x.is_finite() => Ok(Some(x)),
        Ok(_) => Err(bad_field(
            source,
            row,
            field,
            text,
            "is not a finite number",
        )),
        Err(_) => Err(bad_field(source, row, field, text, "is not a number")),
    }
}
