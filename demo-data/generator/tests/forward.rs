//! Checks of the forward truth (`truth-2026-DJF.json`): the season simulator reproduces the
//! generator's independently computed expected counts for past seasons, the continuation
//! starts from the record's written end, the file's distributions are internally consistent,
//! and the count responds to ENSO as the level model says.

use std::fs;
use std::path::{Path, PathBuf};

use serde_json::Value;
use tidetally_demo::calendar::{Season, date_of, day_number, month_index_of, ymd};
use tidetally_demo::continuation::{self, SharedEnd};
use tidetally_demo::drivers::{self, MjoState, RegionalWindState, written_wind};
use tidetally_demo::forward::{self, EnsoScenario, GaugeEnd, SeasonGrid};
use tidetally_demo::gauges::{GaugeSpec, gauges, record_end};
use tidetally_demo::levels::{self, daily_level, from_milli, noise_ar1, noise_sd, to_milli};
use tidetally_demo::seed::{MASTER_SEED, replicate_rng};

fn demo_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .expect("the generator crate sits inside demo-data")
        .to_path_buf()
}

fn forward_json() -> Value {
    let text = fs::read_to_string(demo_dir().join("truth-2026-DJF.json"))
        .expect("truth-2026-DJF.json is committed");
    serde_json::from_str(&text).expect("the forward truth is JSON")
}

fn f(v: &Value) -> f64 {
    v.as_f64().expect("a number")
}

/// `(observed_days, days, expected_flood_days)` of one gauge-season row of the truth table.
fn expected_row(gauge: &str, season: &str) -> (u32, u32, f64) {
    let text = fs::read_to_string(demo_dir().join("truth-expected-counts.csv"))
        .expect("truth table is committed");
    let line = text
        .lines()
        .find(|l| l.starts_with(&format!("{gauge},{season},")))
        .expect("the season is in the table");
    let v: Vec<&str> = line.split(',').collect();
    (
        v[3].parse().expect("integer"),
        v[2].parse().expect("integer"),
        v[5].parse().expect("number"),
    )
}

/// The season simulator, run on past seasons with the record's own drivers and missing
/// readings and a stationary noise start, agrees with the generator's expected counts,
/// which were computed by a different Monte Carlo (each day on its own, candidate readings
/// only, 1024 replicates per day): same estimand, E[N] = sum over days of P(day floods).
#[test]
fn the_season_simulator_reproduces_past_expected_counts() {
    let seed = MASTER_SEED;
    let specs = gauges();
    let enso = drivers::enso_series(seed, 48 * 12 + 2);
    let last = day_number(record_end());
    let rmm_first = day_number(ymd(1979, 1, 1));
    let rmm = drivers::rmm_series(seed, (last - rmm_first + 1) as usize);
    let wind_first = day_number(ymd(1980, 1, 1));
    let regional = drivers::regional_wind(seed, wind_first, (last - wind_first + 1) as usize);
    let replicates = 3000u64;
    for gauge in &specs {
        let wind = drivers::gauge_wind(seed, gauge.id, &regional, gauge.wind_format);
        let start = day_number(gauge.record_start);
        let per_day = (1440 / gauge.interval_minutes) as usize;
        let mask = levels::missing_mask(seed, gauge, (last - start + 1) as usize, per_day);
        let (mut sim_total, mut sim_var, mut table_total, mut table_var) = (0.0, 0.0, 0.0, 0.0);
        for year in [2019, 2021, 2023, 2025] {
            let (label, first) = (format!("{year}-DJF"), ymd(year, 12, 1));
            let first_day = day_number(first);
            let days = Season::of(first).days() as usize;
            let offset = (first_day - start) as usize * per_day;
            let grid = SeasonGrid::new(gauge, first_day, days)
                .with_presence(&mask[offset..offset + days * per_day]);
            let daily: Vec<f64> = (0..days as i64)
                .map(|d| {
                    let day = first_day + d;
                    daily_level(
                        gauge,
                        enso[month_index_of(date_of(day))],
                        rmm[(day - rmm_first) as usize],
                        wind.uv[(day - wind_first) as usize],
                    )
                })
                .collect();
            let phi = noise_ar1(gauge);
            let mut z = vec![0.0; grid.readings()];
            let counts: Vec<f64> = (0..replicates)
                .map(|r| {
                    let mut rng = replicate_rng(seed, &format!("test-past-{}", gauge.id), r);
                    continuation::noise_path(phi, None, &mut rng, &mut z);
                    f64::from(grid.flood_days(&daily, &z))
                })
                .collect();
            let mean = counts.iter().sum::<f64>() / replicates as f64;
            let var =
                counts.iter().map(|c| (c - mean).powi(2)).sum::<f64>() / (replicates as f64 - 1.0);
            let (observed, _, expected) = expected_row(gauge.id, &label);
            assert!(
                observed > 60,
                "{} {label}: {observed} observed days",
                gauge.id
            );
            sim_total += mean;
            sim_var += var / replicates as f64;
            table_total += expected;
            // The table's per-day estimates: variance at most E / 1024.
            table_var += expected / 1024.0;
        }
        let tolerance = 4.0 * (sim_var + table_var).sqrt() + 0.01;
        assert!(
            (sim_total - table_total).abs() < tolerance,
            "{}: simulated {sim_total:.3} vs table {table_total:.3} (tolerance {tolerance:.3})",
            gauge.id
        );
    }
}

