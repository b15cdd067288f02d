//! Validation of a gauge TOML: the text read unchecked with serde (unknown keys refused), then
//! each key checked into [`GaugeConfig`], every error naming the source, the key, what it
//! allows and what it found.

use std::path::{Path, PathBuf};

use chrono::FixedOffset;
use serde::Deserialize;

use super::{
    DriverFiles, EnsoTiming, Family, GaugeConfig, GaugeError, LevelsConfig, ModelConfig, Predictor,
    SeasonsConfig, WindStatistic,
};
use crate::daily::DEFAULT_MIN_DAY_COMPLETENESS;
use crate::drivers::SeaLevelSetting;
use crate::ingest::LevelUnits;
use crate::season::{DEFAULT_MIN_SEASON_COMPLETENESS, SeasonError, SeasonSpec};

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawGauge {
    id: String,
    name: String,
    latitude: f64,
    longitude: f64,
    datum: String,
    flood_threshold_m: f64,
    utc_offset: String,
    coast_orientation_deg: f64,
    levels: RawLevels,
    #[serde(default)]
    seasons: Option<RawSeasons>,
    #[serde(default)]
    drivers: Option<RawDrivers>,
    #[serde(default)]
    model: Option<RawModel>,
    #[serde(default)]
    sea_level: Option<SeaLevelSetting>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawLevels {
    file: String,
    units: String,
    missing_sentinel: Option<f64>,
    min_day_completeness: Option<f64>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSeasons {
    custom: Option<Vec<RawSeasonSpec>>,
    min_completeness: Option<f64>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSeasonSpec {
    name: String,
    start_month: u32,
    months: u32,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawDrivers {
    enso: Option<String>,
    rmm: Option<String>,
    wind: Option<String>,
    enso_forecast: Option<String>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawModel {
    family: Option<String>,
    predictors: Option<Vec<String>>,
    enso_timing: Option<String>,
    mjo_phases: Option<Vec<i64>>,
    wind_statistic: Option<String>,
    exceed_days: Option<Vec<i64>>,
}

impl GaugeConfig {
    /// Validates a gauge TOML given as text; `source_name` labels messages and data paths
    /// resolve against `base_dir`.
    pub fn from_toml_str(
        text: &str,
        source_name: &str,
        base_dir: &Path,
    ) -> Result<Self, GaugeError> {
        let raw: RawGauge = toml::from_str(text).map_err(|e| GaugeError::Toml {
            source_name: source_name.to_owned(),
            message: e.message().to_owned() + &toml_position(text, e.span()),
        })?;
        TomlValidator {
            source_name,
            base_dir,
        }
        .gauge(raw)
    }
}

/// " (line L, column C)" for a TOML error span.
fn toml_position(text: &str, span: Option<std::ops::Range<usize>>) -> String {
    let Some(span) = span else {
        return String::new();
    };
    let Some(before) = text.get(..span.start) else {
        return String::new();
    };
    let line = before.matches('\n').count() + 1;
    let column = before.len() - before.rfind('\n').map_or(0, |i| i + 1) + 1;
    format!(" (line {line}, column {column})")
}

/// Checks each key of the TOML as written and names the key in every error.
struct TomlValidator<'a> {
    source_name: &'a str,
    base_dir: &'a Path,
}

impl TomlValidator<'_> {
    fn invalid(&self, key: &str, expected: &str, got: impl std::fmt::Display) -> GaugeError {
        GaugeError::Invalid {
            source_name: self.source_name.to_owned(),
            key: key.to_owned(),
            expected: expected.to_owned(),
            got: got.to_string(),
        }
    }

    /// A number in `lo..=hi` (NaN fails).
    fn in_range(
        &self,
        key: &str,
        value: f64,
        lo: f64,
        hi: f64,
        what: &str,
    ) -> Result<f64, GaugeError> {
        if value >= lo && value <= hi {
            Ok(value)
        } else {
            Err(self.invalid(key, &format!("{what} in {lo}..={hi}"), value))
        }
    }

    fn text(&self, key: &str, value: String) -> Result<String, GaugeError> {
        let trimmed = value.trim();
        if trimmed.is_empty() {
            return Err(self.invalid(key, "non-empty text", format!("{value:?}")));
        }
        Ok(trimmed.to_owned())
    }

    fn path(&self, key: &str, value: &str) -> Result<PathBuf, GaugeError> {
        if value.trim().is_empty() {
            return Err(self.invalid(key, "a file path relative to the TOML", "\"\""));
        }
        Ok(self.base_dir.join(value))
    }

    fn gauge(&self, raw: RawGauge) -> Result<GaugeConfig, GaugeError> {
        let id_ok = !raw.id.is_empty()
            && raw.id.len() <= 64
            && raw
                .id
                .bytes()
                .all(|b| b.is_ascii_lowercase() || b.is_ascii_digit() || b == b'-')
            && raw.id.bytes().any(|b| b.is_ascii_alphanumeric());
        if !id_ok {
            return Err(self.invalid(
                "id",
                "1 to 64 lowercase letters, digits or '-', at least one letter or digit",
                format!("{:?}", crate::drivers::clip_echo(&raw.id)),
            ));
        }
        if !(-crate::ingest::MAX_LEVEL_M..=crate::ingest::MAX_LEVEL_M)
            .contains(&raw.flood_threshold_m)
        {
            return Err(self.invalid(
                "flood_threshold_m",
                "a number of metres within +/-100 m of the datum",
                raw.flood_threshold_m,
            ));
        }
        let orientation = raw.coast_orientation_deg;
        if !(0.0..360.0).contains(&orientation) {
            return Err(self.invalid(
                "coast_orientation_deg",
                "degrees clockwise from north in 0..360",
                orientation,
            ));
        }
        let drivers = self.drivers(raw.drivers)?;
        Ok(GaugeConfig {
            id: raw.id,
            name: self.text("name", raw.name)?,
            latitude: self.in_range("latitude", raw.latitude, -90.0, 90.0, "degrees")?,
            longitude: self.in_range("longitude", raw.longitude, -180.0, 180.0, "degrees")?,
            datum: self.text("datum", raw.datum)?,
            flood_threshold_m: raw.flood_threshold_m,
            utc_offset: self.utc_offset(&raw.utc_offset)?,
            coast_orientation_deg: orientation,
            levels: self.levels(raw.levels)?,
            seasons: self.seasons(raw.seasons)?,
            model: self.model(raw.model, &drivers)?,
            sea_level: self.sea_level(raw.sea_level)?,
            drivers,
            source_name: self.source_name.to_owned(),
        })
    }

    fn utc_offset(&self, text: &str) -> Result<FixedOffset, GaugeError> {
        let bad = || {
            self.invalid(
                "utc_offset",
                "an offset such as \"-05:00\" or \"+09:30\" within -12:00..=+14:00",
                format!("{text:?}"),
            )
        };
        let bytes = text.trim().as_bytes();
        if bytes == b"Z" || bytes == b"+00:00" || bytes == b"-00:00" {
            return FixedOffset::east_opt(0).ok_or_else(bad);
        }
        let [sign @ (b'+' | b'-'), h1, h2, b':', m1, m2] = *bytes else {
            return Err(bad());
        };
        let digit = |b: u8| b.is_ascii_digit().then(|| i32::from(b - b'0'));
        let (Some(h1), Some(h2), Some(m1), Some(m2)) = (digit(h1), digit(h2), digit(m1), digit(m2))
        else {
            return Err(bad());
        };
        let (hours, minutes) = (h1 * 10 + h2, m1 * 10 + m2);
        let seconds = (hours * 60 + minutes) * 60 * if sign == b'-' { -1 } else { 1 };
        if minutes > 59 || !(-12 * 3600..=14 * 3600).contains(&seconds) {
            return Err(bad());
        }
        FixedOffset::east_opt(seconds).ok_or_else(bad)
    }

    fn levels(&self, raw: RawLevels) -> Result<LevelsConfig, GaugeError> {
        let units = match raw.units.as_str() {
            "m" => LevelUnits::Metres,
            "ft" => LevelUnits::Feet,
            other => {
                return Err(self.invalid("levels.units", "\"m\" or \"ft\"", format!("{other:?}")));
            }
        };
        if let Some(s) = raw.missing_sentinel
            && !s.is_finite()
        {
            return Err(self.invalid("levels.missing_sentinel", "a finite number", s));
        }
        let completeness = raw
            .min_day_completeness
            .unwrap_or(DEFAULT_MIN_DAY_COMPLETENESS);
        if !(completeness > 0.0 && completeness <= 1.0) {
            return Err(self.invalid(
                "levels.min_day_completeness",
                "a share in (0, 1]",
                completeness,
            ));
        }
        Ok(LevelsConfig {
            file: self.path("levels.file", &raw.file)?,
            units,
            missing_sentinel: raw.missing_sentinel,
            min_day_completeness: completeness,
        })
    }

    fn seasons(&self, raw: Option<RawSeasons>) -> Result<SeasonsConfig, GaugeError> {
        let raw = raw.unwrap_or(RawSeasons {
            custom: None,
            min_completeness: None,
        });
        let min_completeness = raw
            .min_completeness
            .unwrap_or(DEFAULT_MIN_SEASON_COMPLETENESS);
        self.in_range(
            "seasons.min_completeness",
            min_completeness,
            0.0,
            1.0,
            "a share",
        )?;
        let specs = match raw.custom {
            None => SeasonSpec::meteorological(),
            Some(custom) if custom.is_empty() => {
                return Err(self.invalid("seasons.custom", "at least one season", "an empty list"));
            }
            Some(custom) => {
                let mut specs: Vec<SeasonSpec> = Vec::new();
                for (i, s) in custom.into_iter().enumerate() {
                    let key = format!("seasons.custom[{i}]");
                    let spec = SeasonSpec::new(&s.name, s.start_month, s.months).map_err(|e| {
                        let expected = match e {
                            SeasonError::BadName(_) => "a name of 1 to 12 ASCII letters or digits",
                            SeasonError::BadMonth { .. } => "start_month 1 to 12",
                            _ => "months 1 to 12",
                        };
                        self.invalid(&key, expected, e)
                    })?;
                    if specs
                        .iter()
                        .any(|o| o.name().eq_ignore_ascii_case(spec.name()))
                    {
                        return Err(self.invalid(
                            &key,
                            "a season name not used before",
                            format!("{:?}", spec.name()),
                        ));
                    }
                    specs.push(spec);
                }
                specs
            }
        };
        Ok(SeasonsConfig {
            specs,
            min_completeness,
        })
    }

    /// The `[sea_level]` table: a set rate or a projection table is checked here (it needs no
    /// data); a trend is fitted when the gauge is prepared.
    fn sea_level(&self, raw: Option<SeaLevelSetting>) -> Result<SeaLevelSetting, GaugeError> {
        let setting = raw.unwrap_or_default();
        match &setting {
            SeaLevelSetting::Trend { .. } => {}
            SeaLevelSetting::Rate { .. } | SeaLevelSetting::Projection { .. } => {
                if let Err(e) = setting.resolve(&[]) {
                    let expected = match setting {
                        SeaLevelSetting::Rate { .. } => {
                            "finite rate_m_per_yr, reference_year and reference_level_m"
                        }
                        _ => "points [year, level_m] with finite values and years increasing",
                    };
                    return Err(self.invalid("sea_level", expected, e));
                }
            }
        }
        Ok(setting)
    }

    fn drivers(&self, raw: Option<RawDrivers>) -> Result<DriverFiles, GaugeError> {
        let Some(raw) = raw else {
            return Ok(DriverFiles::default());
        };
        let resolve =
            |key: &str, value: Option<String>| value.map(|v| self.path(key, &v)).transpose();
        Ok(DriverFiles {
            enso: resolve("drivers.enso", raw.enso)?,
            rmm: resolve("drivers.rmm", raw.rmm)?,
            wind: resolve("drivers.wind", raw.wind)?,
            enso_forecast: resolve("drivers.enso_forecast", raw.enso_forecast)?,
        })
    }

    fn model(
        &self,
        raw: Option<RawModel>,
        drivers: &DriverFiles,
    ) -> Result<ModelConfig, GaugeError> {
        let raw = raw.unwrap_or(RawModel {
            family: None,
            predictors: None,
            enso_timing: None,
            mjo_phases: None,
            wind_statistic: None,
            exceed_days: None,
        });
        let family = match raw.family.as_deref() {
            None | Some("auto") => Family::Auto,
            Some("poisson") => Family::Poisson,
            Some("negbin") => Family::Negbin,
            Some(other) => {
                return Err(self.invalid(
                    "model.family",
                    "\"poisson\", \"negbin\" or \"auto\"",
                    format!("{other:?}"),
                ));
            }
        };
        let available = |p: Predictor| match p {
            Predictor::Enso => drivers.enso.is_some(),
            Predictor::Mjo => drivers.rmm.is_some(),
            Predictor::Wind => drivers.wind.is_some(),
            Predictor::SeaLevel | Predictor::Tide => true,
        };
        let predictors = match raw.predictors {
            None => Predictor::ALL
                .into_iter()
                .filter(|&p| available(p))
                .collect(),
            Some(names) => {
                let mut out: Vec<Predictor> = Vec::new();
                for name in names {
                    let p = Predictor::ALL
                        .into_iter()
                        .find(|p| p.as_str() == name)
                        .ok_or_else(|| {
                            self.invalid(
                                "model.predictors",
                                "names among enso, mjo, wind, sea_level, tide",
                                format!("{name:?}"),
                            )
                        })?;
                    if !available(p) {
                        let needs = match p {
                            Predictor::Enso => "drivers.enso",
                            Predictor::Mjo => "drivers.rmm",
                            _ => "drivers.wind",
                        };
                        return Err(self.invalid(
                            "model.predictors",
                            &format!("{name:?} only with `{needs}` set"),
                            format!("{name:?} without `{needs}`"),
                        ));
                    }
                    if !out.contains(&p) {
                        out.push(p);
                    }
                }
                out
            }
        };
        let enso_timing = match raw.enso_timing.as_deref() {
            None | Some("preceding") => EnsoTiming::Preceding,
            Some("concurrent") => EnsoTiming::Concurrent,
            Some(other) => {
                return Err(self.invalid(
                    "model.enso_timing",
                    "\"preceding\" or \"concurrent\"",
                    format!("{other:?}"),
                ));
            }
        };
        let wind_statistic = match raw.wind_statistic.as_deref() {
            None | Some("mean") => WindStatistic::Mean,
            Some("positive") => WindStatistic::Positive,
            Some(other) => {
                return Err(self.invalid(
                    "model.wind_statistic",
                    "\"mean\" or \"positive\"",
                    format!("{other:?}"),
                ));
            }
        };
        let mut mjo_phases = Vec::new();
        for phase in raw.mjo_phases.unwrap_or_else(|| vec![2, 3]) {
            let phase = u8::try_from(phase)
                .ok()
                .filter(|p| (1..=8).contains(p))
                .ok_or_else(|| self.invalid("model.mjo_phases", "RMM phases 1 to 8", phase))?;
            if !mjo_phases.contains(&phase) {
                mjo_phases.push(phase);
            }
        }
        if mjo_phases.is_empty() {
            return Err(self.invalid(
                "model.mjo_phases",
                "at least one RMM phase 1 to 8",
                "an empty list",
            ));
        }
        mjo_phases.sort_unstable();
        let mut exceed_days = Vec::new();
        for k in raw.exceed_days.unwrap_or_else(|| vec![5, 10, 20]) {
            let k = u32::try_from(k)
                .ok()
                .filter(|&k| (1..=366).contains(&k))
                .ok_or_else(|| self.invalid("model.exceed_days", "day counts 1 to 366", k))?;
            exceed_days.push(k);
        }
        exceed_days.sort_unstable();
        exceed_days.dedup();
        if exceed_days.is_empty() {
            return Err(self.invalid(
                "model.exceed_days",
                "at least one day count",
                "an empty list",
            ));
        }
        Ok(ModelConfig {
            family,
            predictors,
            enso_timing,
            mjo_phases,
            wind_statistic,
            exceed_days,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const FULL: &str = r#"
id = "port-alder"
name = "Port Alder harbour"
latitude = 44.12
longitude = -38.40
datum = "VBZ"
flood_threshold_m = 0.85
utc_offset = "-05:00"
coast_orientation_deg = 135.0

[levels]
file = "port-alder-levels.csv.gz"
units = "ft"
missing_sentinel = -99999.0
min_day_completeness = 0.9

[seasons]
custom = [{ name = "NDJFM", start_month = 11, months = 5 }]
min_completeness = 0.7

[drivers]
enso = "../drivers/enso-monthly.csv"
rmm = "../drivers/rmm-daily.csv"
wind = "port-alder-wind.csv"
enso_forecast = "../drivers/enso-forecast-2026-DJF.json"

[model]
family = "negbin"
predictors = ["enso", "mjo", "wind", "sea_level", "tide"]
enso_timing = "concurrent"
mjo_phases = [3, 2]
wind_statistic = "positive"
exceed_days = [20, 5, 10]
"#;

    const MINIMAL: &str = r#"
id = "g1"
name = "G"
latitude = 10
longitude = -30
datum = "MHHW"
flood_threshold_m = 0.5
utc_offset = "+09:30"
coast_orientation_deg = 0

[levels]
file = "levels.csv"
units = "m"
"#;

    fn parse(text: &str) -> Result<GaugeConfig, GaugeError> {
        GaugeConfig::from_toml_str(text, "port-alder.toml", Path::new("/data/gauges"))
    }

    /// Replaces the first line starting with `key =` in the full example.
    fn with(key: &str, value: &str) -> String {
        let prefix = format!("{key} =");
        FULL.lines()
            .map(|l| {
                if l.starts_with(&prefix) {
                    format!("{key} = {value}")
                } else {
                    l.to_owned()
                }
            })
            .collect::<Vec<_>>()
            .join("\n")
    }

    #[test]
    fn the_documented_example_validates() {
        let g = parse(FULL).unwrap();
        assert_eq!(g.id, "port-alder");
        assert_eq!(g.utc_offset.local_minus_utc(), -5 * 3600);
        assert_eq!(g.levels.units, LevelUnits::Feet);
        assert_eq!(
            g.levels.file,
            Path::new("/data/gauges/port-alder-levels.csv.gz")
        );
        assert_eq!(g.levels.min_day_completeness, 0.9);
        assert_eq!(
            g.seasons.specs,
            vec![SeasonSpec::new("NDJFM", 11, 5).unwrap()]
        );
        assert_eq!(g.seasons.min_completeness, 0.7);
        assert_eq!(
            g.drivers.enso.as_deref(),
            Some(Path::new("/data/gauges/../drivers/enso-monthly.csv"))
        );
        assert_eq!(g.model.family, Family::Negbin);
        assert_eq!(g.model.predictors.len(), 5);
        assert_eq!(g.model.enso_timing, EnsoTiming::Concurrent);
        assert_eq!(g.model.mjo_phases, vec![2, 3]);
        assert_eq!(g.model.wind_statistic, WindStatistic::Positive);
        assert_eq!(g.model.exceed_days, vec![5, 10, 20]);
    }

    #[test]
    fn defaults_fill_optional_tables() {
        let g = parse(MINIMAL).unwrap();
        assert_eq!(g.utc_offset.local_minus_utc(), 9 * 3600 + 1800);
        assert_eq!(g.levels.min_day_completeness, 0.75);
        assert_eq!(g.levels.missing_sentinel, None);
        assert_eq!(g.seasons.specs, SeasonSpec::meteorological());
        assert_eq!(g.seasons.min_completeness, 0.8);
        assert_eq!(g.drivers, DriverFiles::default());
        assert_eq!(g.model.family, Family::Auto);
        // Without driver files only the record's own predictors are available.
        assert_eq!(
            g.model.predictors,
            vec![Predictor::SeaLevel, Predictor::Tide]
        );
        assert_eq!(g.model.exceed_days, vec![5, 10, 20]);
    }

    #[test]
    fn bad_values_name_file_key_and_expectation() {
        let cases = [
            (
                with("latitude", "123"),
                "port-alder.toml: key `latitude`: expected degrees in -90..=90, got 123",
            ),
            (with("latitude", "nan"), "key `latitude`"),
            (with("longitude", "-200"), "key `longitude`"),
            (with("id", "\"Port Alder\""), "key `id`"),
            (with("utc_offset", "\"-5\""), "key `utc_offset`"),
            (with("utc_offset", "\"+15:00\""), "key `utc_offset`"),
            (
                with("coast_orientation_deg", "360"),
                "key `coast_orientation_deg`",
            ),
            (with("flood_threshold_m", "inf"), "key `flood_threshold_m`"),
            (with("units", "\"feet\""), "key `levels.units`"),
            (
                with("missing_sentinel", "nan"),
                "key `levels.missing_sentinel`",
            ),
            (
                with("min_day_completeness", "0"),
                "key `levels.min_day_completeness`",
            ),
            (
                with("min_completeness", "1.5"),
                "key `seasons.min_completeness`",
            ),
            (
                with("custom", "[{ name = \"X\", start_month = 13, months = 3 }]"),
                "key `seasons.custom[0]`: expected start_month 1 to 12",
            ),
            (with("family", "\"gamma\""), "key `model.family`"),
            (
                with("predictors", "[\"enso\", \"rain\"]"),
                "key `model.predictors`",
            ),
            (with("mjo_phases", "[0]"), "key `model.mjo_phases`"),
            (with("exceed_days", "[-1]"), "key `model.exceed_days`"),
            (with("enso_timing", "\"later\""), "key `model.enso_timing`"),
            (
                with("wind_statistic", "\"max\""),
                "key `model.wind_statistic`",
            ),
        ];
        for (text, want) in cases {
            let err = parse(&text).unwrap_err().to_string();
            assert!(err.contains(want), "{err}\n  wanted: {want}");
            assert!(err.starts_with("port-alder.toml: "), "{err}");
        }
    }

    #[test]
    fn predictors_need_their_driver_files() {
        let text = format!("{MINIMAL}\n[model]\npredictors = [\"wind\"]\n");
        let err = parse(&text).unwrap_err().to_string();
        assert!(
            err.contains("key `model.predictors`") && err.contains("drivers.wind"),
            "{err}"
        );
    }

    #[test]
    fn unknown_missing_and_mistyped_keys_are_named() {
        let err = parse(&format!("{MINIMAL}\ncolour = \"blue\"\n"))
            .unwrap_err()
            .to_string();
        assert!(err.contains("unknown field `colour`"), "{err}");
        let err = parse(&MINIMAL.replace("datum = \"MHHW\"\n", ""))
            .unwrap_err()
            .to_string();
        assert!(err.contains("missing field `datum`"), "{err}");
        let err = parse(&MINIMAL.replace("latitude = 10", "latitude = \"north\""))
            .unwrap_err()
            .to_string();
        assert!(
            err.starts_with("port-alder.toml: ") && err.contains("line 4"),
            "{err}"
        );
        let err = parse(&format!("{MINIMAL}\n[levels.extra]\n"))
            .unwrap_err()
            .to_string();
        assert!(err.contains("extra"), "{err}");
    }

    /// Every documented form of `[sea_level]` (DEVELOPERS.md, "Sea-level source") through the
    /// real loader.
    #[test]
    fn sea_level_tables_load_in_each_form() {
        use crate::drivers::{SeasonalCycle, TrendShape};
        let load = |table: &str| parse(&format!("{MINIMAL}\n[sea_level]\n{table}\n"));
        assert_eq!(
            parse(MINIMAL).unwrap().sea_level,
            SeaLevelSetting::default()
        );
        assert_eq!(
            load("source = \"trend\"\nshape = \"quadratic\"")
                .unwrap()
                .sea_level,
            SeaLevelSetting::Trend {
                shape: TrendShape::Quadratic,
                cycle: SeasonalCycle::AnnualSemiannual
            }
        );
        assert_eq!(
            load("source = \"trend\"\nshape = \"linear\"\ncycle = \"omitted\"")
                .unwrap()
                .sea_level,
            SeaLevelSetting::Trend {
                shape: TrendShape::Linear,
                cycle: SeasonalCycle::Omitted
            }
        );
        assert_eq!(
            load(
                "source = \"rate\"\nrate_m_per_yr = 0.0034\nreference_year = 2000.0\n\
                 reference_level_m = 0.12"
            )
            .unwrap()
            .sea_level,
            SeaLevelSetting::Rate {
                rate_m_per_yr: 0.0034,
                reference_year: 2000.0,
                reference_level_m: 0.12
            }
        );
        assert_eq!(
            load("source = \"projection\"\npoints = [[2020.0, 0.15], [2050.0, 0.32]]")
                .unwrap()
                .sea_level,
            SeaLevelSetting::Projection {
                points: vec![[2020.0, 0.15], [2050.0, 0.32]]
            }
        );
        // Missing or unknown keys, bad values and unordered tables are named.
        let err = load("source = \"rate\"").unwrap_err().to_string();
        assert!(
            err.starts_with("port-alder.toml: ") && err.contains("rate_m_per_yr"),
            "{err}"
        );
        let err = load("source = \"trend\"\nslope = 1")
            .unwrap_err()
            .to_string();
        assert!(err.contains("slope"), "{err}");
        let err = load("source = \"trend\"\nshape = \"cubic\"")
            .unwrap_err()
            .to_string();
        assert!(err.contains("cubic"), "{err}");
        let err = load(
            "source = \"rate\"\nrate_m_per_yr = nan\nreference_year = 2000.0\n\
             reference_level_m = 0.1",
        )
        .unwrap_err()
        .to_string();
        assert!(err.contains("key `sea_level`"), "{err}");
        let err = load("source = \"projection\"\npoints = [[2050.0, 0.3], [2020.0, 0.1]]")
            .unwrap_err()
            .to_string();
        assert!(err.contains("key `sea_level`"), "{err}");
    }
}
