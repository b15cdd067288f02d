//! Which engine an outlook leads with, and the outlook rebuilt on the water-level engine's
//! distribution when it leads.
//!
//! The rule: the engine whose out-of-sample CRPS, averaged over the two hindcast schemes and
//! taken from the hindcast with ENSO as known at issue time, is lower at the gauge and season
//! name leads; within [`TIE_SHARE`] the water-level engine leads (it carries the day
//! calendar). Without a hindcast of both engines the water engine leads when it could run.

use chrono::NaiveDate;
use serde::Serialize;

use super::{Exceedance, Outlook, explain};
use crate::glm::CountDistribution;
use crate::hindcast::{ModelKind, SeasonHindcast};
use crate::verify::TercileEdges;
use crate::water::{SeasonWater, Simulated, WaterReport};

/// Relative CRPS difference within which the engines count as tied.
pub const TIE_SHARE: f64 = 0.01;

/// Days of the calendar whose chance of a flood day is at least this are "days to watch"
/// in the explanation.
pub const WATCH_CHANCE: f64 = 0.2;

/// The two forecasting engines.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Engine {
    /// Daily high waters simulated on the known tide.
    Water,
    /// The seasonal count model (Poisson or negative binomial).
    Count,
}

impl Engine {
    /// The engine in words.
    pub fn words(self) -> &'static str {
        match self {
            Engine::Water => "the water-level engine",
            Engine::Count => "the seasonal count model",
        }
    }
}

/// Which engine the caller asks for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum EngineRequest {
    /// The one that scored better out of sample.
    #[default]
    Auto,
    /// The water-level engine.
    Water,
    /// The count model.
    Count,
}

/// The engine chosen and why, in one plain sentence.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EngineChoice {
    /// The engine the outlook leads with.
    pub engine: Engine,
    /// Why, in one sentence.
    pub reason: String,
}

/// The other engine's answer, shown beside the lead's.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EngineSummary {
    /// The engine.
    pub engine: Engine,
    /// Its expected flood days.
    pub mean: f64,
    /// Its median.
    pub median: u32,
    /// Its 10th percentile.
    pub p10: u32,
    /// Its 90th percentile.
    pub p90: u32,
}

impl EngineSummary {
    fn of(engine: Engine, pmf: &[f64]) -> Option<Self> {
        let d = CountDistribution::new(pmf.to_vec()).ok()?;
        Some(Self {
            engine,
            mean: d.mean(),
            median: d.quantile(0.5) as u32,
            p10: d.quantile(0.1) as u32,
            p90: d.quantile(0.9) as u32,
        })
    }
}

/// One day of the season's calendar.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DayChance {
    /// The local-standard-time date (`YYYY-MM-DD` in JSON).
    #[serde(serialize_with = "iso_date")]
    pub date: NaiveDate,
    /// The day's predicted high water (tide plus projected mean sea level), m on the datum.
    pub predicted_high_m: f64,
    /// The share of simulated seasons in which the day floods.
    pub chance: f64,
}

fn iso_date<S: serde::Serializer>(date: &NaiveDate, serializer: S) -> Result<S::Ok, S::Error> {
    serializer.collect_str(date)
}

/// Picks the engine for an outlook.
pub fn choose(
    request: EngineRequest,
    water_available: bool,
    hindcast: Option<&SeasonHindcast>,
) -> EngineChoice {
    match (request, water_available) {
        (EngineRequest::Count, _) => EngineChoice {
            engine: Engine::Count,
            reason: "The seasonal count model leads because it was asked for.".to_owned(),
        },
        (_, false) => EngineChoice {
            engine: Engine::Count,
            reason: "The seasonal count model leads because the water-level engine could not \
                     run at this gauge."
                .to_owned(),
        },
        (EngineRequest::Water, true) => EngineChoice {
            engine: Engine::Water,
            reason: "The water-level engine leads because it was asked for.".to_owned(),
        },
        (EngineRequest::Auto, true) => auto_choice(hindcast),
    }
}

fn auto_choice(hindcast: Option<&SeasonHindcast>) -> EngineChoice {
    let scores = hindcast.and_then(|h| {
        Some((
            h.engine(ModelKind::Water)?.mean_crps,
            h.engine(ModelKind::Drivers)?.mean_crps,
            h.season_name.clone(),
        ))
    });
    let Some((water, count, season_name)) = scores else {
        return EngineChoice {
            engine: Engine::Water,
            reason: "The water-level engine leads: the two engines could not both be checked \
                     on past seasons here, and it works from each day's known tide."
                .to_owned(),
        };
    };
    let tied = (water - count).abs() <= TIE_SHARE * count.abs().max(f64::MIN_POSITIVE);
    if water < count || tied {
        let how = if tied && water >= count {
            "as well as"
        } else {
            "better than"
        };
        EngineChoice {
            engine: Engine::Water,
            reason: format!(
                "The water-level engine leads: on past {season_name} seasons, forecast out of \
                 sample with ENSO as it was known beforehand, it did {how} the seasonal count \
                 model (mean CRPS {water:.2} against {count:.2} days)."
            ),
        }
    } else {
        EngineChoice {
            engine: Engine::Count,
            reason: format!(
                "The seasonal count model leads: on past {season_name} seasons, forecast out of \
                 sample with ENSO as it was known beforehand, it did better than the \
                 water-level engine (mean CRPS {count:.2} against {water:.2} days)."
            ),
        }
    }
}

