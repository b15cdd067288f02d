//! Content negotiation of the read endpoints that answer JSON or CSV: a `?format=` query
//! value wins over the `Accept` header; `Accept` is weighed by its q-values (RFC 9110 section
//! 12.5.1). A format the endpoint cannot give is a `406`, never JSON in its place.

use axum::http::{HeaderMap, HeaderValue, header};
use axum::response::{IntoResponse, Response};

use crate::error::AppError;

/// A body format a read endpoint can answer in.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    /// `application/json` (the default).
    Json,
    /// `text/csv` (RFC 4180).
    Csv,
}

/// Media type of CSV answers.
pub const TEXT_CSV: &str = "text/csv; charset=utf-8";

impl Format {
    /// The `?format=` word.
    fn word(self) -> &'static str {
        match self {
            Format::Json => "json",
            Format::Csv => "csv",
        }
    }

    /// `(type, subtype)` of the media type.
    fn media(self) -> (&'static str, &'static str) {
        match self {
            Format::Json => ("application", "json"),
            Format::Csv => ("text", "csv"),
        }
    }
}

/// The format to answer in. `offers` lists what the endpoint gives, preferred first (its
/// first is chosen on ties and when the client states no preference).
pub fn negotiate(
    format: Option<&str>,
    headers: &HeaderMap,
    offers: &[Format],
) -> Result<Format, AppError> {
    let offered = || {
        offers
            .iter()
            .map(|f| f.word())
            .collect::<Vec<_>>()
            .join(" or ")
    };
    if let Some(word) = format {
        return offers
            .iter()
            .copied()
            .find(|f| f.word().eq_ignore_ascii_case(word.trim()))
            .ok_or_else(|| {
                AppError::NotAcceptable(format!(
                    "format {:?} is not given here; ask for {}",
                    clip(word),
                    offered()
                ))
            });
    }
    let ranges: Vec<MediaRange> = headers
        .get_all(header::ACCEPT)
        .iter()
        .filter_map(|v| v.to_str().ok())
        .flat_map(|v| v.split(','))
        .filter_map(MediaRange::parse)
        .collect();
    let Some(&preferred) = offers.first() else {
        return Err(AppError::Internal("an endpoint offers no format".into()));
    };
    if ranges.is_empty() {
        return Ok(preferred);
    }
    let mut best: Option<(Format, u16)> = None;
    for &offer in offers {
        let q = quality(&ranges, offer);
        if q > 0 && best.is_none_or(|(_, top)| q > top) {
            best = Some((offer, q));
        }
    }
    best.map(|(f, _)| f).ok_or_else(|| {
        AppError::NotAcceptable(format!(
            "no media type in Accept is given here; this endpoint answers {} (or ?format={})",
            offers
                .iter()
                .map(|f| {
                    let (t, s) = f.media();
                    format!("{t}/{s}")
                })
                .collect::<Vec<_>>()
                .join(" or "),
            offers
                .iter()
                .map(|f| f.word())
                .collect::<Vec<_>>()
                .join("|")
        ))
    })
}

/// A CSV body as a response, marked as varying by `Accept`.
pub fn csv_response(body: Vec<u8>) -> Response {
    let mut response = ([(header::CONTENT_TYPE, TEXT_CSV)], body).into_response();
    vary_accept(&mut response);
    response
}

/// A CSV body that could not be written (an internal error: the tables are the service's own).
pub fn csv_failed(err: csv::Error) -> AppError {
    AppError::Internal(format!("CSV body: {err}"))
}

/// Adds `Vary: Accept` (appended, keeping any other `Vary` a later layer adds).
pub fn vary_accept(response: &mut Response) {
    response
        .headers_mut()
        .append(header::VARY, HeaderValue::from_static("accept"));
}

/// One element of an `Accept` header, its q-value in thousandths.
#[derive(Debug, PartialEq)]
struct MediaRange {
    kind: String,
    subtype: String,
    q: u16,
}

impl MediaRange {
    /// Parses `type/subtype;param=v;q=0.5`; `None` for a malformed element (ignored, as if
    /// not sent).
    fn parse(text: &str) -> Option<Self> {
        let mut parts = text.split(';');
        let (kind, subtype) = parts.next()?.trim().split_once('/')?;
        let (kind, subtype) = (kind.trim(), subtype.trim());
        if kind.is_empty() || subtype.is_empty() || (kind == "*" && subtype != "*") {
            return None;
        }
        let mut q = 1000;
        for param in parts {
            if let Some((name, value)) = param.split_once('=')
                && name.trim().eq_ignore_ascii_case("q")
            {
                q = parse_q(value.trim())?;
            }
        }
        Some(Self {
            kind: kind.to_ascii_lowercase(),
            subtype: subtype.to_ascii_lowercase(),
            q,
        })
    }

    /// How specifically this range matches `(kind, subtype)`: 2 exact, 1 `type/*`, 0 `*/*`.
    fn specificity(&self, (kind, subtype): (&str, &str)) -> Option<u8> {
        match (self.kind.as_str(), self.subtype.as_str()) {
            ("*", "*") => Some(0),
            (k, "*") if k == kind => Some(1),
            (k, s) if k == kind && s == subtype => Some(2),
            _ => None,
        }
    }
}