fn shared_end(doc: &Value) -> SharedEnd {
    let m = &doc["end_state"]["mjo"];
    let w = &doc["end_state"]["regional"];
    let pair = |v: &Value| [f(&v[0]), f(&v[1])];
    SharedEnd {
        mjo: MjoState {
            log_amp: f(&m["log_amplitude"]),
            period_drive: f(&m["period_drive"]),
            theta: f(&m["theta_rad"]),
        },
        regional: RegionalWindState {
            slow: pair(&w["slow_uv_mps"]),
            syn: pair(&w["synoptic_uv_unit"]),
        },
    }
}

fn gauge_end(g: &Value) -> GaugeEnd {
    GaugeEnd {
        local_wind: [
            f(&g["end_local_wind_unit"][0]),
            f(&g["end_local_wind_unit"][1]),
        ],
        noise_z: f(&g["end_noise_z"]),
    }
}

/// The end state in the file is the state that wrote the record's last day: it reproduces
/// the last RMM row, each gauge's last wind row and each gauge's last written level.
#[test]
fn the_continuation_starts_from_the_written_end_of_the_record() {
    let doc = forward_json();
    let end = shared_end(&doc);
    let rmm_text = fs::read_to_string(demo_dir().join("drivers/rmm-daily.csv")).expect("rmm");
    let last_rmm = rmm_text.lines().last().expect("rows");
    let rmm = end.mjo.rmm();
    assert_eq!(
        last_rmm,
        format!("2026-11-30,{:.4},{:.4}", rmm.rmm1, rmm.rmm2),
        "last RMM row"
    );
    let nov30 = day_number(record_end());
    let regional = end.regional.uv(nov30);
    let truth: Value = serde_json::from_str(
        &fs::read_to_string(demo_dir().join("truth.json")).expect("truth.json"),
    )
    .expect("JSON");
    let enso_nov = f(&truth["enso"]["continuation"][0][1]);
    let specs = gauges();
    let mut levels_checked = 0;
    for g in doc["gauges"].as_array().expect("gauges") {
        let spec: &GaugeSpec = specs
            .iter()
            .find(|s| s.id == g["id"])
            .expect("a known gauge");
        let ge = gauge_end(g);
        let (written, uv) = written_wind(regional, ge.local_wind, spec.wind_format);
        let wind_text = fs::read_to_string(demo_dir().join(format!("gauges/{}-wind.csv", spec.id)))
            .expect("wind file");
        let last = wind_text.lines().last().expect("rows");
        let cols: Vec<f64> = last
            .split(',')
            .skip(1)
            .map(|c| c.parse().expect("number"))
            .collect();
        assert!(last.starts_with("2026-11-30"), "{last}");
        assert!(
            (cols[0] - written[0]).abs() < 1e-9 && (cols[1] - written[1]).abs() < 1e-9,
            "{}: last wind row {last} vs {written:?}",
            spec.id
        );
        // The last reading (23:00 or 23:30 local on 2026-11-30), if written.
        let levels = read_levels(spec);
        let Some(value) = levels.last().and_then(|(t, v)| {
            [
                "2026-12-01T02:00:00Z",
                "2026-12-01T02:30:00Z",
                "2026-11-30T23:00:00-03:00",
            ]
            .contains(&t.as_str())
            .then_some(*v)
            .flatten()
        }) else {
            continue;
        };
        let daily = daily_level(spec, enso_nov, rmm, uv);
        let det = daily + tide_trend_last(spec, nov30);
        let written_milli = to_milli(det + noise_sd(spec, nov30) * ge.noise_z, spec.units);
        assert!(
            (from_milli(written_milli, spec.units) - value).abs() < 1e-9,
            "{}: last level {value} vs {}",
            spec.id,
            from_milli(written_milli, spec.units)
        );
        levels_checked += 1;
    }
    assert!(levels_checked >= 3, "{levels_checked} last levels checked");
}

