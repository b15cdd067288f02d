//! The design of a gauge model: one row per usable season of one season name, the predictors
//! the gauge's TOML asks for, the exposure offset ln(observed days), and the seasons left out
//! with their reasons.

use serde::Serialize;

use crate::predictor::Predictor;
use crate::season::Season;

/// A driver's value for one season, or why it is missing.
#[derive(Debug, Clone, PartialEq)]
pub enum DriverValue {
    /// The seasonal value, in the predictor's unit.
    Known(f64),
    /// Why the value is missing, in plain words (e.g. "ENSO: month 1998-01 missing").
    Missing(String),
}

/// One season of a gauge's record, as the model sees it: counts, exposure and drivers.
#[derive(Debug, Clone, PartialEq)]
pub struct SeasonData {
    /// The season.
    pub season: Season,
    /// Observed days that reached the flood threshold.
    pub flood_days: u32,
    /// Days with enough readings to count (the exposure).
    pub observed_days: u32,
    /// Days in the season.
    pub calendar_days: u32,
    /// Why the season table flags the season as too incomplete to fit, if it does.
    pub incomplete: Option<String>,
    /// Each predictor's value; a predictor absent here counts as missing.
    pub drivers: Vec<(Predictor, DriverValue)>,
}

impl SeasonData {
    /// The value of `predictor` for this season.
    pub fn driver(&self, predictor: Predictor) -> Option<&DriverValue> {
        self.drivers
            .iter()
            .find(|(p, _)| *p == predictor)
            .map(|(_, v)| v)
    }
}

/// Why a season was not used in a fit.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum LeaveOutReason {
    /// The season table flags the season as incomplete.
    IncompleteSeason {
        /// The season table's reason.
        detail: String,
    },
    /// The season has no observed day at all.
    NoObservedDays,
    /// A driver the model uses has no value for the season.
    MissingDriver {
        /// The predictor.
        predictor: Predictor,
        /// Why it is missing.
        detail: String,
    },
}

impl std::fmt::Display for LeaveOutReason {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            LeaveOutReason::IncompleteSeason { detail } => write!(f, "incomplete season: {detail}"),
            LeaveOutReason::NoObservedDays => f.write_str("no observed days"),
            LeaveOutReason::MissingDriver { predictor, detail } => {
                write!(f, "missing driver {predictor}: {detail}")
            }
        }
    }
}

/// A season left out of a fit.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LeftOut {
    /// The season label, e.g. `1998-DJF`.
    pub season: String,
    /// Why it was left out.
    pub reason: LeaveOutReason,
    /// The reason in plain words.
    pub explanation: String,
}

/// One usable season in a design.
#[derive(Debug, Clone, PartialEq)]
pub struct DesignRow {
    /// The season.
    pub season: Season,
    /// The response: flood days.
    pub flood_days: u32,
    /// The exposure: observed days (the offset is its natural log).
    pub observed_days: u32,
    /// Predictor values, in the order of [`Design::predictors`].
    pub x: Vec<f64>,
}

/// The design of one season name's model: usable rows and the seasons left out.
#[derive(Debug, Clone, PartialEq)]
pub struct Design {
    /// The season name, e.g. `DJF`.
    pub season_name: String,
    /// The predictors, in column order.
    pub predictors: Vec<Predictor>,
    /// The usable seasons, in time order.
    pub rows: Vec<DesignRow>,
    /// The seasons of this name that were left out, in time order.
    pub left_out: Vec<LeftOut>,
}

impl Design {
    /// Builds the design for seasons named `season_name` (case-insensitive) from `rows`,
    /// using `predictors`. Seasons of other names are ignored; a season is left out when the
    /// season table flags it, when it has no observed day, or when a used driver is missing
    /// (the first missing driver is reported).
    pub fn build(rows: &[SeasonData], season_name: &str, predictors: &[Predictor]) -> Design {
        let mut selected: Vec<&SeasonData> = rows
            .iter()
            .filter(|r| r.season.spec().name().eq_ignore_ascii_case(season_name))
            .collect();
        selected.sort_by_key(|r| r.season.year());
        let mut design = Design {
            season_name: selected.first().map_or_else(
                || season_name.to_owned(),
                |r| r.season.spec().name().to_owned(),
            ),
            predictors: predictors.to_vec(),
            rows: Vec::new(),
            left_out: Vec::new(),
        };
        for row in selected {
            match design_row(row, predictors) {
                Ok(x) => design.rows.push(DesignRow {
                    season: row.season.clone(),
                    flood_days: row.flood_days,
                    observed_days: row.observed_days,
                    x,
                }),
                Err(reason) => design.left_out.push(LeftOut {
                    season: row.season.label(),
                    explanation: reason.to_string(),
                    reason,
                }),
            }
        }
        design
    }

    /// The design restricted to seasons whose first year lies in `first..=last` (used for the
    /// 1991-2020 climatology); the left-out list keeps only those years too.
    pub fn years(&self, first: i32, last: i32) -> Design {
        let keep = |s: &Season| (first..=last).contains(&s.year());
        Design {
            season_name: self.season_name.clone(),
            predictors: self.predictors.clone(),
            rows: self
                .rows
                .iter()
                .filter(|r| keep(&r.season))
                .cloned()
                .collect(),
            left_out: self
                .left_out
                .iter()
                .filter(|l| {
                    l.season
                        .split_once('-')
                        .and_then(|(y, _)| y.parse::<i32>().ok())
                        .is_some_and(|y| (first..=last).contains(&y))
                })
                .cloned()
                .collect(),
        }
    }

