//! The four invented gauges of Vennick Bay on the invented Orrin Coast: every number here is
//! made up. Each gauge has its own tide, sensitivity to the drivers, noise and record quirks.

use chrono::NaiveDate;
use serde::Serialize;

use crate::calendar::ymd;
use crate::drivers::WindFormat;
use crate::tide::Harmonic;

/// Units a levels file is written in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Units {
    /// Metres, three decimals.
    Metres,
    /// International feet (0.3048 m), three decimals.
    Feet,
}

impl Units {
    /// The `units` value of the gauge TOML.
    pub fn toml_name(self) -> &'static str {
        match self {
            Units::Metres => "m",
            Units::Feet => "ft",
        }
    }
}

/// How timestamps are written.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum TimeStyle {
    /// UTC with a `Z` suffix.
    Utc,
    /// Local standard time with the gauge's numeric offset, e.g. `-03:00`.
    LocalOffset,
}

/// How a missing reading is written (rows of long outages are left out altogether).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum MissingStyle {
    /// An empty level field.
    Empty,
    /// The text `NaN`.
    NaN,
    /// The sentinel -99999.
    Sentinel,
}

/// Sea-level trend with a constant acceleration.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct Trend {
    /// Rate at 1990.0, mm/yr.
    pub rate_1990_mm_per_yr: f64,
    /// Acceleration, mm/yr^2 (rate grows linearly).
    pub acceleration_mm_per_yr2: f64,
}

impl Trend {
    /// Rate at 2000.0, mm/yr.
    pub fn rate_2000_mm_per_yr(&self) -> f64 {
        self.rate_1990_mm_per_yr + 10.0 * self.acceleration_mm_per_yr2
    }

    /// Trend level in metres relative to its value at 2000.0, `y` years after 2000.0.
    pub fn level_m(&self, y: f64) -> f64 {
        (self.rate_2000_mm_per_yr() * y + 0.5 * self.acceleration_mm_per_yr2 * y * y) / 1000.0
    }
}

/// Response to the MJO: a level anomaly on active days (amplitude >= 1) in the given phases.
#[derive(Debug, Clone, Serialize)]
pub struct MjoEffect {
    /// RMM phases that raise the level.
    pub phases: Vec<u8>,
    /// Level anomaly on those days, metres (0 = no MJO effect).
    pub effect_m: f64,
}

/// Response to the along-shore wind (daily), metres per m/s.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct WindEffect {
    /// Setup per m/s of along-shore wind.
    pub setup_m_per_mps: f64,
    /// Whether only the positive (onshore-transport) part raises the level.
    pub positive_part_only: bool,
}

/// Red noise: a unit AR(1) process scaled by a seasonally varying standard deviation.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct Noise {
    /// Annual-mean standard deviation, metres.
    pub sd_m: f64,
    /// Relative increase of the standard deviation in mid-winter (cosine, peak mid-January).
    pub winter_boost: f64,
    /// e-folding time of the AR(1) correlation, hours.
    pub efold_hours: f64,
}

/// Missing data pattern.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct Gaps {
    /// Probability that any single reading is missing.
    pub scattered_prob: f64,
    /// Short runs of missing readings per year.
    pub runs_per_year: f64,
    /// Run length range, hours.
    pub run_hours: [u32; 2],
    /// Outages (rows left out of the file) per year.
    pub outages_per_year: f64,
    /// Outage length range, days.
    pub outage_days: [u32; 2],
}

/// One invented gauge: everything the generator needs, and everything its TOML states.
#[derive(Debug, Clone, Serialize)]
pub struct GaugeSpec {
    /// Identifier (file names and TOML `id`).
    pub id: &'static str,
    /// Display name.
    pub name: &'static str,
    /// One line on the gauge's character.
    pub character: &'static str,
    /// Invented latitude, degrees north.
    pub latitude: f64,
    /// Invented longitude, degrees east.
    pub longitude: f64,
    /// Mean sea level at 2000.0 above the station datum, metres.
    pub msl_2000_above_datum_m: f64,
    /// Minor flood threshold above the station datum, metres.
    pub flood_threshold_m: f64,
    /// Local standard time offset from UTC, minutes.
    pub utc_offset_minutes: i64,
    /// Bearing of the seaward shore normal, degrees clockwise from north.
    pub coast_orientation_deg: f64,
    /// Tide harmonics in the order of `tide::CONSTITUENTS`.
    pub harmonics: [Harmonic; 12],
    /// Sea-level trend.
    pub trend: Trend,
    /// Level response to the monthly ENSO index, metres per deg C.
    pub enso_m_per_degc: f64,
    /// Level response to the MJO.
    pub mjo: MjoEffect,
    /// Level response to the along-shore wind.
    pub wind: WindEffect,
    /// Red noise.
    pub noise: Noise,
    /// First local day of the levels record.
    #[serde(serialize_with = "serialize_date")]
    pub record_start: NaiveDate,
    /// Sampling interval, minutes.
    pub interval_minutes: i64,
    /// Units the levels are written in.
    pub units: Units,
    /// Timestamp style.
    pub time_style: TimeStyle,
    /// How missing readings are written.
    pub missing: MissingStyle,
    /// Missing-data pattern.
    pub gaps: Gaps,
    /// Wind file format.
    pub wind_format: WindFormat,
    /// `[model] predictors` in the TOML.
    pub predictors: &'static [&'static str],
    /// `[model] wind_statistic` in the TOML.
    pub wind_statistic: &'static str,
    /// `[model] exceed_days` in the TOML.
    pub exceed_days: &'static [u32],
}

