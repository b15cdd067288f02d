//! Generator of tidetally's invented demo coastline: Vennick Bay on the invented Orrin
//! Coast, four gauges of different character, synthetic climate drivers, and the truth that
//! produced them. Everything is invented and seeded: the same build writes byte-identical
//! files.
//!
//! Modules in data-flow order: [`seed`] (random streams), [`calendar`] (days, months,
//! seasons), [`tide`] (astronomical tide), [`drivers`] (ENSO, MJO, wind), [`mod@gauges`] (the
//! four gauges), [`levels`] (water levels, flood days and their expectation), [`seasons`]
//! (per-season truth), [`continuation`] and [`forward`] (the true distribution of the season
//! after the record), [`output`] (file formats), and [`generate`] tying them together.

pub mod calendar;
pub mod continuation;
pub mod drivers;
pub mod forward;
pub mod gauges;
pub mod levels;
pub mod output;
pub mod seasons;
pub mod seed;
pub mod tide;

use std::io;
use std::path::Path;

use rand_distr::{Distribution, StandardNormal};
use serde::Serialize;

use crate::calendar::{day_number, month_index, ymd};
use crate::drivers::{ENSO, EnsoParams, MJO, MjoParams, WIND, WindParams, round_to};
use crate::gauges::{GaugeSpec, gauges, record_end};
use crate::levels::{DailyDrivers, MC_PRUNE_SIGMAS, MC_REPLICATES, MIN_DAY_COMPLETENESS};
use crate::seasons::{SeasonTruth, mean_counts, season_truth};
use crate::seed::{MASTER_SEED, component_rng};
use crate::tide::{CONSTITUENTS, Harmonic};

/// Months of ENSO written to the index file: January 1979 to October 2026 (known at issue).
const ENSO_MONTHS_WRITTEN: usize = 48 * 12 - 2;

/// One invented forecast model of the ENSO forecast file.
#[derive(Debug, Clone, Serialize)]
pub struct ForecastModel {
    /// Model name (invented).
    pub name: &'static str,
    /// Ensemble size.
    pub members: usize,
    /// Systematic bias added to the truth, deg C.
    pub bias_degc: f64,
    /// Member spread, deg C.
    pub spread_degc: f64,
}

/// The three invented ENSO forecast models.
pub const FORECAST_MODELS: [ForecastModel; 3] = [
    ForecastModel {
        name: "gullwing-dynamic",
        members: 30,
        bias_degc: 0.10,
        spread_degc: 0.35,
    },
    ForecastModel {
        name: "ironreef-coupled",
        members: 12,
        bias_degc: -0.15,
        spread_degc: 0.45,
    },
    ForecastModel {
        name: "saltmarsh-statistical",
        members: 20,
        bias_degc: 0.0,
        spread_degc: 0.50,
    },
];

/// Standard deviation of the forecast error shared by all models, deg C.
const SHARED_FORECAST_ERROR_SD: f64 = 0.25;
/// Standard deviation of each model's own error, deg C.
const MODEL_FORECAST_ERROR_SD: f64 = 0.15;

/// Mean flood-day counts of one gauge over a span of seasons.
#[derive(Debug, Clone, Serialize)]
pub struct CountSummary {
    /// Gauge id.
    pub gauge: String,
    /// Season name, e.g. `DJF`.
    pub season: String,
    /// First and last label year.
    pub label_years: [i32; 2],
    /// Seasons averaged (those with at least 80 days inside the record).
    pub seasons: usize,
    /// Mean flood days in the written data.
    pub mean_flood_days: f64,
    /// Mean expected flood days.
    pub mean_expected_flood_days: f64,
}

#[derive(Serialize)]
struct ConstituentTruth {
    name: &'static str,
    coefficients_t_s_h_p_p1: [i32; 5],
    offset_deg: f64,
    doodson_tau_s_h_p_np_pp: [i32; 6],
    doodson_offset_deg: f64,
    speed_deg_per_hour: f64,
    nodal: tide::Nodal,
    amplitude_m: f64,
    phase_deg: f64,
}

#[derive(Serialize)]
struct GaugeTruth<'a> {
    #[serde(flatten)]
    spec: &'a GaugeSpec,
    constituents: Vec<ConstituentTruth>,
    noise_ar1_per_step: f64,
    rate_2000_mm_per_yr: f64,
    rate_2026_mm_per_yr: f64,
}

#[derive(Serialize)]
struct EnsoTruth {
    params: EnsoParams,
    written_months: [String; 2],
    continuation: Vec<(String, f64)>,
    target_season: &'static str,
    target_season_mean_degc: f64,
    sample_sd_1979_2026_degc: f64,
    forecast_models: Vec<ForecastModel>,
    shared_forecast_error_sd_degc: f64,
    model_forecast_error_sd_degc: f64,
    shared_forecast_error_degc: f64,
    pooled_forecast_mean_degc: f64,
}

