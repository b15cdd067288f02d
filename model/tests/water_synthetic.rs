//! Synthetic-truth checks of the water-level engine: invented gauge worlds whose mechanics are
//! written here, so the true distribution of a coming season's flood days is known by
//! simulating the world itself.
//!
//! World: hourly level = tide (M2 and S2, a spring-neap cycle) + mean + a linear sea-level
//! trend + `enso_effect` x the month's ENSO anomaly (a persistent monthly AR(1) index) + a
//! daily surge (AR(1) from day to day) + small hourly noise. Only DJF seasons are written. A
//! day floods when its highest hourly level reaches the threshold (the trade's flood-day rule,
//! common practice).
//!
//! The engine under test builds each day's high water as predicted tide + projected mean sea
//! level + a resampled past residual, the construction of Thompson et al. (2021, Nature Climate
//! Change 11; cited from memory).

use chrono::{Datelike, NaiveDate};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};

use tidetally_model::daily::{DailyRecord, DayTotals};
use tidetally_model::drivers::{Coast, EnsoSeries, MonthlyMeanLevel, SeaLevelSetting, WindSeries};
use tidetally_model::ingest::LevelSeries;
use tidetally_model::season::{Season, SeasonSpec};
use tidetally_model::tide::TideModel;
use tidetally_model::tide::predict::ConstituentValue;
use tidetally_model::verify::crps_count;
use tidetally_model::water::gauge::WaterInputs;
use tidetally_model::water::{Columns, DayDrivers, DayGrid, GaugeWater};

const UTC_OFFSET: i32 = -3 * 3600;
const FIRST_YEAR: i32 = 1990;

/// One invented gauge world.
#[derive(Debug, Clone, Copy)]
struct World {
    seasons: i32,
    m2: f64,
    s2: f64,
    mean: f64,
    trend_m_per_yr: f64,
    enso_effect: f64,
    surge_sd: f64,
    surge_phi: f64,
    hourly_sd: f64,
    threshold: f64,
}

impl World {
    fn tide(&self) -> TideModel {
        TideModel::from_values(
            self.mean,
            None,
            946_684_800, // 2000-01-01T00:00Z
            &[
                ConstituentValue {
                    name: "M2",
                    amplitude: self.m2,
                    phase_deg: 40.0,
                },
                ConstituentValue {
                    name: "S2",
                    amplitude: self.s2,
                    phase_deg: 70.0,
                },
            ],
        )
        .expect("valid tide")
    }

    fn spec() -> SeasonSpec {
        SeasonSpec::new("DJF", 12, 3).expect("valid spec")
    }

    fn season(year: i32) -> Season {
        Season::new(year, Self::spec()).expect("valid season")
    }

    fn day_start(date: NaiveDate) -> i64 {
        let epoch = NaiveDate::from_ymd_opt(1970, 1, 1).expect("date");
        (date - epoch).num_days() * 86_400 - i64::from(UTC_OFFSET)
    }

    fn trend_at(&self, date: NaiveDate) -> f64 {
        let years = f64::from(date.year() - 2000) + f64::from(date.ordinal()) / 365.25;
        self.trend_m_per_yr * years
    }

    /// The hourly levels of `season` (with `enso_of(month)`), and its observed count.
    fn season_levels(
        &self,
        tide: &TideModel,
        season: &Season,
        enso_of: &dyn Fn(i32, u32) -> f64,
        rng: &mut ChaCha8Rng,
        out: &mut Vec<(i64, f64)>,
    ) -> u32 {
        let normal = Normal::new(0.0, 1.0).expect("normal");
        let mut surge = normal.sample(rng) * self.surge_sd;
        let innovation = self.surge_sd * (1.0 - self.surge_phi * self.surge_phi).sqrt();
        let mut floods = 0;
        for d in 0..season.calendar_days() {
            let date = season.first_day() + chrono::Duration::days(i64::from(d));
            if d > 0 {
                surge = self.surge_phi * surge + innovation * normal.sample(rng);
            }
            let base =
                self.trend_at(date) + self.enso_effect * enso_of(date.year(), date.month()) + surge;
            let start = Self::day_start(date);
            let times: Vec<i64> = (0..24).map(|h| start + h * 3600).collect();
            let levels = tide.predict_at(&times);
            let mut max = f64::NEG_INFINITY;
            for (t, l) in times.iter().zip(levels) {
                let v = l + base + self.hourly_sd * normal.sample(rng);
                max = max.max(v);
                out.push((*t, v));
            }
            if max >= self.threshold {
                floods += 1;
            }
        }
        floods
    }

