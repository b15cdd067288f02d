//! The CSV bodies of the read endpoints (RFC 4180: a header line, CRLF line ends, fields
//! with commas or quotes quoted): the season table, an outlook's count table, and the outlook
//! set as one row per gauge. Numbers are written in Rust's shortest round-trip form, so a
//! parsed field equals the JSON number.

use std::collections::BTreeSet;

use serde::Serialize;

use crate::api;

fn writer() -> csv::Writer<Vec<u8>> {
    csv::WriterBuilder::new()
        .terminator(csv::Terminator::CRLF)
        .from_writer(Vec::new())
}

fn finish(writer: csv::Writer<Vec<u8>>) -> Result<Vec<u8>, csv::Error> {
    writer.into_inner().map_err(|e| e.into_error().into())
}

/// The season table: fixed columns, then one column per predictor sorted by name.
pub fn season_csv(history: &api::SeasonHistory) -> Result<Vec<u8>, csv::Error> {
    let predictors: BTreeSet<&String> = history
        .seasons
        .iter()
        .flat_map(|s| s.predictors.keys())
        .collect();
    let mut writer = writer();
    let mut header = vec![
        "season",
        "first_day",
        "last_day",
        "calendar_days",
        "observed_days",
        "flood_days",
        "completeness",
        "used_in_fit",
    ];
    header.extend(predictors.iter().map(|p| p.as_str()));
    writer.write_record(&header)?;
    for row in &history.seasons {
        let mut record = vec![
            row.season.clone(),
            row.first_day.clone(),
            row.last_day.clone(),
            row.calendar_days.to_string(),
            row.observed_days.to_string(),
            row.flood_days.to_string(),
            row.completeness.to_string(),
            row.used_in_fit.to_string(),
        ];
        record.extend(predictors.iter().map(|p| {
            row.predictors
                .get(*p)
                .map(f64::to_string)
                .unwrap_or_default()
        }));
        writer.write_record(&record)?;
    }
    finish(writer)
}

/// Columns of an outlook's count table.
pub const OUTLOOK_COLUMNS: [&str; 4] = [
    "days",
    "probability",
    "probability_at_least",
    "probability_at_most",
];

/// An outlook's count table: one row per count of days 0 to `season_days`, its probability
/// (`pmf`), `P(N >= days)` (as the outlook's `exceedance`: `1 - sum_{j < days} pmf[j]`) and
/// `P(N <= days)`, each clamped to `[0, 1]`.
pub fn outlook_csv(outlook: &api::Outlook) -> Result<Vec<u8>, csv::Error> {
    let mut writer = writer();
    writer.write_record(OUTLOOK_COLUMNS)?;
    let mut below = 0.0_f64;
    for (days, &p) in outlook.pmf.iter().enumerate() {
        let at_least = (1.0 - below).clamp(0.0, 1.0);
        below += p;
        writer.write_record([
            days.to_string(),
            p.to_string(),
            at_least.to_string(),
            below.clamp(0.0, 1.0).to_string(),
        ])?;
    }
    finish(writer)
}

/// Columns of the outlook set's rows.
pub const SET_COLUMNS: [&str; 19] = [
    "gauge",
    "season",
    "mean",
    "p10",
    "p90",
    "plan_on_days",
    "plan_on_low",
    "plan_on_high",
    "plan_on_basis",
    "k",
    "probability_at_least_k",
    "tercile_reference",
    "below",
    "near",
    "above",
    "verdict",
    "engine",
    "plan_on_sentence",
    "unavailable",
];

/// The outlook set, one row per gauge ordered by id: the headline numbers of each outlook
/// ([`api::OutlookSummary`]), and for a gauge without one its reason in `unavailable` with
/// the other fields empty.
pub fn outlook_set_csv(set: &api::OutlookSet) -> Result<Vec<u8>, csv::Error> {
    let mut rows: Vec<(&str, Vec<String>)> = set
        .outlooks
        .iter()
        .map(|o| (o.gauge.as_str(), summary_row(o)))
        .chain(set.unavailable.iter().map(|u| {
            let mut row = vec![String::new(); SET_COLUMNS.len()];
            row[0].clone_from(&u.gauge);
            row[SET_COLUMNS.len() - 1].clone_from(&u.reason);
            (u.gauge.as_str(), row)
        }))
        .collect();
    rows.sort_by(|a, b| a.0.cmp(b.0));
    let mut writer = writer();
    writer.write_record(SET_COLUMNS)?;
    for (_, row) in rows {
        writer.write_record(&row)?;
    }
    finish(writer)
}

