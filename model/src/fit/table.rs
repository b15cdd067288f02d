//! The predictor table: every season of a prepared gauge with its counts, exposure and the
//! value of every predictor (the tidal one included), marked with whether the gauge's
//! default fit uses it. Written as CSV so a researcher can refit the model with other tools
//! and get the same coefficients.

use std::io::Write;

use super::design::{DriverValue, SeasonData};
use super::{FitOptions, PreparedGauge, gauge_design};
use crate::predictor::Predictor;

/// The columns before the predictors, in order.
pub const LEADING_COLUMNS: [&str; 9] = [
    "season",
    "season_name",
    "first_day",
    "last_day",
    "flood_days",
    "observed_days",
    "calendar_days",
    "log_observed_days",
    "used_in_fit",
];

/// The column after the predictors: why the default fit leaves the season out (empty when
/// it uses it).
pub const LEFT_OUT_COLUMN: &str = "left_out_reason";

/// Writes the predictor table of `prepared` as CSV (RFC 4180, one header line): one row per
/// season of the record in time order, the columns of [`LEADING_COLUMNS`], one column per
/// predictor of [`Predictor::ALL`] (empty where the season has no value), and
/// [`LEFT_OUT_COLUMN`]. `used_in_fit` is `true` exactly for the rows of the fit that
/// [`super::fit_gauge`] makes with default options, so filtering a season name's rows on it
/// and fitting `flood_days ~ predictors + offset(log_observed_days)` reproduces that fit.
pub fn write_predictor_table<W: Write>(prepared: &PreparedGauge, out: W) -> csv::Result<()> {
    let mut writer = csv::Writer::from_writer(out);
    let mut header: Vec<&str> = LEADING_COLUMNS.to_vec();
    header.extend(Predictor::ALL.iter().map(|p| p.as_str()));
    header.push(LEFT_OUT_COLUMN);
    writer.write_record(&header)?;

    let designs: Vec<_> = prepared
        .config
        .seasons
        .specs
        .iter()
        .map(|spec| gauge_design(prepared, spec.name(), &FitOptions::default()))
        .collect();
    let mut seasons: Vec<&SeasonData> = prepared.seasons.iter().collect();
    seasons.sort_by_key(|s| s.season.first_day());
    for data in seasons {
        let label = data.season.label();
        let design = designs.iter().find(|d| {
            d.season_name
                .eq_ignore_ascii_case(data.season.spec().name())
        });
        let in_fit = design.is_some_and(|d| d.rows.iter().any(|r| r.season == data.season));
        let left_out = design
            .and_then(|d| d.left_out.iter().find(|l| l.season == label))
            .map(|l| l.explanation.clone())
            .unwrap_or_default();
        let mut row = vec![
            label,
            data.season.spec().name().to_owned(),
            data.season.first_day().to_string(),
            data.season.last_day().to_string(),
            data.flood_days.to_string(),
            data.observed_days.to_string(),
            data.calendar_days.to_string(),
            log_exposure(data.observed_days),
            in_fit.to_string(),
        ];
        row.extend(Predictor::ALL.iter().map(|&p| match data.driver(p) {
            Some(DriverValue::Known(v)) if v.is_finite() => full_precision(*v),
            _ => String::new(),
        }));
        row.push(left_out);
        writer.write_record(&row)?;
    }
    writer.flush()?;
    Ok(())
}

/// ln(observed days), empty for a season with none observed.
fn log_exposure(observed_days: u32) -> String {
    if observed_days == 0 {
        String::new()
    } else {
        full_precision(f64::from(observed_days).ln())
    }
}

/// The shortest decimal that reads back as the same `f64` (Rust's `Display` for floats), so a
/// refit from the table sees exactly the values the model saw.
fn full_precision(v: f64) -> String {
    format!("{v}")
}
