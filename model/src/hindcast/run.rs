//! Running the hindcast of one season name: the systems' full-record fits, every scheme's
//! cases (each system refitted on the case's training seasons and forecast through the same
//! predictive path as the outlook), the scores and the verdicts.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;

use super::baselines::{ConcurrentEnso, ModelKind, known_at_issue};
use super::predict;
use super::refit;
use super::report::{
    CaseRecord, DriverAtIssue, EngineScore, ForecastMean, SchemeHindcast, SeasonHindcast,
    SkippedCase, SystemFamily,
};
use super::schemes::Scheme;
use super::scoring::{self, SkillEntry};
use super::verdict::{self, HEADLINE_SCORE, VerdictReport};
use super::{HindcastError, HindcastOptions, HindcastSetup, PERFECT_ENSO_CAVEAT, check_options};
use crate::drivers::{EnsoSeries, EnsoTiming, MonthlyMeanLevel};
use crate::fit::{Design, DesignRow, Predictor, fit_design};
use crate::glm::{Family, FamilyRequest};
use crate::season::Season;
use crate::verify::Bootstrap;
use crate::water::{self, GaugeWater, SeasonPlan};

/// Random stream of a case's scenario draws (the systems use their own index).
const SCENARIO_STREAM: u64 = 15;
/// Random stream of a case's ENSO-at-issue draws.
const ENSO_STREAM: u64 = 14;

/// One count system of a season name's hindcast: its design columns and fixed family.
struct CountSystem {
    kind: ModelKind,
    design: Design,
    family: Family,
    /// The full-record fit, where every refit starts.
    start: refit::WarmStart,
}

/// The water-level engine of the season name, with the design rows mapped to its seasons.
struct WaterSystem<'a> {
    gauge: &'a GaugeWater,
    /// For each design row, the engine's season index.
    season_of_row: Vec<Option<usize>>,
}

/// Everything every case of a scheme shares.
struct CaseContext<'a> {
    systems: &'a [CountSystem],
    water: Option<&'a WaterSystem<'a>>,
    enso_series: Option<&'a EnsoSeries>,
    /// The ENSO treatments each case is forecast under (its refits shared by all).
    knowledge: &'a [EnsoKnowledge],
    scheme: Scheme,
    scheme_number: u64,
    options: &'a HindcastOptions,
}

/// How a case's forecast knows the season's own ENSO.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct EnsoKnowledge {
    /// The treatment asked for.
    treatment: ConcurrentEnso,
    /// Whether the count model uses the season's own ENSO (else the preceding season's,
    /// always known).
    count_concurrent: bool,
}

impl EnsoKnowledge {
    /// Where the count model's ENSO comes from in a case.
    fn count_source(self) -> EnsoFrom {
        if !self.count_concurrent {
            return EnsoFrom::Target;
        }
        self.water_source()
    }

    /// Where the water engine's ENSO (that of the season's own months) comes from.
    fn water_source(self) -> EnsoFrom {
        match self.treatment {
            ConcurrentEnso::Observed => EnsoFrom::Target,
            ConcurrentEnso::Resampled => EnsoFrom::Resampled,
            ConcurrentEnso::AtIssue => EnsoFrom::AtIssue,
        }
    }
}

/// The three ways a forecast can know a season's ENSO.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum EnsoFrom {
    Target,
    Resampled,
    AtIssue,
}

/// Hindcasts one season name.
///
/// # Errors
/// Bad options, no usable season, or a full-record fit of the driver model or the
/// climatology that fails.
pub fn hindcast_season(
    setup: &HindcastSetup<'_>,
    options: &HindcastOptions,
) -> Result<SeasonHindcast, HindcastError> {
    let mut one = hindcast_season_under(setup, options, &[options.concurrent_enso])?;
    Ok(one.remove(0))
}

