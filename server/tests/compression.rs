//! Content codings through the router: gzip and brotli copies chosen by `Accept-Encoding`
//! (RFC 9110 section 12.5.3), each with its own strong ETag and `304`, `Vary: Accept-Encoding`,
//! copies made once per fit (and once per change for the all-gauges set), never per request.
//! The outlooks are hand-made plumbing fixtures (`synthetic_results`), not model results.
#![allow(clippy::unwrap_used)]

mod support;

use std::io::Read;
use std::sync::Arc;

use axum::body::Body;
use axum::http::{Request, StatusCode};
use support::*;
use tidetally_server::{AppState, app, state};
use tower::ServiceExt;

const OUTLOOK: &str = "/api/v1/gauges/a/outlook?season=2026-DJF";

/// Decoded with flate2's gzip decoder (RFC 1952).
fn gunzip(bytes: &[u8]) -> Vec<u8> {
    let mut out = Vec::new();
    flate2::read::GzDecoder::new(bytes)
        .read_to_end(&mut out)
        .expect("valid gzip");
    out
}

/// Decoded with the brotli crate's decoder (RFC 7932).
fn unbrotli(bytes: &[u8]) -> Vec<u8> {
    let mut out = Vec::new();
    brotli::Decompressor::new(bytes, 4096)
        .read_to_end(&mut out)
        .expect("valid brotli");
    out
}

fn varies_on(a: &Answer, name: &str) -> bool {
    a.headers
        .get_all("vary")
        .iter()
        .filter_map(|v| v.to_str().ok())
        .flat_map(|v| v.split(','))
        .any(|v| v.trim().eq_ignore_ascii_case(name))
}

async fn get_with(app: &axum::Router, uri: &str, headers: &[(&str, &str)]) -> Answer {
    send(app, "GET", uri, headers, Vec::new()).await
}

async fn install(state: &Arc<AppState>, id: &'static str, note: Option<&'static str>) {
    let st = Arc::clone(state);
    tokio::task::spawn_blocking(move || {
        let mut results = synthetic_results(id);
        if let Some(note) = note {
            for outlook in results.outlooks.values_mut() {
                outlook.notes.push(note.into());
            }
        }
        state::install_results(&st, id, results)
    })
    .await
    .unwrap()
    .unwrap();
}

/// Two gauges, `a` and `b`, each with installed results.
async fn served() -> (Arc<AppState>, axum::Router) {
    let state = state(true);
    let app = app(Arc::clone(&state));
    upload_gauge(&app, "a").await;
    upload_gauge(&app, "b").await;
    install(&state, "a", None).await;
    install(&state, "b", None).await;
    (state, app)
}

#[tokio::test]
async fn each_coding_decompresses_to_the_identity_body() {
    let (_state, app) = served().await;
    let plain = get_with(&app, OUTLOOK, &[]).await;
    assert_eq!(plain.status, StatusCode::OK);
    assert_eq!(plain.header("content-encoding"), None);
    assert!(varies_on(&plain, "accept-encoding"));
    let tag = plain.header("etag").unwrap().to_owned();

    let mut tags = vec![tag.clone()];
    for (accept, coding) in [
        ("gzip", "gzip"),
        ("br", "br"),
        ("gzip, deflate, br", "br"),
        ("br;q=0.5, gzip", "gzip"),
        ("gzip;q=0.8, br;q=0.9", "br"),
        ("*", "br"),
    ] {
        let a = get_with(&app, OUTLOOK, &[("accept-encoding", accept)]).await;
        assert_eq!(a.status, StatusCode::OK, "{accept}");
        assert_eq!(a.header("content-encoding"), Some(coding), "{accept}");
        assert!(varies_on(&a, "accept-encoding"), "{accept}");
        let decoded = if coding == "br" {
            unbrotli(&a.body)
        } else {
            gunzip(&a.body)
        };
        assert_eq!(decoded, plain.body, "{accept}");
        assert!(a.body.len() < plain.body.len(), "{accept}");
        let suffix = if coding == "br" { "-br\"" } else { "-gz\"" };
        let coded_tag = a.header("etag").unwrap();
        assert_eq!(coded_tag, format!("{}{suffix}", &tag[..tag.len() - 1]));
        tags.push(coded_tag.to_owned());
    }
    tags.sort();
    tags.dedup();
    assert_eq!(tags.len(), 3, "one strong tag per coding: {tags:?}");

    // q=0 refuses a coding (RFC 9110 section 12.4.2); nothing acceptable falls back to identity.
    for accept in ["br;q=0, gzip;q=0", "br;q=0", "deflate", "identity", ""] {
        let a = get_with(&app, OUTLOOK, &[("accept-encoding", accept)]).await;
        assert_eq!(a.header("content-encoding"), None, "{accept:?}");
        assert_eq!(a.body, plain.body, "{accept:?}");
        assert_eq!(a.header("etag"), Some(tag.as_str()), "{accept:?}");
        assert!(varies_on(&a, "accept-encoding"), "{accept:?}");
    }
    let a = get_with(&app, OUTLOOK, &[("accept-encoding", "br;q=0, gzip")]).await;
    assert_eq!(a.header("content-encoding"), Some("gzip"));
}