#[derive(Serialize)]
struct Truth<'a> {
    note: &'static str,
    master_seed: u64,
    rng: &'static str,
    record_end_local: &'static str,
    min_day_completeness: f64,
    flood_day: &'static str,
    expected_counts: ExpectedCountsNote,
    astronomy: &'static str,
    level_model: &'static str,
    enso: EnsoTruth,
    mjo: MjoParams,
    wind: WindParams,
    alongshore_wind: &'static str,
    gauges: Vec<GaugeTruth<'a>>,
    mean_counts: Vec<CountSummary>,
    seasons_file: &'static str,
}

#[derive(Serialize)]
struct ExpectedCountsNote {
    method: &'static str,
    replicates_per_day: usize,
    prune_sigmas: f64,
}

/// What a generation run produced.
#[derive(Debug, Clone)]
pub struct Summary {
    /// Files written (relative paths) with their FNV-1a 64 checksums.
    pub files: Vec<(String, u64)>,
    /// Mean DJF counts 1991-2020 and 2016-2025 per gauge.
    pub mean_counts: Vec<CountSummary>,
    /// Every gauge-season truth row.
    pub seasons: Vec<SeasonTruth>,
    /// The true distribution of the season after the record (`truth-<season>.json`).
    pub forward: forward::ForwardTruth,
}

/// Generate the whole demo coastline into `out` (e.g. `demo-data`).
pub fn generate(out: &Path) -> io::Result<Summary> {
    let seed = MASTER_SEED;
    let mut files: Vec<(String, u64)> = Vec::new();
    let mut put = |relative: &str, bytes: &[u8]| -> io::Result<()> {
        output::write_file(out, relative, bytes)?;
        files.push((relative.to_owned(), output::checksum(bytes)));
        Ok(())
    };

    // Drivers: ENSO through February 2027 (the target season's truth), RMM and wind daily.
    let enso = drivers::enso_series(seed, 48 * 12 + 2);
    let rmm_first = day_number(ymd(1979, 1, 1));
    let last_day = day_number(record_end());
    let (rmm, mjo_end) = drivers::rmm_series_with_end(seed, (last_day - rmm_first + 1) as usize);
    let wind_first = day_number(ymd(1980, 1, 1));
    let (regional, regional_end) =
        drivers::regional_wind_with_end(seed, wind_first, (last_day - wind_first + 1) as usize);
    put(
        "drivers/enso-monthly.csv",
        output::enso_csv(&enso, ENSO_MONTHS_WRITTEN).as_bytes(),
    )?;
    put(
        "drivers/rmm-daily.csv",
        output::rmm_csv(rmm_first, &rmm).as_bytes(),
    )?;

    let specs = gauges();
    let winds: Vec<drivers::GaugeWind> = specs
        .iter()
        .map(|g| drivers::gauge_wind(seed, g.id, &regional, g.wind_format))
        .collect();

    // Levels and counts, one thread per gauge (CPU-bound, independent).
    let results: Vec<(Vec<u8>, Vec<SeasonTruth>, f64)> = std::thread::scope(|scope| {
        let handles: Vec<_> = specs
            .iter()
            .zip(&winds)
            .map(|(gauge, wind)| {
                let (enso, rmm) = (&enso, &rmm);
                scope.spawn(move || {
                    let daily = DailyDrivers {
                        first_day: wind_first,
                        rmm,
                        rmm_first_day: rmm_first,
                        wind_uv: &wind.uv,
                        enso,
                    };
                    let record = levels::build_record(seed, gauge, &daily);
                    let counts = levels::day_counts(seed, gauge, &record);
                    let rows = season_truth(gauge, &record, &counts, &daily);
                    output::levels_csv_gz(gauge, &record).map(|gz| (gz, rows, record.end_noise_z))
                })
            })
            .collect();
        handles
            .into_iter()
            .map(|h| h.join().expect("a gauge thread does not panic"))
            .collect::<io::Result<Vec<_>>>()
    })?;

    let mut all_rows: Vec<SeasonTruth> = Vec::new();
    let mut summaries = Vec::new();
    let mut gauge_ends = Vec::new();
    for ((gauge, wind), (gz, rows, end_noise_z)) in specs.iter().zip(&winds).zip(results) {
        gauge_ends.push(forward::GaugeEnd {
            local_wind: wind.end_local,
            noise_z: end_noise_z,
        });
        put(
            &format!("gauges/{}.toml", gauge.id),
            output::gauge_toml(gauge).as_bytes(),
        )?;
        put(&format!("gauges/{}-levels.csv.gz", gauge.id), &gz)?;
        let wind_text = output::wind_csv(wind_first, gauge.wind_format, &wind.written);
        put(
            &format!("gauges/{}-wind.csv", gauge.id),
            wind_text.as_bytes(),
        )?;
        for (first, last) in [(1991, 2020), (2016, 2025)] {
            let (mean_flood_days, mean_expected_flood_days, seasons) =
                mean_counts(&rows, "DJF", first, last);
            summaries.push(CountSummary {
                gauge: gauge.id.to_owned(),
                season: "DJF".to_owned(),
                label_years: [first, last],
                seasons,
                mean_flood_days,
                mean_expected_flood_days,
            });
        }
        all_rows.extend(rows);
    }

    let (forecast_json, enso_truth, forecast) = enso_forecast(seed, &enso);
    put(
        "drivers/enso-forecast-2026-DJF.json",
        forecast_json.as_bytes(),
    )?;
    put(
        "truth-expected-counts.csv",
        seasons_csv(&all_rows).as_bytes(),
    )?;
    let forward_inputs = forward::ForwardInputs {
        master_seed: seed,
        gauges: &specs,
        record_end_day: last_day,
        shared_end: continuation::SharedEnd {
            mjo: mjo_end,
            regional: regional_end,
        },
        gauge_ends,
        forecast,
        pooled_mean_degc: enso_truth.pooled_forecast_mean_degc,
        replicates: forward::FORWARD_REPLICATES,
    };
    let forward_truth = forward::forward_truth(&forward_inputs);
    let forward_text =
        serde_json::to_string_pretty(&forward_truth).map_err(io::Error::other)? + "\n";
    put(
        &format!("truth-{}.json", forward_truth.season),
        forward_text.as_bytes(),
    )?;
    let truth = truth_document(&specs, enso_truth, summaries.clone());
    let truth_text = serde_json::to_string_pretty(&truth).map_err(io::Error::other)? + "\n";
    put("truth.json", truth_text.as_bytes())?;

    let manifest = output::manifest(&files);
    output::write_file(out, "MANIFEST.fnv1a64", manifest.as_bytes())?;
    Ok(Summary {
        files,
        mean_counts: summaries,
        seasons: all_rows,
        forward: forward_truth,
    })
}