    /// The same rows with only the columns of `keep` (in `keep`'s order); a predictor not in
    /// the design is ignored.
    pub fn select(&self, keep: &[Predictor]) -> Design {
        let columns: Vec<(Predictor, usize)> = keep
            .iter()
            .filter_map(|p| self.predictors.iter().position(|q| q == p).map(|i| (*p, i)))
            .collect();
        Design {
            season_name: self.season_name.clone(),
            predictors: columns.iter().map(|(p, _)| *p).collect(),
            rows: self
                .rows
                .iter()
                .map(|r| DesignRow {
                    x: columns.iter().map(|(_, i)| r.x[*i]).collect(),
                    ..r.clone()
                })
                .collect(),
            left_out: self.left_out.clone(),
        }
    }

    /// The responses (flood days) as floats, in row order.
    pub fn response(&self) -> Vec<f64> {
        self.rows.iter().map(|r| f64::from(r.flood_days)).collect()
    }

    /// The offsets ln(observed days), in row order.
    pub fn log_exposure(&self) -> Vec<f64> {
        self.rows
            .iter()
            .map(|r| f64::from(r.observed_days).ln())
            .collect()
    }

    /// The predictor columns, one `Vec` per row (no intercept column).
    pub fn matrix(&self) -> Vec<Vec<f64>> {
        self.rows.iter().map(|r| r.x.clone()).collect()
    }
}

fn design_row(row: &SeasonData, predictors: &[Predictor]) -> Result<Vec<f64>, LeaveOutReason> {
    if let Some(detail) = &row.incomplete {
        return Err(LeaveOutReason::IncompleteSeason {
            detail: detail.clone(),
        });
    }
    if row.observed_days == 0 {
        return Err(LeaveOutReason::NoObservedDays);
    }
    predictors
        .iter()
        .map(|&p| match row.driver(p) {
            Some(DriverValue::Known(v)) if v.is_finite() => Ok(*v),
            Some(DriverValue::Known(v)) => Err(LeaveOutReason::MissingDriver {
                predictor: p,
                detail: format!("value {v} is not finite"),
            }),
            Some(DriverValue::Missing(detail)) => Err(LeaveOutReason::MissingDriver {
                predictor: p,
                detail: detail.clone(),
            }),
            None => Err(LeaveOutReason::MissingDriver {
                predictor: p,
                detail: "no value for this season".to_owned(),
            }),
        })
        .collect()
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    fn row(label: &str, flood: u32, observed: u32, enso: DriverValue) -> SeasonData {
        SeasonData {
            season: label.parse().unwrap(),
            flood_days: flood,
            observed_days: observed,
            calendar_days: 90,
            incomplete: None,
            drivers: vec![
                (Predictor::Enso, enso),
                (Predictor::Wind, DriverValue::Known(1.5)),
            ],
        }
    }

    #[test]
    fn only_the_named_season_is_used_and_reasons_are_kept() {
        let mut incomplete = row("2001-DJF", 3, 40, DriverValue::Known(0.2));
        incomplete.incomplete = Some("completeness 0.44 below 0.80".into());
        let rows = vec![
            row("2000-DJF", 2, 90, DriverValue::Known(-0.7)),
            row("2000-MAM", 9, 92, DriverValue::Known(0.1)),
            incomplete,
            row(
                "2002-DJF",
                1,
                90,
                DriverValue::Missing("month 2003-01 missing".into()),
            ),
            row("2003-DJF", 0, 0, DriverValue::Known(0.0)),
            row("1999-DJF", 4, 88, DriverValue::Known(1.1)),
        ];
        let d = Design::build(&rows, "djf", &[Predictor::Enso, Predictor::Wind]);
        assert_eq!(d.season_name, "DJF");
        let labels: Vec<String> = d.rows.iter().map(|r| r.season.label()).collect();
        assert_eq!(labels, ["1999-DJF", "2000-DJF"]);
        assert_eq!(d.rows[0].x, vec![1.1, 1.5]);
        assert_eq!(d.log_exposure()[0], 88f64.ln());
        let reasons: Vec<(&str, &LeaveOutReason)> = d
            .left_out
            .iter()
            .map(|l| (l.season.as_str(), &l.reason))
            .collect();
        assert_eq!(reasons.len(), 3);
        assert!(matches!(
            reasons[0],
            ("2001-DJF", LeaveOutReason::IncompleteSeason { .. })
        ));
        assert!(matches!(
            reasons[1],
            (
                "2002-DJF",
                LeaveOutReason::MissingDriver {
                    predictor: Predictor::Enso,
                    ..
                }
            )
        ));
        assert!(matches!(
            reasons[2],
            ("2003-DJF", LeaveOutReason::NoObservedDays)
        ));
        assert!(d.left_out[1].explanation.contains("2003-01"));
    }

    #[test]
    fn select_and_years_restrict_columns_and_rows() {
        let rows = vec![
            row("1990-DJF", 2, 90, DriverValue::Known(-0.7)),
            row("1991-DJF", 3, 90, DriverValue::Known(0.4)),
        ];
        let d = Design::build(&rows, "DJF", &[Predictor::Enso, Predictor::Wind]);
        let w = d.select(&[Predictor::Wind, Predictor::Tide]);
        assert_eq!(w.predictors, vec![Predictor::Wind]);
        assert_eq!(w.rows[1].x, vec![1.5]);
        let y = d.years(1991, 2020);
        assert_eq!(y.rows.len(), 1);
        assert_eq!(y.rows[0].season.label(), "1991-DJF");
    }
}
