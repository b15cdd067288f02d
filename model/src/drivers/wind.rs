//! Along-shore wind: daily or hourly wind, reduced to the along-shore component that drives
//! onshore Ekman transport at a gauge.
//!
//! Sign convention: positive along-shore wind blows in the direction whose Ekman transport
//! (90 deg to the right of the wind in the Northern Hemisphere, to the left in the Southern;
//! Ekman 1905) points onshore, raising coastal sea level. With the seaward shore normal at
//! bearing `b` (clockwise from north), the favourable wind direction is the onshore direction
//! `b + 180` turned 90 deg to the left (Northern) or right (Southern) of it: for a coast with
//! the sea to the east (`b = 90`) that is toward the south in the north and toward the north in
//! the south.
//!
//! Hourly input is averaged to daily means in the gauge's local standard time: the u and v
//! components are averaged (a vector mean; speed/direction rows are converted to u/v first) and
//! a day is kept only when at least [`MIN_HOURS_PER_DAY`] of its 24 clock hours have a
//! reading. The file's columns are declared by its header, never guessed.

use std::collections::{BTreeMap, BTreeSet};
use std::io::BufRead;

use chrono::{DateTime, Datelike, FixedOffset, NaiveDate, Timelike};
use serde::{Deserialize, Serialize};

use super::csv_rows::{Row, bad_field, optional_number, read_rows};
use super::{CountUnit, Driver, DriverParseError, Shortfall, ShortfallReason, required_days};
use crate::season::Season;

/// Clock hours with a reading needed for an hourly day's mean (75% of 24).
pub const MIN_HOURS_PER_DAY: usize = 18;

/// Errors in a coast description.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum CoastError {
    /// The orientation is not a finite bearing.
    #[error("coast orientation {0} deg is not a bearing 0 to 360")]
    BadOrientation(f64),
    /// The latitude is at or beyond the poles, or at the equator where Ekman transport has no side.
    #[error(
        "latitude {0} deg must be non-zero and within -90..90 (Ekman transport needs a hemisphere)"
    )]
    BadLatitude(f64),
}

/// The hemisphere, which decides the side of Ekman transport.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Hemisphere {
    /// Latitude above 0: transport to the right of the wind.
    Northern,
    /// Latitude below 0: transport to the left of the wind.
    Southern,
}

/// A gauge's coastline for the along-shore wind.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Coast {
    shore_normal_deg: f64,
    hemisphere: Hemisphere,
}

impl Coast {
    /// A coast whose seaward shore normal points at `shore_normal_deg` (clockwise from north)
    /// at `latitude_deg` (north positive; its sign gives the hemisphere).
    pub fn new(shore_normal_deg: f64, latitude_deg: f64) -> Result<Self, CoastError> {
        if !(0.0..=360.0).contains(&shore_normal_deg) {
            return Err(CoastError::BadOrientation(shore_normal_deg));
        }
        let hemisphere = if latitude_deg > 0.0 && latitude_deg < 90.0 {
            Hemisphere::Northern
        } else if latitude_deg < 0.0 && latitude_deg > -90.0 {
            Hemisphere::Southern
        } else {
            return Err(CoastError::BadLatitude(latitude_deg));
        };
        Ok(Self {
            shore_normal_deg,
            hemisphere,
        })
    }

    /// The hemisphere.
    pub fn hemisphere(&self) -> Hemisphere {
        self.hemisphere
    }

    /// The unit vector (east, north) of the wind direction that raises sea level.
    pub fn favourable_direction(&self) -> (f64, f64) {
        let b = self.shore_normal_deg.to_radians();
        // Onshore is (-sin b, -cos b); turn it left (Northern) or right (Southern) by 90 deg.
        match self.hemisphere {
            Hemisphere::Northern => (b.cos(), -b.sin()),
            Hemisphere::Southern => (-b.cos(), b.sin()),
        }
    }

    /// The along-shore component (m/s) of wind (u east, v north), positive when it raises
    /// coastal sea level.
    pub fn alongshore(&self, u: f64, v: f64) -> f64 {
        let (ax, ay) = self.favourable_direction();
        u * ax + v * ay
    }
}

/// (u, v) of a wind of `speed` m/s blowing from `from_deg` (meteorological convention: from
/// the north at 10 m/s is v = -10).
pub fn uv_from_speed_direction(speed: f64, from_deg: f64) -> (f64, f64) {
    let d = from_deg.to_radians();
    (-speed * d.sin(), -speed * d.cos())
}

/// How a season's wind values are reduced (`wind_statistic` in a gauge's TOML).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum WindStatistic {
    /// Mean of the daily along-shore component.
    #[default]
    Mean,
    /// Mean of its positive part, max(component, 0): only favourable days count.
    Positive,
}

/// A season's wind predictor.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WindValue {
    /// The statistic, m/s.
    pub value: f64,
    /// Which statistic.
    pub statistic: WindStatistic,
    /// Days with a daily mean.
    pub days_present: u32,
}

/// Daily mean wind (u, v), m/s.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct WindSeries {
    days: BTreeMap<NaiveDate, (f64, f64)>,
}