/// As [`hindcast_season`], once for each of `treatments` of the season's own ENSO (in order;
/// `options.concurrent_enso` is not used). Every case is refitted once, the count models and
/// the water engine alike, and forecast under each treatment: the treatments differ only in
/// how the forecast knows ENSO, so each report is what a separate run would give.
///
/// # Errors
/// As [`hindcast_season`].
pub fn hindcast_season_under(
    setup: &HindcastSetup<'_>,
    options: &HindcastOptions,
    treatments: &[ConcurrentEnso],
) -> Result<Vec<SeasonHindcast>, HindcastError> {
    let bootstrap = check_options(options)?;
    let mut notes = Vec::new();
    let full = full_design(setup, &mut notes)?;
    let systems = count_systems(setup, &full, &mut notes)?;
    let water = setup.water.map(|gauge| WaterSystem {
        gauge,
        season_of_row: full
            .rows
            .iter()
            .map(|r| gauge.index_of(&r.season))
            .collect(),
    });
    let uses_enso = setup.predictors.contains(&Predictor::Enso);
    let knowledge: Vec<EnsoKnowledge> = treatments
        .iter()
        .map(|&treatment| EnsoKnowledge {
            treatment,
            count_concurrent: setup.enso_timing == EnsoTiming::Concurrent && uses_enso,
        })
        .collect();
    let mut families: Vec<SystemFamily> = systems
        .iter()
        .map(|s| SystemFamily {
            model: s.kind,
            family: Some(s.family),
        })
        .collect();
    if water.is_some() {
        families.push(SystemFamily {
            model: ModelKind::Water,
            family: None,
        });
    }
    let mut schemes: Vec<Vec<SchemeHindcast>> = treatments.iter().map(|_| Vec::new()).collect();
    for (scheme_number, scheme) in options.schemes().into_iter().enumerate() {
        let context = CaseContext {
            systems: &systems,
            water: water.as_ref(),
            enso_series: setup.enso,
            knowledge: &knowledge,
            scheme,
            scheme_number: scheme_number as u64,
            options,
        };
        let reports = run_scheme(&context, setup.exceed_days, &bootstrap)?;
        for (list, report) in schemes.iter_mut().zip(reports) {
            list.push(report);
        }
    }
    let has_trend = systems.iter().any(|s| s.kind == ModelKind::TrendOnly);
    let water_enso = water
        .as_ref()
        .is_some_and(|w| w.gauge.config.params().columns.enso);
    Ok(knowledge
        .iter()
        .zip(schemes)
        .map(|(enso, schemes)| {
            let perfect_enso =
                enso.treatment == ConcurrentEnso::Observed && (enso.count_concurrent || water_enso);
            let mut notes = notes.clone();
            if perfect_enso {
                notes.push(PERFECT_ENSO_CAVEAT.trim_start().to_owned());
            }
            let overall = |model: ModelKind| -> Vec<VerdictReport> {
                [ModelKind::Climatology, ModelKind::TrendOnly]
                    .into_iter()
                    .filter(|&r| r != ModelKind::TrendOnly || has_trend)
                    .map(|reference| {
                        let entries: Vec<(Scheme, &SkillEntry)> = schemes
                            .iter()
                            .filter_map(|s| {
                                s.skill_of(model, reference)
                                    .and_then(|r| r.entry(HEADLINE_SCORE))
                                    .map(|e| (s.scheme, e))
                            })
                            .collect();
                        let mut report = verdict::overall_verdict(
                            setup.gauge_name,
                            &full.season_name,
                            reference,
                            &entries,
                        );
                        if model == ModelKind::Water {
                            report.sentence =
                                report
                                    .sentence
                                    .replacen("outlooks", "water-level outlooks", 1);
                        }
                        if perfect_enso {
                            report.sentence.push_str(PERFECT_ENSO_CAVEAT);
                        }
                        report
                    })
                    .collect()
            };
            let verdicts = overall(ModelKind::Drivers);
            let water_verdicts = if water.is_some() {
                overall(ModelKind::Water)
            } else {
                Vec::new()
            };
            let engines = [ModelKind::Drivers, ModelKind::Water]
                .into_iter()
                .filter_map(|model| engine_score(&schemes, model))
                .collect();
            SeasonHindcast {
                season_name: full.season_name.clone(),
                predictors: setup.predictors.to_vec(),
                issue_time: setup
                    .predictors
                    .iter()
                    .map(|&p| issue_rule(p, setup.enso_timing, enso.treatment))
                    .collect(),
                families: families.clone(),
                usable_seasons: full.rows.len(),
                left_out: full.left_out.clone(),
                schemes,
                verdicts,
                water_verdicts,
                enso: enso.treatment,
                engines,
                notes,
            }
        })
        .collect())
}