/// A q-value `0`, `0.x`, `0.xxx`, `1` or `1.000` (RFC 9110 section 12.4.2) in thousandths.
fn parse_q(text: &str) -> Option<u16> {
    let (whole, fraction) = text.split_once('.').unwrap_or((text, ""));
    if fraction.len() > 3 || !fraction.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    let thousandths: u16 = format!("{fraction:0<3}").parse().ok()?;
    match whole {
        "0" => Some(thousandths),
        "1" if thousandths == 0 => Some(1000),
        _ => None,
    }
}

/// The q-value the client gives `format`: that of the most specific range matching it (RFC
/// 9110 section 12.5.1), 0 when none matches.
fn quality(ranges: &[MediaRange], format: Format) -> u16 {
    ranges
        .iter()
        .filter_map(|r| r.specificity(format.media()).map(|s| (s, r.q)))
        .max_by_key(|&(s, _)| s)
        .map_or(0, |(_, q)| q)
}

fn clip(text: &str) -> String {
    text.chars().take(32).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    const BOTH: &[Format] = &[Format::Json, Format::Csv];

    fn with_accept(values: &[&str]) -> HeaderMap {
        let mut headers = HeaderMap::new();
        for v in values {
            headers.append(header::ACCEPT, HeaderValue::from_str(v).unwrap());
        }
        headers
    }

    fn pick(format: Option<&str>, accept: &[&str]) -> Result<Format, AppError> {
        negotiate(format, &with_accept(accept), BOTH)
    }

    fn refused(result: Result<Format, AppError>) -> bool {
        matches!(result, Err(AppError::NotAcceptable(_)))
    }

    #[test]
    fn the_format_word_wins_over_accept() {
        assert_eq!(
            pick(Some("csv"), &["application/json"]).unwrap(),
            Format::Csv
        );
        assert_eq!(pick(Some("JSON"), &["text/csv"]).unwrap(), Format::Json);
        assert!(refused(pick(Some("xml"), &["text/csv"])));
        assert!(refused(negotiate(
            Some("csv"),
            &HeaderMap::new(),
            &[Format::Json]
        )));
    }

    // Media-range precedence and q-values as in RFC 9110 section 12.5.1 (its examples use
    // `text/*;q=0.3, text/plain;q=0.7, */*;q=0.5` style lists).
    #[test]
    fn accept_is_weighed_by_q_values_and_specificity() {
        assert_eq!(pick(None, &[]).unwrap(), Format::Json);
        assert_eq!(pick(None, &["*/*"]).unwrap(), Format::Json);
        assert_eq!(pick(None, &["application/json"]).unwrap(), Format::Json);
        assert_eq!(pick(None, &["text/csv"]).unwrap(), Format::Csv);
        assert_eq!(pick(None, &["text/*"]).unwrap(), Format::Csv);
        assert_eq!(
            pick(None, &["application/json;q=0.5, text/csv"]).unwrap(),
            Format::Csv
        );
        assert_eq!(
            pick(None, &["text/csv;q=0.9", "application/json"]).unwrap(),
            Format::Json
        );
        // Equal weights: the endpoint's preference (JSON).
        assert_eq!(
            pick(None, &["text/csv;q=0.8, application/json;q=0.8"]).unwrap(),
            Format::Json
        );
        // `*/*` at 1 but JSON excluded by its own, more specific, range.
        assert_eq!(
            pick(None, &["*/*, application/json;q=0"]).unwrap(),
            Format::Csv
        );
        assert_eq!(
            pick(None, &["TEXT/CSV; charset=utf-8; q=1.000"]).unwrap(),
            Format::Csv
        );
    }

    #[test]
    fn nothing_acceptable_is_refused_and_malformed_elements_ignored() {
        assert!(refused(pick(None, &["application/xml"])));
        assert!(refused(pick(None, &["text/csv;q=0, application/json;q=0"])));
        assert!(refused(negotiate(
            None,
            &with_accept(&["text/csv"]),
            &[Format::Json]
        )));
        // Malformed elements count as not sent.
        assert_eq!(pick(None, &["nonsense"]).unwrap(), Format::Json);
        assert_eq!(
            pick(None, &["text/csv;q=2, application/json"]).unwrap(),
            Format::Json
        );
        assert_eq!(pick(None, &["*/csv, text/csv;q=0.5"]).unwrap(), Format::Csv);
    }

    proptest::proptest! {
        #[test]
        fn negotiation_never_panics(accept in "[ -~]{0,80}", word in proptest::option::of("[ -~]{0,12}")) {
            let Ok(value) = HeaderValue::from_str(&accept) else { return Ok(()) };
            let mut headers = HeaderMap::new();
            headers.insert(header::ACCEPT, value);
            let _ = negotiate(word.as_deref(), &headers, BOTH);
        }
    }

    #[test]
    fn q_values_follow_the_grammar() {
        assert_eq!(parse_q("1"), Some(1000));
        assert_eq!(parse_q("1.000"), Some(1000));
        assert_eq!(parse_q("0.5"), Some(500));
        assert_eq!(parse_q("0.001"), Some(1));
        assert_eq!(parse_q("0"), Some(0));
        assert_eq!(parse_q("1.5"), None);
        assert_eq!(parse_q("0.0001"), None);
        assert_eq!(parse_q("-0.5"), None);
        assert_eq!(parse_q("0.x"), None);
    }
}
