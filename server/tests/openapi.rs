//! The OpenAPI document against the router and against real responses.
#![allow(clippy::unwrap_used)]

mod support;

use std::sync::Arc;

use axum::http::StatusCode;
use support::*;
use tidetally_server::{app, state};

/// Every route this test knows the service to have, written out independently of the
/// document (method, path).
const EXPECTED: &[(&str, &str)] = &[
    ("get", "/healthz"),
    ("get", "/readyz"),
    ("get", "/api/v1/openapi.json"),
    ("get", "/api/v1/clock"),
    ("get", "/api/v1/gauges"),
    ("get", "/api/v1/gauges.geojson"),
    ("get", "/api/v1/gauges/{id}"),
    ("get", "/api/v1/gauges/{id}/seasons"),
    ("get", "/api/v1/gauges/{id}/outlook"),
    ("get", "/api/v1/gauges/{id}/hindcast"),
    ("get", "/api/v1/gauges/{id}/calendar"),
    ("get", "/api/v1/gauges/{id}/calendar.ics"),
    ("get", "/api/v1/outlooks"),
    ("get", "/api/v1/outlooks/issued"),
    ("put", "/api/v1/gauges/{id}"),
    ("put", "/api/v1/gauges/{id}/levels"),
    ("delete", "/api/v1/gauges/{id}"),
    ("get", "/api/v1/gauges/{id}/versions"),
    (
        "post",
        "/api/v1/gauges/{id}/versions/{input}/{version}/restore",
    ),
    ("post", "/api/v1/gauges/{id}/versions/prune"),
    ("get", "/api/v1/drivers"),
    ("put", "/api/v1/drivers/{kind}/{name}"),
    ("put", "/api/v1/forecasts/enso/{name}"),
    (
        "post",
        "/api/v1/drivers/{kind}/{name}/versions/{version}/restore",
    ),
    ("post", "/api/v1/gauges/{id}/refit"),
];

fn concrete(path: &str) -> String {
    path.replace("{id}", "a")
        .replace("{gauge}", "a")
        .replace("{kind}", "enso")
        .replace("{name}", "a-enso")
        .replace("{input}", "levels")
        .replace("{version}", "1")
}

/// The JSON types a property schema allows, following `$ref`, `oneOf` and `anyOf`.
fn json_types(doc: &serde_json::Value, schema: &serde_json::Value) -> Vec<String> {
    if let Some(r) = schema["$ref"].as_str() {
        let name = r.trim_start_matches("#/components/schemas/");
        return json_types(doc, &doc["components"]["schemas"][name]);
    }
    for key in ["oneOf", "anyOf"] {
        if let Some(alts) = schema[key].as_array() {
            return alts.iter().flat_map(|a| json_types(doc, a)).collect();
        }
    }
    match &schema["type"] {
        serde_json::Value::Array(a) => a
            .iter()
            .filter_map(|t| t.as_str().map(str::to_owned))
            .collect(),
        serde_json::Value::String(t) => vec![t.clone()],
        _ => panic!("property schema without a type: {schema}"),
    }
}

/// Checks that `body` has every required field of `schema` with the documented JSON type.
fn assert_conforms(doc: &serde_json::Value, schema: &str, body: &serde_json::Value, what: &str) {
    let s = &doc["components"]["schemas"][schema];
    let required = s["required"]
        .as_array()
        .unwrap_or_else(|| panic!("schema {schema} missing"));
    for field in required {
        let name = field.as_str().unwrap();
        let value = body
            .get(name)
            .unwrap_or_else(|| panic!("{what}: field {name} missing in {body}"));
        let types = json_types(doc, &s["properties"][name]);
        let types: Vec<&str> = types.iter().map(String::as_str).collect();
        let actual = match value {
            serde_json::Value::Null => "null",
            serde_json::Value::Bool(_) => "boolean",
            serde_json::Value::Number(n) if n.is_i64() || n.is_u64() => "integer",
            serde_json::Value::Number(_) => "number",
            serde_json::Value::String(_) => "string",
            serde_json::Value::Array(_) => "array",
            serde_json::Value::Object(_) => "object",
        };
        let ok = types.contains(&actual) || (actual == "integer" && types.contains(&"number"));
        assert!(ok, "{what}: field {name} is {actual}, documented {types:?}");
    }
}

#[tokio::test]
async fn every_route_is_documented_and_every_documented_route_exists() {
    let app = app(state(true));
    let doc = get(&app, "/api/v1/openapi.json").await.json();
    assert_eq!(doc["openapi"], "3.1.0");
    for (method, path) in EXPECTED {
        assert!(
            doc["paths"][path][method].is_object(),
            "{method} {path} is not documented"
        );
    }
    let documented: usize = doc["paths"]
        .as_object()
        .unwrap()
        .values()
        .map(|p| p.as_object().unwrap().len())
        .sum();
    assert_eq!(
        documented,
        EXPECTED.len(),
        "the document lists operations the test does not know"
    );
    for (method, path) in EXPECTED {
        let a = send(&app, &method.to_uppercase(), &concrete(path), &[], vec![]).await;
        let body: serde_json::Value = serde_json::from_slice(&a.body).unwrap_or_default();
        assert_ne!(
            body["type"], "/problems/unknown-path",
            "{method} {path} is not routed"
        );
        assert_ne!(
            a.status,
            StatusCode::METHOD_NOT_ALLOWED,
            "{method} {path} is not routed"
        );
    }
}

