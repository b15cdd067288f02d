//! The service under hostile input and a researcher's own drivers, on a real loopback socket:
//! each test reproduces one defect found by trying to break the service (issue 13).
#![allow(clippy::unwrap_used)]

mod support;

use std::time::Duration;

use support::demo::{demo_folder, seeded_state};
use support::socket::{Reply, call, serve};
use support::*;
use tidetally_server::AppState;
use tidetally_server::store::Store;

fn ok(reply: &Reply, what: &str) {
    assert_eq!(reply.status, 200, "{what}: {} {}", reply.head, reply.body);
}

/// A gauge TOML naming its own ENSO series.
fn researcher_toml(id: &str) -> String {
    format!("{}\n[drivers]\nenso = \"{id}-enso.csv\"\n", gauge_toml(id))
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_researchers_upload_never_changes_another_gauges_model() {
    let data = demo_folder("isolation");
    let state = seeded_state(&data).await;
    let (addr, _stop, _server) = serve(state).await;
    let outlook = || {
        call(
            addr,
            "GET",
            "/api/v1/gauges/port-tamsin/outlook".into(),
            None,
            vec![],
        )
    };
    let before = outlook().await;
    ok(&before, "demo outlook");
    let before = before.json();
    assert!(before["fit_period"]["seasons"].as_u64().unwrap() > 40);

    // A researcher's gauge with its own, much shorter ENSO index.
    let r = call(
        addr,
        "PUT",
        "/api/v1/gauges/my-gauge".into(),
        Some(TOKEN),
        researcher_toml("my-gauge").into_bytes(),
    )
    .await;
    ok(&r, "researcher gauge");
    let mut enso = String::from("month,anomaly\n");
    for year in 2010..2020 {
        for month in 1..=12 {
            enso.push_str(&format!("{year}-{month:02},0.5\n"));
        }
    }
    let r = call(
        addr,
        "PUT",
        "/api/v1/drivers/enso/my-gauge-enso".into(),
        Some(TOKEN),
        enso.into_bytes(),
    )
    .await;
    ok(&r, "researcher ENSO");

    // Refitting the demo gauge on unchanged inputs changes nothing it serves.
    let r = call(
        addr,
        "POST",
        "/api/v1/gauges/port-tamsin/refit".into(),
        Some(TOKEN),
        vec![],
    )
    .await;
    ok(&r, "demo refit");
    let after = outlook().await;
    ok(&after, "demo outlook after");
    let after = after.json();
    assert_eq!(after["fit_period"], before["fit_period"]);
    assert_eq!(after["model_version"], before["model_version"]);
    assert_eq!(
        after["issued_at"], before["issued_at"],
        "unchanged inputs keep issued_at"
    );
    let issued = call(
        addr,
        "GET",
        "/api/v1/outlooks/issued?gauge=port-tamsin".into(),
        None,
        vec![],
    )
    .await
    .json();
    assert_eq!(
        issued["issued"].as_array().unwrap().len(),
        1,
        "no second copy"
    );

    // The series list says who uses what.
    let series = call(addr, "GET", "/api/v1/drivers".into(), None, vec![]).await;
    ok(&series, "series list");
    let series = series.json();
    let users = |kind: &str, name: &str| -> Vec<String> {
        series["series"]
            .as_array()
            .unwrap()
            .iter()
            .find(|s| s["kind"] == kind && s["name"] == name)
            .map(|s| {
                s["used_by"]
                    .as_array()
                    .unwrap()
                    .iter()
                    .map(|g| g.as_str().unwrap().to_owned())
                    .collect()
            })
            .unwrap_or_else(|| panic!("no series {kind}/{name} in {series}"))
    };
    assert_eq!(users("enso", "enso-monthly"), vec!["port-tamsin"]);
    assert_eq!(users("enso", "my-gauge-enso"), vec!["my-gauge"]);

    // An upload changes nothing served until a refit: a new threshold is not yet in the
    // season table.
    let toml = std::fs::read_to_string(data.join("gauges/port-tamsin.toml"))
        .unwrap()
        .replace("flood_threshold_m = 4.18", "flood_threshold_m = 3.9");
    let r = call(
        addr,
        "PUT",
        "/api/v1/gauges/port-tamsin".into(),
        Some(TOKEN),
        toml.into_bytes(),
    )
    .await;
    ok(&r, "new threshold");
    let seasons = call(
        addr,
        "GET",
        "/api/v1/gauges/port-tamsin/seasons".into(),
        None,
        vec![],
    )
    .await;
    assert_eq!(seasons.json()["flood_threshold_m"], 4.18);
    let _ = std::fs::remove_dir_all(&data);
}

/// A gauge with `days` days of hourly levels, uploaded.
async fn gauge_with_levels(addr: std::net::SocketAddr, id: &'static str, days: u32) {
    let r = call(
        addr,
        "PUT",
        format!("/api/v1/gauges/{id}"),
        Some(TOKEN),
        gauge_toml(id).into_bytes(),
    )
    .await;
    ok(&r, "gauge");
    let r = call(
        addr,
        "PUT",
        format!("/api/v1/gauges/{id}/levels"),
        Some(TOKEN),
        hourly_levels(days).into_bytes(),
    )
    .await;
    ok(&r, "levels");
}

async fn readings(addr: std::net::SocketAddr, id: &str) -> u64 {
    let g = call(addr, "GET", format!("/api/v1/gauges/{id}"), None, vec![]).await;
    g.json()["record"]["readings"].as_u64().unwrap()
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_short_level_upload_never_silently_shrinks_a_record() {
    let (addr, _stop, _server) = serve(state(true)).await;
    gauge_with_levels(addr, "g", 30).await;
    assert_eq!(readings(addr, "g").await, 30 * 24);

    // One row, one of them changed: merged by default, counted in the receipt.
    let one = b"time,level\n2020-01-05T00:00:00Z,1.234\n2021-06-01T00:00:00Z,0.5\n".to_vec();
    let r = call(
        addr,
        "PUT",
        "/api/v1/gauges/g/levels".into(),
        Some(TOKEN),
        one.clone(),
    )
    .await;
    ok(&r, "merge");
    let receipt = r.json();
    assert_eq!(receipt["added"], 1, "{receipt}");
    assert_eq!(receipt["changed"], 1, "{receipt}");
    assert_eq!(readings(addr, "g").await, 30 * 24 + 1);

    // Replacing with a much shorter record needs the confirmation.
    let r = call(
        addr,
        "PUT",
        "/api/v1/gauges/g/levels?mode=replace".into(),
        Some(TOKEN),
        one.clone(),
    )
    .await;
    assert_eq!(r.status, 409, "{}", r.body);
    assert!(r.body.contains("confirm=shrink"), "{}", r.body);
    assert_eq!(readings(addr, "g").await, 30 * 24 + 1);
    let r = call(
        addr,
        "PUT",
        "/api/v1/gauges/g/levels?mode=replace&confirm=shrink".into(),
        Some(TOKEN),
        one,
    )
    .await;
    ok(&r, "confirmed replace");
    assert_eq!(readings(addr, "g").await, 2);

    // Every version stays recoverable: restore the first upload.
    let versions = call(
        addr,
        "GET",
        "/api/v1/gauges/g/versions".into(),
        None,
        vec![],
    )
    .await;
    ok(&versions, "versions");
    let versions = versions.json();
    let levels = versions["levels"].as_array().unwrap();
    assert_eq!(levels.len(), 3, "{versions}");
    let first = levels
        .iter()
        .map(|v| v["version"].as_i64().unwrap())
        .min()
        .unwrap();
    let r = call(
        addr,
        "POST",
        format!("/api/v1/gauges/g/versions/levels/{first}/restore"),
        Some(TOKEN),
        vec![],
    )
    .await;
    ok(&r, "restore");
    assert_eq!(readings(addr, "g").await, 30 * 24);

    // Retiring hides the gauge and keeps its data.
    let r = call(
        addr,
        "DELETE",
        "/api/v1/gauges/g".into(),
        Some(TOKEN),
        vec![],
    )
    .await;
    ok(&r, "retire");
    let list = call(addr, "GET", "/api/v1/gauges".into(), None, vec![])
        .await
        .json();
    assert_eq!(list["gauges"].as_array().unwrap().len(), 0, "{list}");
    let versions = call(
        addr,
        "GET",
        "/api/v1/gauges/g/versions".into(),
        None,
        vec![],
    )
    .await;
    ok(&versions, "versions of a retired gauge");
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn implausible_values_and_inexact_labels_are_refused_on_upload() {
    let (addr, _stop, _server) = serve(state(true)).await;
    gauge_with_levels(addr, "g", 2).await;
    let cases: Vec<(String, Vec<u8>, &str)> = vec![
        (
            "/api/v1/gauges/g/levels".into(),
            b"time,level\n2020-03-01T00:00:00Z,1e300\n".to_vec(),
            "field level",
        ),
        (
            "/api/v1/drivers/enso/my-enso".into(),
            b"month,anomaly\n2020-01,1e300\n".to_vec(),
            "field anomaly",
        ),
        (
            "/api/v1/drivers/rmm/my-rmm".into(),
            b"date,rmm1,rmm2\n2020-01-01,0.5,11\n".to_vec(),
            "field rmm2",
        ),
        (
            "/api/v1/forecasts/enso/my-forecast".into(),
            br#"{"season": "2025-12", "issued": "2025-11-15", "probabilities": {"la_nina": 0.5, "neutral": 0.3, "el_nino": 0.2}}"#.to_vec(),
            "field season",
        ),
        (
            "/api/v1/forecasts/enso/my-forecast".into(),
            br#"{"season": "2026-djf", "issued": "2025-11-15", "probabilities": {"la_nina": 0.5, "neutral": 0.3, "el_nino": 0.2}}"#.to_vec(),
            "field season",
        ),
        (
            "/api/v1/gauges/g".into(),
            gauge_toml("g")
                .replace("flood_threshold_m = 0.85", "flood_threshold_m = 1e300")
                .into_bytes(),
            "field flood_threshold_m",
        ),
        (
            "/api/v1/gauges/-".into(),
            gauge_toml("-").into_bytes(),
            "field id",
        ),
    ];
    for (path, body, field) in cases {
        let r = call(addr, "PUT", path.clone(), Some(TOKEN), body).await;
        assert_eq!(r.status, 422, "{path}: {}", r.body);
        let p = r.json();
        assert_eq!(p["type"], "/problems/invalid-upload", "{path}: {p}");
        assert!(p["detail"].as_str().unwrap().contains(field), "{path}: {p}");
    }
    assert_eq!(readings(addr, "g").await, 2 * 24, "nothing stored");
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn until_the_catalog_is_loaded_lists_answer_not_ready() {
    let store = Store::open_in_memory().unwrap();
    let state = AppState::new(store, None, Duration::from_secs(300));
    let (addr, _stop, _server) = serve(state).await;
    for path in [
        "/api/v1/gauges",
        "/api/v1/gauges.geojson",
        "/api/v1/outlooks?season=2026-DJF",
        "/api/v1/gauges/port-tamsin/outlook",
    ] {
        let r = call(addr, "GET", path.into(), None, vec![]).await;
        assert_eq!(r.status, 503, "{path}: {}", r.body);
        assert_eq!(r.json()["type"], "/problems/not-ready", "{path}");
        assert!(r.header("retry-after").is_some(), "{path}: {}", r.head);
        assert!(
            !r.header("cache-control")
                .unwrap_or_default()
                .contains("max-age=300"),
            "{path}: {}",
            r.head
        );
    }
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn write_paths_answer_405_to_reads_and_the_scheme_is_case_insensitive() {
    let (addr, _stop, _server) = serve(state(true)).await;
    for method in ["GET", "OPTIONS"] {
        let r = call(addr, method, "/api/v1/gauges/a/refit".into(), None, vec![]).await;
        assert_eq!(r.status, 405, "{method}: {}", r.body);
        assert_eq!(r.json()["type"], "/problems/method-not-allowed");
    }
    let body = gauge_toml("a");
    let raw = format!(
        "PUT /api/v1/gauges/a HTTP/1.1\r\nHost: x\r\nAuthorization: BEARER {TOKEN}\r\nContent-Length: {}\r\nConnection: close\r\n\r\n{body}",
        body.len()
    );
    let r = tokio::task::spawn_blocking(move || support::socket::exchange(addr, raw.as_bytes()))
        .await
        .unwrap();
    assert_eq!(r.status, 200, "{}", r.body);
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn echoed_values_are_cut_short() {
    let (addr, _stop, _server) = serve(state(true)).await;
    let long_id = "a".repeat(6_000);
    let r = call(
        addr,
        "GET",
        format!("/api/v1/gauges/{long_id}"),
        None,
        vec![],
    )
    .await;
    assert_eq!(r.status, 404);
    assert!(r.body.len() < 2_000, "{} bytes", r.body.len());
    assert!(r.body.contains("more characters"), "{}", r.body);
    gauge_with_levels(addr, "g", 1).await;
    let field = "9".repeat(200_000);
    let csv = format!("time,level\n2020-03-01T00:00:00Z,{field}x\n");
    let r = call(
        addr,
        "PUT",
        "/api/v1/gauges/g/levels".into(),
        Some(TOKEN),
        csv.into_bytes(),
    )
    .await;
    assert_eq!(r.status, 422);
    assert!(r.body.len() < 2_000, "{} bytes", r.body.len());
    assert!(r.body.contains("more characters"), "{}", r.body);

    // Request-line and header limits answer problem+json.
    let uri = format!("/api/v1/gauges/{}", "b".repeat(20_000));
    let r = call(addr, "GET", uri, None, vec![]).await;
    assert_eq!(r.status, 414, "{}", r.head);
    assert_eq!(r.json()["type"], "/problems/uri-too-long");
    let raw = format!(
        "GET /healthz HTTP/1.1\r\nHost: x\r\nX-Filler: {}\r\nConnection: close\r\n\r\n",
        "c".repeat(40_000)
    );
    let r = tokio::task::spawn_blocking(move || support::socket::exchange(addr, raw.as_bytes()))
        .await
        .unwrap();
    assert_eq!(r.status, 431, "{}", r.head);
    assert_eq!(r.json()["type"], "/problems/headers-too-large");
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_refit_missing_a_driver_series_names_it_and_its_toml_key() {
    let data = demo_folder("no-wind");
    let state = seeded_state(&data).await;
    let (addr, _stop, _server) = serve(state).await;
    let toml = std::fs::read_to_string(data.join("gauges/port-tamsin.toml"))
        .unwrap()
        .replace("id = \"port-tamsin\"", "id = \"no-wind\"")
        .replace("port-tamsin-wind.csv", "nowhere-wind.csv")
        .replace(
            "predictors = [\"enso\", \"mjo\", \"sea_level\"]",
            "predictors = [\"enso\", \"wind\", \"sea_level\"]",
        );
    let r = call(
        addr,
        "PUT",
        "/api/v1/gauges/no-wind".into(),
        Some(TOKEN),
        toml.into_bytes(),
    )
    .await;
    ok(&r, "gauge");
    let levels = std::fs::read(data.join("gauges/port-tamsin-levels.csv.gz")).unwrap();
    let r = call(
        addr,
        "PUT",
        "/api/v1/gauges/no-wind/levels".into(),
        Some(TOKEN),
        levels,
    )
    .await;
    ok(&r, "levels");
    let r = call(
        addr,
        "POST",
        "/api/v1/gauges/no-wind/refit".into(),
        Some(TOKEN),
        vec![],
    )
    .await;
    assert_eq!(r.status, 422, "{}", r.body);
    let detail = r.json()["detail"].as_str().unwrap().to_owned();
    for part in [
        "wind",
        "nowhere-wind",
        "drivers.wind",
        "PUT /api/v1/drivers/wind/nowhere-wind",
    ] {
        assert!(detail.contains(part), "{part}: {detail}");
    }
    let _ = std::fs::remove_dir_all(&data);
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_bad_series_version_is_undone_by_a_restore() {
    let (addr, _stop, _server) = serve(state(true)).await;
    let put = |csv: &'static str| {
        call(
            addr,
            "PUT",
            "/api/v1/drivers/enso/e".into(),
            Some(TOKEN),
            csv.as_bytes().to_vec(),
        )
    };
    let first = put("month,anomaly\n2020-01,0.5\n").await;
    ok(&first, "first");
    ok(&put("month,anomaly\n2020-01,-2.5\n").await, "second");
    let version = first.json()["version"].as_i64().unwrap();
    let r = call(
        addr,
        "POST",
        format!("/api/v1/drivers/enso/e/versions/{version}/restore"),
        Some(TOKEN),
        vec![],
    )
    .await;
    ok(&r, "restore");
    assert_eq!(r.json()["content_hash"], first.json()["content_hash"]);
    let list = call(addr, "GET", "/api/v1/drivers".into(), None, vec![])
        .await
        .json();
    assert_eq!(
        list["series"][0]["versions"].as_array().unwrap().len(),
        3,
        "{list}"
    );
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_shared_series_update_reaches_its_gauges_at_their_refits_with_a_note() {
    let data = demo_folder("shared-series");
    let second = std::fs::read_to_string(data.join("gauges/port-tamsin.toml"))
        .unwrap()
        .replace("id = \"port-tamsin\"", "id = \"tamsin-two\"");
    std::fs::write(data.join("gauges/tamsin-two.toml"), second).unwrap();
    let state = seeded_state(&data).await;
    let (addr, _stop, _server) = serve(state).await;
    let outlook = |id: &str| {
        call(
            addr,
            "GET",
            format!("/api/v1/gauges/{id}/outlook"),
            None,
            vec![],
        )
    };
    let before_a = outlook("port-tamsin").await.json();
    let before_b = outlook("tamsin-two").await;
    // A new version of the ENSO series both gauges choose, from 2005 on only.
    let enso = std::fs::read_to_string(data.join("drivers/enso-monthly.csv")).unwrap();
    let short: String = enso
        .lines()
        .enumerate()
        .filter(|(i, l)| *i == 0 || l.get(..4).is_some_and(|y| y >= "2005"))
        .map(|(_, l)| format!("{l}\n"))
        .collect();
    let r = call(
        addr,
        "PUT",
        "/api/v1/drivers/enso/enso-monthly".into(),
        Some(TOKEN),
        short.into_bytes(),
    )
    .await;
    ok(&r, "new ENSO version");
    assert!(
        r.body.contains("port-tamsin") && r.body.contains("tamsin-two"),
        "{}",
        r.body
    );
    // Nothing served changes before a refit.
    assert_eq!(outlook("tamsin-two").await.body, before_b.body);
    let r = call(
        addr,
        "POST",
        "/api/v1/gauges/port-tamsin/refit".into(),
        Some(TOKEN),
        vec![],
    )
    .await;
    ok(&r, "refit");
    let after_a = outlook("port-tamsin").await.json();
    assert_ne!(after_a["fit_period"], before_a["fit_period"]);
    let notes = after_a["notes"].to_string();
    assert!(
        notes.contains("fit period changed")
            && notes.contains("enso/enso-monthly has a new version"),
        "{notes}"
    );
    // The other gauge that chose it gets it at its own refit, not before.
    assert_eq!(outlook("tamsin-two").await.body, before_b.body);
    let r = call(
        addr,
        "POST",
        "/api/v1/gauges/tamsin-two/refit".into(),
        Some(TOKEN),
        vec![],
    )
    .await;
    ok(&r, "refit b");
    assert_eq!(
        outlook("tamsin-two").await.json()["fit_period"],
        after_a["fit_period"]
    );
    let _ = std::fs::remove_dir_all(&data);
}
