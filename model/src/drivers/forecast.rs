//! The ENSO forecast for a target season (DEVELOPERS.md "Driver series") and the sampling of
//! driver scenarios for that season.
//!
//! ENSO scenarios come from the forecast: ensemble members pooled with **equal weight per
//! model** (each model's members share `1 / n_models`; no skill weighting, since no weighting
//! scheme has held up out of sample), or category probabilities (a category drawn with its
//! probability, then a past season's observed ENSO value of that category drawn uniformly).
//! A value already known at issue time (the preceding season's ENSO) can stand in for a
//! forecast. MJO and wind have no useful skill a season ahead: they come from past seasons
//! resampled together (the same past season for both, keeping their relation), optionally only
//! from past seasons of the scenario's ENSO category, falling back to all past seasons with a
//! note when a category has too few.

use std::collections::BTreeSet;
use std::io::BufRead;

use chrono::NaiveDate;
use rand::Rng;
use rand_chacha::ChaCha8Rng;
use serde::{Deserialize, Serialize};

use super::Driver;
use super::enso::EnsoCategory;
use crate::season::{Season, SeasonSpec};

/// Tolerance on the sum of category probabilities.
pub const PROBABILITY_SUM_TOLERANCE: f64 = 1e-6;

/// Errors reading or validating an ENSO forecast.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ForecastError {
    /// Not valid JSON of the forecast's shape.
    #[error("{source_name} line {line}, column {column}: {message}")]
    Json {
        /// The source name given to the parser.
        source_name: String,
        /// 1-based line.
        line: usize,
        /// 1-based column.
        column: usize,
        /// What serde_json reported.
        message: String,
    },
    /// A field with a bad value.
    #[error("{source_name}, field {field}: {problem}")]
    Invalid {
        /// The source name.
        source_name: String,
        /// The field path, e.g. `models[1].members[0]`.
        field: String,
        /// What is wrong.
        problem: String,
    },
}

/// One model's ensemble members (deg C anomaly of the target season).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ModelMembers {
    /// The model's name.
    pub name: String,
    /// Its members, each finite.
    pub members: Vec<f64>,
}

/// Probabilities of the three ENSO categories, summing to 1.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CategoryProbabilities {
    /// P(La Nina).
    pub la_nina: f64,
    /// P(neutral).
    pub neutral: f64,
    /// P(El Nino).
    pub el_nino: f64,
}

impl CategoryProbabilities {
    /// The probability of `category`.
    pub fn of(&self, category: EnsoCategory) -> f64 {
        match category {
            EnsoCategory::LaNina => self.la_nina,
            EnsoCategory::Neutral => self.neutral,
            EnsoCategory::ElNino => self.el_nino,
        }
    }
}

/// What a forecast carries.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ForecastContent {
    /// Ensemble members per model (at least one model, each with at least one member).
    Members(Vec<ModelMembers>),
    /// Category probabilities.
    Probabilities(CategoryProbabilities),
}

