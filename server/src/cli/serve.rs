//! `tidetally serve`: reads the configuration once, sets up logging, opens the store (seeding
//! an empty one from the data folder), binds, loads the catalog in the background and serves
//! until Ctrl-C or SIGTERM.

use std::sync::Arc;

use anyhow::Context;
use tracing_subscriber::EnvFilter;

use crate::config::{RawServeConfig, ServeConfig};
use crate::routes::{self, HttpOptions};
use crate::state::{self, AppState};
use crate::store::{self, Store};

pub(super) fn run(args: super::ServeArgs) -> anyhow::Result<()> {
    let config = resolve(&args)?;
    init_tracing(config.json_logs);
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .enable_all()
        .build()
        .context("starting the async runtime")?;
    runtime.block_on(serve(config))
}

/// Flags over environment over config file over defaults, validated in one place.
fn resolve(args: &super::ServeArgs) -> anyhow::Result<ServeConfig> {
    let file = match &args.config {
        Some(path) => RawServeConfig::from_file(path)?,
        None => RawServeConfig::default(),
    };
    let env = RawServeConfig::from_env(|key| std::env::var(key).ok());
    let flags = RawServeConfig {
        addr: args.addr.clone(),
        db: args.db.clone(),
        data: args.data.clone(),
        ..Default::default()
    };
    Ok(file.overridden_by(env).overridden_by(flags).validate()?)
}

fn init_tracing(json: bool) {
    let filter = EnvFilter::try_from_default_env().unwrap_or_else(|_| EnvFilter::new("info"));
    let builder = tracing_subscriber::fmt()
        .with_env_filter(filter)
        .with_writer(std::io::stderr);
    // A second init (tests running several servers in one process) keeps the first.
    let _ = if json {
        builder.json().try_init()
    } else {
        builder.try_init()
    };
}

/// Where the gauges of an empty store come from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum DataSource {
    /// The data folder on disk (asked for, or the checkout's `demo-data/gauges`).
    Folder,
    /// The demo coastline compiled into the binary (no folder asked for, none found).
    CarriedDemo,
}

/// Chooses the data source; a folder asked for but missing is an error.
fn data_source(config: &ServeConfig) -> anyhow::Result<DataSource> {
    if config.data.is_dir() {
        Ok(DataSource::Folder)
    } else if config.data_explicit {
        anyhow::bail!("data folder {} does not exist", config.data.display())
    } else {
        Ok(DataSource::CarriedDemo)
    }
}

/// The first log line: where the gauges come from.
fn log_data_source(config: &ServeConfig, source: DataSource) {
    match source {
        DataSource::Folder if config.data_explicit => tracing::info!(
            data = %config.data.display(),
            "data: the gauges in {}", config.data.display()
        ),
        DataSource::Folder => tracing::info!(
            data = %config.data.display(),
            "data: the invented demo coastline from the files in {}", config.data.display()
        ),
        DataSource::CarriedDemo => tracing::info!(
            data = "carried",
            "data: the invented demo coastline carried in this binary ({} not found here)",
            config.data.display()
        ),
    }
}

async fn serve(config: ServeConfig) -> anyhow::Result<()> {
    let source = data_source(&config)?;
    log_data_source(&config, source);
    let store = open_and_seed(&config, source).await?;
    let state = AppState::new(store, config.token.clone(), config.cache_max_age);
    state.clock.set(config.today);
    let options = HttpOptions {
        request_timeout: config.request_timeout,
        cors_origins: config.cors_origins.clone(),
    };
    let listener = tokio::net::TcpListener::bind(config.addr)
        .await
        .with_context(|| format!("binding {}", config.addr))?;
    let local = listener.local_addr().context("reading the bound address")?;
    // One line of JSON, so scripts that bind port 0 can read the address.
    println!(
        "{}",
        serde_json::json!({
            "listening": local.to_string(),
            "db": config.db.display().to_string(),
            "writes": if config.token.is_some() { "enabled" } else { "disabled" },
        })
    );
    tracing::info!(addr = %local, db = %config.db.display(), "serving");

    let loader = Arc::clone(&state);
    tokio::spawn(async move {
        let loaded = tokio::task::spawn_blocking(move || state::load_catalog(&loader)).await;
        match loaded {
            Ok(Ok(n)) => tracing::info!(gauges = n, "catalog loaded"),
            Ok(Err(err)) => tracing::error!(error = %err, "catalog load failed"),
            Err(err) => tracing::error!(error = %err, "catalog load task lost"),
        }
    });
    crate::connections::serve(
        listener,
        routes::router(state, &options),
        config.connections.clone(),
        shutdown_signal(),
    )
    .await
    .context("serving")?;
    tracing::info!("stopped");
    Ok(())
}

/// Opens the store; an empty store is seeded from `source`.
async fn open_and_seed(config: &ServeConfig, source: DataSource) -> anyhow::Result<Store> {
    let config = config.clone();
    tokio::task::spawn_blocking(move || -> anyhow::Result<Store> {
        let store = Store::open(&config.db)
            .with_context(|| format!("opening the store {}", config.db.display()))?;
        let empty = store.call_blocking(|c| Ok(store::list_gauges(c)?.is_empty()))?;
        if !empty {
            return Ok(store);
        }
        let n = match source {
            DataSource::Folder => seed(&store, &config.data)?,
            DataSource::CarriedDemo => {
                let dir = std::env::temp_dir()
                    .join(format!("tidetally-carried-demo-{}", std::process::id()));
                let gauges = crate::demo::unpack(&dir)
                    .with_context(|| format!("unpacking the carried demo into {}", dir.display()));
                let seeded = gauges.and_then(|g| seed(&store, &g));
                let _ = std::fs::remove_dir_all(&dir);
                seeded?
            }
        };
        tracing::info!(gauges = n, "store seeded");
        Ok(store)
    })
    .await
    .context("store task")?
}

fn seed(store: &Store, gauges: &std::path::Path) -> anyhow::Result<usize> {
    store
        .call_blocking(|c| Ok(state::seed_from_dir(c, gauges)))?
        .with_context(|| format!("loading gauges from {}", gauges.display()))
}

async fn shutdown_signal() {
    let ctrl_c = async {
        if let Err(err) = tokio::signal::ctrl_c().await {
            tracing::error!(error = %err, "cannot listen for Ctrl-C");
            std::future::pending::<()>().await;
        }
    };
    #[cfg(unix)]
    let terminate = async {
        match tokio::signal::unix::signal(tokio::signal::unix::SignalKind::terminate()) {
            Ok(mut signal) => {
                signal.recv().await;
            }
            Err(err) => {
                tracing::error!(error = %err, "cannot listen for SIGTERM");
                std::future::pending::<()>().await;
            }
        }
    };
    #[cfg(not(unix))]
    let terminate = std::future::pending::<()>();
    tokio::select! {
        () = ctrl_c => {},
        () = terminate => {},
    }
    tracing::info!("shutting down");
}
