//! Connection limits of the `tidetally serve` binary on a real loopback socket: a partial
//! request line is closed after the header-read timeout, an idle keep-alive connection after
//! the idle timeout, and connections over the cap are refused with a 503 problem.
#![allow(clippy::unwrap_used)]
#![cfg(unix)]

mod support;

use std::io::{BufRead, Read, Write};
use std::net::{SocketAddr, TcpStream};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

use support::*;

struct Server {
    child: Child,
    addr: SocketAddr,
}

impl Drop for Server {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

/// Starts the binary on an empty store with small limits.
fn start(name: &str) -> Server {
    let dir = temp_dir(name);
    std::fs::create_dir_all(dir.join("gauges")).unwrap();
    let mut child = Command::new(env!("CARGO_BIN_EXE_tidetally"))
        .args(["serve", "--addr", "127.0.0.1:0", "--data"])
        .arg(dir.join("gauges"))
        .arg("--db")
        .arg(dir.join("t.db"))
        .env_remove("TIDETALLY_TOKEN")
        .env_remove("TIDETALLY_ADDR")
        .env("TIDETALLY_HEADER_READ_TIMEOUT_SECS", "1")
        .env("TIDETALLY_IDLE_TIMEOUT_SECS", "1")
        .env("TIDETALLY_MAX_CONNECTIONS", "3")
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .expect("binary starts");
    let mut line = String::new();
    std::io::BufReader::new(child.stdout.take().unwrap())
        .read_line(&mut line)
        .expect("startup line");
    let started: serde_json::Value = serde_json::from_str(&line).expect("startup JSON");
    let addr = started["listening"].as_str().unwrap().parse().unwrap();
    Server { child, addr }
}

/// Reads until the server closes the connection or 10 s pass; returns what was read and when.
fn read_until_closed(stream: &mut TcpStream) -> (Vec<u8>, Duration) {
    let started = Instant::now();
    stream
        .set_read_timeout(Some(Duration::from_secs(10)))
        .unwrap();
    let mut bytes = Vec::new();
    let _ = stream.read_to_end(&mut bytes);
    (bytes, started.elapsed())
}

#[test]
fn slow_and_idle_connections_are_closed_and_capped() {
    let server = start("limits");
    // A partial request line is dropped after the header-read timeout (1 s here).
    let mut slow = TcpStream::connect(server.addr).unwrap();
    slow.write_all(b"GET /healthz HT").unwrap();
    let (_, waited) = read_until_closed(&mut slow);
    assert!(waited < Duration::from_secs(8), "open for {waited:?}");

    // An idle keep-alive connection is closed after the idle timeout.
    let mut idle = TcpStream::connect(server.addr).unwrap();
    idle.write_all(b"GET /healthz HTTP/1.1\r\nHost: x\r\n\r\n")
        .unwrap();
    let (bytes, waited) = read_until_closed(&mut idle);
    assert!(String::from_utf8_lossy(&bytes).starts_with("HTTP/1.1 200"));
    assert!(waited < Duration::from_secs(8), "open for {waited:?}");

    // Over the cap (3): the fourth connection gets a 503 problem at once.
    let held: Vec<TcpStream> = (0..3)
        .map(|_| {
            let s = TcpStream::connect(server.addr).unwrap();
            s.set_nodelay(true).unwrap();
            s
        })
        .collect();
    std::thread::sleep(Duration::from_millis(200));
    let mut extra = TcpStream::connect(server.addr).unwrap();
    extra
        .write_all(b"GET /healthz HTTP/1.1\r\nHost: x\r\nConnection: close\r\n\r\n")
        .unwrap();
    let (bytes, _) = read_until_closed(&mut extra);
    let reply = socket::parse(&bytes);
    assert_eq!(reply.status, 503, "{}", reply.head);
    assert!(reply.header("retry-after").is_some(), "{}", reply.head);
    assert_eq!(reply.json()["type"], "/problems/too-many-connections");
    drop(held);
}