/// A validated ENSO forecast for a target season.
#[derive(Debug, Clone, PartialEq)]
pub struct EnsoForecast {
    /// The target season.
    pub season: Season,
    /// The issue date.
    pub issued: NaiveDate,
    /// Members or probabilities.
    pub content: ForecastContent,
    /// An optional free-text note from the issuer (top-level `note`).
    pub note: Option<String>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawForecast {
    season: String,
    issued: String,
    #[serde(default)]
    note: Option<String>,
    models: Option<Vec<RawModel>>,
    probabilities: Option<RawProbabilities>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawModel {
    name: String,
    members: Vec<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawProbabilities {
    la_nina: f64,
    neutral: f64,
    el_nino: f64,
}

impl EnsoForecast {
    /// Reads and validates a forecast; the season label is parsed against `specs`. `source`
    /// names the input in errors.
    pub fn parse(
        reader: impl BufRead,
        source: &str,
        specs: &[SeasonSpec],
    ) -> Result<Self, ForecastError> {
        let raw: RawForecast =
            serde_json::from_reader(reader).map_err(|e| ForecastError::Json {
                source_name: source.to_owned(),
                line: e.line(),
                column: e.column(),
                message: e.to_string(),
            })?;
        let invalid = |field: &str, problem: String| ForecastError::Invalid {
            source_name: source.to_owned(),
            field: field.to_owned(),
            problem,
        };
        let season =
            Season::parse(&raw.season, specs).map_err(|e| invalid("season", e.to_string()))?;
        if season.label() != raw.season {
            return Err(invalid(
                "season",
                format!(
                    "{:?} must be written exactly as {}",
                    super::clip_echo(&raw.season),
                    season.label()
                ),
            ));
        }
        let issued = NaiveDate::parse_from_str(&raw.issued, "%Y-%m-%d").map_err(|_| {
            invalid(
                "issued",
                format!("{:?} is not a date YYYY-MM-DD", raw.issued),
            )
        })?;
        let content = match (raw.models, raw.probabilities) {
            (Some(models), None) => ForecastContent::Members(validate_models(models, &invalid)?),
            (None, Some(p)) => ForecastContent::Probabilities(validate_probabilities(p, &invalid)?),
            (Some(_), Some(_)) => {
                return Err(invalid(
                    "models",
                    "give either `models` or `probabilities`, not both".to_owned(),
                ));
            }
            (None, None) => {
                return Err(invalid(
                    "models",
                    "one of `models` (ensemble members) or `probabilities` is needed".to_owned(),
                ));
            }
        };
        Ok(Self {
            season,
            issued,
            content,
            note: raw.note,
        })
    }

    /// Checks that the forecast is for `target`.
    pub fn check_season(&self, target: &Season) -> Result<(), ScenarioError> {
        if self.season == *target {
            Ok(())
        } else {
            Err(ScenarioError::WrongSeason {
                forecast: self.season.label(),
                target: target.label(),
            })
        }
    }

    /// The members as (value, weight) pairs, each model's members sharing `1 / n_models`;
    /// empty for a probability forecast.
    pub fn pooled_members(&self) -> Vec<(f64, f64)> {
        match &self.content {
            ForecastContent::Members(models) => {
                let n_models = models.len() as f64;
                models
                    .iter()
                    .flat_map(|m| {
                        let w = 1.0 / (n_models * m.members.len() as f64);
                        m.members.iter().map(move |&x| (x, w))
                    })
                    .collect()
            }
            ForecastContent::Probabilities(_) => Vec::new(),
        }
    }

    /// The equal-weight-per-model mean of the members; `None` for a probability forecast.
    pub fn pooled_mean(&self) -> Option<f64> {
        match &self.content {
            ForecastContent::Members(_) => {
                Some(self.pooled_members().iter().map(|(x, w)| x * w).sum())
            }
            ForecastContent::Probabilities(_) => None,
        }
    }

    /// The category probabilities: given, or the pooled members' weight in each category.
    pub fn category_probabilities(&self) -> CategoryProbabilities {
        match &self.content {
            ForecastContent::Probabilities(p) => *p,
            ForecastContent::Members(_) => {
                let mut p = [0.0; 3];
                for (x, w) in self.pooled_members() {
                    p[EnsoCategory::of(x).index()] += w;
                }
                CategoryProbabilities {
                    la_nina: p[0],
                    neutral: p[1],
                    el_nino: p[2],
                }
            }
        }
    }
}

fn validate_models(
    models: Vec<RawModel>,
    invalid: &impl Fn(&str, String) -> ForecastError,
) -> Result<Vec<ModelMembers>, ForecastError> {
    if models.is_empty() {
        return Err(invalid("models", "no model given".to_owned()));
    }
    let mut names = BTreeSet::new();
    let mut out = Vec::with_capacity(models.len());
    for (i, m) in models.into_iter().enumerate() {
        if m.name.trim().is_empty() {
            return Err(invalid(&format!("models[{i}].name"), "is empty".to_owned()));
        }
        if !names.insert(m.name.clone()) {
            return Err(invalid(
                &format!("models[{i}].name"),
                format!("model {:?} appears twice", m.name),
            ));
        }
        if m.members.is_empty() {
            return Err(invalid(
                &format!("models[{i}].members"),
                format!("model {:?} has no members", m.name),
            ));
        }
        if let Some(j) = m.members.iter().position(|x| !x.is_finite()) {
            return Err(invalid(
                &format!("models[{i}].members[{j}]"),
                "is not a finite number".to_owned(),
            ));
        }
        const MAX: f64 = super::enso::MAX_ENSO_ANOMALY_C;
        if let Some(j) = m.members.iter().position(|x| !(-MAX..=MAX).contains(x)) {
            return Err(invalid(
                &format!("models[{i}].members[{j}]"),
                format!(
                    "{} is outside the plausible range: expected an anomaly within +/-10 C",
                    m.members[j]
                ),
            ));
        }
        out.push(ModelMembers {
            name: m.name,
            members: m.members,
        });
    }
    Ok(out)
}

fn validate_probabilities(
    p: RawProbabilities,
    invalid: &impl Fn(&str, String) -> ForecastError,
) -> Result<CategoryProbabilities, ForecastError> {
    for (field, value) in [
        ("probabilities.la_nina", p.la_nina),
        ("probabilities.neutral", p.neutral),
        ("probabilities.el_nino", p.el_nino),
    ] {
        if !(0.0..=1.0).contains(&value) {
            return Err(invalid(
                field,
                format!("{value} is not a probability 0 to 1"),
            ));
        }
    }
    let sum = p.la_nina + p.neutral + p.el_nino;
    if sum.is_nan() || (sum - 1.0).abs() > PROBABILITY_SUM_TOLERANCE {
        return Err(invalid(
            "probabilities",
            format!("the probabilities sum to {sum}, not 1 (within {PROBABILITY_SUM_TOLERANCE})"),
        ));
    }
    Ok(CategoryProbabilities {
        la_nina: p.la_nina,
        neutral: p.neutral,
        el_nino: p.el_nino,
    })
}

/// One past season's observed drivers, a candidate for resampling.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PastSeason {
    /// Its label, e.g. `2019-DJF`.
    pub label: String,
    /// The mean ENSO anomaly over the season's own months, if complete.
    pub enso: Option<f64>,
    /// Its MJO active share, if complete.
    pub mjo_share: Option<f64>,
    /// Its along-shore wind statistic, if complete.
    pub wind: Option<f64>,
}

/// How past seasons are resampled for MJO and wind.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Resampling {
    /// From all past seasons.
    AllSeasons,
    /// From past seasons of the scenario's ENSO category, when the category has at least
    /// `min_seasons` of them; otherwise from all past seasons (with a note).
    SameEnsoCategory {
        /// Fewest past seasons a category must have to be used on its own.
        min_seasons: usize,
    },
}

/// One draw of the target season's drivers.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Scenario {
    /// ENSO anomaly, deg C.
    pub enso: f64,
    /// Its category.
    pub enso_category: EnsoCategory,
    /// MJO active share from the resampled past season.
    pub mjo_share: Option<f64>,
    /// Along-shore wind statistic from the same past season.
    pub wind: Option<f64>,
    /// The past season MJO and wind came from (`None` when there are no past seasons and
    /// neither driver is needed).
    pub source_season: Option<String>,
}