/// Each forecast model's name and members.
type ModelMembers = Vec<(&'static str, Vec<f64>)>;

/// The ENSO forecast file for 2026-DJF, the ENSO part of the truth, and each model's members.
fn enso_forecast(seed: u64, enso: &[f64]) -> (String, EnsoTruth, ModelMembers) {
    let months = [(2026, 11), (2026, 12), (2027, 1), (2027, 2)];
    let continuation: Vec<(String, f64)> = months
        .iter()
        .map(|&(y, m)| (format!("{y}-{m:02}"), enso[month_index(y, m)]))
        .collect();
    let target = continuation[1..].iter().map(|(_, v)| v).sum::<f64>() / 3.0;
    let mut rng = component_rng(seed, "enso-forecast");
    let mut normal = || -> f64 { StandardNormal.sample(&mut rng) };
    let shared = SHARED_FORECAST_ERROR_SD * normal();
    let mut models_json = Vec::new();
    let mut all_members = Vec::new();
    let mut pooled = 0.0;
    for model in &FORECAST_MODELS {
        let centre = target + shared + model.bias_degc + MODEL_FORECAST_ERROR_SD * normal();
        let members: Vec<f64> = (0..model.members)
            .map(|_| round_to(centre + model.spread_degc * normal(), 2))
            .collect();
        pooled += members.iter().sum::<f64>() / members.len() as f64 / FORECAST_MODELS.len() as f64;
        models_json.push(serde_json::json!({"name": model.name, "members": members}));
        all_members.push((model.name, members));
    }
    let doc = serde_json::json!({
        "season": "2026-DJF",
        "issued": "2026-11-15",
        "note": "Invented ensemble forecasts from three invented models for the tidetally demo.",
        "models": models_json,
    });
    let text = serde_json::to_string_pretty(&doc).expect("a JSON value always serialises") + "\n";
    let written = &enso[..ENSO_MONTHS_WRITTEN];
    let mean = written.iter().sum::<f64>() / written.len() as f64;
    let sd =
        (written.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / written.len() as f64).sqrt();
    let truth = EnsoTruth {
        params: ENSO,
        written_months: ["1979-01".to_owned(), "2026-10".to_owned()],
        continuation,
        target_season: "2026-DJF",
        target_season_mean_degc: target,
        sample_sd_1979_2026_degc: sd,
        forecast_models: FORECAST_MODELS.to_vec(),
        shared_forecast_error_sd_degc: SHARED_FORECAST_ERROR_SD,
        model_forecast_error_sd_degc: MODEL_FORECAST_ERROR_SD,
        shared_forecast_error_degc: shared,
        pooled_forecast_mean_degc: pooled,
    };
    (text, truth, all_members)
}

fn truth_document(
    specs: &[GaugeSpec],
    enso: EnsoTruth,
    mean_counts: Vec<CountSummary>,
) -> Truth<'_> {
    let gauges = specs
        .iter()
        .map(|spec| GaugeTruth {
            spec,
            constituents: CONSTITUENTS
                .iter()
                .zip(spec.harmonics)
                .map(
                    |(
                        c,
                        Harmonic {
                            amplitude_m,
                            phase_deg,
                        },
                    )| ConstituentTruth {
                        name: c.name,
                        coefficients_t_s_h_p_p1: c.coefficients,
                        offset_deg: c.offset_deg,
                        doodson_tau_s_h_p_np_pp: c.doodson().0,
                        doodson_offset_deg: c.doodson().1,
                        speed_deg_per_hour: c.speed_deg_per_hour(),
                        nodal: c.nodal,
                        amplitude_m,
                        phase_deg,
                    },
                )
                .collect(),
            noise_ar1_per_step: levels::noise_ar1(spec),
            rate_2000_mm_per_yr: spec.trend.rate_2000_mm_per_yr(),
            rate_2026_mm_per_yr: spec.trend.rate_1990_mm_per_yr
                + 36.0 * spec.trend.acceleration_mm_per_yr2,
        })
        .collect();
    Truth {
        note: "Every number here is invented: the demo coastline is fictional.",
        master_seed: MASTER_SEED,
        rng: "ChaCha8 per component; key = master seed LE, FNV-1a 64 of the component name LE, then both bit-inverted",
        record_end_local: "2026-11-30",
        min_day_completeness: MIN_DAY_COMPLETENESS,
        flood_day: "a local-standard-time day with at least 75% of its readings whose highest written level (converted to metres) is >= flood_threshold_m",
        expected_counts: ExpectedCountsNote {
            method: "per observed day, the probability that the day floods, estimated by simulating the day's unit AR(1) noise (stationary start) at its candidate readings only, exactly via z' = phi^j z + sqrt(1 - phi^(2j)) e for a reading j steps later, with the deterministic level and the missing mask fixed; readings whose deterministic level plus prune_sigmas noise sd stays below the threshold are not candidates; the season's expected count is the sum over its observed days",
            replicates_per_day: MC_REPLICATES,
            prune_sigmas: MC_PRUNE_SIGMAS,
        },
        astronomy: "mean longitudes s, h, p, N, p' from Meeus polynomials in Julian centuries from J2000 (UTC for TT); T = 180 + 15 * UT hours; V = cT*T + cs*s + ch*h + cp*p + cp1*p' + offset (Schureman 1958 Table 2); nodal f, u per Schureman 1958 formulas named in each constituent's `nodal`; tide = sum f*A*cos(V + u - g)",
        level_model: "level above datum = msl_2000_above_datum_m + tide + trend(years since 2000) + enso_m_per_degc * ENSO(local month) + mjo.effect_m * [RMM amplitude >= 1 and phase in mjo.phases on the local day] + wind.setup_m_per_mps * W(local day) (W = max(W, 0) when positive_part_only) + sd(day) * z, z unit AR(1), sd(day) = noise.sd_m * (1 + winter_boost * cos(2 pi (day of year - 15) / 365.25))",
        enso,
        mjo: MJO,
        wind: WIND,
        alongshore_wind: "W = u cos(theta) - v sin(theta), theta = coast_orientation_deg (bearing of the seaward shore normal); positive when the Ekman transport, 90 degrees to the right of the wind, points onshore",
        gauges,
        mean_counts,
        seasons_file: "truth-expected-counts.csv",
    }
}

/// The per-season truth table as CSV.
fn seasons_csv(rows: &[SeasonTruth]) -> String {
    use std::fmt::Write as _;
    let mut text = String::from(
        "gauge,season,days,observed_days,flood_days,expected_flood_days,enso_mean_degc,mjo_active_share,wind_alongshore_mean_mps,wind_alongshore_positive_mean_mps,sea_level_trend_m,tide_daily_max_mean_m\n",
    );
    for r in rows {
        writeln!(
            text,
            "{},{},{},{},{},{:.4},{:.4},{:.4},{:.4},{:.4},{:.5},{:.4}",
            r.gauge,
            r.season,
            r.days,
            r.observed_days,
            r.flood_days,
            r.expected_flood_days,
            r.enso_mean_degc,
            r.mjo_active_share,
            r.wind_alongshore_mean_mps,
            r.wind_alongshore_positive_mean_mps,
            r.sea_level_trend_m,
            r.tide_daily_max_mean_m
        )
        .expect("writing to a String cannot fail");
    }
    text
}