/// The design with the sea level added when the model lacks it (for the trend-only
/// baseline), when every season the model uses has it.
fn full_design(
    setup: &HindcastSetup<'_>,
    notes: &mut Vec<String>,
) -> Result<Design, HindcastError> {
    let requested = Design::build(setup.seasons, setup.season_name, setup.predictors);
    let mut columns = setup.predictors.to_vec();
    let with_trend = if columns.contains(&Predictor::SeaLevel) {
        Some(requested.clone())
    } else {
        columns.push(Predictor::SeaLevel);
        let d = Design::build(setup.seasons, setup.season_name, &columns);
        (d.rows.len() == requested.rows.len()).then_some(d)
    };
    let full = match with_trend {
        Some(d) => d,
        None => {
            notes.push(
                "the sea-level trend is missing for some seasons, so there is no trend-only \
                 baseline"
                    .to_owned(),
            );
            requested
        }
    };
    if full.rows.is_empty() {
        return Err(HindcastError::NoSeasons {
            season_name: setup.season_name.to_owned(),
            missing: full.left_out.first().map(|l| l.reason.to_string()),
        });
    }
    Ok(full)
}

fn count_systems(
    setup: &HindcastSetup<'_>,
    full: &Design,
    notes: &mut Vec<String>,
) -> Result<Vec<CountSystem>, HindcastError> {
    let has_trend = full.predictors.contains(&Predictor::SeaLevel);
    let mut systems = Vec::new();
    for kind in [
        ModelKind::Drivers,
        ModelKind::Climatology,
        ModelKind::TrendOnly,
    ] {
        if kind == ModelKind::TrendOnly && !has_trend {
            continue;
        }
        let design = full.select(&kind.predictors(setup.predictors));
        match fit_design(&design, setup.family) {
            Ok(model) => systems.push(CountSystem {
                kind,
                design,
                family: model.family,
                start: refit::WarmStart::of(&model),
            }),
            Err(source) if kind == ModelKind::TrendOnly => notes.push(format!(
                "the trend-only baseline could not be fitted on the full record ({source}), so \
                 it is left out"
            )),
            Err(source) => {
                return Err(HindcastError::FullFit {
                    model: kind,
                    source,
                });
            }
        }
    }
    Ok(systems)
}

fn engine_score(schemes: &[SchemeHindcast], model: ModelKind) -> Option<EngineScore> {
    let crps_by_scheme: Vec<f64> = schemes
        .iter()
        .map(|s| s.scores_of(model).map(|m| m.crps))
        .collect::<Option<_>>()?;
    if crps_by_scheme.is_empty() {
        return None;
    }
    let mean_crps = crps_by_scheme.iter().sum::<f64>() / crps_by_scheme.len() as f64;
    Some(EngineScore {
        model,
        crps_by_scheme,
        mean_crps,
    })
}

fn issue_rule(p: Predictor, timing: EnsoTiming, concurrent: ConcurrentEnso) -> DriverAtIssue {
    let rule = match (p, timing, concurrent) {
        (Predictor::Enso, EnsoTiming::Preceding, _) => {
            "ENSO of the preceding season, observed before the season begins"
        }
        (Predictor::Enso, EnsoTiming::Concurrent, ConcurrentEnso::Observed) => {
            "the season's own ENSO as observed, standing in for a forecast issued before the \
             season (past forecasts are not among the gauge's inputs): skill with a perfect \
             ENSO forecast, an upper bound"
        }
        (Predictor::Enso, EnsoTiming::Concurrent, ConcurrentEnso::Resampled) => {
            "the season's own ENSO is not known at issue time: resampled from the training \
             seasons together with MJO and wind"
        }
        (Predictor::Enso, EnsoTiming::Concurrent, ConcurrentEnso::AtIssue) => {
            "the season's own ENSO as it was known at issue time: the month before the season \
             carried forward, with that persistence's error in the training seasons"
        }
        (Predictor::Mjo | Predictor::Wind, _, _) => {
            "not known at issue time: each scenario takes the value of one training season \
             drawn at random, as the outlook resamples past seasons"
        }
        (Predictor::SeaLevel, _, _) => {
            "the sea-level trend at the season's middle, from the full-record trend line (a \
             smooth line; not refitted per forecast)"
        }
        (Predictor::Tide, _, _) => "the predicted astronomical tide, known in advance",
    };
    let concurrent_known =
        timing == EnsoTiming::Preceding || concurrent == ConcurrentEnso::Observed;
    DriverAtIssue {
        predictor: p,
        known: known_at_issue(p, concurrent_known),
        rule: rule.to_owned(),
    }
}

