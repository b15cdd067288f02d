//! A tiny W3C WebDriver client over [`crate::http`] (JSON over HTTP/1.1, one connection per
//! command), and a JSON request for reading the service directly.

use std::net::{SocketAddr, TcpStream};
use std::time::{Duration, Instant};

use serde_json::{Value, json};

pub use crate::http::HttpAnswer;
use crate::http::request;

/// One JSON request to a WebDriver (or the service) with `Connection: close`.
pub fn http(addr: SocketAddr, method: &str, path: &str, body: Option<&Value>) -> HttpAnswer {
    let payload = body.map(|b| b.to_string()).unwrap_or_default();
    request(
        addr,
        method,
        path,
        &[
            ("Accept", "application/json"),
            ("Content-Type", "application/json; charset=utf-8"),
        ],
        payload.as_bytes(),
        Duration::from_secs(90),
    )
}

/// A WebDriver session on a driver listening at `driver`.
pub struct Session {
    driver: SocketAddr,
    id: String,
}

impl Session {
    /// Starts a session with the given capabilities (`alwaysMatch`).
    pub fn start(driver: SocketAddr, capabilities: Value) -> Session {
        let answer = http(
            driver,
            "POST",
            "/session",
            Some(&json!({ "capabilities": { "alwaysMatch": capabilities } })),
        );
        let value = answer.json();
        let id = value["value"]["sessionId"]
            .as_str()
            .unwrap_or_else(|| panic!("no session: {value}"))
            .to_owned();
        Session { driver, id }
    }

    /// One command; panics with the driver's error on failure.
    pub fn cmd(&self, method: &str, path: &str, body: Option<Value>) -> Value {
        let full = format!("/session/{}{path}", self.id);
        let body = match (method, body) {
            ("POST", None) => Some(json!({})),
            (_, b) => b,
        };
        let answer = http(self.driver, method, &full, body.as_ref());
        let value = answer.json();
        assert!(
            answer.status == 200,
            "{method} {path} answered {}: {value}",
            answer.status
        );
        value["value"].clone()
    }

    /// Navigates to `url`.
    pub fn goto(&self, url: &str) {
        self.cmd("POST", "/url", Some(json!({ "url": url })));
    }

    /// Runs synchronous script `body` with `args`; returns its value.
    pub fn script(&self, body: &str, args: Value) -> Value {
        self.cmd(
            "POST",
            "/execute/sync",
            Some(json!({ "script": body, "args": args })),
        )
    }

    /// Runs asynchronous script `body` (its last argument is the callback).
    pub fn script_async(&self, body: &str, args: Value) -> Value {
        self.cmd(
            "POST",
            "/execute/async",
            Some(json!({ "script": body, "args": args })),
        )
    }

    /// Waits until `condition` (a script returning a boolean) holds, or panics after `limit`.
    pub fn wait_for(&self, condition: &str, limit: Duration) {
        let start = Instant::now();
        loop {
            if self.script(condition, json!([])) == json!(true) {
                return;
            }
            assert!(
                start.elapsed() < limit,
                "timed out waiting for: {condition}"
            );
            std::thread::sleep(Duration::from_millis(100));
        }
    }

    /// The element reference of the first match of a CSS selector.
    pub fn find(&self, css: &str) -> String {
        let value = self.cmd(
            "POST",
            "/element",
            Some(json!({ "using": "css selector", "value": css })),
        );
        value
            .as_object()
            .and_then(|o| o.values().next())
            .and_then(Value::as_str)
            .unwrap_or_else(|| panic!("no element {css}: {value}"))
            .to_owned()
    }

    /// Clicks an element.
    pub fn click(&self, element: &str) {
        self.cmd("POST", &format!("/element/{element}/click"), None);
    }

    /// Presses and releases one key (a WebDriver key code such as `"\u{E007}"` for Enter)
    /// on whatever has focus.
    pub fn press(&self, key: &str) {
        self.cmd(
            "POST",
            "/actions",
            Some(
                json!({ "actions": [{ "type": "key", "id": "keyboard", "actions": [
                { "type": "keyDown", "value": key }, { "type": "keyUp", "value": key } ] }] }),
            ),
        );
        self.cmd("DELETE", "/actions", None);
    }

    /// Resizes the browser window.
    pub fn window_size(&self, width: u32, height: u32) {
        self.cmd(
            "POST",
            "/window/rect",
            Some(json!({ "width": width, "height": height })),
        );
    }

    /// A PNG screenshot of the viewport.
    pub fn screenshot(&self) -> Vec<u8> {
        let value = self.cmd("GET", "/screenshot", None);
        decode_base64(value.as_str().expect("a base64 screenshot"))
    }

    /// The page printed to PDF (W3C "Print Page"), as bytes.
    pub fn print_pdf(&self) -> Vec<u8> {
        let value = self.cmd("POST", "/print", Some(json!({ "background": true })));
        decode_base64(value.as_str().expect("a base64 PDF"))
    }

    /// The browser console log entries collected so far (Chromium's `goog:loggingPrefs`).
    pub fn browser_log(&self) -> Vec<Value> {
        let value = self.cmd("POST", "/se/log", Some(json!({ "type": "browser" })));
        value.as_array().cloned().unwrap_or_default()
    }

    /// Ends the session (closes the browser); dropping the session does the same.
    pub fn quit(self) {}
}

impl Drop for Session {
    /// Closes the browser even when a check failed, so no Chromium outlives the test.
    fn drop(&mut self) {
        let path = format!("/session/{}", self.id);
        if let Ok(stream) = TcpStream::connect(self.driver) {
            drop(stream);
            let _ = std::panic::catch_unwind(|| http(self.driver, "DELETE", &path, None));
        }
    }
}

/// Standard base64 (RFC 4648, section 4) to bytes; ignores padding and whitespace.
pub fn decode_base64(text: &str) -> Vec<u8> {
    let sextet = |c: u8| match c {
        b'A'..=b'Z' => Some(c - b'A'),
        b'a'..=b'z' => Some(c - b'a' + 26),
        b'0'..=b'9' => Some(c - b'0' + 52),
        b'+' => Some(62),
        b'/' => Some(63),
        _ => None,
    };
    let mut out = Vec::with_capacity(text.len() * 3 / 4);
    let (mut acc, mut bits) = (0u32, 0u32);
    for v in text.bytes().filter_map(sextet) {
        acc = (acc << 6) | u32::from(v);
        bits += 6;
        if bits >= 8 {
            bits -= 8;
            out.push((acc >> bits) as u8);
            acc &= (1 << bits) - 1;
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::decode_base64;

    #[test]
    fn base64_matches_rfc_4648_test_vectors() {
        // RFC 4648, section 10 test vectors.
        assert_eq!(decode_base64("Zm9vYmFy"), b"foobar");
        assert_eq!(decode_base64("Zm9vYg=="), b"foob");
        assert_eq!(decode_base64("Zm8="), b"fo");
    }
}
