//! Model results -> wire types, field by field (no model type is serialised on the wire).

use tidetally_model::glm::Family;
use tidetally_model::hindcast::{
    ConcurrentEnso, ModelKind, SchemeHindcast, SeasonHindcast, VerdictKind,
};
use tidetally_model::outlook::{self as model_outlook, ReferenceKind};
use tidetally_model::verify::{crps_count, quantile_count};

use crate::api;

/// The scheme whose scores and cases the service shows (the verdict needs both schemes).
pub const SHOWN_SCHEME: &str = "leave_one_year_out";

/// What identifies one issued outlook.
pub struct IssueStamp<'a> {
    /// Issue time (RFC 3339).
    pub issued_at: &'a str,
    /// Model version.
    pub model_version: &'a str,
}

fn family_name(family: Family) -> &'static str {
    match family {
        Family::Poisson => "poisson",
        Family::Negbin => "negbin",
    }
}

/// A model outlook as served, with the skill of its season name and the service's standard
/// cautions appended.
pub fn outlook(
    o: &model_outlook::Outlook,
    skill: api::Skill,
    issue: &IssueStamp<'_>,
) -> api::Outlook {
    let plan_on = plan_on_of(o, &skill);
    api::Outlook {
        gauge: o.gauge_id.clone(),
        season: o.season.clone(),
        season_days: o.season_days,
        pmf: o.pmf.clone(),
        mean: o.mean,
        median: o.median,
        p10: o.p10,
        p90: o.p90,
        exceedance: o
            .exceedance
            .iter()
            .map(|e| api::Exceedance {
                days: e.days,
                probability: e.probability,
            })
            .collect(),
        terciles: o
            .terciles
            .iter()
            .map(|t| api::Terciles {
                reference: match t.reference {
                    ReferenceKind::Climatology => api::TercileReference::Climatology1991To2020,
                    ReferenceKind::TrendOnly => api::TercileReference::TrendOnly,
                },
                edges: t.edges,
                below: t.below,
                near: t.near,
                above: t.above,
                edge_lower_shares: t.edge_lower_shares,
                reference_mean: t.reference_mean,
            })
            .collect(),
        climatological_mean: o.climatological_mean,
        last_season_observed: o.last_season_observed.as_ref().map(|l| api::LastSeason {
            season: l.season.clone(),
            flood_days: l.flood_days,
            observed_days: l.observed_days,
        }),
        drivers: o
            .drivers
            .iter()
            .map(|d| api::DriverUse {
                name: d.name.to_string(),
                value: d.value,
                unit: d.unit.to_owned(),
                rate_ratio: d.rate_ratio,
                rate_ratio_ci: d.rate_ratio_ci,
                per: d.per.to_owned(),
                value_range: [d.value_p10, d.value_p90],
                effect: d.effect,
                source: d.source.clone(),
            })
            .collect(),
        skill,
        cautions: crate::cautions::with_standard(o.cautions.clone()),
        issued_at: issue.issued_at.to_owned(),
        model_version: issue.model_version.to_owned(),
        explanation: o.explanation.clone(),
        trend_only_mean: o.trend_only_mean,
        family: family_name(o.family).to_owned(),
        fit_period: api::FitPeriod {
            first: o.fit_period.first.clone(),
            last: o.fit_period.last.clone(),
            seasons: u32::try_from(o.fit_period.seasons).unwrap_or(u32::MAX),
        },
        notes: o.notes.clone(),
        engine: engine_name(o.engine).to_owned(),
        engine_reason: o.engine_reason.clone(),
        other_engine: o.other_engine.as_ref().map(|e| api::EngineSummary {
            engine: engine_name(e.engine).to_owned(),
            mean: e.mean,
            median: e.median,
            p10: e.p10,
            p90: e.p90,
        }),
        days: o
            .days
            .iter()
            .map(|d| api::DayChance {
                date: d.date.to_string(),
                predicted_high_m: d.predicted_high_m,
                chance: d.chance,
            })
            .collect(),
        water_effects: o
            .water
            .iter()
            .flat_map(|w| &w.effects)
            .map(|e| api::WaterEffect {
                name: e.name.clone(),
                per: e.per.to_owned(),
                estimate_m: e.estimate_m,
                std_error_m: e.std_error_m,
                interval95_m: e.interval95_m,
            })
            .collect(),
        plan_on,
        first_day: String::new(),
        last_day: String::new(),
        count_unit: COUNT_UNIT.to_owned(),
        valid_until: String::new(),
        record_last_day: None,
        would_change: Vec::new(),
    }
}

