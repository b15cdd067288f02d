//! Inputs for wiring tests: the example gauge TOML and a fake outlook. The outlook is
//! wire-shaped JSON (the service's `api::Outlook` and `pipeline::GaugeResults`), to be read
//! into the service's own types; its numbers test plumbing only, never a model.

use serde_json::{Value, json};

/// The example gauge in the documented format (DEVELOPERS.md, "Gauge TOML") with only the
/// required keys: identity, threshold, local time, coast and a level file `{id}-levels.csv`.
pub fn gauge_toml(id: &str) -> String {
    format!(
        r#"id = "{id}"
name = "Test harbour {id}"
latitude = 44.12
longitude = -38.40
datum = "VBZ"
flood_threshold_m = 0.85
utc_offset = "-05:00"
coast_orientation_deg = 135.0

[levels]
file = "{id}-levels.csv"
units = "m"
"#
    )
}

/// A few hours of water levels (one missing) in the documented CSV format.
pub const LEVELS_CSV: &str = "time,level\n2020-01-01T00:00:00Z,0.10\n2020-01-01T01:00:00Z,0.30\n\
2020-01-01T02:00:00Z,\n2020-01-01T03:00:00Z,0.90\n";

/// A fake outlook of `gauge` for `2026-DJF` with the given pmf (index = days); every other
/// field is a plain placeholder of the right shape (no terciles, no drivers, skill not
/// measured, one caution).
pub fn fake_outlook(gauge: &str, pmf: &[f64]) -> Value {
    let mean: f64 = pmf.iter().enumerate().map(|(k, p)| k as f64 * p).sum();
    json!({
        "gauge": gauge,
        "season": "2026-DJF",
        "season_days": pmf.len().saturating_sub(1).max(90),
        "pmf": pmf,
        "mean": mean,
        "median": 0,
        "p10": 0,
        "p90": pmf.len().saturating_sub(1),
        "exceedance": [{"days": 5, "probability": pmf.iter().skip(5).sum::<f64>()}],
        "terciles": [],
        "climatological_mean": 1.0,
        "last_season_observed": null,
        "drivers": [],
        "skill": fake_skill(),
        "cautions": ["A seasonal probability, not a warning."],
        "issued_at": "2026-11-20T00:00:00Z",
        "model_version": "synthetic-1",
        "explanation": [],
        "trend_only_mean": null,
        "family": "poisson",
        "fit_period": {"first": "2000-DJF", "last": "2025-DJF", "seasons": 26},
        "notes": [],
    })
}

/// The skill of a fake outlook: not measured.
fn fake_skill() -> Value {
    json!({
        "verdict": "not_measured",
        "verdict_text": "Not yet measured out of sample.",
        "seasons_scored": 0,
        "season_name": "DJF",
        "scheme": "leave_one_year_out",
        "scores": [],
    })
}

/// A gauge's fake fitted results: [`fake_outlook`] for `2026-DJF` with its driver inputs
/// and an empty hindcast.
pub fn fake_results(gauge: &str, pmf: &[f64]) -> Value {
    json!({
        "model_version": "synthetic-1",
        "fitted_at": "2026-11-20T00:00:00Z",
        "hindcast": {
            "gauge": gauge,
            "model_version": "synthetic-1",
            "method": "leave-one-season-out",
            "skill": fake_skill(),
            "cases": [],
        },
        "outlooks": {"2026-DJF": fake_outlook(gauge, pmf)},
        "driver_inputs": {"2026-DJF": {"enso": -0.9}},
    })
}
