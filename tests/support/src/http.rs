//! One HTTP/1.1 client for tests: a request with `Connection: close` over a fresh
//! `TcpStream`, the answer read up to its `Content-Length`, its last chunk or the end of the
//! stream, and de-chunked.

use std::io::{Read, Write};
use std::net::{SocketAddr, TcpStream};
use std::time::Duration;

use serde_json::Value;

/// An HTTP answer: status, lower-cased header block and body bytes.
pub struct HttpAnswer {
    /// The status code.
    pub status: u16,
    /// The header block, lower-cased.
    pub head: String,
    /// The body, de-chunked.
    pub body: Vec<u8>,
}

impl HttpAnswer {
    /// The body as JSON; panics with the body when it is not.
    pub fn json(&self) -> Value {
        serde_json::from_slice(&self.body)
            .unwrap_or_else(|e| panic!("not JSON ({e}): {}", self.text()))
    }

    /// The body as text (lossy UTF-8).
    pub fn text(&self) -> String {
        String::from_utf8_lossy(&self.body).into_owned()
    }

    /// The value of header `name` (any case), if present.
    pub fn header(&self, name: &str) -> Option<String> {
        let wanted = format!("{}:", name.to_ascii_lowercase());
        self.head
            .lines()
            .find_map(|l| l.strip_prefix(&wanted).map(|v| v.trim().to_owned()))
    }
}

/// One request: `headers` are sent as given (with `Host`, `Content-Length` and
/// `Connection: close` added); reading gives up after `timeout` of silence.
pub fn request(
    addr: SocketAddr,
    method: &str,
    path: &str,
    headers: &[(&str, &str)],
    body: &[u8],
    timeout: Duration,
) -> HttpAnswer {
    let mut raw = format!("{method} {path} HTTP/1.1\r\nHost: {addr}\r\n");
    for (name, value) in headers {
        raw.push_str(&format!("{name}: {value}\r\n"));
    }
    raw.push_str(&format!(
        "Content-Length: {}\r\nConnection: close\r\n\r\n",
        body.len()
    ));
    let mut raw = raw.into_bytes();
    raw.extend_from_slice(body);
    exchange(addr, &raw, timeout)
        .unwrap_or_else(|e| panic!("{method} {path} on {addr}: no answer ({e})"))
}

/// Sends `raw` bytes as they are (a hand-made or malformed request) and reads one answer;
/// reading gives up after `timeout` of silence.
pub fn exchange(addr: SocketAddr, raw: &[u8], timeout: Duration) -> std::io::Result<HttpAnswer> {
    let mut stream = TcpStream::connect(addr)?;
    stream.set_read_timeout(Some(timeout))?;
    stream.write_all(raw)?;
    let answer = read_answer(&mut stream)?;
    Ok(parse(&answer))
}

/// Parses a whole answer read from a socket (a status of 0 when there is none).
pub fn parse(raw: &[u8]) -> HttpAnswer {
    let split = raw
        .windows(4)
        .position(|w| w == b"\r\n\r\n")
        .unwrap_or(raw.len());
    let head = String::from_utf8_lossy(&raw[..split]).to_ascii_lowercase();
    let mut body = raw.get(split + 4..).unwrap_or_default().to_vec();
    if head.contains("transfer-encoding: chunked") {
        body = dechunk(&body);
    }
    let status = head
        .split(' ')
        .nth(1)
        .and_then(|s| s.parse().ok())
        .unwrap_or(0);
    HttpAnswer { status, head, body }
}

/// Reads one answer: up to its `Content-Length`, its last chunk, or the end of the stream
/// (some servers keep the connection open despite `Connection: close`).
fn read_answer(stream: &mut TcpStream) -> std::io::Result<Vec<u8>> {
    let mut raw = Vec::new();
    let mut buf = [0u8; 16384];
    loop {
        let n = stream.read(&mut buf)?;
        if n == 0 {
            return Ok(raw);
        }
        raw.extend_from_slice(&buf[..n]);
        let Some(split) = raw.windows(4).position(|w| w == b"\r\n\r\n") else {
            continue;
        };
        let head = String::from_utf8_lossy(&raw[..split]).to_ascii_lowercase();
        let body = &raw[split + 4..];
        let length = head
            .lines()
            .find_map(|l| l.strip_prefix("content-length:"))
            .and_then(|v| v.trim().parse::<usize>().ok());
        match length {
            Some(len) if body.len() >= len => return Ok(raw),
            None if head.contains("transfer-encoding: chunked") && body.ends_with(b"0\r\n\r\n") => {
                return Ok(raw);
            }
            _ => {}
        }
    }
}

/// The body of a chunked answer (RFC 9112, section 7.1), without extensions or trailers.
fn dechunk(mut body: &[u8]) -> Vec<u8> {
    let mut out = Vec::new();
    while let Some(end) = body.windows(2).position(|w| w == b"\r\n") {
        let size = std::str::from_utf8(&body[..end]).unwrap_or("0");
        let n = usize::from_str_radix(size.trim(), 16).unwrap_or(0);
        if n == 0 {
            break;
        }
        out.extend_from_slice(&body[end + 2..end + 2 + n]);
        body = &body[end + 4 + n..];
    }
    out
}

#[cfg(test)]
mod tests {
    use super::dechunk;

    #[test]
    fn chunked_bodies_are_joined() {
        // The chunked example of RFC 9112, section 7.1 style: two chunks and the last one.
        assert_eq!(
            dechunk(b"4\r\nWiki\r\n6\r\npedia \r\n0\r\n\r\n"),
            b"Wikipedia "
        );
    }
}
