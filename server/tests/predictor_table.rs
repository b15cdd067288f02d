//! A researcher refits the served model from the exported table: for every demo gauge,
//! `tidetally counts --predictors` writes the season table with every predictor, and fitting
//! its `used_in_fit` rows of each season name with `tidetally glm` (the general GLM command on any
//! CSV) gives the coefficients `tidetally fit` reports, within 1e-8. The service fits with the
//! same function; `demo_outlooks.rs` checks that its outlooks' rate ratios equal `fit`'s.
#![allow(clippy::unwrap_used)]

mod support;

use std::path::{Path, PathBuf};
use std::process::Command;

use serde_json::Value;
use support::tidetally;
use tidetally_test_support::table::csv_table;

const TOLERANCE: f64 = 1e-8;

fn demo_gauge(id: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(format!("../demo-data/gauges/{id}.toml"))
}

/// The exported table: header and rows as strings.
fn table(gauge: &Path) -> (Vec<String>, Vec<Vec<String>>) {
    let bytes = tidetally(&["counts", "--gauge", gauge.to_str().unwrap(), "--predictors"]);
    csv_table(&bytes)
}

fn column(header: &[String], name: &str) -> usize {
    header
        .iter()
        .position(|h| h == name)
        .unwrap_or_else(|| panic!("no column {name} in {header:?}"))
}

#[test]
fn the_exported_table_refits_to_the_served_coefficients() {
    let dir = std::env::temp_dir().join(format!("tidetally-table-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    for id in [
        "port-tamsin",
        "wrenmouth-inlet",
        "saltlow-sound",
        "corrin-quay",
    ] {
        let gauge = demo_gauge(id);
        let (header, rows) = table(&gauge);
        // Every predictor has a column, the tidal one included (the demo gauges use it).
        for name in ["enso", "mjo", "wind", "sea_level", "tide"] {
            column(&header, name);
        }
        let fit: Value =
            serde_json::from_slice(&tidetally(&["fit", "--gauge", gauge.to_str().unwrap()]))
                .unwrap();
        let models = fit["models"].as_array().unwrap();
        assert!(!models.is_empty(), "{id}: no model");
        for model in models {
            let season_name = model["season_name"].as_str().unwrap();
            let used_in_fit = column(&header, "used_in_fit");
            let name_col = column(&header, "season_name");
            let chosen: Vec<&Vec<String>> = rows
                .iter()
                .filter(|r| r[used_in_fit] == "true" && r[name_col] == season_name)
                .collect();
            assert_eq!(
                chosen.len() as u64,
                model["fit_period"]["seasons"].as_u64().unwrap(),
                "{id} {season_name}: the table's used_in_fit rows are the fit's seasons"
            );
            let path = dir.join(format!("{id}-{season_name}.csv"));
            let mut writer = csv::Writer::from_path(&path).unwrap();
            writer.write_record(&header).unwrap();
            for row in &chosen {
                writer.write_record(row.iter()).unwrap();
            }
            writer.flush().unwrap();

            let coefficients = model["coefficients"].as_array().unwrap();
            let predictors: Vec<&str> = coefficients
                .iter()
                .map(|c| c["name"].as_str().unwrap())
                .filter(|n| *n != "intercept")
                .collect();
            let family = model["family"].as_str().unwrap();
            let mut args = vec![
                "glm",
                "--csv",
                path.to_str().unwrap(),
                "--response",
                "flood_days",
                "--offset",
                "log_observed_days",
                "--family",
                family,
            ];
            let joined = predictors.join(",");
            if !predictors.is_empty() {
                args.extend(["--predictors", joined.as_str()]);
            }
            let refit: Value = serde_json::from_slice(&tidetally(&args)).unwrap();
            assert_eq!(refit["family"], family, "{id} {season_name}");
            for c in coefficients {
                let name = c["name"].as_str().unwrap();
                let served = c["estimate"].as_f64().unwrap();
                let again = refit["coefficients"]
                    .as_array()
                    .unwrap()
                    .iter()
                    .find(|r| r["name"] == name)
                    .unwrap_or_else(|| panic!("{id} {season_name}: refit lacks {name}"))["estimate"]
                    .as_f64()
                    .unwrap();
                assert!(
                    (served - again).abs() <= TOLERANCE,
                    "{id} {season_name} {name}: served {served}, refitted {again}"
                );
            }
        }
    }
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn the_table_and_the_season_csv_are_exclusive_choices() {
    let out = Command::new(env!("CARGO_BIN_EXE_tidetally"))
        .args(["counts", "--gauge", "x.toml", "--csv", "--predictors"])
        .output()
        .unwrap();
    assert!(!out.status.success());
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(stderr.contains("--predictors"), "{stderr}");
}