enum Columns {
    Uv,
    SpeedFrom,
}

enum TimeKind {
    Daily(NaiveDate),
    Hourly(DateTime<FixedOffset>),
}

impl WindSeries {
    /// Reads a wind CSV with header `time,u,v` or `time,speed,from_deg`; `time` is a date
    /// (daily means) or an ISO 8601 time with offset (hourly, averaged to days in
    /// `local_offset`, the gauge's local standard time). A file is all daily or all hourly.
    /// Empty or `NaN` is missing. `source` names the input in errors.
    pub fn parse(
        reader: impl BufRead,
        source: &str,
        local_offset: FixedOffset,
    ) -> Result<Self, DriverParseError> {
        let (header, rows) = read_rows(reader, source)?;
        let columns = match header.iter().map(String::as_str).collect::<Vec<_>>()[..] {
            ["time", "u", "v"] => Columns::Uv,
            ["time", "speed", "from_deg"] => Columns::SpeedFrom,
            _ => {
                return Err(DriverParseError::BadHeader {
                    source_name: source.to_owned(),
                    found: header.join(","),
                    expected: "time,u,v or time,speed,from_deg".to_owned(),
                });
            }
        };
        let (names, first_is_daily) = match columns {
            Columns::Uv => (["u", "v"], is_date(&rows[0].fields[0])),
            Columns::SpeedFrom => (["speed", "from_deg"], is_date(&rows[0].fields[0])),
        };
        let mut daily: BTreeMap<NaiveDate, (f64, f64)> = BTreeMap::new();
        let mut hourly: BTreeMap<NaiveDate, HourlyDay> = BTreeMap::new();
        let mut lines: BTreeMap<i64, u64> = BTreeMap::new();
        for row in &rows {
            let text = &row.fields[0];
            let time = parse_time(source, row, text, first_is_daily)?;
            let key = match &time {
                TimeKind::Daily(d) => i64::from(d.num_days_from_ce()),
                TimeKind::Hourly(t) => t.timestamp(),
            };
            if let Some(first_line) = lines.insert(key, row.line) {
                return Err(DriverParseError::Duplicate {
                    source_name: source.to_owned(),
                    line: row.line,
                    first_line,
                    field: "time".to_owned(),
                    value: text.clone(),
                });
            }
            let a = optional_number(source, row, names[0], &row.fields[1])?;
            let b = optional_number(source, row, names[1], &row.fields[2])?;
            let (Some(a), Some(b)) = (a, b) else { continue };
            let (u, v) = match columns {
                Columns::Uv => (a, b),
                Columns::SpeedFrom => {
                    if a < 0.0 {
                        return Err(bad_field(
                            source,
                            row,
                            "speed",
                            &row.fields[1],
                            "is negative",
                        ));
                    }
                    if !(0.0..=360.0).contains(&b) {
                        return Err(bad_field(
                            source,
                            row,
                            "from_deg",
                            &row.fields[2],
                            "is not a bearing 0 to 360",
                        ));
                    }
                    uv_from_speed_direction(a, b)
                }
            };
            match time {
                TimeKind::Daily(d) => {
                    daily.insert(d, (u, v));
                }
                TimeKind::Hourly(t) => {
                    let local = t.with_timezone(&local_offset);
                    let day = hourly.entry(local.date_naive()).or_default();
                    day.sum_u += u;
                    day.sum_v += v;
                    day.count += 1;
                    day.hours.insert(local.hour());
                }
            }
        }
        for (date, day) in hourly {
            if day.hours.len() >= MIN_HOURS_PER_DAY {
                let n = f64::from(day.count);
                daily.insert(date, (day.sum_u / n, day.sum_v / n));
            }
        }
        Ok(Self { days: daily })
    }

    /// A series from daily (date, u, v); non-finite days are dropped, later duplicates win.
    pub fn from_days(values: impl IntoIterator<Item = (NaiveDate, f64, f64)>) -> Self {
        Self {
            days: values
                .into_iter()
                .filter(|(_, u, v)| u.is_finite() && v.is_finite())
                .map(|(d, u, v)| (d, (u, v)))
                .collect(),
        }
    }

    /// The daily mean (u, v) of a day, if present.
    pub fn day(&self, day: NaiveDate) -> Option<(f64, f64)> {
        self.days.get(&day).copied()
    }

    /// Number of days with a mean.
    pub fn len(&self) -> usize {
        self.days.len()
    }

    /// Whether no day has a mean.
    pub fn is_empty(&self) -> bool {
        self.days.is_empty()
    }

    /// The season's along-shore statistic at `coast`; a [`Shortfall`] when fewer than 80% of
    /// the season's days have a daily mean.
    pub fn seasonal(
        &self,
        season: &Season,
        coast: &Coast,
        statistic: WindStatistic,
    ) -> Result<WindValue, Shortfall> {
        let components: Vec<f64> = self
            .days
            .range(season.first_day()..season.end_exclusive())
            .map(|(_, &(u, v))| coast.alongshore(u, v))
            .collect();
        let total = season.calendar_days();
        let present = components.len() as u32;
        let required = required_days(total);
        if present < required {
            return Err(Shortfall {
                driver: Driver::Wind,
                reason: ShortfallReason::Incomplete {
                    unit: CountUnit::Days,
                    present,
                    required,
                    total,
                },
            });
        }
        let sum: f64 = match statistic {
            WindStatistic::Mean => components.iter().sum(),
            WindStatistic::Positive => components.iter().map(|c| c.max(0.0)).sum(),
        };
        Ok(WindValue {
            value: sum / f64::from(present),
            statistic,
            days_present: present,
        })
    }
}