/// The number to plan with, from the outlook, its references and its skill verdict.
fn plan_on_of(o: &model_outlook::Outlook, skill: &api::Skill) -> api::PlanOn {
    let reference = |kind: ReferenceKind| o.terciles.iter().find(|t| t.reference == kind);
    let answer = |t: &model_outlook::TercileOutlook| super::plan_on::Answer {
        mean: t.reference_mean,
        range: t.reference_range,
    };
    let climatology = reference(ReferenceKind::Climatology);
    super::plan_on::plan_on(&super::plan_on::PlanInputs {
        verdict: skill.verdict,
        seasons_scored: skill.seasons_scored,
        season_name: &skill.season_name,
        outlook: super::plan_on::Answer {
            mean: o.mean,
            range: [o.p10, o.p90],
        },
        climatology: climatology.map_or(
            super::plan_on::Answer {
                mean: o.climatological_mean,
                range: [o.p10, o.p90],
            },
            answer,
        ),
        climatology_is_whole_record: climatology.is_some_and(|t| t.fallback),
        trend_only: reference(ReferenceKind::TrendOnly).map(answer),
    })
}

/// The unit of an outlook's counts.
pub const COUNT_UNIT: &str = "days";

/// Fills an outlook's calendar: the season's first and last day, the count's unit, the day
/// the outlook stops standing (the season's last day), the record's last day, and what would
/// change the outlook.
pub fn date_outlook(
    outlook: &mut api::Outlook,
    target: &tidetally_model::season::Season,
    record_last_day: Option<chrono::NaiveDate>,
) {
    outlook.first_day = target.first_day().to_string();
    outlook.last_day = target.last_day().to_string();
    outlook.count_unit = COUNT_UNIT.to_owned();
    outlook.valid_until = outlook.last_day.clone();
    outlook.record_last_day = record_last_day.map(|d| d.to_string());
    outlook.would_change = would_change(outlook);
}

/// What would change an outlook, in plain sentences: new levels always; a driver's new
/// values or forecast for each driver it uses.
fn would_change(outlook: &api::Outlook) -> Vec<String> {
    let mut text = vec![format!(
        "New water levels after {}: the model is refitted and the outlook reissued.",
        outlook
            .record_last_day
            .as_deref()
            .unwrap_or("the record's end")
    )];
    for driver in &outlook.drivers {
        let sentence = match driver.name.as_str() {
            "enso" => "A new ENSO forecast or new ENSO index values.".to_owned(),
            "mjo" => "New MJO (RMM) index values.".to_owned(),
            "wind" => "New wind records.".to_owned(),
            "sea_level" => "New monthly mean sea levels.".to_owned(),
            "tide" => continue,
            other => format!("New values of the {other} driver."),
        };
        if !text.contains(&sentence) {
            text.push(sentence);
        }
    }
    text.push(format!(
        "After {}, the season's observed count replaces the outlook.",
        outlook.valid_until
    ));
    text
}

/// The wire name of an engine.
pub fn engine_name(engine: model_outlook::Engine) -> &'static str {
    match engine {
        model_outlook::Engine::Water => "water",
        model_outlook::Engine::Count => "count",
    }
}

/// The hindcast system of an engine.
pub fn engine_kind(engine: model_outlook::Engine) -> ModelKind {
    match engine {
        model_outlook::Engine::Water => ModelKind::Water,
        model_outlook::Engine::Count => ModelKind::Drivers,
    }
}

/// The driver values behind an outlook, for the record of issued outlooks.
pub fn driver_inputs(o: &model_outlook::Outlook) -> serde_json::Value {
    let drivers: serde_json::Map<String, serde_json::Value> = o
        .drivers
        .iter()
        .map(|d| {
            (
                d.name.to_string(),
                serde_json::json!({
                    "value": d.value,
                    "unit": d.unit,
                    "value_range": [d.value_p10, d.value_p90],
                    "source": d.source,
                }),
            )
        })
        .collect();
    serde_json::Value::Object(drivers)
}

/// The skill of a season name when no hindcast could be run.
pub fn skill_not_measured(season_name: &str, why: &str) -> api::Skill {
    api::Skill {
        verdict: api::Verdict::NotMeasured,
        verdict_text: format!(
            "The skill of {season_name} outlooks at this gauge could not be measured out of \
             sample ({why}); read the outlook as unverified."
        ),
        seasons_scored: 0,
        season_name: season_name.to_owned(),
        scheme: SHOWN_SCHEME.to_owned(),
        scores: Vec::new(),
        engine: String::new(),
        enso: String::new(),
        perfect_enso_text: None,
    }
}

fn is_skilful(h: &SeasonHindcast, model: ModelKind, reference: ModelKind) -> Option<bool> {
    h.verdict_of(model, reference)
        .map(|v| v.verdict == VerdictKind::Skilful)
}

/// The verdict of a hindcast: beats climatology (and the trend, when there is one), beats
/// climatology only, or not better than climatology.
fn verdict(h: &SeasonHindcast, model: ModelKind) -> api::Verdict {
    match (
        is_skilful(h, model, ModelKind::Climatology),
        is_skilful(h, model, ModelKind::TrendOnly),
    ) {
        (None, _) => api::Verdict::NotMeasured,
        (Some(false), _) => api::Verdict::NoBetterThanClimatology,
        (Some(true), Some(false)) => api::Verdict::TrendOnly,
        (Some(true), Some(true) | None) => api::Verdict::BeatsClimatology,
    }
}