    /// A monthly ENSO index over the record (AR(1) month to month, sd about 0.9 C).
    fn enso_index(&self, rng: &mut ChaCha8Rng) -> EnsoSeries {
        let normal = Normal::new(0.0, 0.4).expect("normal");
        let mut v: f64 = 0.0;
        let mut months = Vec::new();
        for year in FIRST_YEAR..FIRST_YEAR + self.seasons + 2 {
            for month in 1..=12 {
                v = 0.9 * v + normal.sample(rng);
                months.push((year, month, v));
            }
        }
        EnsoSeries::from_months(months)
    }
}

/// A generated record and everything the engine is built from.
struct Record {
    levels: LevelSeries,
    daily: DailyRecord,
    monthly: Vec<MonthlyMeanLevel>,
    enso: EnsoSeries,
    wind: WindSeries,
}

fn generate(world: &World, tide: &TideModel, rng: &mut ChaCha8Rng) -> Record {
    let enso = world.enso_index(rng);
    let enso_of = |y: i32, m: u32| enso.get(y, m).unwrap_or(0.0);
    let mut readings = Vec::new();
    for k in 0..world.seasons {
        world.season_levels(
            tide,
            &World::season(FIRST_YEAR + k),
            &enso_of,
            rng,
            &mut readings,
        );
    }
    let mut totals = DayTotals::default();
    let mut sums: std::collections::BTreeMap<(i32, u32), (f64, u32)> = Default::default();
    for &(t, v) in &readings {
        let day = (t + i64::from(UTC_OFFSET)).div_euclid(86_400);
        totals.add(day, v);
        let date = tidetally_model::daily::date_of_day_index(day);
        let e = sums.entry((date.year(), date.month())).or_insert((0.0, 0));
        e.0 += v;
        e.1 += 1;
    }
    let daily = DailyRecord::new(&totals, Some(3600), 0.75).expect("daily record");
    let monthly = sums
        .into_iter()
        .map(|((year, month), (sum, n))| MonthlyMeanLevel {
            year,
            month,
            mean_m: sum / f64::from(n),
            readings: n,
        })
        .collect();
    // Wind with no effect on the water (for the honesty check).
    let normal = Normal::new(0.0, 4.0).expect("normal");
    let first = World::season(FIRST_YEAR).first_day();
    let wind = WindSeries::from_days((0..(world.seasons as i64 + 1) * 366).map(|d| {
        (
            first + chrono::Duration::days(d),
            normal.sample(rng),
            normal.sample(rng),
        )
    }));
    Record {
        levels: LevelSeries {
            times: readings.iter().map(|r| r.0).collect(),
            levels_m: readings.iter().map(|r| r.1).collect(),
            missing: 0,
        },
        daily,
        monthly,
        enso,
        wind,
    }
}

fn engine(
    record: &Record,
    tide: &TideModel,
    world: &World,
    columns: Columns,
    coast: &Coast,
) -> GaugeWater {
    let spec = World::spec();
    GaugeWater::new(&WaterInputs {
        levels: &record.levels,
        daily: &record.daily,
        tide,
        spec: &spec,
        grid: DayGrid {
            utc_offset_seconds: UTC_OFFSET,
            step_seconds: 3600,
        },
        drivers: DayDrivers {
            enso: Some(&record.enso),
            rmm: None,
            wind: Some((&record.wind, coast)),
        },
        columns,
        threshold_m: world.threshold,
        monthly: &record.monthly,
        // The world's own rate (as a researcher would set it): the synthetic record holds
        // winters only, too few months for a trend of monthly means.
        sea_level: &SeaLevelSetting::Rate {
            rate_m_per_yr: world.trend_m_per_yr,
            reference_year: 2000.0,
            reference_level_m: world.mean,
        },
    })
    .expect("engine builds")
}

/// The true pmf of the season after the record, with ENSO fixed at `enso` in every month.
fn truth(world: &World, tide: &TideModel, enso: f64, replicates: usize, seed: u64) -> Vec<f64> {
    let season = World::season(FIRST_YEAR + world.seasons);
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut counts = vec![0usize; season.calendar_days() as usize + 1];
    let mut scratch = Vec::new();
    for _ in 0..replicates {
        scratch.clear();
        let n = world.season_levels(tide, &season, &|_, _| enso, &mut rng, &mut scratch);
        counts[n as usize] += 1;
    }
    counts
        .iter()
        .map(|&c| c as f64 / replicates as f64)
        .collect()
}