fn summary_row(outlook: &api::Outlook) -> Vec<String> {
    let s = api::OutlookSummary::of(outlook);
    let opt = |v: Option<f64>| v.map(|x| x.to_string()).unwrap_or_default();
    vec![
        outlook.gauge.clone(),
        s.season,
        s.mean.to_string(),
        s.range_80[0].to_string(),
        s.range_80[1].to_string(),
        s.plan_on.days.to_string(),
        s.plan_on.range[0].to_string(),
        s.plan_on.range[1].to_string(),
        word(&s.plan_on.basis),
        s.at_least_k.map(|e| e.k.to_string()).unwrap_or_default(),
        opt(s.at_least_k.map(|e| e.probability)),
        s.terciles.map(|t| word(&t.reference)).unwrap_or_default(),
        opt(s.terciles.map(|t| t.below)),
        opt(s.terciles.map(|t| t.near)),
        opt(s.terciles.map(|t| t.above)),
        word(&s.verdict),
        s.engine,
        s.plan_on.sentence,
        String::new(),
    ]
}

/// The JSON word of a unit enum (its serde name).
fn word<T: Serialize>(value: &T) -> String {
    match serde_json::to_value(value) {
        Ok(serde_json::Value::String(s)) => s,
        _ => String::new(),
    }
}

#[cfg(test)]
mod tests {
    use std::collections::BTreeMap;

    use super::*;

    fn row(season: &str, predictors: &[(&str, f64)]) -> api::SeasonRow {
        api::SeasonRow {
            season: season.into(),
            first_day: "2020-12-01".into(),
            last_day: "2021-02-28".into(),
            calendar_days: 90,
            observed_days: 88,
            flood_days: 3,
            completeness: 88.0 / 90.0,
            used_in_fit: true,
            predictors: predictors
                .iter()
                .map(|(k, v)| ((*k).to_owned(), *v))
                .collect::<BTreeMap<_, _>>(),
            enso_category: None,
        }
    }

    #[test]
    fn season_csv_has_one_column_per_predictor_and_blanks_for_missing() {
        let history = api::SeasonHistory {
            gauge: "a".into(),
            datum: "VBZ".into(),
            flood_threshold_m: 0.85,
            seasons: vec![
                row("2020-DJF", &[("wind", 1.5), ("enso", -0.5)]),
                row("2021-DJF", &[("enso", 0.25)]),
            ],
        };
        let text = String::from_utf8(season_csv(&history).unwrap()).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(
            lines[0],
            "season,first_day,last_day,calendar_days,observed_days,flood_days,completeness,used_in_fit,enso,wind"
        );
        assert!(lines[1].starts_with("2020-DJF,2020-12-01,2021-02-28,90,88,3,"));
        assert!(lines[1].ends_with(",true,-0.5,1.5"), "{}", lines[1]);
        assert!(lines[2].ends_with(",true,0.25,"), "{}", lines[2]);
    }

    fn fake(gauge: &str, pmf: &[f64]) -> api::Outlook {
        let fake = tidetally_test_support::fixtures::fake_outlook(gauge, pmf);
        serde_json::from_value(fake).expect("wire shape")
    }

    // RFC 4180 section 2: records end in CRLF, the header line has the same fields, a field
    // with a comma or a quote is quoted and its quotes doubled.
    #[test]
    fn outlook_csv_is_rfc_4180_with_cumulative_columns() {
        let text = String::from_utf8(outlook_csv(&fake("a", &[0.5, 0.25, 0.25])).unwrap()).unwrap();
        assert_eq!(
            text,
            "days,probability,probability_at_least,probability_at_most\r\n\
             0,0.5,1,0.5\r\n1,0.25,0.5,0.75\r\n2,0.25,0.25,1\r\n"
        );
    }

    #[test]
    fn the_set_has_one_row_per_gauge_in_id_order_and_quotes_sentences() {
        let mut b = fake("b", &[0.5, 0.25, 0.25]);
        b.plan_on.sentence = "Plan on \"about\" 1 day, 0 to 2.".into();
        b.exceedance = vec![api::Exceedance {
            days: 1,
            probability: 0.5,
        }];
        let set = api::OutlookSet {
            season: None,
            outlooks: vec![b],
            unavailable: vec![api::Unavailable {
                gauge: "a".into(),
                reason: "not fitted, yet".into(),
            }],
        };
        let text = String::from_utf8(outlook_set_csv(&set).unwrap()).unwrap();
        let lines: Vec<&str> = text.split("\r\n").collect();
        assert_eq!(lines[0], SET_COLUMNS.join(","));
        assert_eq!(lines[1], format!("a{}\"not fitted, yet\"", ",".repeat(18)));
        assert!(
            lines[2]
                .starts_with("b,2026-DJF,0.75,0,2,0,0,0,climatology,1,0.5,,,,,not_measured,,\""),
            "{}",
            lines[2]
        );
        assert!(
            lines[2].ends_with(",\"Plan on \"\"about\"\" 1 day, 0 to 2.\","),
            "{}",
            lines[2]
        );
        assert_eq!(lines[3], "", "the last record ends in CRLF");
    }
}
