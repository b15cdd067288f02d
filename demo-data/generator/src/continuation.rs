//! The generator's random processes continued past the record's end, for the true forward
//! distribution of the next season: the MJO and the regional wind (shared by all gauges), each
//! gauge's local wind and red noise, and the ENSO forecast draw.
//!
//! Every process starts from its full internal state on the record's last day (unrounded,
//! including the parts no file shows) and takes its next steps with the same update as the
//! record, but from new random streams: component names `forward-<season>-<part>`, one
//! ChaCha8 stream per replicate ([`replicate_rng`]), so the streams that made the record are
//! never touched and every replicate can be drawn on its own.

use rand::Rng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, StandardNormal};
use serde::Serialize;

use crate::drivers::{MjoState, RegionalWindState, Rmm, step_local_wind, written_wind};
use crate::gauges::GaugeSpec;
use crate::seed::replicate_rng;

/// The component name of a continuation stream, e.g. `forward-2026-DJF-rmm`.
pub fn stream_name(season_label: &str, part: &str) -> String {
    format!("forward-{season_label}-{part}")
}

/// The shared processes' state on the record's last day.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct SharedEnd {
    /// MJO state.
    #[serde(serialize_with = "serialize_mjo")]
    pub mjo: MjoState,
    /// Regional wind state.
    #[serde(serialize_with = "serialize_regional")]
    pub regional: RegionalWindState,
}

fn serialize_mjo<S: serde::Serializer>(m: &MjoState, s: S) -> Result<S::Ok, S::Error> {
    let rmm = m.rmm();
    serde_json::json!({
        "log_amplitude": m.log_amp,
        "period_drive": m.period_drive,
        "theta_rad": m.theta,
        "rmm1": rmm.rmm1,
        "rmm2": rmm.rmm2,
    })
    .serialize(s)
}

fn serialize_regional<S: serde::Serializer>(
    r: &RegionalWindState,
    s: S,
) -> Result<S::Ok, S::Error> {
    serde_json::json!({"slow_uv_mps": r.slow, "synoptic_uv_unit": r.syn}).serialize(s)
}

/// One replicate's shared daily drivers for the season.
#[derive(Debug, Clone)]
pub struct SharedPath {
    /// Daily RMM pairs as they would be written (4 decimals).
    pub rmm: Vec<Rmm>,
    /// Daily regional (u, v), m/s, unrounded.
    pub regional: Vec<[f64; 2]>,
}

/// Continue the MJO and the regional wind for `days` days from `first_day` (the day after the
/// record's end): each day first steps the state, then reads it, as the record does.
pub fn shared_path(
    master_seed: u64,
    season_label: &str,
    end: &SharedEnd,
    first_day: i64,
    days: usize,
    replicate: u64,
) -> SharedPath {
    let mut rng_mjo = replicate_rng(master_seed, &stream_name(season_label, "rmm"), replicate);
    let mut rng_wind = replicate_rng(
        master_seed,
        &stream_name(season_label, "wind-regional"),
        replicate,
    );
    let (mut mjo, mut regional) = (end.mjo, end.regional);
    let mut path = SharedPath {
        rmm: Vec::with_capacity(days),
        regional: Vec::with_capacity(days),
    };
    for k in 0..days {
        mjo.step(&mut rng_mjo);
        regional.step(&mut rng_wind);
        path.rmm.push(mjo.rmm());
        path.regional.push(regional.uv(first_day + k as i64));
    }
    path
}

/// A gauge's daily wind (u, v) for the season as a reader would rebuild it from the written
/// file (rounded as the gauge's wind file rounds it): the regional path plus the local AR(1)
/// anomaly continued from `end_local`.
pub fn local_wind_path(
    master_seed: u64,
    season_label: &str,
    gauge: &GaugeSpec,
    end_local: [f64; 2],
    regional: &[[f64; 2]],
    replicate: u64,
) -> Vec<[f64; 2]> {
    let name = stream_name(season_label, &format!("wind-local-{}", gauge.id));
    let mut rng = replicate_rng(master_seed, &name, replicate);
    let mut local = end_local;
    regional
        .iter()
        .map(|r| {
            step_local_wind(&mut local, &mut rng);
            written_wind(*r, local, gauge.wind_format).1
        })
        .collect()
}

/// Fill `z` with the unit AR(1) noise (coefficient `phi` per reading) at the readings after
/// the record's end: `z_1 = phi z_end + sqrt(1 - phi^2) e_1`, and so on, the record's own
/// update. With `z_end = None` the path starts stationary (`z_1 = e_1`).
pub fn noise_path(phi: f64, z_end: Option<f64>, rng: &mut ChaCha8Rng, z: &mut [f64]) {
    let innov = (1.0 - phi * phi).sqrt();
    let mut previous = z_end;
    for slot in z.iter_mut() {
        let e: f64 = StandardNormal.sample(rng);
        let next = match previous {
            Some(p) => phi * p + innov * e,
            None => e,
        };
        *slot = next;
        previous = Some(next);
    }
}

