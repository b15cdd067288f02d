//! tidetally's edge: the HTTP service, the store and the command-line tool. Depends on
//! `tidetally-model`; the model never depends on this crate.
//!
//! Entry points: [`app`] builds the router over a shared [`AppState`], [`run`] serves it on a
//! listener until a shutdown future resolves, and [`cli`] is the command line.
#![cfg_attr(test, allow(clippy::unwrap_used))]

pub mod api;
pub mod auth;
pub mod calendar;
pub mod catalog;
pub mod cautions;
pub mod cli;
pub mod clock;
pub mod compress;
pub mod config;
pub mod connections;
mod cors;
pub mod demo;
pub mod error;
pub mod etag;
pub mod merge;
pub mod middleware;
pub mod negotiate;
pub mod openapi;
pub mod outlook_set;
pub mod pipeline;
pub mod pool;
pub mod query;
pub mod routes;
pub mod state;
pub mod store;
pub mod upload;
pub mod vocabulary;
pub mod web;

use std::future::Future;
use std::sync::Arc;

pub use routes::HttpOptions;
pub use state::AppState;

/// The service's router over `state`, with default HTTP options (no CORS, 60 s timeout).
pub fn app(state: Arc<AppState>) -> axum::Router {
    routes::router(state, &HttpOptions::default())
}

/// Serves [`app`]`(state)` on `listener` until `shutdown` resolves, then finishes the
/// requests in flight (graceful shutdown).
pub async fn run(
    listener: tokio::net::TcpListener,
    state: Arc<AppState>,
    shutdown: impl Future<Output = ()> + Send + 'static,
) -> std::io::Result<()> {
    serve_router(listener, app(state), shutdown).await
}

/// Serves any router built by [`routes::router`] on `listener` with the default connection
/// limits until `shutdown` resolves.
pub async fn serve_router(
    listener: tokio::net::TcpListener,
    router: axum::Router,
    shutdown: impl Future<Output = ()> + Send + 'static,
) -> std::io::Result<()> {
    connections::serve(
        listener,
        router,
        connections::ConnLimits::default(),
        shutdown,
    )
    .await
}
