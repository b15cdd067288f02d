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
    let mut results: GaugeResults =
        serde_json::from_value(fake).expect("the fake results have the wire shape");
    results.results_format = tidetally_server::pipeline::RESULTS_FORMAT;
    results
}

/// Uploads a gauge and its levels through the API.
/// Installs [`synthetic_results`] for gauge `id` (off the runtime, as the service does).
pub async fn install_synthetic(state: &Arc<AppState>, id: &str) {
    let st = Arc::clone(state);
    let id = id.to_owned();
    tokio::task::spawn_blocking(move || state::install_results(&st, &id, synthetic_results(&id)))
        .await
        .expect("install task")
        .expect("results installed");
}

/// Runs the `tidetally` binary with `args` and returns its stdout; a failure shows stderr.
pub fn tidetally(args: &[&str]) -> Vec<u8> {
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_tidetally"))
        .args(args)
        .output()
        .expect("the binary runs");
    assert!(
        out.status.success(),
        "tidetally {args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    out.stdout
}

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

/// Loopback helpers: one raw HTTP/1.1 exchange on a real socket.
pub mod socket {
    use std::net::SocketAddr;
    use std::sync::Arc;
    use std::time::Duration;

    use tidetally_server::AppState;
    use tidetally_test_support::http::{self, HttpAnswer};

    /// How long a reply may be silent.
    const TIMEOUT: Duration = Duration::from_secs(60);

    /// An answer from the socket, its body as text (the shared client's answer).
    pub struct Reply {
        pub status: u16,
        pub head: String,
        pub body: String,
        answer: HttpAnswer,
    }

    impl From<HttpAnswer> for Reply {
        fn from(answer: HttpAnswer) -> Self {
            Reply {
                status: answer.status,
                head: answer.head.clone(),
                body: answer.text(),
                answer,
            }
        }
    }

    impl Reply {
        pub fn json(&self) -> serde_json::Value {
            self.answer.json()
        }

        pub fn header(&self, name: &str) -> Option<String> {
            self.answer.header(name)
        }
    }

    /// Sends `raw` bytes and reads the answer.
    pub fn exchange(addr: SocketAddr, raw: &[u8]) -> Reply {
        http::exchange(addr, raw, TIMEOUT)
            .unwrap_or_else(|e| panic!("no answer from {addr}: {e}"))
            .into()
    }

    /// Parses a whole HTTP/1.1 response (chunked bodies joined).
    pub fn parse(bytes: &[u8]) -> Reply {
        http::parse(bytes).into()
    }

    /// One request with `Connection: close`; `token` adds `Authorization: Bearer`.
    pub fn request(
        addr: SocketAddr,
        method: &str,
        path: &str,
        token: Option<&str>,
        body: &[u8],
    ) -> Reply {
        let auth = token.map(|t| format!("Bearer {t}"));
        let headers: Vec<(&str, &str)> =
            auth.iter().map(|a| ("Authorization", a.as_str())).collect();
        http::request(addr, method, path, &headers, body, TIMEOUT).into()
    }

    /// Async wrapper of [`request`] (the client runs on a blocking thread).
    pub async fn call(
        addr: SocketAddr,
        method: &'static str,
        path: String,
        token: Option<&'static str>,
        body: Vec<u8>,
    ) -> Reply {
        tokio::task::spawn_blocking(move || request(addr, method, &path, token, &body))
            .await
            .expect("client task")
    }

    /// Serves `state` on a loopback port until the returned sender fires or is dropped.
    pub async fn serve(
        state: Arc<AppState>,
    ) -> (
        SocketAddr,
        tokio::sync::oneshot::Sender<()>,
        tokio::task::JoinHandle<std::io::Result<()>>,
    ) {
        let listener = tokio::net::TcpListener::bind("127.0.0.1:0")
            .await
            .expect("bind");
        let addr = listener.local_addr().expect("address");
        let (stop, stopped) = tokio::sync::oneshot::channel::<()>();
        let server = tokio::spawn(tidetally_server::run(listener, state, async {
            let _ = stopped.await;
        }));
        (addr, stop, server)
    }
}

/// A fresh folder under the system temp dir, unique to this test process and name.
pub fn temp_dir(name: &str) -> std::path::PathBuf {
    let dir = std::env::temp_dir().join(format!("tidetally-test-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("temp dir");
    dir
}

/// Water levels: `days` days of hourly readings from 2020-01-01, a daily tide-like swing.
pub fn hourly_levels(days: u32) -> String {
    let mut csv = String::from("time,level\n");
    let start = chrono::NaiveDate::from_ymd_opt(2020, 1, 1).expect("a date");
    for d in 0..days {
        let date = start + chrono::Days::new(u64::from(d));
        for h in 0..24 {
            let level = 0.5 + 0.4 * ((f64::from(h) / 24.0) * std::f64::consts::TAU).sin();
            csv.push_str(&format!("{date}T{h:02}:00:00Z,{level:.3}\n"));
        }
    }
    csv
}

/// The demo coastline for socket tests.
pub mod demo {
    use std::path::{Path, PathBuf};
    use std::sync::Arc;
    use std::time::Duration;

    use tidetally_server::auth::Token;
    use tidetally_server::store::Store;
    use tidetally_server::{AppState, state};

    use super::{TOKEN, temp_dir};

    pub fn demo(path: &str) -> PathBuf {
        Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("../demo-data")
            .join(path)
    }

    /// A data folder with one demo gauge (its tidal driver left out to keep the fit quick) and
    /// the demo's driver files, laid out as in `demo-data/`.
    pub fn demo_folder(name: &str) -> PathBuf {
        let dir = temp_dir(name);
        std::fs::create_dir_all(dir.join("gauges")).expect("demo data");
        std::fs::create_dir_all(dir.join("drivers")).expect("demo data");
        let toml = std::fs::read_to_string(demo("gauges/port-tamsin.toml"))
            .expect("demo data")
            .replace(
                "predictors = [\"enso\", \"mjo\", \"wind\", \"sea_level\", \"tide\"]",
                "predictors = [\"enso\", \"mjo\", \"sea_level\"]",
            );
        assert!(!toml.contains("\"tide\""), "the demo TOML changed shape");
        std::fs::write(dir.join("gauges/port-tamsin.toml"), toml).expect("demo data");
        for file in [
            "gauges/port-tamsin-levels.csv.gz",
            "gauges/port-tamsin-wind.csv",
            "drivers/enso-monthly.csv",
            "drivers/rmm-daily.csv",
            "drivers/enso-forecast-2026-DJF.json",
        ] {
            std::fs::copy(demo(file), dir.join(file)).expect("demo data");
        }
        dir
    }

    /// A loaded state over a store seeded from `data`, writes enabled.
    pub async fn seeded_state_with(
        data: &Path,
        configure: impl FnOnce(AppState) -> AppState,
    ) -> Arc<AppState> {
        let store = Store::open_in_memory().expect("in-memory store");
        let gauges = data.join("gauges");
        store
            .call_blocking(|c| Ok(state::seed_from_dir(c, &gauges)))
            .expect("demo data")
            .expect("demo data");
        let state = Arc::new(configure(AppState::unshared(
            store,
            Some(Token::new(TOKEN.into())),
            Duration::from_secs(60),
        )));
        let loader = Arc::clone(&state);
        tokio::task::spawn_blocking(move || state::load_catalog(&loader))
            .await
            .expect("demo data")
            .expect("demo data");
        state
    }

    /// [`seeded_state_with`] with the default pools and no test hook.
    pub async fn seeded_state(data: &Path) -> Arc<AppState> {
        seeded_state_with(data, |s| s).await
    }
}