fn moments(pmf: &[f64]) -> (f64, f64) {
    let mean: f64 = pmf.iter().enumerate().map(|(k, p)| k as f64 * p).sum();
    let var: f64 = pmf
        .iter()
        .enumerate()
        .map(|(k, p)| (k as f64 - mean).powi(2) * p)
        .sum();
    (mean, var)
}

fn expected_crps(forecast: &[f64], truth: &[f64]) -> f64 {
    truth
        .iter()
        .enumerate()
        .map(|(y, p)| p * crps_count(forecast, y as u32))
        .sum()
}

fn forecast(water: &GaugeWater, enso: f64, simulations: usize, seed: u64) -> Vec<f64> {
    let fit = water.fit_before(None).expect("fits");
    let season = water
        .future(
            &World::season(FIRST_YEAR + water_target_year(water)),
            &DayDrivers::default(),
        )
        .expect("future season");
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    water
        .forecast(&fit, &season, &[enso], simulations, &mut rng)
        .expect("simulates")
        .pmf
}

/// The offset of the season after the engine's last season from `FIRST_YEAR`.
fn water_target_year(water: &GaugeWater) -> i32 {
    water
        .seasons
        .last()
        .map_or(0, |s| s.season.year() - FIRST_YEAR + 1)
}

fn coast() -> Coast {
    Coast::new(160.0, 41.0).expect("coast")
}

const SPRING_TIDE: World = World {
    seasons: 30,
    m2: 1.0,
    s2: 0.45,
    mean: 2.0,
    trend_m_per_yr: 0.004,
    enso_effect: 0.06,
    surge_sd: 0.05,
    surge_phi: 0.6,
    hourly_sd: 0.01,
    threshold: 3.52,
};

#[test]
fn spring_tide_counts_are_under_dispersed_and_the_engine_reproduces_it() {
    let world = SPRING_TIDE;
    let tide = world.tide();
    let mut rng = ChaCha8Rng::seed_from_u64(11);
    let record = generate(&world, &tide, &mut rng);
    let columns = Columns {
        enso: true,
        mjo: false,
        wind: false,
    };
    let water = engine(&record, &tide, &world, columns, &coast());
    let true_pmf = truth(&world, &tide, 0.5, 3000, 12);
    let engine_pmf = forecast(&water, 0.5, 4000, 13);
    let (tm, tv) = moments(&true_pmf);
    let (em, ev) = moments(&engine_pmf);
    eprintln!(
        "spring-tide world: truth mean {tm:.2}, variance/mean {:.3}; engine mean {em:.2}, \
         variance/mean {:.3}",
        tv / tm,
        ev / em
    );
    // The world is set so the tide controls the count: variance below the mean.
    assert!(
        tv / tm < 0.9,
        "truth variance/mean {:.3} (mean {tm:.2})",
        tv / tm
    );
    assert!(
        ev / em < 1.0,
        "engine variance/mean {:.3} (mean {em:.2})",
        ev / em
    );
    // Monte Carlo error of a variance/mean ratio from 3,000-4,000 seasons is a few percent; the
    // engine adds its parameter uncertainty, so allow 0.25.
    assert!(
        (ev / em - tv / tm).abs() < 0.25,
        "engine {:.3} vs truth {:.3}",
        ev / em,
        tv / tm
    );
    let ratio = expected_crps(&engine_pmf, &true_pmf) / expected_crps(&true_pmf, &true_pmf);
    eprintln!("expected CRPS / the truth's own: {ratio:.3}");
    assert!(
        ratio < 1.15,
        "expected CRPS {ratio:.3} x the truth's own (means {em:.2} vs {tm:.2})"
    );
}