#[tokio::test]
async fn real_responses_have_the_documented_fields() {
    let state = state(true);
    let app = app(Arc::clone(&state));
    let doc = get(&app, "/api/v1/openapi.json").await.json();
    for name in [
        "Health",
        "Ready",
        "OpenApiDocument",
        "GaugeList",
        "Gauge",
        "FeatureCollection",
        "SeasonHistory",
        "Outlook",
        "Hindcast",
        "SeasonCalendar",
        "OutlookSet",
        "IssuedOutlookList",
        "UploadReceipt",
        "Retired",
        "Pruned",
        "VersionList",
        "SeriesList",
        "Problem",
    ] {
        assert!(
            doc["components"]["schemas"][name].is_object(),
            "schema {name}"
        );
    }
    let receipt = write(&app, "PUT", "/api/v1/gauges/a", gauge_toml("a"))
        .await
        .json();
    assert_conforms(&doc, "UploadReceipt", &receipt, "PUT gauge");
    let receipt = write(&app, "PUT", "/api/v1/gauges/a/levels", LEVELS_CSV)
        .await
        .json();
    assert_conforms(&doc, "UploadReceipt", &receipt, "PUT levels");
    let receipt = write(
        &app,
        "PUT",
        "/api/v1/drivers/enso/a-enso",
        "month,anomaly\n2020-01,0.5\n",
    )
    .await
    .json();
    assert_conforms(&doc, "UploadReceipt", &receipt, "PUT series");
    // One day of calendar, so the season calendar can be read too.
    let mut results = synthetic_results("a");
    if let Some(outlook) = results.outlooks.get_mut("2026-DJF") {
        outlook.days = vec![tidetally_server::api::DayChance {
            date: "2026-12-01".into(),
            predicted_high_m: 0.8,
            chance: 0.3,
        }];
    }
    let st = Arc::clone(&state);
    tokio::task::spawn_blocking(move || state::install_results(&st, "a", results))
        .await
        .unwrap()
        .unwrap();

    let reads = [
        ("/healthz", "Health"),
        ("/readyz", "Ready"),
        ("/api/v1/openapi.json", "OpenApiDocument"),
        ("/api/v1/clock", "Clock"),
        ("/api/v1/gauges", "GaugeList"),
        ("/api/v1/gauges.geojson", "FeatureCollection"),
        ("/api/v1/gauges/a", "Gauge"),
        ("/api/v1/gauges/a/outlook?season=2026-DJF", "Outlook"),
        ("/api/v1/gauges/a/outlook?season=2026-DJF&k=1,2", "Outlook"),
        ("/api/v1/gauges/a/hindcast", "Hindcast"),
        (
            "/api/v1/gauges/a/calendar?season=2026-DJF",
            "SeasonCalendar",
        ),
        ("/api/v1/outlooks?season=2026-DJF", "OutlookSet"),
        ("/api/v1/outlooks/issued", "IssuedOutlookList"),
        ("/api/v1/gauges/a/versions", "VersionList"),
        ("/api/v1/drivers", "SeriesList"),
    ];
    for (uri, schema) in reads {
        let a = get(&app, uri).await;
        assert_eq!(
            a.status,
            StatusCode::OK,
            "{uri}: {}",
            String::from_utf8_lossy(&a.body)
        );
        assert_conforms(&doc, schema, &a.json(), uri);
    }
    let list = get(&app, "/api/v1/gauges").await.json();
    assert_conforms(&doc, "Gauge", &list["gauges"][0], "gauge list item");
    let set = get(&app, "/api/v1/outlooks?season=2026-DJF").await.json();
    assert_conforms(&doc, "Outlook", &set["outlooks"][0], "outlook set item");
    let issued = get(&app, "/api/v1/outlooks/issued").await.json();
    assert_conforms(
        &doc,
        "Outlook",
        &issued["issued"][0]["outlook"],
        "issued outlook",
    );
    let geo = get(&app, "/api/v1/gauges.geojson").await.json();
    let properties = &geo["features"][0]["properties"];
    assert_conforms(&doc, "GaugeProperties", properties, "GeoJSON properties");
    assert_conforms(
        &doc,
        "OutlookSummary",
        &properties["next_outlook"],
        "next outlook summary",
    );
    assert_conforms(
        &doc,
        "AtLeastK",
        &properties["next_outlook"]["at_least_k"],
        "headline exceedance",
    );
    let problem = get(&app, "/api/v1/gauges/none").await.json();
    assert_conforms(&doc, "Problem", &problem, "problem");
}