/// Tide plus trend at the last reading of a local day.
fn tide_trend_last(spec: &GaugeSpec, day: i64) -> f64 {
    let per_day = 1440 / spec.interval_minutes;
    let minute = day * 1440 - spec.utc_offset_minutes + (per_day - 1) * spec.interval_minutes;
    let tide = tidetally_demo::tide::TideModel {
        harmonics: spec.harmonics,
    }
    .height(minute);
    tide + spec
        .trend
        .level_m(tidetally_demo::calendar::years_since_2000(minute))
}

/// The committed levels file as (time text, level in metres or None).
fn read_levels(spec: &GaugeSpec) -> Vec<(String, Option<f64>)> {
    use std::io::Read;
    let mut text = String::new();
    flate2::read::GzDecoder::new(
        fs::File::open(demo_dir().join(format!("gauges/{}-levels.csv.gz", spec.id)))
            .expect("levels file"),
    )
    .read_to_string(&mut text)
    .expect("gzip text");
    let to_m = if spec.units.toml_name() == "ft" {
        0.3048
    } else {
        1.0
    };
    text.lines()
        .skip(1)
        .map(|l| {
            let (t, v) = l.split_once(',').expect("two columns");
            let value = match v {
                "" | "NaN" | "-99999" => None,
                v => Some(v.parse::<f64>().expect("number") * to_m),
            };
            (t.to_owned(), value)
        })
        .collect()
}

