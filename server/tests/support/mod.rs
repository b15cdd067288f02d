//! Helpers of the service tests that need the service's own types: a state over an
//! in-memory store, requests through `oneshot`, uploads and fake results. The example gauge,
//! the fake outlook and the socket client come from `tidetally-test-support`.
#![allow(dead_code)]

use std::sync::Arc;
use std::time::Duration;

use axum::Router;
use axum::body::Body;
use axum::http::{HeaderMap, Request, StatusCode};
use tidetally_server::auth::Token;
use tidetally_server::pipeline::GaugeResults;
use tidetally_server::store::Store;
use tidetally_server::{AppState, state};
use tower::ServiceExt;

/// The write token of the tests.
pub const TOKEN: &str = "test-token-0123456789";

pub use tidetally_test_support::fixtures::{LEVELS_CSV, gauge_toml};

/// A state over an in-memory store, loaded, with writes enabled or not.
pub fn state(writes: bool) -> Arc<AppState> {
    let store = Store::open_in_memory().expect("in-memory store");
    let token = writes.then(|| Token::new(TOKEN.into()));
    let state = AppState::new(store, token, Duration::from_secs(300));
    state::load_catalog(&state).expect("empty store loads");
    state
}

/// An answer: status, headers, body.
pub struct Answer {
    pub status: StatusCode,
    pub headers: HeaderMap,
    pub body: Vec<u8>,
}

impl Answer {
    pub fn json(&self) -> serde_json::Value {
        serde_json::from_slice(&self.body)
            .unwrap_or_else(|e| panic!("not JSON ({e}): {}", String::from_utf8_lossy(&self.body)))
    }

    pub fn header(&self, name: &str) -> Option<&str> {
        self.headers.get(name).and_then(|v| v.to_str().ok())
    }

    /// Asserts a problem+json body with the given status and type slug.
    pub fn assert_problem(&self, status: u16, slug: &str) -> serde_json::Value {
        assert_eq!(
            self.status.as_u16(),
            status,
            "{}",
            String::from_utf8_lossy(&self.body)
        );
        assert_eq!(
            self.header("content-type"),
            Some("application/problem+json")
        );
        let p = self.json();
        assert_eq!(p["type"], format!("/problems/{slug}"), "{p}");
        assert_eq!(p["status"], status);
        for field in ["title", "detail", "instance"] {
            assert!(p[field].is_string(), "{field} missing in {p}");
        }
        p
    }
}

/// Sends one request through the router.
pub async fn send(
    app: &Router,
    method: &str,
    uri: &str,
    headers: &[(&str, &str)],
    body: Vec<u8>,
) -> Answer {
    let mut request = Request::builder().method(method).uri(uri);
    for (name, value) in headers {
        request = request.header(*name, *value);
    }
    let response = app
        .clone()
        .oneshot(request.body(Body::from(body)).expect("valid request"))
        .await
        .expect("the router never fails");
    let status = response.status();
    let headers = response.headers().clone();
    let body = axum::body::to_bytes(response.into_body(), usize::MAX)
        .await
        .expect("body")
        .to_vec();
    Answer {
        status,
        headers,
        body,
    }
}

/// GET without headers.
pub async fn get(app: &Router, uri: &str) -> Answer {
    send(app, "GET", uri, &[], Vec::new()).await
}

/// A write with the test token.
pub async fn write(app: &Router, method: &str, uri: &str, body: impl Into<Vec<u8>>) -> Answer {
    let auth = format!("Bearer {TOKEN}");
    send(app, method, uri, &[("authorization", &auth)], body.into()).await
}

/// Hand-made results for wiring tests: a three-day pmf for `2026-DJF`. These numbers test the
/// service's plumbing only, not any model.
pub fn synthetic_results(gauge: &str) -> GaugeResults {
    let fake = tidetally_test_support::fixtures::fake_results(gauge, &[0.5, 0.3, 0.2]);
    serde_json::from_value(fake).expect("the fake results have the wire shape")
}

/// Uploads a gauge and its levels through the API.
pub async fn upload_gauge(app: &Router, id: &str) {
    let a = write(app, "PUT", &format!("/api/v1/gauges/{id}"), gauge_toml(id)).await;
    assert_eq!(
        a.status,
        StatusCode::OK,
        "{}",
        String::from_utf8_lossy(&a.body)
    );
    let a = write(
        app,
        "PUT",
        &format!("/api/v1/gauges/{id}/levels"),
        LEVELS_CSV,
    )
    .await;
    assert_eq!(
        a.status,
        StatusCode::OK,
        "{}",
        String::from_utf8_lossy(&a.body)
    );
}