fn serialize_date<S: serde::Serializer>(date: &NaiveDate, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(&date.format("%Y-%m-%d").to_string())
}

const fn h(amplitude_m: f64, phase_deg: f64) -> Harmonic {
    Harmonic {
        amplitude_m,
        phase_deg,
    }
}

/// Last local day of every record.
pub fn record_end() -> NaiveDate {
    ymd(2026, 11, 30)
}

/// The four gauges.
pub fn gauges() -> Vec<GaugeSpec> {
    vec![
        GaugeSpec {
            id: "port-tamsin",
            name: "Port Tamsin harbour",
            character: "strongly semidiurnal harbour at the head of Vennick Bay",
            latitude: 41.62,
            longitude: -47.35,
            msl_2000_above_datum_m: 2.10,
            flood_threshold_m: 4.18,
            utc_offset_minutes: -180,
            coast_orientation_deg: 160.0,
            // M2 S2 N2 K2 K1 O1 P1 Q1 M4 MS4 Sa Ssa
            harmonics: [
                h(1.30, 112.0),
                h(0.42, 148.0),
                h(0.27, 88.0),
                h(0.12, 145.0),
                h(0.14, 205.0),
                h(0.10, 181.0),
                h(0.045, 202.0),
                h(0.02, 170.0),
                h(0.05, 310.0),
                h(0.03, 355.0),
                h(0.07, 290.0),
                h(0.025, 40.0),
            ],
            trend: Trend {
                rate_1990_mm_per_yr: 3.0,
                acceleration_mm_per_yr2: 0.056,
            },
            enso_m_per_degc: 0.05,
            mjo: MjoEffect {
                phases: vec![2, 3],
                effect_m: 0.05,
            },
            wind: WindEffect {
                setup_m_per_mps: 0.012,
                positive_part_only: false,
            },
            noise: Noise {
                sd_m: 0.10,
                winter_boost: 0.25,
                efold_hours: 18.0,
            },
            record_start: ymd(1980, 1, 1),
            interval_minutes: 60,
            units: Units::Metres,
            time_style: TimeStyle::Utc,
            missing: MissingStyle::Empty,
            gaps: Gaps {
                scattered_prob: 0.003,
                runs_per_year: 1.0,
                run_hours: [2, 10],
                outages_per_year: 0.3,
                outage_days: [1, 6],
            },
            wind_format: WindFormat::Components,
            predictors: &["enso", "mjo", "wind", "sea_level", "tide"],
            wind_statistic: "mean",
            exceed_days: &[3, 5, 10],
        },
        GaugeSpec {
            id: "wrenmouth-inlet",
            name: "Wrenmouth Inlet",
            character: "mixed, mainly diurnal tide in a narrow inlet on the bay's west shore",
            latitude: 41.48,
            longitude: -47.71,
            msl_2000_above_datum_m: 0.90,
            flood_threshold_m: 2.43,
            utc_offset_minutes: -180,
            coast_orientation_deg: 200.0,
            harmonics: [
                h(0.45, 62.0),
                h(0.12, 84.0),
                h(0.09, 40.0),
                h(0.035, 80.0),
                h(0.42, 228.0),
                h(0.30, 211.0),
                h(0.13, 226.0),
                h(0.06, 203.0),
                h(0.02, 140.0),
                h(0.01, 170.0),
                h(0.06, 280.0),
                h(0.02, 30.0),
            ],
            trend: Trend {
                rate_1990_mm_per_yr: 3.3,
                acceleration_mm_per_yr2: 0.05,
            },
            enso_m_per_degc: 0.07,
            mjo: MjoEffect {
                phases: vec![2, 3],
                effect_m: 0.07,
            },
            wind: WindEffect {
                setup_m_per_mps: 0.010,
                positive_part_only: false,
            },
            noise: Noise {
                sd_m: 0.07,
                winter_boost: 0.25,
                efold_hours: 18.0,
            },
            record_start: ymd(1980, 1, 1),
            interval_minutes: 60,
            units: Units::Metres,
            time_style: TimeStyle::LocalOffset,
            missing: MissingStyle::NaN,
            gaps: Gaps {
                scattered_prob: 0.001,
                runs_per_year: 0.5,
                run_hours: [2, 8],
                outages_per_year: 0.2,
                outage_days: [1, 4],
            },
            wind_format: WindFormat::Components,
            predictors: &["enso", "mjo", "wind", "sea_level"],
            wind_statistic: "mean",
            exceed_days: &[2, 5, 10],
        },
        GaugeSpec {
            id: "saltlow-sound",
            name: "Saltlow Sound",
            character: "micro-tidal sound behind a barrier spit where wind setup dominates",
            latitude: 41.21,
            longitude: -46.88,
            msl_2000_above_datum_m: 0.60,
            flood_threshold_m: 1.02,
            utc_offset_minutes: -180,
            coast_orientation_deg: 135.0,
            harmonics: [
                h(0.08, 140.0),
                h(0.02, 171.0),
                h(0.015, 118.0),
                h(0.006, 168.0),
                h(0.05, 250.0),
                h(0.04, 231.0),
                h(0.016, 248.0),
                h(0.008, 222.0),
                h(0.01, 20.0),
                h(0.005, 60.0),
                h(0.06, 300.0),
                h(0.02, 50.0),
            ],
            trend: Trend {
                rate_1990_mm_per_yr: 2.8,
                acceleration_mm_per_yr2: 0.06,
            },
            enso_m_per_degc: 0.04,
            mjo: MjoEffect {
                phases: vec![3, 4],
                effect_m: 0.04,
            },
            wind: WindEffect {
                setup_m_per_mps: 0.045,
                positive_part_only: true,
            },
            noise: Noise {
                sd_m: 0.05,
                winter_boost: 0.2,
                efold_hours: 24.0,
            },
            record_start: ymd(1980, 1, 1),
            interval_minutes: 60,
            units: Units::Metres,
            time_style: TimeStyle::Utc,
            missing: MissingStyle::Sentinel,
            gaps: Gaps {
                scattered_prob: 0.002,
                runs_per_year: 1.0,
                run_hours: [3, 12],
                outages_per_year: 0.25,
                outage_days: [2, 8],
            },
            wind_format: WindFormat::SpeedFrom,
            predictors: &["enso", "mjo", "wind", "sea_level"],
            wind_statistic: "positive",
            exceed_days: &[3, 6, 12],
        },
        GaugeSpec {
            id: "corrin-quay",
            name: "Corrin Quay",
            character: "semidiurnal quay on the bay's east shore with a short, gappy record in feet",
            latitude: 41.55,
            longitude: -46.97,
            msl_2000_above_datum_m: 1.50,
            flood_threshold_m: 3.27,
            utc_offset_minutes: -180,
            coast_orientation_deg: 250.0,
            harmonics: [
                h(0.95, 104.0),
                h(0.30, 139.0),
                h(0.20, 80.0),
                h(0.08, 136.0),
                h(0.20, 200.0),
                h(0.15, 177.0),
                h(0.065, 198.0),
                h(0.03, 165.0),
                h(0.03, 300.0),
                h(0.02, 340.0),
                h(0.07, 285.0),
                h(0.02, 45.0),
            ],
            trend: Trend {
                rate_1990_mm_per_yr: 3.2,
                acceleration_mm_per_yr2: 0.055,
            },
            enso_m_per_degc: 0.03,
            mjo: MjoEffect {
                phases: vec![],
                effect_m: 0.0,
            },
            wind: WindEffect {
                setup_m_per_mps: 0.015,
                positive_part_only: false,
            },
            noise: Noise {
                sd_m: 0.09,
                winter_boost: 0.25,
                efold_hours: 18.0,
            },
            record_start: ymd(2003, 3, 14),
            interval_minutes: 30,
            units: Units::Feet,
            time_style: TimeStyle::Utc,
            missing: MissingStyle::Sentinel,
            gaps: Gaps {
                scattered_prob: 0.01,
                runs_per_year: 6.0,
                run_hours: [3, 12],
                outages_per_year: 1.5,
                outage_days: [7, 45],
            },
            wind_format: WindFormat::Components,
            predictors: &["enso", "wind", "sea_level", "tide"],
            wind_statistic: "mean",
            exceed_days: &[2, 5, 10],
        },
    ]
}