/// What one case produced: its record, or why it was skipped.
enum CaseOutcome {
    Forecast(CaseRecord),
    Skipped(SkippedCase),
}

/// Runs every case of a scheme once, and scores it under each ENSO treatment of the context
/// (one report per treatment, in order).
fn run_scheme(
    context: &CaseContext<'_>,
    exceed_days: &[u32],
    bootstrap: &Bootstrap,
) -> Result<Vec<SchemeHindcast>, HindcastError> {
    let systems = context.systems;
    let scheme = context.scheme;
    // Every system's design has the same rows in the same order.
    let rows = &systems[0].design.rows;
    let outcomes: Vec<Option<Vec<CaseOutcome>>> = (0..rows.len())
        .into_par_iter()
        .map(|target| {
            let training = scheme.training(rows, target)?;
            Some(forecast_case(context, target, &training))
        })
        .collect();
    let mut per_treatment: Vec<(Vec<CaseRecord>, Vec<SkippedCase>)> = context
        .knowledge
        .iter()
        .map(|_| Default::default())
        .collect();
    for case in outcomes.into_iter().flatten() {
        for (outcome, (cases, skipped)) in case.into_iter().zip(&mut per_treatment) {
            match outcome {
                CaseOutcome::Forecast(c) => cases.push(c),
                CaseOutcome::Skipped(s) => skipped.push(s),
            }
        }
    }
    let mut kinds: Vec<(ModelKind, Option<Family>)> =
        systems.iter().map(|s| (s.kind, Some(s.family))).collect();
    if context.water.is_some() {
        kinds.push((ModelKind::Water, None));
    }
    per_treatment
        .into_iter()
        .map(|(cases, skipped)| {
            score_scheme(scheme, cases, skipped, &kinds, exceed_days, bootstrap)
        })
        .collect()
}

/// The scores, skill intervals and verdicts of one scheme's cases.
fn score_scheme(
    scheme: Scheme,
    cases: Vec<CaseRecord>,
    skipped: Vec<SkippedCase>,
    kinds: &[(ModelKind, Option<Family>)],
    exceed_days: &[u32],
    bootstrap: &Bootstrap,
) -> Result<SchemeHindcast, HindcastError> {
    let mut report = SchemeHindcast {
        scheme,
        rule: scheme.rule(),
        cases,
        skipped,
        models: Vec::new(),
        skill: Vec::new(),
        verdicts: Vec::new(),
        water_verdicts: Vec::new(),
    };
    if report.cases.is_empty() {
        return Ok(report);
    }
    let mut pmfs = vec![Vec::new(); ModelKind::ALL.len()];
    for case in &report.cases {
        for (mean, pmf) in case.means.iter().zip(&case.pmfs) {
            pmfs[mean.model.index()].push(pmf.clone());
        }
    }
    let set = scoring::CaseSet {
        observed: report.cases.iter().map(|c| c.observed).collect(),
        pmfs,
    };
    let scored = scoring::score(&set, kinds, exceed_days)?;
    let skill = scoring::skill(
        &scored,
        kinds,
        &[
            scoring::Comparison {
                models: &[ModelKind::Drivers, ModelKind::TrendOnly, ModelKind::Water],
                reference: ModelKind::Climatology,
            },
            scoring::Comparison {
                models: &[ModelKind::Drivers, ModelKind::Water],
                reference: ModelKind::TrendOnly,
            },
        ],
        bootstrap,
    );
    report.models = scored.table;
    report.skill = skill;
    let n = report.cases.len();
    let verdicts_of = |model: ModelKind| -> Vec<VerdictReport> {
        [ModelKind::Climatology, ModelKind::TrendOnly]
            .into_iter()
            .filter_map(|reference| {
                report
                    .skill_of(model, reference)
                    .and_then(|r| r.entry(HEADLINE_SCORE))
                    .map(|e| verdict::scheme_verdict(reference, e, n))
            })
            .collect()
    };
    let verdicts = verdicts_of(ModelKind::Drivers);
    let water_verdicts = verdicts_of(ModelKind::Water);
    report.verdicts = verdicts;
    report.water_verdicts = water_verdicts;
    Ok(report)
}

