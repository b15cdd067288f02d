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

/// Longest offending value an error message repeats; the rest is counted, not echoed.
pub const MAX_ECHO_CHARS: usize = 200;

/// `text` cut to [`MAX_ECHO_CHARS`] characters, with the number of characters left out.
pub fn clip_echo(text: &str) -> String {
    match text.char_indices().nth(MAX_ECHO_CHARS) {
        None => text.to_owned(),
        Some((cut, _)) => {
            let more = text[cut..].chars().count();
            format!("{}... ({more} more characters)", &text[..cut])
        }
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
        value: clip_echo(value),
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

/// As [`optional_number`], and a value must lie within `-bound..=bound` (`what` says why,
/// for the message, e.g. "an ENSO anomaly within +/-10 C").
pub(crate) fn bounded_number(
    source: &str,
    row: &Row,
    field: &str,
    text: &str,
    bound: f64,
    what: &str,
) -> Result<Option<f64>, DriverParseError> {
    match optional_number(source, row, field, text)? {
        Some(x) if !(-bound..=bound).contains(&x) => Err(bad_field(
            source,
            row,
            field,
            text,
            &format!("is outside the plausible range: expected {what}"),
        )),
        other => Ok(other),
    }
}