/// The water-level engine's forecast of the target season.
#[derive(Debug, Clone, PartialEq)]
pub struct WaterForecast {
    /// The simulated distribution and day chances.
    pub simulated: Simulated,
    /// The season's days.
    pub season: SeasonWater,
    /// The engine's full-record fit, for researchers.
    pub report: WaterReport,
    /// Where the ENSO scenarios came from, in words.
    pub enso_source: String,
}

/// The count-model outlook `outlook` turned into the final one: led by `choice.engine`, the
/// other engine's summary beside it, and the day calendar from the water engine when it ran.
pub fn lead(mut outlook: Outlook, water: Option<WaterForecast>, choice: EngineChoice) -> Outlook {
    let count_pmf = outlook.pmf.clone();
    let Some(water) = water else {
        outlook.engine = Engine::Count;
        outlook.engine_reason = choice.reason;
        return outlook;
    };
    outlook.days = calendar(&water);
    if water.report.drivers_add_nothing {
        outlook.notes.push(format!(
            "In the water-level engine, no driver's effect on the daily high water is distinct \
             from zero at this gauge in {}: the drivers add nothing beyond the tide and the \
             sea-level trend (which may still beat the long-term average).",
            water.report.season_name
        ));
    }
    outlook.notes.push(format!(
        "Water-level engine: ENSO from {}.",
        water.enso_source
    ));
    let water_pmf = water.simulated.pmf.clone();
    outlook.water = Some(water.report);
    match choice.engine {
        Engine::Count => {
            outlook.other_engine = EngineSummary::of(Engine::Water, &water_pmf);
        }
        Engine::Water => {
            outlook.other_engine = EngineSummary::of(Engine::Count, &count_pmf);
            if let Ok(distribution) = CountDistribution::new(water_pmf) {
                replace_distribution(&mut outlook, &distribution);
            }
        }
    }
    outlook.engine = choice.engine;
    outlook.engine_reason = choice.reason;
    outlook
}

fn calendar(water: &WaterForecast) -> Vec<DayChance> {
    water
        .season
        .days
        .iter()
        .zip(&water.simulated.day_level)
        .zip(&water.simulated.day_chance)
        .map(|((day, &level), &chance)| DayChance {
            date: day.date,
            predicted_high_m: level,
            chance,
        })
        .collect()
}