fn score_rows(scheme: &SchemeHindcast, kind: ModelKind) -> Vec<api::ScoreRow> {
    let (Some(model), Some(clim)) = (
        scheme.scores_of(kind),
        scheme.scores_of(ModelKind::Climatology),
    ) else {
        return Vec::new();
    };
    let trend = scheme.scores_of(ModelKind::TrendOnly);
    let row = |name: String, m: f64, c: f64, t: Option<f64>| api::ScoreRow {
        name,
        model: m,
        climatology: c,
        trend_only: t,
        skill_vs_climatology: 1.0 - m / c,
    };
    let mut rows = vec![
        row("crps".into(), model.crps, clim.crps, trend.map(|t| t.crps)),
        row("rps".into(), model.rps, clim.rps, trend.map(|t| t.rps)),
        row(
            "log_score".into(),
            model.log_score,
            clim.log_score,
            trend.map(|t| t.log_score),
        ),
    ];
    for b in &model.brier {
        let of = |s: &tidetally_model::hindcast::ModelScores| {
            s.brier.iter().find(|x| x.days == b.days).map(|x| x.score)
        };
        if let Some(c) = of(clim) {
            rows.push(row(
                format!("brier_{}", b.days),
                b.score,
                c,
                trend.and_then(of),
            ));
        }
    }
    rows
}

fn verdict_text(h: &SeasonHindcast, model: ModelKind) -> Vec<String> {
    [ModelKind::Climatology, ModelKind::TrendOnly]
        .into_iter()
        .filter_map(|r| h.verdict_of(model, r).map(|v| v.sentence.clone()))
        .collect()
}

fn enso_name(h: &SeasonHindcast) -> &'static str {
    match h.enso {
        ConcurrentEnso::Observed => "observed",
        ConcurrentEnso::Resampled => "resampled",
        ConcurrentEnso::AtIssue => "at_issue",
    }
}

/// The skill summary of `engine` in a season name's hindcast (ENSO as known at issue time),
/// with the verdict under perfect ENSO beside it when there is one.
pub fn engine_skill(
    h: &SeasonHindcast,
    engine: model_outlook::Engine,
    perfect: Option<&SeasonHindcast>,
) -> api::Skill {
    let kind = engine_kind(engine);
    let shown = h.scheme(SHOWN_SCHEME);
    let mut text = verdict_text(h, kind);
    if text.is_empty() {
        text.push(format!(
            "No {} season could be forecast out of sample, so the outlook's skill is not \
             measured.",
            h.season_name
        ));
    }
    api::Skill {
        verdict: verdict(h, kind),
        verdict_text: text.join(" "),
        seasons_scored: shown.map_or(0, |s| u32::try_from(s.cases.len()).unwrap_or(u32::MAX)),
        season_name: h.season_name.clone(),
        scheme: SHOWN_SCHEME.to_owned(),
        scores: shown.map(|s| score_rows(s, kind)).unwrap_or_default(),
        engine: engine_name(engine).to_owned(),
        enso: enso_name(h).to_owned(),
        perfect_enso_text: perfect.map(|p| {
            format!(
                "With each past season's ENSO as later observed (a perfect ENSO forecast, an \
                 upper bound): {}",
                verdict_text(p, kind).join(" ")
            )
        }),
    }
}

/// The full hindcast of a season name as served.
pub fn hindcast(
    gauge: &str,
    h: &SeasonHindcast,
    perfect: Option<&SeasonHindcast>,
    lead: model_outlook::Engine,
    model_version: &str,
) -> api::Hindcast {
    let cases = h
        .scheme(SHOWN_SCHEME)
        .map(|scheme| {
            scheme
                .cases
                .iter()
                .filter_map(|c| {
                    let at = c.means.iter().position(|m| m.model == ModelKind::Drivers)?;
                    let pmf = c.pmfs.get(at)?;
                    let water = c.means.iter().position(|m| m.model == ModelKind::Water);
                    Some(api::HindcastCase {
                        season: c.season.clone(),
                        observed: c.observed,
                        mean: c.means[at].mean,
                        p10: quantile_count(pmf, 0.1),
                        p90: quantile_count(pmf, 0.9),
                        crps: crps_count(pmf, c.observed),
                        water_mean: water.map(|w| c.means[w].mean),
                        water_crps: water
                            .and_then(|w| c.pmfs.get(w))
                            .map(|p| crps_count(p, c.observed)),
                    })
                })
                .collect()
        })
        .unwrap_or_default();
    api::Hindcast {
        gauge: gauge.to_owned(),
        model_version: model_version.to_owned(),
        method: SHOWN_SCHEME.to_owned(),
        skill: engine_skill(h, lead, perfect),
        cases,
        engines: h
            .engines
            .iter()
            .map(|e| {
                let engine = if e.model == ModelKind::Water {
                    model_outlook::Engine::Water
                } else {
                    model_outlook::Engine::Count
                };
                api::EngineSkill {
                    engine: engine_name(engine).to_owned(),
                    mean_crps: e.mean_crps,
                    crps_by_scheme: e.crps_by_scheme.clone(),
                    verdict_text: verdict_text(h, e.model).join(" "),
                }
            })
            .collect(),
    }
}
