//! Speed of the driver reductions on synthetic inputs: 40 years of daily RMM and wind, a
//! 50-year monthly sea-level record, and scenario sampling for an outlook.

#![allow(missing_docs)] // criterion's macros generate undocumented items

use chrono::{Duration, NaiveDate};
use criterion::{Criterion, black_box, criterion_group, criterion_main};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use tidetally_model::drivers::{
    Coast, Driver, EnsoForecast, MonthlyMeanLevel, PastSeason, PhaseSet, Resampling, RmmSeries,
    ScenarioGenerator, SeasonalCycle, TrendShape, WindSeries, WindStatistic, fit_trend,
};
use tidetally_model::season::{Season, SeasonSpec};

fn rmm_csv(days: i64) -> String {
    let start = NaiveDate::from_ymd_opt(1980, 1, 1).expect("valid date");
    let mut text = String::from("date,rmm1,rmm2\n");
    for k in 0..days {
        let a = (k as f64 * 0.21).sin() * 1.6;
        let b = (k as f64 * 0.21).cos() * 1.3;
        text.push_str(&format!("{},{a:.4},{b:.4}\n", start + Duration::days(k)));
    }
    text
}

fn djf_seasons() -> Vec<Season> {
    (1980..2019)
        .map(|y| Season::new(y, SeasonSpec::meteorological()[0].clone()).expect("valid season"))
        .collect()
}

fn bench_daily_drivers(c: &mut Criterion) {
    let text = rmm_csv(40 * 365);
    c.bench_function("rmm_parse_40y", |b| {
        b.iter(|| RmmSeries::parse(black_box(text.as_bytes()), "bench").expect("valid"))
    });
    let rmm = RmmSeries::parse(text.as_bytes(), "bench").expect("valid");
    let phases = PhaseSet::new(&[2, 3]).expect("valid phases");
    let seasons = djf_seasons();
    c.bench_function("mjo_share_39_seasons", |b| {
        b.iter(|| {
            seasons
                .iter()
                .filter_map(|s| rmm.seasonal(s, phases).ok())
                .count()
        })
    });
    let start = NaiveDate::from_ymd_opt(1980, 1, 1).expect("valid date");
    let wind = WindSeries::from_days((0..40 * 365).map(|k| {
        (
            start + Duration::days(k),
            (k as f64 * 0.3).sin() * 5.0,
            (k as f64 * 0.7).cos() * 4.0,
        )
    }));
    let coast = Coast::new(135.0, 44.0).expect("valid coast");
    c.bench_function("wind_mean_39_seasons", |b| {
        b.iter(|| {
            seasons
                .iter()
                .filter_map(|s| wind.seasonal(s, &coast, WindStatistic::Mean).ok())
                .count()
        })
    });
}

fn bench_trend(c: &mut Criterion) {
    let months: Vec<MonthlyMeanLevel> = (0..600)
        .map(|k| MonthlyMeanLevel {
            year: 1970 + k / 12,
            month: (k % 12) as u32 + 1,
            mean_m: 0.003 * f64::from(k) / 12.0 + 0.05 * (f64::from(k) * 0.52).sin(),
            readings: 720,
        })
        .collect();
    c.bench_function("trend_quadratic_cycle_600_months", |b| {
        b.iter(|| {
            fit_trend(
                black_box(&months),
                TrendShape::Quadratic,
                SeasonalCycle::AnnualSemiannual,
            )
            .expect("fit")
        })
    });
}

fn bench_scenarios(c: &mut Criterion) {
    let forecast = EnsoForecast::parse(
        br#"{"season":"2026-DJF","issued":"2026-11-15","models":[{"name":"a","members":[-0.8,-1.1,-0.9,-1.3]},{"name":"b","members":[-0.2,-0.6]}]}"#
            .as_slice(),
        "bench",
        &SeasonSpec::meteorological(),
    )
    .expect("valid forecast");
    let past: Vec<PastSeason> = (0..40)
        .map(|k| PastSeason {
            label: format!("{}-DJF", 1980 + k),
            enso: Some((f64::from(k) * 0.9).sin() * 1.5),
            mjo_share: Some(f64::from(k % 7) / 10.0),
            wind: Some(f64::from(k % 5) - 2.0),
        })
        .collect();
    let generator = ScenarioGenerator::from_forecast(
        &forecast,
        &past,
        &[Driver::Enso, Driver::Mjo, Driver::Wind],
        Resampling::SameEnsoCategory { min_seasons: 5 },
    )
    .expect("valid generator");
    c.bench_function("scenarios_10000", |b| {
        b.iter(|| {
            let mut rng = ChaCha8Rng::seed_from_u64(1);
            generator.sample_many(&mut rng, 10_000)
        })
    });
}

criterion_group!(benches, bench_daily_drivers, bench_trend, bench_scenarios);
criterion_main!(benches);