/// Every field of `outlook` derived from its distribution, recomputed for `distribution`.
fn replace_distribution(outlook: &mut Outlook, distribution: &CountDistribution) {
    let quantile = |q: f64| distribution.quantile(q) as u32;
    outlook.pmf = distribution.pmf.clone();
    outlook.mean = distribution.mean();
    outlook.median = quantile(0.5);
    outlook.p10 = quantile(0.1);
    outlook.p90 = quantile(0.9);
    outlook.exceedance = outlook
        .exceedance
        .iter()
        .map(|e| Exceedance {
            days: e.days,
            probability: distribution.exceedance(e.days as usize),
        })
        .collect();
    for tercile in &mut outlook.terciles {
        let edges = TercileEdges::from_parts(tercile.edges, tercile.edge_lower_shares);
        let [below, near, above] = edges.categorise(&distribution.pmf);
        tercile.below = below;
        tercile.near = near;
        tercile.above = above;
    }
    let climatology_name = outlook
        .terciles
        .first()
        .map_or("long-term average", |t| t.name.as_str())
        .to_owned();
    let summary = explain::summary_sentence(
        outlook.mean,
        outlook.p10,
        outlook.p90,
        outlook.climatological_mean,
        &climatology_name,
        outlook.trend_only_mean,
    );
    match outlook.explanation.first_mut() {
        Some(first) => *first = summary,
        None => outlook.explanation.push(summary),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::FitPeriod;
    use crate::glm::Family;
    use crate::hindcast::EngineScore;
    use crate::season::{Season, SeasonSpec};
    use crate::water::WaterDay;

    fn count_outlook() -> Outlook {
        Outlook {
            gauge_id: "test".into(),
            season: "2026-DJF".into(),
            season_days: 3,
            family: Family::Poisson,
            fit_period: FitPeriod {
                first: "1990-DJF".into(),
                last: "2025-DJF".into(),
                seasons: 36,
            },
            draws: 1,
            seed: 1,
            pmf: vec![0.7, 0.2, 0.1, 0.0],
            mean: 0.4,
            median: 0,
            p10: 0,
            p90: 1,
            exceedance: vec![Exceedance {
                days: 1,
                probability: 0.3,
            }],
            terciles: Vec::new(),
            climatological_mean: 0.5,
            trend_only_mean: None,
            last_season_observed: None,
            drivers: Vec::new(),
            explanation: vec!["count".into()],
            cautions: vec!["A seasonal probability, not a warning.".into()],
            notes: Vec::new(),
            engine: Engine::Count,
            engine_reason: String::new(),
            other_engine: None,
            days: Vec::new(),
            water: None,
        }
    }

    fn water_forecast(add_nothing: bool) -> WaterForecast {
        let season = Season::new(2026, SeasonSpec::new("DJF", 12, 3).expect("spec")).expect("s");
        let days = (0..3)
            .map(|i| WaterDay {
                date: season.first_day() + chrono::Duration::days(i),
                year: 2026.9,
                predicted_high: 1.0,
                residual: None,
                flood: false,
                enso: None,
                mjo_in_phases: None,
                mjo_opposite: None,
                wind: None,
            })
            .collect();
        WaterForecast {
            simulated: Simulated {
                pmf: vec![0.1, 0.2, 0.3, 0.4],
                day_chance: vec![0.5, 0.6, 0.9],
                day_level: vec![1.0, 1.1, 1.2],
                counted_days: 3,
                simulations: 10,
            },
            season: SeasonWater {
                season,
                days,
                lead_in: Vec::new(),
            },
            report: WaterReport {
                season_name: "DJF".into(),
                days: 100,
                seasons: 10,
                residual_sd_m: 0.1,
                effects: Vec::new(),
                drivers_add_nothing: add_nothing,
                persistence: None,
                block_days: 5.0,
                errors: String::new(),
                residual: String::new(),
            },
            enso_source: "test".into(),
        }
    }

    fn hindcast_with(water: f64, count: f64) -> SeasonHindcast {
        let engines = vec![
            EngineScore {
                model: ModelKind::Water,
                crps_by_scheme: vec![water, water],
                mean_crps: water,
            },
            EngineScore {
                model: ModelKind::Drivers,
                crps_by_scheme: vec![count, count],
                mean_crps: count,
            },
        ];
        SeasonHindcast {
            season_name: "DJF".into(),
            predictors: Vec::new(),
            issue_time: Vec::new(),
            families: Vec::new(),
            usable_seasons: 30,
            left_out: Vec::new(),
            schemes: Vec::new(),
            verdicts: Vec::new(),
            water_verdicts: Vec::new(),
            enso: crate::hindcast::ConcurrentEnso::AtIssue,
            engines,
            notes: Vec::new(),
        }
    }

    #[test]
    fn the_engine_with_the_lower_crps_leads_and_ties_go_to_water() {
        let auto = |w, c| choose(EngineRequest::Auto, true, Some(&hindcast_with(w, c))).engine;
        assert_eq!(auto(0.9, 1.0), Engine::Water);
        assert_eq!(auto(1.2, 1.0), Engine::Count);
        // Within 1% of the count model: the water engine.
        assert_eq!(auto(1.009, 1.0), Engine::Water);
        assert_eq!(auto(1.02, 1.0), Engine::Count);
        assert_eq!(
            choose(EngineRequest::Auto, false, Some(&hindcast_with(0.1, 1.0))).engine,
            Engine::Count
        );
        assert_eq!(
            choose(EngineRequest::Count, true, None).engine,
            Engine::Count
        );
        let reason = choose(EngineRequest::Auto, true, Some(&hindcast_with(0.9, 1.0))).reason;
        assert!(reason.contains("0.90 against 1.00"), "{reason}");
    }

    #[test]
    fn leading_with_water_replaces_the_distribution_and_keeps_the_other_beside_it() {
        let choice = EngineChoice {
            engine: Engine::Water,
            reason: "test".into(),
        };
        let o = lead(count_outlook(), Some(water_forecast(true)), choice);
        assert_eq!(o.engine, Engine::Water);
        assert_eq!(o.pmf, vec![0.1, 0.2, 0.3, 0.4]);
        assert!((o.mean - 2.0).abs() < 1e-12);
        assert!((o.exceedance[0].probability - 0.9).abs() < 1e-12);
        let other = o.other_engine.as_ref().expect("count summary");
        assert_eq!(other.engine, Engine::Count);
        assert!((other.mean - 0.4).abs() < 1e-12);
        assert_eq!(o.days.len(), 3);
        assert!((o.days[2].chance - 0.9).abs() < 1e-12);
        assert!(
            o.notes
                .iter()
                .any(|n| n.contains("add nothing beyond the tide")),
            "{:?}",
            o.notes
        );
        // The count model leading keeps its own pmf and the calendar.
        let choice = EngineChoice {
            engine: Engine::Count,
            reason: "test".into(),
        };
        let o = lead(count_outlook(), Some(water_forecast(false)), choice);
        assert_eq!(o.pmf, vec![0.7, 0.2, 0.1, 0.0]);
        assert_eq!(o.days.len(), 3);
        assert!(!o.notes.iter().any(|n| n.contains("add nothing")));
    }
}
