//! The service on a real loopback socket: upload with a token, read back, restart on the
//! same store file, and find everything still there. Also the `tidetally serve` binary,
//! seeded from a data folder and stopped by SIGTERM.
#![allow(clippy::unwrap_used)]

mod support;

use std::net::SocketAddr;
use std::time::Duration;

use support::*;
use tidetally_server::auth::Token;
use tidetally_server::store::Store;
use tidetally_server::{AppState, state};
use tidetally_test_support::http::request;

/// One request through the shared test client; returns status and body text.
fn http(
    addr: SocketAddr,
    method: &str,
    path: &str,
    token: Option<&str>,
    body: &[u8],
) -> (u16, String) {
    let auth = token.map(|t| format!("Bearer {t}"));
    let headers: Vec<(&str, &str)> = auth.iter().map(|a| ("Authorization", a.as_str())).collect();
    let answer = request(addr, method, path, &headers, body, Duration::from_secs(20));
    (answer.status, answer.text())
}

async fn call(
    addr: SocketAddr,
    method: &'static str,
    path: String,
    token: Option<&'static str>,
    body: Vec<u8>,
) -> (u16, String) {
    tokio::task::spawn_blocking(move || http(addr, method, &path, token, &body))
        .await
        .expect("client task")
}

/// Starts the service on port 0 over the store file; returns its address, a stop switch
/// and the server task.
async fn start(
    db: &std::path::Path,
) -> (
    SocketAddr,
    tokio::sync::oneshot::Sender<()>,
    tokio::task::JoinHandle<std::io::Result<()>>,
) {
    let store = Store::open(db).expect("store opens");
    let state = AppState::new(
        store,
        Some(Token::new(TOKEN.into())),
        Duration::from_secs(60),
    );
    let loader = std::sync::Arc::clone(&state);
    tokio::task::spawn_blocking(move || state::load_catalog(&loader))
        .await
        .unwrap()
        .expect("catalog loads");
    socket::serve(state).await
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn uploads_survive_a_restart_on_the_same_store_file() {
    let dir = temp_dir("restart");
    let db = dir.join("store.db");

    let (addr, stop, server) = start(&db).await;
    let (status, _) = call(
        addr,
        "PUT",
        "/api/v1/gauges/port-a".into(),
        Some(TOKEN),
        gauge_toml("port-a").into_bytes(),
    )
    .await;
    assert_eq!(status, 200);
    let gz = tidetally_server::store::gzip(LEVELS_CSV.as_bytes());
    let (status, body) = call(
        addr,
        "PUT",
        "/api/v1/gauges/port-a/levels".into(),
        Some(TOKEN),
        gz,
    )
    .await;
    assert_eq!(status, 200, "{body}");
    let (status, _) = call(
        addr,
        "PUT",
        "/api/v1/gauges/port-b".into(),
        None,
        gauge_toml("port-b").into_bytes(),
    )
    .await;
    assert_eq!(status, 401);
    let (status, body) = call(addr, "GET", "/api/v1/gauges/port-a".into(), None, vec![]).await;
    assert_eq!(status, 200);
    let before: serde_json::Value = serde_json::from_str(&body).unwrap();
    stop.send(()).unwrap();
    server.await.unwrap().expect("clean shutdown");

    let (addr, stop, server) = start(&db).await;
    let (status, body) = call(addr, "GET", "/api/v1/gauges/port-a".into(), None, vec![]).await;
    assert_eq!(status, 200);
    let mut after: serde_json::Value = serde_json::from_str(&body).unwrap();
    // The startup load tries a fit where the upload only said "not fitted yet": the status
    // text may differ; everything stored must not.
    let mut before = before;
    before["model_status"] = serde_json::Value::Null;
    after["model_status"] = serde_json::Value::Null;
    assert_eq!(after, before);
    assert_eq!(after["record"]["readings"], 4);
    let (_, body) = call(addr, "GET", "/api/v1/gauges".into(), None, vec![]).await;
    let list: serde_json::Value = serde_json::from_str(&body).unwrap();
    assert_eq!(
        list["gauges"].as_array().unwrap().len(),
        1,
        "the refused write left nothing"
    );
    stop.send(()).unwrap();
    server.await.unwrap().expect("clean shutdown");
    let _ = std::fs::remove_dir_all(&dir);
}

#[cfg(unix)]
#[test]
fn the_binary_seeds_from_a_data_folder_and_stops_on_sigterm() {
    use std::io::BufRead;
    use std::process::{Command, Stdio};

    let dir = temp_dir("binary");
    let data = dir.join("gauges");
    std::fs::create_dir_all(&data).unwrap();
    std::fs::write(data.join("port-c.toml"), gauge_toml("port-c")).unwrap();
    std::fs::write(data.join("port-c-levels.csv"), LEVELS_CSV).unwrap();
    let mut child = Command::new(env!("CARGO_BIN_EXE_tidetally"))
        .args(["serve", "--addr", "127.0.0.1:0", "--data"])
        .arg(&data)
        .arg("--db")
        .arg(dir.join("t.db"))
        .env_remove("TIDETALLY_TOKEN")
        .env_remove("TIDETALLY_ADDR")
        .env("TIDETALLY_TODAY", "2031-06-01")
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .expect("binary starts");
    // The first stdout line is one JSON object naming the bound address.
    let mut line = String::new();
    std::io::BufReader::new(child.stdout.take().unwrap())
        .read_line(&mut line)
        .expect("startup line");
    let started: serde_json::Value = serde_json::from_str(&line).expect("startup JSON");
    let addr: SocketAddr = started["listening"].as_str().unwrap().parse().unwrap();
    assert_eq!(started["writes"], "disabled");
    let mut ready = false;
    for _ in 0..100 {
        if http(addr, "GET", "/readyz", None, b"").0 == 200 {
            ready = true;
            break;
        }
        std::thread::sleep(Duration::from_millis(50));
    }
    assert!(ready, "the service never became ready");
    let (status, body) = http(addr, "GET", "/api/v1/gauges", None, b"");
    assert_eq!(status, 200);
    assert!(body.contains("\"port-c\""), "{body}");
    // TIDETALLY_TODAY fixes the service's clock.
    let (status, body) = http(addr, "GET", "/api/v1/clock", None, b"");
    assert_eq!((status, body.as_str()), (200, r#"{"today":"2031-06-01"}"#));
    let (status, body) = http(
        addr,
        "PUT",
        "/api/v1/gauges/port-c",
        Some(TOKEN),
        gauge_toml("port-c").as_bytes(),
    );
    assert_eq!(status, 403, "no token configured: {body}");
    let killed = Command::new("kill")
        .arg("-TERM")
        .arg(child.id().to_string())
        .status()
        .unwrap();
    assert!(killed.success());
    let exit = child.wait().expect("child exits");
    assert!(exit.success(), "graceful exit on SIGTERM, got {exit}");
    let _ = std::fs::remove_dir_all(&dir);
}