/// Errors building a scenario generator.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ScenarioError {
    /// A category with positive forecast probability has no past season to draw a value from.
    #[error(
        "the forecast gives {category} a probability of {probability}, but no past season with complete ENSO data was {category}"
    )]
    CategoryWithoutPast {
        /// The category.
        category: EnsoCategory,
        /// Its forecast probability.
        probability: f64,
    },
    /// No past season has complete data for the drivers that must be resampled.
    #[error(
        "no past season has complete data for {drivers}, which are resampled from past seasons"
    )]
    NoPastSeasons {
        /// The drivers, comma separated.
        drivers: String,
    },
    /// The forecast is for another season than the target.
    #[error("the ENSO forecast is for {forecast}, not the target season {target}")]
    WrongSeason {
        /// The forecast's season.
        forecast: String,
        /// The target season.
        target: String,
    },
    /// A known ENSO value that is not finite.
    #[error("known ENSO value {0} is not a finite number")]
    BadKnownEnso(f64),
}

#[derive(Debug, Clone)]
enum EnsoSource {
    Members(Vec<Vec<f64>>),
    Categories {
        cumulative: [f64; 3],
        values: [Vec<f64>; 3],
    },
    Known(f64),
}

/// Draws [`Scenario`]s for a target season; build once, sample many times.
#[derive(Debug, Clone)]
pub struct ScenarioGenerator {
    enso: EnsoSource,
    past: Vec<PastSeason>,
    /// Indices into `past` usable for MJO/wind, per scenario category.
    pools: [Vec<usize>; 3],
    notes: Vec<String>,
}

impl ScenarioGenerator {
    /// A generator drawing ENSO from `forecast`, and MJO and wind (those of `needs`) from
    /// `past` seasons (pass past seasons of the target's own season name).
    pub fn from_forecast(
        forecast: &EnsoForecast,
        past: &[PastSeason],
        needs: &[Driver],
        resampling: Resampling,
    ) -> Result<Self, ScenarioError> {
        let enso = match &forecast.content {
            ForecastContent::Members(models) => {
                EnsoSource::Members(models.iter().map(|m| m.members.clone()).collect())
            }
            ForecastContent::Probabilities(p) => {
                let mut values: [Vec<f64>; 3] = Default::default();
                for x in past.iter().filter_map(|s| s.enso) {
                    values[EnsoCategory::of(x).index()].push(x);
                }
                for category in EnsoCategory::ALL {
                    let probability = p.of(category);
                    if probability > 0.0 && values[category.index()].is_empty() {
                        return Err(ScenarioError::CategoryWithoutPast {
                            category,
                            probability,
                        });
                    }
                }
                let sum = p.la_nina + p.neutral + p.el_nino;
                let cumulative = [p.la_nina / sum, (p.la_nina + p.neutral) / sum, 1.0];
                EnsoSource::Categories { cumulative, values }
            }
        };
        Self::build(enso, past, needs, resampling)
    }

