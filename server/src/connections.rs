//! The accept loop: each connection served by hyper's HTTP/1.1 server with a header-read
//! timeout, closed after an idle timeout, and at most a set number open at once. A connection
//! over the cap is answered `503` (problem+json, `Retry-After`) and closed, so a client
//! holding thousands of idle sockets can neither exhaust the file limit nor starve others.

use std::future::Future;
use std::io;
use std::pin::Pin;
use std::sync::Arc;
use std::sync::atomic::{AtomicU64, Ordering};
use std::task::{Context, Poll};
use std::time::{Duration, Instant};

use hyper_util::rt::{TokioIo, TokioTimer};
use hyper_util::service::TowerToHyperService;
use tokio::io::{AsyncRead, AsyncReadExt, AsyncWrite, AsyncWriteExt, ReadBuf};
use tokio::net::{TcpListener, TcpStream};
use tokio::sync::{Semaphore, watch};

/// Limits on connections (defaults in the README, "Service").
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ConnLimits {
    /// Longest wait for a request's header block once a request has begun or a connection
    /// has opened.
    pub header_read_timeout: Duration,
    /// A connection with no bytes either way for this long is closed (after finishing any
    /// response in flight).
    pub idle_timeout: Duration,
    /// Most connections open at once; keep it below the process's file limit.
    pub max_connections: usize,
}

impl Default for ConnLimits {
    fn default() -> Self {
        Self {
            header_read_timeout: Duration::from_secs(10),
            idle_timeout: Duration::from_secs(60),
            max_connections: 1024,
        }
    }
}

/// Serves `router` on `listener` with `limits` until `shutdown` resolves, then lets the open
/// connections finish their requests (graceful shutdown).
pub async fn serve(
    listener: TcpListener,
    router: axum::Router,
    limits: ConnLimits,
    shutdown: impl Future<Output = ()> + Send + 'static,
) -> io::Result<()> {
    let cap = limits.max_connections.max(1);
    let permits = Arc::new(Semaphore::new(cap));
    let (close, closing) = watch::channel(false);
    let mut shutdown = std::pin::pin!(shutdown);
    loop {
        let accepted = tokio::select! {
            () = &mut shutdown => break,
            accepted = listener.accept() => accepted,
        };
        let stream = match accepted {
            Ok((stream, _)) => stream,
            Err(err) => {
                // Out of file descriptors or a connection reset before accept: wait a moment
                // rather than spin.
                tracing::warn!(error = %err, "accept failed");
                tokio::time::sleep(Duration::from_millis(50)).await;
                continue;
            }
        };
        let Ok(permit) = Arc::clone(&permits).try_acquire_owned() else {
            tokio::spawn(refuse(stream, cap));
            continue;
        };
        let router = router.clone();
        let limits = limits.clone();
        let closing = closing.clone();
        tokio::spawn(async move {
            serve_one(stream, router, &limits, closing).await;
            drop(permit);
        });
    }
    let _ = close.send(true);
    let _ = permits.acquire_many(cap as u32).await;
    Ok(())
}

async fn serve_one(
    stream: TcpStream,
    router: axum::Router,
    limits: &ConnLimits,
    mut closing: watch::Receiver<bool>,
) {
    let started = Instant::now();
    let last = Arc::new(AtomicU64::new(0));
    let io = TokioIo::new(Tracked {
        inner: stream,
        started,
        last: Arc::clone(&last),
    });
    let mut builder = hyper::server::conn::http1::Builder::new();
    builder
        .timer(TokioTimer::new())
        .header_read_timeout(limits.header_read_timeout);
    let conn = builder.serve_connection(io, TowerToHyperService::new(router));
    let mut conn = std::pin::pin!(conn);
    let tick = (limits.idle_timeout / 4).clamp(Duration::from_millis(50), Duration::from_secs(5));
    let mut ticker = tokio::time::interval(tick);
    let mut closing_down = false;
    loop {
        tokio::select! {
            result = conn.as_mut() => {
                if let Err(err) = result {
                    tracing::debug!(error = %err, "connection ended with an error");
                }
                return;
            }
            _ = ticker.tick(), if !closing_down => {
                let idle = started.elapsed().saturating_sub(Duration::from_millis(last.load(Ordering::Relaxed)));
                if idle >= limits.idle_timeout {
                    closing_down = true;
                    conn.as_mut().graceful_shutdown();
                }
            }
            _ = closing.changed(), if !closing_down => {
                closing_down = true;
                conn.as_mut().graceful_shutdown();
            }
        }
    }
}

/// Answers a connection over the cap with a 503 problem and closes it. The request (what
/// arrives within a moment) is read first, so the close does not reset the connection
/// before the client reads the answer.
async fn refuse(mut stream: TcpStream, cap: usize) {
    let mut buf = [0u8; 8192];
    let _ = tokio::time::timeout(Duration::from_millis(200), stream.read(&mut buf)).await;
    let body = serde_json::json!({
        "type": "/problems/too-many-connections",
        "title": "Service Unavailable",
        "status": 503,
        "detail": format!("the service has {cap} connections open, its limit; try again shortly"),
        "instance": "",
    })
    .to_string();
    let answer = format!(
        "HTTP/1.1 503 Service Unavailable\r\ncontent-type: application/problem+json\r\n\
         retry-after: {}\r\nconnection: close\r\ncontent-length: {}\r\n\r\n{body}",
        crate::error::RETRY_AFTER_SECS,
        body.len()
    );
    let _ = tokio::time::timeout(Duration::from_secs(1), stream.write_all(answer.as_bytes())).await;
    let _ = stream.shutdown().await;
}

/// A stream that records the time of its last byte read or written (milliseconds since the
/// connection opened).
struct Tracked {
    inner: TcpStream,
    started: Instant,
    last: Arc<AtomicU64>,
}

impl Tracked {
    fn touch(&self) {
        let ms = u64::try_from(self.started.elapsed().as_millis()).unwrap_or(u64::MAX);
        self.last.store(ms, Ordering::Relaxed);
    }
}

impl AsyncRead for Tracked {
    fn poll_read(
        mut self: Pin<&mut Self>,
        cx: &mut Context<'_>,
        buf: &mut ReadBuf<'_>,
    ) -> Poll<io::Result<()>> {
        let before = buf.filled().len();
        let poll = Pin::new(&mut self.inner).poll_read(cx, buf);
        if matches!(poll, Poll::Ready(Ok(()))) && buf.filled().len() > before {
            self.touch();
        }
        poll
    }
}

impl AsyncWrite for Tracked {
    fn poll_write(
        mut self: Pin<&mut Self>,
        cx: &mut Context<'_>,
        data: &[u8],
    ) -> Poll<io::Result<usize>> {
        let poll = Pin::new(&mut self.inner).poll_write(cx, data);
        if matches!(poll, Poll::Ready(Ok(n)) if n > 0) {
            self.touch();
        }
        poll
    }

    fn poll_flush(mut self: Pin<&mut Self>, cx: &mut Context<'_>) -> Poll<io::Result<()>> {
        Pin::new(&mut self.inner).poll_flush(cx)
    }

    fn poll_shutdown(mut self: Pin<&mut Self>, cx: &mut Context<'_>) -> Poll<io::Result<()>> {
        Pin::new(&mut self.inner).poll_shutdown(cx)
    }
}

/// The process's soft limit on open files, where the system says (Linux `/proc`).
pub fn open_file_limit() -> Option<u64> {
    let text = std::fs::read_to_string("/proc/self/limits").ok()?;
    let line = text.lines().find(|l| l.starts_with("Max open files"))?;
    line.split_whitespace().nth(3)?.parse().ok()
}