#[test]
fn randomised_pit_of_a_thousand_seasons_is_uniform() {
    // Randomised PIT for counts (Czado, Gneiting and Held 2009, Biometrics 65, 1254): for a
    // calibrated forecast F and outcome y, u = F(y - 1) + v p(y), v uniform, is uniform.
    // Uniformity is tested with Pearson's chi-square over ten equal bins (common practice).
    let world = World {
        seasons: 25,
        ..SPRING_TIDE
    };
    let tide = world.tide();
    let mut pits = Vec::new();
    let mut rng = ChaCha8Rng::seed_from_u64(21);
    for w in 0..40u64 {
        let record = generate(&world, &tide, &mut rng);
        let water = engine(
            &record,
            &tide,
            &world,
            Columns {
                enso: true,
                mjo: false,
                wind: false,
            },
            &coast(),
        );
        let fit = water.fit_before(None).expect("fits");
        let target = World::season(FIRST_YEAR + world.seasons);
        let season = water
            .future(&target, &DayDrivers::default())
            .expect("future");
        for k in 0..25u64 {
            let enso: f64 = rng.gen_range(-1.5..1.5);
            let mut sim_rng = ChaCha8Rng::seed_from_u64(1000 * w + k);
            let pmf = water
                .forecast(&fit, &season, &[enso], 1000, &mut sim_rng)
                .expect("simulates")
                .pmf;
            let mut scratch = Vec::new();
            let y =
                world.season_levels(&tide, &target, &|_, _| enso, &mut rng, &mut scratch) as usize;
            let below: f64 = pmf.iter().take(y).sum();
            let at = pmf.get(y).copied().unwrap_or(0.0);
            pits.push(below + rng.r#gen::<f64>() * at);
        }
    }
    assert_eq!(pits.len(), 1000);
    let mut bins = [0usize; 10];
    for u in &pits {
        bins[((u * 10.0) as usize).min(9)] += 1;
    }
    let expected = pits.len() as f64 / 10.0;
    let chi2: f64 = bins
        .iter()
        .map(|&b| (b as f64 - expected).powi(2) / expected)
        .sum();
    let p_value = 1.0
        - statrs::distribution::ContinuousCDF::cdf(
            &statrs::distribution::ChiSquared::new(9.0).expect("chi-square"),
            chi2,
        );
    eprintln!("PIT bins {bins:?}: chi-square {chi2:.1}, p = {p_value:.3}");
    assert!(
        p_value > 0.001,
        "PIT bins {bins:?}: chi-square {chi2:.1}, p = {p_value:.4}"
    );
}

#[test]
fn drivers_that_do_nothing_are_reported_as_adding_nothing() {
    // A world whose residuals ignore ENSO and wind: their 95% intervals should cover zero in
    // about 95% of replicates (the nominal coverage of a 95% interval, by definition).
    let world = World {
        seasons: 30,
        enso_effect: 0.0,
        ..SPRING_TIDE
    };
    let tide = world.tide();
    let mut rng = ChaCha8Rng::seed_from_u64(31);
    let (mut covered, mut intervals, mut nothing) = (0, 0, 0);
    let replicates = 60;
    for _ in 0..replicates {
        let record = generate(&world, &tide, &mut rng);
        let water = engine(
            &record,
            &tide,
            &world,
            Columns {
                enso: true,
                mjo: false,
                wind: true,
            },
            &coast(),
        );
        let fit = water.fit_before(None).expect("fits");
        let report = tidetally_model::water::WaterReport::of(&fit, "DJF");
        for e in &report.effects {
            intervals += 1;
            if !e.distinct_from_zero {
                covered += 1;
            }
        }
        if report.drivers_add_nothing {
            nothing += 1;
        }
    }
    let coverage = f64::from(covered) / f64::from(intervals);
    eprintln!("null drivers: coverage {coverage:.3}; {nothing} of {replicates} add nothing");
    // 120 intervals: a binomial standard error of 0.02 around 0.95; clustered errors with 30
    // seasons run slightly liberal, so the band is 0.85 to 1.
    assert!((0.85..=1.0).contains(&coverage), "coverage {coverage:.3}");
    assert!(
        nothing * 10 >= replicates * 7,
        "{nothing} of {replicates} said the drivers add nothing"
    );
}

#[test]
fn a_real_enso_effect_is_found_and_raises_the_count() {
    let world = SPRING_TIDE;
    let tide = world.tide();
    let mut rng = ChaCha8Rng::seed_from_u64(41);
    let record = generate(&world, &tide, &mut rng);
    let columns = Columns {
        enso: true,
        mjo: false,
        wind: false,
    };
    let water = engine(&record, &tide, &world, columns, &coast());
    let fit = water.fit_before(None).expect("fits");
    let (b, se) = fit.enso_effect().expect("ENSO column");
    assert!(
        (b - world.enso_effect).abs() < 3.0 * se,
        "{b:.4} +/- {se:.4}"
    );
    let warm = moments(&forecast(&water, 1.5, 2000, 1)).0;
    let cold = moments(&forecast(&water, -1.5, 2000, 1)).0;
    assert!(warm > cold + 1.0, "El Nino {warm:.2} vs La Nina {cold:.2}");
}