/// The random stream of one (scheme, case, system) triple.
fn stream(seed: u64, scheme: u64, case: usize, system: u64) -> ChaCha8Rng {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    rng.set_stream((scheme << 40) | ((case as u64) << 4) | system);
    rng
}

/// A case's refits on its training seasons, shared by every ENSO treatment (the treatments
/// differ only in how the forecast knows the season's ENSO, not in what is fitted).
struct CaseFits {
    /// Each count system's refit, or why it failed.
    count: Vec<Result<refit::Refit, String>>,
    /// The water engine's fit with its target and training seasons, or why it failed.
    water: Option<Result<WaterCase, String>>,
}

/// The water engine's part of a case.
struct WaterCase {
    fit: water::WaterFit,
    target: usize,
    train: Vec<usize>,
}

/// Forecasts one case under each ENSO treatment of the context, in order.
fn forecast_case(context: &CaseContext<'_>, target: usize, training: &[usize]) -> Vec<CaseOutcome> {
    let CaseContext {
        systems,
        options,
        scheme_number,
        ..
    } = *context;
    let first = &systems[0].design.rows[target];
    let skip = |reason: String| {
        CaseOutcome::Skipped(SkippedCase {
            season: first.season.label(),
            reason,
        })
    };
    if training.is_empty() {
        return context
            .knowledge
            .iter()
            .map(|_| skip("no training season".to_owned()))
            .collect();
    }
    let training_seasons: Vec<Season> = training
        .iter()
        .map(|&i| systems[0].design.rows[i].season.clone())
        .collect();
    let mut scenario_rng = stream(options.seed, scheme_number, target, SCENARIO_STREAM);
    let scenario: Vec<usize> = (0..options.draws)
        .map(|_| training[scenario_rng.gen_range(0..training.len())])
        .collect();
    let fits = CaseFits {
        count: systems
            .iter()
            .map(|system| count_fit(system, training))
            .collect(),
        water: context
            .water
            .map(|water| water_fit(context.scheme, water, target, training)),
    };
    context
        .knowledge
        .iter()
        .map(|&enso| {
            forecast_case_under(
                context,
                enso,
                target,
                training,
                &training_seasons,
                &scenario,
                &fits,
            )
            .unwrap_or_else(skip)
        })
        .collect()
}

fn forecast_case_under(
    context: &CaseContext<'_>,
    enso: EnsoKnowledge,
    target: usize,
    training: &[usize],
    training_seasons: &[Season],
    scenario: &[usize],
    fits: &CaseFits,
) -> Result<CaseOutcome, String> {
    let CaseContext {
        systems,
        options,
        scheme_number,
        ..
    } = *context;
    let first = &systems[0].design.rows[target];
    // ENSO as known at issue time, shared by both engines of the case.
    let needs_at_issue =
        enso.count_source() == EnsoFrom::AtIssue || enso.water_source() == EnsoFrom::AtIssue;
    let at_issue: Vec<f64> = if needs_at_issue {
        let series = context
            .enso_series
            .ok_or_else(|| "ENSO at issue time needs the gauge's ENSO index".to_owned())?;
        let mut rng = stream(options.seed, scheme_number, target, ENSO_STREAM);
        water::enso_at_issue(
            series,
            &first.season,
            training_seasons,
            options.draws,
            &mut rng,
        )
        .map_err(|e| e.to_string())?
    } else {
        Vec::new()
    };
    let mut means = Vec::with_capacity(systems.len() + 1);
    let mut pmfs = Vec::with_capacity(systems.len() + 1);
    for (system, fit) in systems.iter().zip(&fits.count) {
        let model = fit.as_ref().map_err(Clone::clone)?;
        let pmf = count_case(context, enso, system, model, target, scenario, &at_issue)?;
        means.push(ForecastMean {
            model: system.kind,
            mean: crate::verify::forecast_mean(&pmf),
        });
        pmfs.push(pmf);
    }
    if let (Some(water), Some(fit)) = (context.water, &fits.water) {
        let case = fit.as_ref().map_err(Clone::clone)?;
        let pmf = water_case(context, enso, water, case, target, &at_issue)?;
        means.push(ForecastMean {
            model: ModelKind::Water,
            mean: crate::verify::forecast_mean(&pmf),
        });
        pmfs.push(pmf);
    }
    Ok(CaseOutcome::Forecast(CaseRecord {
        season: first.season.label(),
        observed: first.flood_days,
        observed_days: first.observed_days,
        training_seasons: training.len(),
        means,
        pmfs,
    }))
}

