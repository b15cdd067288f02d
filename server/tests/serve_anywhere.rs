//! `tidetally serve` with no data folder, run the way an installed binary is (from a folder
//! outside the checkout), serves the invented demo coastline carried in the binary, and its
//! first log line says so; run from the checkout it serves the checkout's demo files and says
//! that instead.
#![allow(clippy::unwrap_used)]

use std::io::{BufRead, BufReader};
use std::net::SocketAddr;
use std::path::Path;
use std::process::{Child, Command, Stdio};
use std::time::Duration;

use tidetally_test_support::http::request;

struct Server {
    child: Child,
    addr: SocketAddr,
    first_log_line: String,
}

impl Drop for Server {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

/// Starts `tidetally serve` in `cwd` with a fresh store and no `--data`.
fn start(cwd: &Path, db: &Path) -> Server {
    let mut child = Command::new(env!("CARGO_BIN_EXE_tidetally"))
        .args(["serve", "--addr", "127.0.0.1:0", "--db"])
        .arg(db)
        .current_dir(cwd)
        .env_remove("TIDETALLY_DATA")
        .env_remove("TIDETALLY_ADDR")
        .env_remove("TIDETALLY_TOKEN")
        .env("RUST_LOG", "info")
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("binary starts");
    // The log is drained by a thread for the server's whole life (a closed pipe would end
    // its logging); the first line comes back over a channel.
    let stderr = child.stderr.take().unwrap();
    let (sender, first_line) = std::sync::mpsc::channel();
    std::thread::spawn(move || {
        let mut lines = BufReader::new(stderr).lines();
        if let Some(Ok(line)) = lines.next() {
            let _ = sender.send(line);
        }
        lines.for_each(drop);
    });
    let first_log_line = first_line
        .recv_timeout(Duration::from_secs(60))
        .expect("a first log line");
    let mut line = String::new();
    BufReader::new(child.stdout.take().unwrap())
        .read_line(&mut line)
        .expect("startup line");
    let started: serde_json::Value = serde_json::from_str(&line).expect("startup JSON");
    let addr = started["listening"].as_str().unwrap().parse().unwrap();
    Server {
        child,
        addr,
        first_log_line,
    }
}

/// The served gauge ids, once the service has loaded its models (it answers 503 until then).
fn gauge_ids(server: &Server) -> Vec<String> {
    let started = std::time::Instant::now();
    let answer = loop {
        let answer = request(
            server.addr,
            "GET",
            "/api/v1/gauges",
            &[],
            b"",
            Duration::from_secs(30),
        );
        if answer.status != 503 || started.elapsed() > Duration::from_secs(900) {
            break answer;
        }
        std::thread::sleep(Duration::from_millis(500));
    };
    assert_eq!(answer.status, 200, "{}", answer.text());
    let json = answer.json();
    let list = json.get("gauges").unwrap_or(&json).as_array().unwrap();
    let mut ids: Vec<String> = list
        .iter()
        .map(|g| g["id"].as_str().unwrap().to_owned())
        .collect();
    ids.sort();
    ids
}

const DEMO_IDS: [&str; 4] = [
    "corrin-quay",
    "port-tamsin",
    "saltlow-sound",
    "wrenmouth-inlet",
];

fn fresh_dir(name: &str) -> std::path::PathBuf {
    let dir =
        std::env::temp_dir().join(format!("tidetally-anywhere-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

#[test]
fn outside_the_checkout_the_carried_demo_is_served_and_said() {
    let dir = fresh_dir("outside");
    let server = start(&dir, &dir.join("t.db"));
    assert!(
        server.first_log_line.contains("carried in this binary"),
        "first log line: {}",
        server.first_log_line
    );
    assert_eq!(gauge_ids(&server), DEMO_IDS);
    // The unpacked copy is gone once seeded: the store holds the bytes.
    assert!(!dir.join("gauges").exists());
    drop(server);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn in_the_checkout_the_demo_files_are_served_and_said() {
    let dir = fresh_dir("checkout");
    let checkout = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    let server = start(&checkout, &dir.join("t.db"));
    assert!(
        server
            .first_log_line
            .contains("from the files in demo-data/gauges"),
        "first log line: {}",
        server.first_log_line
    );
    // Serving the same four gauges is checked above for the carried copy and by the demo
    // tests for the files; here only the choice and its log line.
    drop(server);
    let _ = std::fs::remove_dir_all(&dir);
}
