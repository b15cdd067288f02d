//! A client generated from the served document by `openapi-python-client` 0.29.1 (PyPI), in
//! a temporary directory, used by `tests/python/openapi_client_demo.py` against the demo
//! service: one gauge's outlook and the all-gauges sets (without a season and with one),
//! whose key numbers must equal the service's own JSON. The generator runs with
//! `--fail-on-warning`, so any part of the document it cannot turn into code fails the test.

use std::process::Command;

use serde_json::{Value, json};

use crate::demo::{demo, get, get_json, workspace};
use crate::python::{fresh_dir, has_pinned, interpreter, succeeded};

/// The generator's configuration: the CSV and TOML upload bodies are bytes to it (it
/// generates typed bodies for JSON, forms and `application/octet-stream` only).
const CONFIG: &str = "tests/python/openapi_client_config.json";

const GAUGE: &str = "port-tamsin";
const SEASON: &str = "2026-DJF";

/// The numbers the script prints for one outlook, taken from the service's JSON.
fn headline(o: &Value) -> Value {
    let pmf: Vec<f64> = o["pmf"]
        .as_array()
        .unwrap()
        .iter()
        .map(|p| p.as_f64().unwrap())
        .collect();
    json!({
        "gauge": o["gauge"],
        "season": o["season"],
        "season_days": o["season_days"],
        "mean": o["mean"],
        "median": o["median"],
        "p10": o["p10"],
        "p90": o["p90"],
        "pmf_len": pmf.len(),
        "pmf_sum": pmf.iter().sum::<f64>(),
        "exceedance": o["exceedance"].as_array().unwrap().iter()
            .map(|e| json!([e["days"], e["probability"]])).collect::<Vec<_>>(),
        "terciles": o["terciles"].as_array().unwrap().iter()
            .map(|t| json!([t["reference"], t["below"], t["near"], t["above"]])).collect::<Vec<_>>(),
        "verdict": o["skill"]["verdict"],
        "engine": o["engine"],
        "family": o["family"],
        "plan_on": [o["plan_on"]["days"], o["plan_on"]["basis"]],
        "cautions": o["cautions"].as_array().unwrap().len(),
    })
}

fn outlook_set(s: &Value) -> Value {
    json!({
        "season": s["season"],
        "outlooks": s["outlooks"].as_array().unwrap().iter().map(headline).collect::<Vec<_>>(),
        "unavailable": s["unavailable"].as_array().unwrap().iter()
            .map(|u| u["gauge"].clone()).collect::<Vec<_>>(),
    })
}

/// Equal JSON, numbers within `1e-12` relative: both sides print shortest round-trip
/// decimals of the same doubles, and Python sums the pmf in the same order, so any
/// difference is a client that read a wrong field.
fn same(a: &Value, b: &Value) -> bool {
    match (a, b) {
        (Value::Number(x), Value::Number(y)) => {
            let (x, y) = (x.as_f64().unwrap(), y.as_f64().unwrap());
            (x - y).abs() <= 1e-12 * x.abs().max(y.abs()).max(1.0)
        }
        (Value::Array(x), Value::Array(y)) => {
            x.len() == y.len() && x.iter().zip(y).all(|(x, y)| same(x, y))
        }
        (Value::Object(x), Value::Object(y)) => {
            x.len() == y.len() && x.iter().all(|(k, v)| y.get(k).is_some_and(|w| same(v, w)))
        }
        _ => a == b,
    }
}

#[test]
fn a_generated_client_reads_the_demo_outlooks() {
    let test = "a_generated_client_reads_the_demo_outlooks";
    if !has_pinned(
        test,
        "openapi_python_client",
        "openapi-python-client",
        "0.29.1",
    ) {
        return;
    }
    let answer = get("/api/v1/openapi.json");
    assert_eq!(answer.status, 200, "{}", answer.text());
    let dir = fresh_dir("client");
    let file = dir.join("openapi.json");
    std::fs::write(&file, &answer.body).expect("document written");
    succeeded(
        "openapi-python-client generate",
        Command::new(interpreter())
            .args([
                "-m",
                "openapi_python_client",
                "generate",
                "--meta",
                "none",
                "--fail-on-warning",
            ])
            .arg("--config")
            .arg(workspace().join(CONFIG))
            .arg("--path")
            .arg(&file)
            .arg("--output-path")
            .arg(dir.join("tidetally_client"))
            .output(),
    );
    let base_url = format!("http://{}", demo().addr);
    let output = succeeded(
        "tests/python/openapi_client_demo.py",
        Command::new(interpreter())
            .arg(workspace().join("tests/python/openapi_client_demo.py"))
            .args([&base_url, GAUGE, SEASON])
            .env("PYTHONPATH", &dir)
            .output(),
    );
    let printed: Value = serde_json::from_slice(&output.stdout).unwrap_or_else(|e| {
        panic!(
            "the script printed no JSON ({e}): {}",
            String::from_utf8_lossy(&output.stdout)
        )
    });
    let expected = json!({
        "outlook": headline(&get_json(&format!("/api/v1/gauges/{GAUGE}/outlook"))),
        "next": outlook_set(&get_json("/api/v1/outlooks")),
        "season": outlook_set(&get_json(&format!("/api/v1/outlooks?season={SEASON}"))),
    });
    assert!(
        same(&printed, &expected),
        "the generated client read\n{printed:#}\nthe service serves\n{expected:#}"
    );
    assert_eq!(
        printed["next"]["outlooks"].as_array().map(Vec::len),
        Some(crate::demo::DEMO_GAUGES),
        "every demo gauge's next outlook"
    );
    let _ = std::fs::remove_dir_all(&dir);
}