#[derive(Default)]
struct HourlyDay {
    sum_u: f64,
    sum_v: f64,
    count: u32,
    hours: BTreeSet<u32>,
}

fn is_date(text: &str) -> bool {
    NaiveDate::parse_from_str(text, "%Y-%m-%d").is_ok()
}

fn parse_time(
    source: &str,
    row: &Row,
    text: &str,
    daily: bool,
) -> Result<TimeKind, DriverParseError> {
    if daily {
        NaiveDate::parse_from_str(text, "%Y-%m-%d")
            .map(TimeKind::Daily)
            .map_err(|_| {
                bad_field(
                    source,
                    row,
                    "time",
                    text,
                    "is not a date YYYY-MM-DD (the file's first row is daily)",
                )
            })
    } else {
        DateTime::parse_from_rfc3339(text)
            .map(TimeKind::Hourly)
            .map_err(|_| {
                bad_field(
                    source,
                    row,
                    "time",
                    text,
                    "is not an ISO 8601 time with Z or an offset (the file's first row is hourly)",
                )
            })
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)] // a failed unwrap is a failed test
mod tests {
    use super::*;

    fn utc() -> FixedOffset {
        FixedOffset::east_opt(0).unwrap()
    }

    #[test]
    fn hourly_days_need_18_hours_and_use_local_time() {
        let mut text = String::from("time,u,v\n");
        // 2021-03-01 local (UTC-5): 05:00Z on 1 March to 04:00Z on 2 March; give 18 hours.
        for h in 0..18 {
            let t = chrono::NaiveDate::from_ymd_opt(2021, 3, 1)
                .unwrap()
                .and_hms_opt(5, 0, 0)
                .unwrap()
                + chrono::Duration::hours(h);
            text.push_str(&format!(
                "{}Z,2.0,{}\n",
                t.format("%Y-%m-%dT%H:%M:%S"),
                h % 2
            ));
        }
        // 17 hours on the next local day: not enough.
        for h in 0..17 {
            let t = chrono::NaiveDate::from_ymd_opt(2021, 3, 2)
                .unwrap()
                .and_hms_opt(5, 0, 0)
                .unwrap()
                + chrono::Duration::hours(h);
            text.push_str(&format!("{}Z,1.0,1.0\n", t.format("%Y-%m-%dT%H:%M:%S")));
        }
        let local = FixedOffset::west_opt(5 * 3600).unwrap();
        let w = WindSeries::parse(text.as_bytes(), "w.csv", local).unwrap();
        assert_eq!(w.len(), 1);
        let (u, v) = w.day(NaiveDate::from_ymd_opt(2021, 3, 1).unwrap()).unwrap();
        assert!((u - 2.0).abs() < 1e-12 && (v - 0.5).abs() < 1e-12);
    }

    #[test]
    fn header_is_declared_never_guessed() {
        let err = WindSeries::parse("time,a,b\n2021-01-01,1,2\n".as_bytes(), "w", utc());
        assert!(matches!(err, Err(DriverParseError::BadHeader { .. })));
        let mixed = "time,u,v\n2021-01-01,1,2\n2021-01-02T00:00:00Z,1,2\n";
        let msg = WindSeries::parse(mixed.as_bytes(), "w", utc())
            .unwrap_err()
            .to_string();
        assert!(msg.contains("w line 3, field time"), "{msg}");
        let bad = "time,speed,from_deg\n2021-01-01,5,400\n";
        let msg = WindSeries::parse(bad.as_bytes(), "w", utc())
            .unwrap_err()
            .to_string();
        assert!(msg.contains("field from_deg"), "{msg}");
    }

    #[test]
    fn positive_statistic_keeps_only_favourable_days() {
        let coast = Coast::new(90.0, 40.0).unwrap(); // favourable: toward the south
        let s: Season = "2021-JJA".parse().unwrap();
        let days = (0..92).map(|i| {
            let v = if i % 2 == 0 { -4.0 } else { 2.0 };
            (s.first_day() + chrono::Duration::days(i), 0.0, v)
        });
        let w = WindSeries::from_days(days);
        let mean = w.seasonal(&s, &coast, WindStatistic::Mean).unwrap();
        assert!((mean.value - 1.0).abs() < 1e-12);
        let pos = w.seasonal(&s, &coast, WindStatistic::Positive).unwrap();
        assert!((pos.value - 2.0).abs() < 1e-12);
    }

    #[test]
    fn equator_and_bad_bearings_are_rejected() {
        assert!(Coast::new(90.0, 0.0).is_err());
        assert!(Coast::new(f64::NAN, 10.0).is_err());
        assert!(Coast::new(90.0, f64::NAN).is_err());
    }
}