/// Every distribution in the file is consistent with its own pmf, has enough replicates,
/// and uses the exceed days of the gauge's TOML; the ENSO draws follow the forecast pooling.
#[test]
fn the_forward_file_is_internally_consistent() {
    let doc = forward_json();
    let days = doc["days"].as_u64().expect("days") as usize;
    assert_eq!(days, 90);
    assert_eq!(doc["season"], "2026-DJF");
    for g in doc["gauges"].as_array().expect("gauges") {
        let id = g["id"].as_str().expect("id");
        let toml = fs::read_to_string(demo_dir().join(format!("gauges/{id}.toml"))).expect("toml");
        let exceed_line = toml
            .lines()
            .find(|l| l.starts_with("exceed_days"))
            .expect("exceed_days in the TOML");
        for name in ["members", "enso_fixed"] {
            let s = &g["scenarios"][name];
            let r = s["replicates"].as_u64().expect("replicates") as f64;
            assert!(r >= 2000.0);
            let pmf: Vec<f64> = s["pmf"].as_array().expect("pmf").iter().map(f).collect();
            assert_eq!(pmf.len(), days + 1);
            assert!((pmf.iter().sum::<f64>() - 1.0).abs() < 1e-9, "{id} {name}");
            let mean: f64 = pmf.iter().enumerate().map(|(k, p)| k as f64 * p).sum();
            assert!((mean - f(&s["mean"])).abs() < 1e-9, "{id} {name} mean");
            let var: f64 = pmf
                .iter()
                .enumerate()
                .map(|(k, p)| (k as f64 - mean).powi(2) * p)
                .sum();
            assert!(
                (var - f(&s["variance"])).abs() < 1e-9,
                "{id} {name} variance"
            );
            let se = (var * r / (r - 1.0) / r).sqrt();
            assert!((se - f(&s["mean_standard_error"])).abs() < 1e-12);
            let quantile = |q: f64| {
                let mut c = 0.0;
                pmf.iter()
                    .position(|p| {
                        c += p;
                        c >= q - 1e-12
                    })
                    .expect("reaches 1")
            };
            let (p10, p90) = (quantile(0.1), quantile(0.9));
            assert_eq!(p10 as u64, s["p10"].as_u64().expect("p10"), "{id} {name}");
            assert_eq!(quantile(0.5) as u64, s["p50"].as_u64().expect("p50"));
            assert_eq!(p90 as u64, s["p90"].as_u64().expect("p90"));
            let within: f64 = pmf[p10..=p90].iter().sum();
            assert!((within - f(&s["share_within_p10_p90"])).abs() < 1e-9);
            let mut ks = Vec::new();
            for e in s["exceedance"].as_array().expect("exceedance") {
                let k = e["days"].as_u64().expect("k") as usize;
                ks.push(k.to_string());
                let p: f64 = pmf[k..].iter().sum();
                assert!(
                    (p - f(&e["probability"])).abs() < 1e-9,
                    "{id} {name} P(N>={k})"
                );
                assert!(((p * (1.0 - p) / r).sqrt() - f(&e["standard_error"])).abs() < 1e-12);
            }
            assert_eq!(
                exceed_line.replace(' ', ""),
                format!("exceed_days=[{}]", ks.join(",")),
                "{id}: exceed days as in the TOML"
            );
        }
        // Drawing ENSO adds the spread of the conditional mean to the variance (law of
        // total variance); over these sample sizes it shows at every gauge but corrin-quay,
        // whose ENSO effect is smallest, so allow three standard errors of a variance there.
        let (vm, vf) = (
            f(&g["scenarios"]["members"]["variance"]),
            f(&g["scenarios"]["enso_fixed"]["variance"]),
        );
        let r = f(&g["scenarios"]["members"]["replicates"]);
        assert!(vm > vf - 3.0 * vf * (2.0 / r).sqrt(), "{id}: {vm} vs {vf}");
    }
    // Members: equal weight per model, so each model takes about a third of the draws, and
    // the draws' mean is the pooled mean (the mean of the model means) within MC error.
    let forecast: Value = serde_json::from_str(
        &fs::read_to_string(demo_dir().join("drivers/enso-forecast-2026-DJF.json"))
            .expect("forecast"),
    )
    .expect("JSON");
    let model_means: Vec<f64> = forecast["models"]
        .as_array()
        .expect("models")
        .iter()
        .map(|m| {
            let v: Vec<f64> = m["members"]
                .as_array()
                .expect("members")
                .iter()
                .map(f)
                .collect();
            v.iter().sum::<f64>() / v.len() as f64
        })
        .collect();
    let pooled = model_means.iter().sum::<f64>() / model_means.len() as f64;
    let scen = doc["scenarios"].as_array().expect("scenarios");
    let fixed = &scen[1];
    assert_eq!(fixed["name"], "enso_fixed");
    assert!((f(&fixed["enso_degc"][0]) - pooled).abs() < 1e-12);
    let members = &scen[0];
    assert_eq!(members["name"], "members");
    let draws: Vec<f64> = members["enso_degc"]
        .as_array()
        .expect("draws")
        .iter()
        .map(f)
        .collect();
    let n = draws.len() as f64;
    let mean = draws.iter().sum::<f64>() / n;
    let sd = (draws.iter().map(|d| (d - mean).powi(2)).sum::<f64>() / n).sqrt();
    assert!(
        (mean - pooled).abs() < 4.0 * sd / n.sqrt(),
        "draw mean {mean} vs {pooled}"
    );
    for m in members["model_draws"].as_array().expect("model draws") {
        let k = f(&m["replicates"]);
        assert!((k - n / 3.0).abs() < 4.0 * (n * 2.0 / 9.0).sqrt(), "{m}");
    }
}

/// Every gauge's level rises with ENSO (b_enso > 0), so with the same random paths a warmer
/// ENSO never gives fewer flood days in a replicate and gives more on average.
#[test]
fn a_warmer_enso_gives_more_flood_days() {
    let doc = forward_json();
    let end = shared_end(&doc);
    let first = day_number(record_end()) + 1;
    let reps = 300;
    let shared = forward::shared_paths(MASTER_SEED, "test-enso", &end, first, 90, reps);
    let specs = gauges();
    for (spec, g) in specs.iter().zip(doc["gauges"].as_array().expect("gauges")) {
        assert_eq!(spec.id, g["id"]);
        assert!(spec.enso_m_per_degc > 0.0);
        let grid = SeasonGrid::new(spec, first, 90);
        let scenarios = [
            EnsoScenario {
                values: vec![-1.0; reps],
            },
            EnsoScenario {
                values: vec![0.5; reps],
            },
        ];
        let counts = forward::simulate_gauge(
            MASTER_SEED,
            "test-enso",
            spec,
            &grid,
            gauge_end(g),
            &shared,
            &scenarios,
        );
        assert!(
            counts[0].iter().zip(&counts[1]).all(|(lo, hi)| hi >= lo),
            "{}",
            spec.id
        );
        let sum = |c: &[u32]| c.iter().map(|&x| f64::from(x)).sum::<f64>();
        assert!(sum(&counts[1]) > sum(&counts[0]), "{}", spec.id);
    }
}