    /// A generator whose ENSO value is already known (e.g. the preceding season's observed
    /// mean when the model uses `preceding` timing); MJO and wind as in
    /// [`ScenarioGenerator::from_forecast`].
    pub fn with_known_enso(
        enso: f64,
        past: &[PastSeason],
        needs: &[Driver],
        resampling: Resampling,
    ) -> Result<Self, ScenarioError> {
        if !enso.is_finite() {
            return Err(ScenarioError::BadKnownEnso(enso));
        }
        Self::build(EnsoSource::Known(enso), past, needs, resampling)
    }

    fn build(
        enso: EnsoSource,
        past: &[PastSeason],
        needs: &[Driver],
        resampling: Resampling,
    ) -> Result<Self, ScenarioError> {
        let need_mjo = needs.contains(&Driver::Mjo);
        let need_wind = needs.contains(&Driver::Wind);
        let usable: Vec<usize> = past
            .iter()
            .enumerate()
            .filter(|(_, s)| {
                (!need_mjo || s.mjo_share.is_some()) && (!need_wind || s.wind.is_some())
            })
            .map(|(i, _)| i)
            .collect();
        if usable.is_empty() && (need_mjo || need_wind) {
            let drivers: Vec<&str> = [(need_mjo, "mjo"), (need_wind, "wind")]
                .into_iter()
                .filter_map(|(needed, name)| needed.then_some(name))
                .collect();
            return Err(ScenarioError::NoPastSeasons {
                drivers: drivers.join(", "),
            });
        }
        let mut notes = Vec::new();
        let pools: [Vec<usize>; 3] = match resampling {
            Resampling::AllSeasons => [usable.clone(), usable.clone(), usable.clone()],
            Resampling::SameEnsoCategory { min_seasons } => EnsoCategory::ALL.map(|category| {
                let own: Vec<usize> = usable
                    .iter()
                    .copied()
                    .filter(|&i| past[i].enso.map(EnsoCategory::of) == Some(category))
                    .collect();
                if own.len() >= min_seasons.max(1) {
                    own
                } else {
                    if need_mjo || need_wind {
                        notes.push(format!(
                            "only {} past {category} season(s) have the resampled drivers (fewer than {min_seasons}); {category} scenarios draw MJO and wind from all {} past seasons",
                            own.len(),
                            usable.len()
                        ));
                    }
                    usable.clone()
                }
            }),
        };
        Ok(Self {
            enso,
            past: past.to_vec(),
            pools,
            notes,
        })
    }

    /// Notes on fallbacks taken while building (plain sentences; may be empty).
    pub fn notes(&self) -> &[String] {
        &self.notes
    }

    /// Draws one scenario.
    pub fn sample(&self, rng: &mut ChaCha8Rng) -> Scenario {
        let enso = match &self.enso {
            EnsoSource::Members(models) => {
                let model = &models[rng.gen_range(0..models.len())];
                model[rng.gen_range(0..model.len())]
            }
            EnsoSource::Categories { cumulative, values } => {
                let u: f64 = rng.r#gen();
                let mut k = cumulative.iter().position(|&c| u < c).unwrap_or(2);
                // Never land on a zero-probability (possibly empty) category through rounding.
                while values[k].is_empty() {
                    k = (k + 2) % 3;
                }
                values[k][rng.gen_range(0..values[k].len())]
            }
            EnsoSource::Known(x) => *x,
        };
        let enso_category = EnsoCategory::of(enso);
        let pool = &self.pools[enso_category.index()];
        let (mjo_share, wind, source_season) = if pool.is_empty() {
            (None, None, None)
        } else {
            let s = &self.past[pool[rng.gen_range(0..pool.len())]];
            (s.mjo_share, s.wind, Some(s.label.clone()))
        };
        Scenario {
            enso,
            enso_category,
            mjo_share,
            wind,
            source_season,
        }
    }

    /// Draws `n` scenarios.
    pub fn sample_many(&self, rng: &mut ChaCha8Rng, n: usize) -> Vec<Scenario> {
        (0..n).map(|_| self.sample(rng)).collect()
    }
}
