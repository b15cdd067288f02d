//! Issuing an outlook, the one way through for the command line and the service: the count
//! model's fit and outlook, the water-level engine's fit and simulation, both engines'
//! hindcast (ENSO as known at issue time, and with perfect ENSO as an upper bound), and the
//! engine choice.

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;

use super::engine::{self, EngineRequest, WaterForecast};
use super::{Outlook, OutlookError, OutlookOptions};
use crate::drivers::PastSeason;
use crate::fit::{self, FitOptions, GaugeModel, Predictor, PreparedGauge};
use crate::hindcast::{self, ConcurrentEnso, HindcastOptions, HindcastSetup, SeasonHindcast};
use crate::season::Season;
use crate::water::{self, DayDrivers, GaugeWater, WaterError, WaterReport};

/// Random stream of the water engine's simulation in an outlook.
const WATER_STREAM: u64 = 7;
/// Random stream of the water engine's ENSO scenarios in an outlook.
const WATER_ENSO_STREAM: u64 = 8;

/// Options of an issued outlook.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct IssueOptions {
    /// The count model's outlook options (draws, seed, k, conditioning).
    pub outlook: OutlookOptions,
    /// Which engine leads.
    pub engine: EngineRequest,
    /// Simulated seasons of the water engine (0 = [`water::DEFAULT_SIMULATIONS`]).
    pub simulations: usize,
    /// Hindcast options (the ENSO treatment is set per run).
    pub hindcast: HindcastOptions,
    /// Skip the hindcast (the engine is then chosen without it).
    pub skip_hindcast: bool,
}

/// An issued outlook with the hindcasts behind it.
#[derive(Debug, Clone, PartialEq)]
pub struct Issued {
    /// The outlook.
    pub outlook: Outlook,
    /// The count model of the target's season name.
    pub model: GaugeModel,
    /// The hindcast with ENSO as known at issue time (what a real outlook scores).
    pub at_issue: Option<SeasonHindcast>,
    /// The hindcast with each season's observed ENSO (an upper bound), when the gauge's
    /// engines use the season's own ENSO.
    pub perfect_enso: Option<SeasonHindcast>,
}

/// The hindcast setup of `season_name` at a prepared gauge, the water engine beside the count
/// model.
pub fn hindcast_setup<'a>(
    prepared: &'a PreparedGauge,
    predictors: &'a [Predictor],
    season_name: &'a str,
    water: Option<&'a GaugeWater>,
) -> HindcastSetup<'a> {
    HindcastSetup {
        gauge_name: &prepared.config.name,
        seasons: &prepared.seasons,
        season_name,
        predictors,
        family: fit::family_request(prepared.config.model.family),
        enso_timing: prepared.settings.enso_timing,
        exceed_days: &prepared.config.model.exceed_days,
        enso: prepared.drivers.enso.as_ref(),
        water,
    }
}

/// Both hindcasts of a season name: ENSO as known at issue time, and with perfect ENSO when
/// an engine uses the season's own ENSO.
pub fn hindcasts(
    setup: &HindcastSetup<'_>,
    options: &HindcastOptions,
) -> (
    Result<SeasonHindcast, hindcast::HindcastError>,
    Option<SeasonHindcast>,
) {
    let uses_own_enso = setup.predictors.contains(&Predictor::Enso)
        && (setup.enso_timing == crate::drivers::EnsoTiming::Concurrent
            || setup.water.is_some_and(|w| w.config.params().columns.enso));
    // One run for both treatments: every case's refits are shared.
    let treatments: &[ConcurrentEnso] = if uses_own_enso {
        &[ConcurrentEnso::AtIssue, ConcurrentEnso::Observed]
    } else {
        &[ConcurrentEnso::AtIssue]
    };
    match hindcast::hindcast_season_under(setup, options, treatments) {
        Ok(mut reports) => {
            let perfect = (reports.len() > 1).then(|| reports.remove(1));
            (Ok(reports.remove(0)), perfect)
        }
        Err(e) => (Err(e), None),
    }
}

