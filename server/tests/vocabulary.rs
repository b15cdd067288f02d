//! One vocabulary (`tidetally_server::vocabulary`): every command's JSON and CSV on a demo
//! gauge and every read endpoint's answer on a service seeded with it use the shared names,
//! never a retired synonym, and name count families only as `poisson` or `negbin`.
#![allow(clippy::unwrap_used)]

mod support;

use serde_json::Value;
use support::demo::{demo, demo_folder, seeded_state_with};
use support::{get, tidetally};
use tidetally_server::app;
use tidetally_server::vocabulary::{FAMILY_NAMES, retired};

/// Every field name in `value`, with the value of every `family` field.
fn walk(value: &Value, names: &mut Vec<String>, families: &mut Vec<String>) {
    match value {
        Value::Object(map) => {
            for (key, v) in map {
                names.push(key.clone());
                if key == "family"
                    && let Some(f) = v.as_str()
                {
                    families.push(f.to_owned());
                }
                walk(v, names, families);
            }
        }
        Value::Array(items) => items.iter().for_each(|v| walk(v, names, families)),
        _ => {}
    }
}

/// Fails on any retired name or unknown family in the answer called `what`.
fn check_json(what: &str, value: &Value) {
    let (mut names, mut families) = (Vec::new(), Vec::new());
    walk(value, &mut names, &mut families);
    assert!(!names.is_empty(), "{what}: no fields at all");
    for name in names {
        if let Some(term) = retired(&name) {
            panic!(
                "{what}: field `{name}` is a retired synonym of `{}`",
                term.name
            );
        }
    }
    for family in families {
        assert!(
            FAMILY_NAMES.contains(&family.as_str()),
            "{what}: family `{family}` is not one of {FAMILY_NAMES:?}"
        );
    }
}

fn check_csv_header(what: &str, text: &str) {
    let header = text.lines().next().unwrap_or_default().trim_end();
    assert!(
        header.contains(',') && !header.starts_with(|c: char| c.is_ascii_digit()),
        "{what}: no header line: {header}"
    );
    for name in header.split(',') {
        if let Some(term) = retired(name) {
            panic!(
                "{what}: column `{name}` is a retired synonym of `{}`",
                term.name
            );
        }
    }
}

#[test]
fn every_command_speaks_the_shared_vocabulary() {
    let gauge = demo("gauges/port-tamsin.toml");
    let gauge = gauge.to_str().unwrap();
    for args in [
        vec!["counts", "--gauge", gauge],
        vec!["fit", "--gauge", gauge],
        vec!["outlook", "--gauge", gauge, "--draws", "400"],
        vec!["hindcast", "--gauge", gauge],
        vec!["tide", "risk", "--gauge", gauge],
    ] {
        let json: Value = serde_json::from_slice(&tidetally(&args)).unwrap();
        check_json(&args.join(" "), &json);
    }
    for args in [
        vec!["counts", "--gauge", gauge, "--csv"],
        vec!["counts", "--gauge", gauge, "--predictors"],
    ] {
        let text = String::from_utf8(tidetally(&args)).unwrap();
        check_csv_header(&args.join(" "), &text);
    }
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn every_read_endpoint_speaks_the_shared_vocabulary() {
    let data = demo_folder("vocabulary");
    let state = seeded_state_with(&data, |s| s).await;
    let app = app(state);
    for path in [
        "/api/v1/gauges",
        "/api/v1/gauges.geojson",
        "/api/v1/gauges/port-tamsin",
        "/api/v1/gauges/port-tamsin/seasons",
        "/api/v1/gauges/port-tamsin/outlook",
        "/api/v1/gauges/port-tamsin/hindcast",
        "/api/v1/outlooks",
        "/api/v1/outlooks?season=2026-DJF",
        "/api/v1/gauges/port-tamsin/versions",
        "/api/v1/drivers",
        "/api/v1/gauges/port-tamsin/calendar",
    ] {
        let answer = get(&app, path).await;
        assert_eq!(answer.status, 200, "{path}");
        check_json(path, &answer.json());
    }
    for path in [
        "/api/v1/gauges/port-tamsin/seasons?format=csv",
        "/api/v1/gauges/port-tamsin/calendar?format=csv",
    ] {
        let csv = get(&app, path).await;
        assert_eq!(csv.status, 200, "{path}");
        check_csv_header(path, &String::from_utf8(csv.body).unwrap());
    }
    let _ = std::fs::remove_dir_all(&data);
}