#[tokio::test]
async fn each_codings_tag_answers_304_for_that_coding_only() {
    let (_state, app) = served().await;
    for coding in ["gzip", "br"] {
        let first = get_with(&app, OUTLOOK, &[("accept-encoding", coding)]).await;
        let tag = first.header("etag").unwrap().to_owned();
        let again = get_with(
            &app,
            OUTLOOK,
            &[("accept-encoding", coding), ("if-none-match", &tag)],
        )
        .await;
        assert_eq!(again.status, StatusCode::NOT_MODIFIED, "{coding}");
        assert!(again.body.is_empty());
        assert_eq!(again.header("etag"), Some(tag.as_str()));
        assert!(varies_on(&again, "accept-encoding"), "{coding}");
        // Weak comparison (RFC 9110 section 13.1.2) ignores `W/`.
        let weak = format!("W/{tag}");
        let again = get_with(
            &app,
            OUTLOOK,
            &[("accept-encoding", coding), ("if-none-match", &weak)],
        )
        .await;
        assert_eq!(again.status, StatusCode::NOT_MODIFIED, "{coding}");
        // The same tag does not match another coding's bytes.
        let other = get_with(
            &app,
            OUTLOOK,
            &[("accept-encoding", "identity"), ("if-none-match", &tag)],
        )
        .await;
        assert_eq!(other.status, StatusCode::OK, "{coding}");
        assert_eq!(other.header("content-encoding"), None);
    }
    let plain = get_with(&app, OUTLOOK, &[]).await;
    let tag = plain.header("etag").unwrap().to_owned();
    let again = get_with(&app, OUTLOOK, &[("if-none-match", &tag)]).await;
    assert_eq!(again.status, StatusCode::NOT_MODIFIED);
    let gz = get_with(
        &app,
        OUTLOOK,
        &[("accept-encoding", "gzip"), ("if-none-match", &tag)],
    )
    .await;
    assert_eq!(gz.status, StatusCode::OK);
    assert_eq!(gz.header("content-encoding"), Some("gzip"));
}

#[tokio::test]
async fn every_prepared_read_is_negotiable() {
    let (_state, app) = served().await;
    for uri in [
        "/api/v1/gauges/a/outlook",
        "/api/v1/gauges/a/hindcast",
        "/api/v1/gauges/a/seasons",
        "/api/v1/outlooks",
        "/api/v1/outlooks?season=2026-DJF",
    ] {
        let plain = get_with(&app, uri, &[]).await;
        assert_eq!(plain.status, StatusCode::OK, "{uri}");
        let br = get_with(&app, uri, &[("accept-encoding", "br")]).await;
        assert_eq!(br.header("content-encoding"), Some("br"), "{uri}");
        assert!(varies_on(&br, "accept-encoding"), "{uri}");
        assert_eq!(unbrotli(&br.body), plain.body, "{uri}");
    }
    // The season table also varies on Accept (JSON or CSV).
    let seasons = get_with(&app, "/api/v1/gauges/a/seasons", &[]).await;
    assert!(varies_on(&seasons, "accept"));
    assert!(varies_on(&seasons, "accept-encoding"));
}

/// The outlook set's gauges (with an outlook, unavailable).
fn gauges_of(body: &[u8]) -> (Vec<String>, Vec<String>) {
    let set: serde_json::Value = serde_json::from_slice(body).unwrap();
    let ids = |key: &str, field: &str| -> Vec<String> {
        set[key]
            .as_array()
            .unwrap()
            .iter()
            .map(|o| o[field].as_str().unwrap().to_owned())
            .collect()
    };
    (ids("outlooks", "gauge"), ids("unavailable", "gauge"))
}