/// A count system refitted on a case's training seasons.
fn count_fit(system: &CountSystem, training: &[usize]) -> Result<refit::Refit, String> {
    let design = &system.design;
    let sub = Design {
        season_name: design.season_name.clone(),
        predictors: design.predictors.clone(),
        rows: training.iter().map(|&i| design.rows[i].clone()).collect(),
        left_out: Vec::new(),
    };
    let request = match system.family {
        Family::Poisson => FamilyRequest::Poisson,
        Family::Negbin => FamilyRequest::Negbin,
    };
    refit::refit(&sub, request, &system.start).map_err(|e| format!("{:?} refit: {e}", system.kind))
}

fn count_case(
    context: &CaseContext<'_>,
    enso: EnsoKnowledge,
    system: &CountSystem,
    model: &refit::Refit,
    target: usize,
    scenario: &[usize],
    at_issue: &[f64],
) -> Result<Vec<f64>, String> {
    let design = &system.design;
    let enso_from = enso.count_source();
    let sources = predict::sources(&model.predictors, &design.predictors, |p| match p {
        Predictor::Enso => match enso_from {
            EnsoFrom::Target => predict::SourceKind::Target,
            EnsoFrom::Resampled => predict::SourceKind::Resampled,
            EnsoFrom::AtIssue => predict::SourceKind::Given,
        },
        p if known_at_issue(p, true) => predict::SourceKind::Target,
        _ => predict::SourceKind::Resampled,
    });
    let scenario_rows: Vec<&DesignRow> = scenario.iter().map(|&i| &design.rows[i]).collect();
    let mut rng = stream(
        context.options.seed,
        context.scheme_number,
        target,
        system.kind.index() as u64,
    );
    predict::case_pmf(
        &model.glm,
        &sources,
        &design.rows[target],
        &scenario_rows,
        at_issue,
        context.options.draws,
        &mut rng,
    )
    .map_err(|e| e.to_string())
}

/// The water engine fitted on a case's training seasons (the sea-level trend refitted
/// without the held-out months).
fn water_fit(
    scheme: Scheme,
    water: &WaterSystem<'_>,
    target: usize,
    training: &[usize],
) -> Result<WaterCase, String> {
    let gauge = water.gauge;
    let target_index = water.season_of_row[target]
        .ok_or_else(|| "the water engine has no days of this season".to_owned())?;
    let usable = gauge.usable();
    let train: Vec<usize> = training
        .iter()
        .filter_map(|&i| water.season_of_row[i])
        .filter(|i| usable.contains(i))
        .collect();
    let (first_out, last_out) = held_out_span(scheme, &gauge.seasons[target_index].season);
    let months = |m: &MonthlyMeanLevel| {
        let Some(first_of_month) = chrono::NaiveDate::from_ymd_opt(m.year, m.month, 1) else {
            return false;
        };
        match last_out {
            None => first_of_month < first_out,
            Some(last) => first_of_month < first_out || first_of_month > last,
        }
    };
    let fit = gauge
        .fit_on(&train, months)
        .map_err(|e| format!("water engine: {e}"))?;
    Ok(WaterCase {
        fit,
        target: target_index,
        train,
    })
}

fn water_case(
    context: &CaseContext<'_>,
    enso: EnsoKnowledge,
    water: &WaterSystem<'_>,
    case: &WaterCase,
    target: usize,
    at_issue: &[f64],
) -> Result<Vec<f64>, String> {
    let gauge = water.gauge;
    let target_season = &gauge.seasons[case.target];
    let enso_values: Vec<f64> = if gauge.config.params().columns.enso {
        match enso.water_source() {
            EnsoFrom::Target => {
                let series = context
                    .enso_series
                    .ok_or_else(|| "the water engine's ENSO needs the index".to_owned())?;
                let observed = series
                    .seasonal(&target_season.season, EnsoTiming::Concurrent)
                    .map_err(|e| e.to_string())?;
                vec![observed.value]
            }
            EnsoFrom::AtIssue => at_issue.to_vec(),
            EnsoFrom::Resampled => {
                let series = context
                    .enso_series
                    .ok_or_else(|| "the water engine's ENSO needs the index".to_owned())?;
                case.train
                    .iter()
                    .filter_map(|&i| {
                        series
                            .seasonal(&gauge.seasons[i].season, EnsoTiming::Concurrent)
                            .ok()
                            .map(|v| v.value)
                    })
                    .collect()
            }
        }
    } else {
        Vec::new()
    };
    let mut rng = stream(
        context.options.seed,
        context.scheme_number,
        target,
        ModelKind::Water.index() as u64,
    );
    let simulated = water::simulate(
        &case.fit,
        SeasonPlan {
            season: target_season,
            observed_only: true,
        },
        &enso_values,
        context.options.water_simulations,
        &mut rng,
    )
    .map_err(|e| format!("water engine: {e}"))?;
    Ok(simulated.pmf)
}