/// Issues the outlook of `target` at a prepared gauge.
pub fn issue(
    prepared: &PreparedGauge,
    target: &Season,
    options: &IssueOptions,
) -> Result<Issued, OutlookError> {
    let season_name = target.spec().name();
    let model = fit::fit_gauge(prepared, season_name, &FitOptions::default())?;
    let mut notes = Vec::new();
    let water = match GaugeWater::for_gauge(prepared, season_name) {
        Ok(w) => Some(w),
        Err(e) => {
            notes.push(format!("the water-level engine could not be built: {e}"));
            None
        }
    };
    let predictors = prepared.requested_predictors();
    let (at_issue, perfect_enso) = if options.skip_hindcast {
        (None, None)
    } else {
        let setup = hindcast_setup(prepared, &predictors, season_name, water.as_ref());
        let (a, p) = hindcasts(&setup, &options.hindcast);
        match a {
            Ok(a) => (Some(a), p),
            Err(e) => {
                notes.push(format!("the hindcast could not be run: {e}"));
                (None, p)
            }
        }
    };
    let mut outlook = super::build(&model, prepared, target, &options.outlook)?;
    let forecast = match &water {
        Some(w) => match water_forecast(prepared, w, target, options) {
            Ok(f) => Some(f),
            Err(e) => {
                notes.push(format!(
                    "the water-level engine could not forecast {target}: {e}"
                ));
                None
            }
        },
        None => None,
    };
    if let Some(note) = physics_note(&model) {
        notes.push(note);
    }
    outlook.notes.extend(notes);
    let choice = engine::choose(options.engine, forecast.is_some(), at_issue.as_ref());
    let outlook = engine::lead(outlook, forecast, choice);
    Ok(Issued {
        outlook,
        model,
        at_issue,
        perfect_enso,
    })
}

/// A note when the count model's sea-level effect has the wrong sign (a higher sea cannot
/// mean fewer floods at a fixed threshold).
fn physics_note(model: &GaugeModel) -> Option<String> {
    let j = model
        .predictors
        .iter()
        .position(|&p| p == Predictor::SeaLevel)?;
    let c = model.coefficients.get(j + 1)?;
    (c.estimate < 0.0).then(|| {
        format!(
            "The count model's fitted sea-level effect is negative (rate ratio {:.2} per {}), \
             which contradicts the physics: a higher sea cannot bring fewer flood days at a \
             fixed threshold. Read it as an artefact of few seasons and overlapping drivers, \
             not as a finding.",
            c.rate_ratio, c.per
        )
    })
}

/// The water engine's forecast of `target`, fitted on every usable season before it.
pub fn water_forecast(
    prepared: &PreparedGauge,
    water: &GaugeWater,
    target: &Season,
    options: &IssueOptions,
) -> Result<WaterForecast, WaterError> {
    let fit = water.fit_before(Some(target))?;
    let simulations = if options.simulations == 0 {
        water::DEFAULT_SIMULATIONS
    } else {
        options.simulations
    };
    let past_seasons: Vec<Season> = water
        .usable()
        .into_iter()
        .map(|i| water.seasons[i].season.clone())
        .filter(|s| s.first_day() < target.first_day())
        .collect();
    let past: Vec<PastSeason> = prepared
        .seasons
        .iter()
        .zip(&prepared.season_predictors)
        .filter(|(s, _)| s.season.spec().name() == target.spec().name())
        .map(|(_, p)| p.past_season())
        .collect();
    let (enso, enso_source) = if water.config.params().columns.enso {
        let mut rng = stream(options.outlook.seed, WATER_ENSO_STREAM);
        water::gauge::enso_scenarios(
            prepared.drivers.enso_forecast.as_ref(),
            prepared.drivers.enso.as_ref(),
            target,
            &past,
            &past_seasons,
            simulations,
            &mut rng,
        )?
    } else {
        (Vec::new(), "none (the engine does not use ENSO)".to_owned())
    };
    let season = water.future(target, &DayDrivers::default())?;
    let mut rng = stream(options.outlook.seed, WATER_STREAM);
    let simulated = water.forecast(&fit, &season, &enso, simulations, &mut rng)?;
    Ok(WaterForecast {
        simulated,
        season,
        report: WaterReport::of(&fit, &water.season_name),
        enso_source,
    })
}

fn stream(seed: u64, stream: u64) -> ChaCha8Rng {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    rng.set_stream(stream);
    rng
}
