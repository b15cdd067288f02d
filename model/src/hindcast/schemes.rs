//! The two out-of-sample schemes: which seasons train the forecast of each past season.
//!
//! - **Leave one year out, with neighbours**: the forecast of the season starting in year `y`
//!   is fitted on every usable season of the same name except those starting in
//!   `y - n ..= y + n` (default `n = 1`). Slow drivers (the sea-level trend, decadal swings
//!   of ENSO) are correlated from one year to the next, so leaving out the neighbours keeps a
//!   held-out season's near twins out of its own training set.
//! - **Rolling origin**: the forecast of a season is fitted on the usable seasons of the same
//!   name that start in earlier years only, and only once at least `min_training` of them
//!   exist (default 15); earlier seasons are not forecast.

use serde::Serialize;

use crate::fit::DesignRow;

/// Seasons of training the rolling origin needs before its first forecast, by default.
pub const DEFAULT_MIN_TRAINING: usize = 15;

/// Years on each side of a held-out year that leave-one-year-out also leaves out, by default.
pub const DEFAULT_NEIGHBOUR_YEARS: u32 = 1;

/// An out-of-sample scheme.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(tag = "scheme", rename_all = "snake_case")]
pub enum Scheme {
    /// Leave the target year and `neighbour_years` years on each side out of the fit.
    LeaveOneYearOut {
        /// Years left out on each side of the target year.
        neighbour_years: u32,
    },
    /// Fit on earlier seasons only, from `min_training` seasons on.
    RollingOrigin {
        /// Fewest training seasons before a season is forecast.
        min_training: usize,
    },
}

impl Scheme {
    /// The scheme's name in JSON: `leave_one_year_out` or `rolling_origin`.
    pub fn name(&self) -> &'static str {
        match self {
            Scheme::LeaveOneYearOut { .. } => "leave_one_year_out",
            Scheme::RollingOrigin { .. } => "rolling_origin",
        }
    }

    /// The scheme's rule in plain words.
    pub fn rule(&self) -> String {
        match self {
            Scheme::LeaveOneYearOut { neighbour_years } => format!(
                "each season is forecast from a fit on every other usable season of its name, \
                 leaving out the seasons starting in the target year and the {neighbour_years} \
                 year(s) on each side of it, so that slow drivers do not leak"
            ),
            Scheme::RollingOrigin { min_training } => format!(
                "each season is forecast from a fit on the usable seasons of its name that \
                 start in earlier years only, once at least {min_training} such seasons exist"
            ),
        }
    }

    /// Indices into `rows` (time order) of the seasons that train the forecast of
    /// `rows[target]`, or `None` when the scheme does not forecast that season.
    pub fn training(&self, rows: &[DesignRow], target: usize) -> Option<Vec<usize>> {
        let year = rows.get(target)?.season.year();
        match *self {
            Scheme::LeaveOneYearOut { neighbour_years } => {
                let reach = i64::from(neighbour_years);
                Some(
                    (0..rows.len())
                        .filter(|&i| {
                            (i64::from(rows[i].season.year()) - i64::from(year)).abs() > reach
                        })
                        .collect(),
                )
            }
            Scheme::RollingOrigin { min_training } => {
                let earlier: Vec<usize> = (0..rows.len())
                    .filter(|&i| rows[i].season.year() < year)
                    .collect();
                (earlier.len() >= min_training).then_some(earlier)
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::season::{Season, SeasonSpec};

    fn rows(years: &[i32]) -> Vec<DesignRow> {
        let spec = SeasonSpec::new("DJF", 12, 3).expect("valid season");
        years
            .iter()
            .map(|&y| DesignRow {
                season: Season::new(y, spec.clone()).expect("valid year"),
                flood_days: 1,
                observed_days: 90,
                x: Vec::new(),
            })
            .collect()
    }

    #[test]
    fn leave_one_year_out_drops_the_neighbours() {
        let r = rows(&[2000, 2001, 2002, 2003, 2005]);
        let s = Scheme::LeaveOneYearOut { neighbour_years: 1 };
        assert_eq!(s.training(&r, 2), Some(vec![0, 4]));
        // 2005's neighbour 2004 is absent; 2003 is two years away and stays.
        assert_eq!(s.training(&r, 4), Some(vec![0, 1, 2, 3]));
        let none = Scheme::LeaveOneYearOut { neighbour_years: 0 };
        assert_eq!(none.training(&r, 0), Some(vec![1, 2, 3, 4]));
    }

    #[test]
    fn rolling_origin_waits_for_enough_earlier_seasons() {
        let r = rows(&[2000, 2001, 2002, 2003, 2005]);
        let s = Scheme::RollingOrigin { min_training: 3 };
        assert_eq!(s.training(&r, 2), None);
        assert_eq!(s.training(&r, 3), Some(vec![0, 1, 2]));
        assert_eq!(s.training(&r, 4), Some(vec![0, 1, 2, 3]));
        assert_eq!(s.training(&r, 9), None);
    }
}