#[tokio::test]
async fn the_set_is_built_once_per_change_of_any_gauge() {
    let (state, app) = served().await;
    let sets = || state.catalog.sets.builds();
    for uri in ["/api/v1/outlooks", "/api/v1/outlooks?season=2026-DJF"] {
        let before = sets();
        let first = get_with(&app, uri, &[("accept-encoding", "br")]).await;
        for accept in ["br", "gzip", "identity", "br"] {
            get_with(&app, uri, &[("accept-encoding", accept)]).await;
        }
        assert_eq!(sets(), before + 1, "{uri}: built once for five requests");
        assert_eq!(
            gauges_of(&unbrotli(&first.body)),
            (vec!["a".into(), "b".into()], vec![])
        );
    }
    let set_tag = get_with(&app, "/api/v1/outlooks", &[])
        .await
        .header("etag")
        .unwrap()
        .to_owned();

    // An upload of a new gauge (no model yet) changes the set: it is listed as unavailable.
    let before = sets();
    upload_gauge(&app, "c").await;
    let a = get_with(&app, "/api/v1/outlooks", &[("accept-encoding", "gzip")]).await;
    assert_eq!(
        gauges_of(&gunzip(&a.body)),
        (vec!["a".into(), "b".into()], vec!["c".into()])
    );
    assert_eq!(sets(), before + 1);
    assert_ne!(
        a.header("etag").unwrap().trim_end_matches("-gz\""),
        set_tag.trim_end_matches('"')
    );

    // A refit of one gauge: the season's set is rebuilt and carries the new outlook.
    install(&state, "a", Some("Refitted for the compression test.")).await;
    let before = sets();
    let a = get_with(
        &app,
        "/api/v1/outlooks?season=2026-DJF",
        &[("accept-encoding", "br")],
    )
    .await;
    assert_eq!(sets(), before + 1);
    let set: serde_json::Value = serde_json::from_slice(&unbrotli(&a.body)).unwrap();
    assert!(
        set["outlooks"][0]["notes"]
            .as_array()
            .unwrap()
            .iter()
            .any(|n| n == "Refitted for the compression test."),
        "{set}"
    );
    // The old tag no longer matches: the client gets the new set.
    let a = get_with(&app, "/api/v1/outlooks", &[("if-none-match", &set_tag)]).await;
    assert_eq!(a.status, StatusCode::OK);

    // Retiring a gauge drops it from the set.
    write(&app, "DELETE", "/api/v1/gauges/c", "").await;
    let a = get_with(&app, "/api/v1/outlooks", &[("accept-encoding", "br")]).await;
    assert_eq!(
        gauges_of(&unbrotli(&a.body)),
        (vec!["a".into(), "b".into()], vec![])
    );
}

#[tokio::test]
async fn a_set_of_a_season_lists_on_demand_outlooks_as_they_are_kept() {
    let (state, app) = served().await;
    let uri = "/api/v1/outlooks?season=2020-DJF";
    let first = get_with(&app, uri, &[]).await.json();
    assert!(
        first["unavailable"][0]["reason"]
            .as_str()
            .unwrap()
            .contains("computes it")
    );
    // Asking gauge a for that season keeps its outcome (here a failure: a few hours of levels
    // cannot support it); the set of that season is rebuilt and says why.
    get_with(&app, "/api/v1/gauges/a/outlook?season=2020-DJF", &[]).await;
    let before = state.catalog.sets.builds();
    let again = get_with(&app, uri, &[]).await.json();
    assert_eq!(state.catalog.sets.builds(), before + 1);
    assert_ne!(first["unavailable"][0], again["unavailable"][0], "{again}");
}

/// The body of a response as the router gives it, not copied.
async fn raw_body(app: &axum::Router, uri: &str, accept: &str) -> axum::body::Bytes {
    let request = Request::get(uri)
        .header("accept-encoding", accept)
        .body(Body::empty())
        .unwrap();
    let response = app.clone().oneshot(request).await.unwrap();
    assert_eq!(response.status(), StatusCode::OK);
    tidetally_server::middleware::body_bytes(response).await
}

#[tokio::test]
async fn served_copies_are_the_stored_bytes_not_recompressed() {
    let (state, app) = served().await;
    let entry = state.catalog.get("a").unwrap();
    let model = entry.model.as_ref().unwrap();
    let stored = &model.outlooks["2026-DJF"];
    for _ in 0..3 {
        let br = raw_body(&app, OUTLOOK, "br").await;
        assert_eq!(br.as_ptr(), stored.compressed.brotli.as_ptr());
        assert_eq!(br.len(), stored.compressed.brotli.len());
        let gz = raw_body(&app, OUTLOOK, "gzip").await;
        assert_eq!(gz.as_ptr(), stored.compressed.gzip.as_ptr());
    }
    let br = raw_body(&app, "/api/v1/outlooks", "br").await;
    let kept = state.catalog.sets.kept(None).unwrap();
    assert_eq!(br.as_ptr(), kept.compressed.brotli.as_ptr());
    let again = raw_body(&app, "/api/v1/outlooks", "br").await;
    assert_eq!(again.as_ptr(), br.as_ptr());
}