/// The span of months a case keeps out of its trend refit: everything from the first held-out
/// season on (rolling origin), or the held-out seasons' span (leave-one-year-out).
fn held_out_span(
    scheme: Scheme,
    target: &Season,
) -> (chrono::NaiveDate, Option<chrono::NaiveDate>) {
    match scheme {
        Scheme::RollingOrigin { .. } => (target.first_day(), None),
        Scheme::LeaveOneYearOut { neighbour_years } => {
            let reach = i32::try_from(neighbour_years).unwrap_or(i32::MAX / 2);
            let spec = target.spec().clone();
            let first = Season::new(target.year() - reach, spec.clone())
                .map_or(target.first_day(), |s| s.first_day());
            let last = Season::new(target.year() + reach, spec)
                .map_or(target.last_day(), |s| s.last_day());
            (first, Some(last))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::season::SeasonSpec;

    fn djf(year: i32) -> Season {
        Season::new(year, SeasonSpec::new("DJF", 12, 3).expect("spec")).expect("season")
    }

    fn date(y: i32, m: u32, d: u32) -> chrono::NaiveDate {
        chrono::NaiveDate::from_ymd_opt(y, m, d).expect("date")
    }

    #[test]
    fn the_trend_refit_leaves_out_what_the_scheme_leaves_out() {
        // Rolling origin: everything from the target season's first day on.
        let (first, last) = held_out_span(Scheme::RollingOrigin { min_training: 15 }, &djf(2010));
        assert_eq!((first, last), (date(2010, 12, 1), None));
        // Leave one year out with one neighbour: from the 2009-DJF season to 2011-DJF's end.
        let (first, last) =
            held_out_span(Scheme::LeaveOneYearOut { neighbour_years: 1 }, &djf(2010));
        assert_eq!(first, date(2009, 12, 1));
        assert_eq!(last, Some(date(2012, 2, 29)));
    }

    #[test]
    fn each_engine_knows_enso_as_the_treatment_says() {
        let at = |treatment, count_concurrent| EnsoKnowledge {
            treatment,
            count_concurrent,
        };
        // A count model on the preceding season's ENSO always knows it; the water engine's
        // ENSO is the season's own months, so it follows the treatment.
        let preceding = at(ConcurrentEnso::AtIssue, false);
        assert_eq!(preceding.count_source(), EnsoFrom::Target);
        assert_eq!(preceding.water_source(), EnsoFrom::AtIssue);
        let perfect = at(ConcurrentEnso::Observed, true);
        assert_eq!(perfect.count_source(), EnsoFrom::Target);
        assert_eq!(perfect.water_source(), EnsoFrom::Target);
        let none = at(ConcurrentEnso::Resampled, true);
        assert_eq!(none.count_source(), EnsoFrom::Resampled);
    }

    #[test]
    fn an_issue_rule_says_whether_the_value_is_known() {
        let rule = issue_rule(
            Predictor::Enso,
            EnsoTiming::Concurrent,
            ConcurrentEnso::AtIssue,
        );
        assert!(!rule.known);
        assert!(rule.rule.contains("carried forward"), "{}", rule.rule);
        let rule = issue_rule(
            Predictor::Enso,
            EnsoTiming::Concurrent,
            ConcurrentEnso::Observed,
        );
        assert!(
            rule.known && rule.rule.contains("upper bound"),
            "{}",
            rule.rule
        );
        assert!(
            issue_rule(
                Predictor::Tide,
                EnsoTiming::Preceding,
                ConcurrentEnso::AtIssue
            )
            .known
        );
        assert!(
            !issue_rule(
                Predictor::Wind,
                EnsoTiming::Preceding,
                ConcurrentEnso::Observed
            )
            .known
        );
    }
}