/// The committed `enso_fixed` mean at port-tamsin agrees with a direct computation: for the
/// file's first replicates' MJO and wind paths, each future day's flood probability is
/// computed on its own (the noise at the day's readings drawn from its exact distribution
/// given the noise at the record's last reading, z = phi^j z_end + sqrt(1 - phi^(2j)) e, then
/// the AR(1) step between readings), with the level assembled here from the tide, trend and
/// drivers, and summed over the 90 days; the mean over paths estimates E[N].
#[test]
fn the_fixed_enso_mean_matches_a_day_by_day_computation() {
    let doc = forward_json();
    let g = &doc["gauges"][0];
    assert_eq!(g["id"], "port-tamsin");
    let spec = &gauges()[0];
    let end = shared_end(&doc);
    let ge = gauge_end(g);
    let enso = f(&doc["scenarios"][1]["enso_degc"][0]);
    let first = day_number(record_end()) + 1;
    let (paths, per_path_reps) = (400usize, 256usize);
    let shared = forward::shared_paths(MASTER_SEED, "2026-DJF", &end, first, 90, paths);
    let phi = noise_ar1(spec);
    let model = tidetally_demo::tide::TideModel {
        harmonics: spec.harmonics,
    };
    let first_minute = first * 1440 - spec.utc_offset_minutes;
    let mut rng = replicate_rng(MASTER_SEED, "test-day-by-day", 0);
    let mut per_path = Vec::with_capacity(paths);
    for (r, path) in shared.iter().enumerate() {
        let drivers = forward::gauge_day_drivers(MASTER_SEED, "2026-DJF", spec, ge, path, r as u64);
        let mut expected = 0.0;
        for (d, (rmm, uv)) in drivers.iter().enumerate() {
            let daily = daily_level(spec, enso, *rmm, *uv);
            let sd = noise_sd(spec, first + d as i64);
            // (reading offset after the end, level without noise) of readings that can reach
            // the threshold (5.5 sd).
            let candidates: Vec<(i32, f64)> = (0..24)
                .filter_map(|k| {
                    let i = d * 24 + k;
                    let minute = first_minute + i as i64 * 60;
                    let det = daily
                        + model.height(minute)
                        + spec
                            .trend
                            .level_m(tidetally_demo::calendar::years_since_2000(minute));
                    (det + 5.5 * sd >= spec.flood_threshold_m).then_some((i as i32 + 1, det))
                })
                .collect();
            if candidates.is_empty() {
                continue;
            }
            let mut hits = 0;
            for _ in 0..per_path_reps {
                let (mut z, mut at) = (ge.noise_z, 0);
                for &(j, det) in &candidates {
                    let e: f64 =
                        rand_distr::Distribution::sample(&rand_distr::StandardNormal, &mut rng);
                    let carry = phi.powi(j - at);
                    z = carry * z + (1.0 - carry * carry).sqrt() * e;
                    at = j;
                    if from_milli(to_milli(det + sd * z, spec.units), spec.units)
                        >= spec.flood_threshold_m
                    {
                        hits += 1;
                        break;
                    }
                }
            }
            expected += f64::from(hits) / per_path_reps as f64;
        }
        per_path.push(expected);
    }
    let n = paths as f64;
    let mean = per_path.iter().sum::<f64>() / n;
    let spread = per_path.iter().map(|e| (e - mean).powi(2)).sum::<f64>() / (n - 1.0);
    let fixed = &g["scenarios"]["enso_fixed"];
    let truth_mean = f(&fixed["mean"]);
    let truth_se = f(&fixed["mean_standard_error"]);
    // Path sampling, the per-day Monte Carlo (at most E / 256 per path) and the file's own.
    let se = (spread / n + mean / per_path_reps as f64 / n + truth_se * truth_se).sqrt();
    assert!(
        (mean - truth_mean).abs() < 4.0 * se,
        "day by day {mean:.3} vs file {truth_mean:.3} (se {se:.3})"
    );
}