/// The noise stream of a gauge's replicate.
pub fn noise_rng(
    master_seed: u64,
    season_label: &str,
    gauge: &GaugeSpec,
    replicate: u64,
) -> ChaCha8Rng {
    let name = stream_name(season_label, &format!("noise-{}", gauge.id));
    replicate_rng(master_seed, &name, replicate)
}

/// One replicate's ENSO forecast draw: a model picked uniformly, then one of its members
/// uniformly (equal weight per model). Returns (model index, member index, value).
pub fn enso_member_draw(
    master_seed: u64,
    season_label: &str,
    models: &[Vec<f64>],
    replicate: u64,
) -> (usize, usize, f64) {
    let mut rng = replicate_rng(
        master_seed,
        &stream_name(season_label, "enso-members"),
        replicate,
    );
    let model = rng.gen_range(0..models.len());
    let member = rng.gen_range(0..models[model].len());
    (model, member, models[model][member])
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::drivers::MJO;

    /// The continued noise forgets its start as an AR(1) does: the mean over replicates of the
    /// j-th reading is phi^j z_end and its variance 1 - phi^(2j) (common practice: the AR(1)
    /// k-step forecast).
    #[test]
    fn noise_continues_from_its_end_state() {
        let (phi, z_end, reps) = (0.9, 2.0, 4000);
        let mut sums = [0.0f64; 3];
        let mut squares = [0.0f64; 3];
        let mut z = [0.0; 20];
        for r in 0..reps {
            let mut rng = replicate_rng(5, "noise-test", r);
            noise_path(phi, Some(z_end), &mut rng, &mut z);
            for (k, &j) in [1usize, 5, 20].iter().enumerate() {
                sums[k] += z[j - 1];
                squares[k] += z[j - 1] * z[j - 1];
            }
        }
        for (k, &j) in [1i32, 5, 20].iter().enumerate() {
            let mean = sums[k] / reps as f64;
            let var = squares[k] / reps as f64 - mean * mean;
            let want_var = 1.0 - phi.powi(2 * j);
            let se = (want_var / reps as f64).sqrt();
            assert!(
                (mean - phi.powi(j) * z_end).abs() < 4.0 * se,
                "step {j}: mean {mean}"
            );
            assert!(
                (var - want_var).abs() < 0.1 * want_var + 0.01,
                "step {j}: var {var}"
            );
        }
    }

    /// The continued MJO log amplitude decays towards zero as its AR(1) does:
    /// E[log A_k / median] = 0.93^k times the end value (common practice, AR(1) forecast).
    #[test]
    fn mjo_amplitude_relaxes_from_its_end_state() {
        let end = SharedEnd {
            mjo: MjoState {
                log_amp: 1.2,
                period_drive: 0.3,
                theta: 1.0,
            },
            regional: RegionalWindState {
                slow: [0.0; 2],
                syn: [0.0; 2],
            },
        };
        let reps = 3000;
        let mut sums = [0.0; 3];
        for r in 0..reps {
            let path = shared_path(9, "test", &end, 20_000, 30, r);
            for (k, &day) in [1usize, 10, 30].iter().enumerate() {
                sums[k] += (path.rmm[day - 1].amplitude() / MJO.median_amplitude).ln();
            }
        }
        for (k, &day) in [1i32, 10, 30].iter().enumerate() {
            let mean = sums[k] / reps as f64;
            let want = MJO.log_amplitude_ar1.powi(day) * 1.2;
            let sd = MJO.log_amplitude_sd * (1.0 - MJO.log_amplitude_ar1.powi(2 * day)).sqrt();
            assert!(
                (mean - want).abs() < 4.0 * sd / (reps as f64).sqrt() + 1e-3,
                "day {day}: mean log amplitude {mean}, want {want}"
            );
        }
    }

    #[test]
    fn member_draws_give_each_model_equal_weight() {
        let models = vec![vec![1.0; 30], vec![2.0; 12], vec![3.0; 20]];
        let reps = 6000;
        let mut per_model = [0usize; 3];
        for r in 0..reps {
            let (m, j, v) = enso_member_draw(3, "test", &models, r);
            assert!(j < models[m].len());
            assert_eq!(v, models[m][j]);
            per_model[m] += 1;
        }
        // Binomial(6000, 1/3): sd about 36.5.
        for n in per_model {
            assert!((n as f64 - 2000.0).abs() < 150.0, "{per_model:?}");
        }
    }
}
