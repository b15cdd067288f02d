//! The real service on a loopback port over an in-memory store seeded with the demo
//! coastline, started once and shared by every test of this binary (the demo fit is the slow
//! part), plus a plain HTTP GET against it.

use std::net::{SocketAddr, TcpListener};
use std::path::PathBuf;
use std::sync::{Arc, OnceLock};
use std::time::Duration;

use tidetally_server::store::{self, IssuedFilter, Store};
use tidetally_server::{AppState, state};
use tidetally_test_support::http::{HttpAnswer, request};

/// The gauges of the demo coastline.
pub const DEMO_GAUGES: usize = 4;

/// The running demo service.
pub struct Demo {
    /// Where it listens.
    pub addr: SocketAddr,
    /// Its state (for the store, which records issued outlooks).
    pub state: Arc<AppState>,
}

/// The workspace root (the root package's manifest directory).
pub fn workspace() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// The shared demo service, started on first use; it runs until the test process exits.
pub fn demo() -> &'static Demo {
    static DEMO: OnceLock<Demo> = OnceLock::new();
    DEMO.get_or_init(start)
}

fn start() -> Demo {
    let store = Store::open_in_memory().expect("in-memory store");
    let gauges = workspace().join("demo-data/gauges");
    let seeded = store
        .call_blocking(|conn| Ok(state::seed_from_dir(conn, &gauges)))
        .expect("store answers")
        .unwrap_or_else(|err| panic!("demo data seeds: {err:?}"));
    assert_eq!(seeded, DEMO_GAUGES, "the demo coastline's gauges");
    let app_state = AppState::new(store, None, Duration::from_secs(120));
    state::load_catalog(&app_state).expect("catalog loads");
    let router = tidetally_server::app(Arc::clone(&app_state));

    let listener = TcpListener::bind("127.0.0.1:0").expect("bind loopback");
    listener.set_nonblocking(true).expect("non-blocking");
    let addr = listener.local_addr().expect("address");
    std::thread::spawn(move || {
        let runtime = tokio::runtime::Builder::new_multi_thread()
            .worker_threads(2)
            .enable_all()
            .build()
            .expect("runtime");
        runtime.block_on(async move {
            let listener = tokio::net::TcpListener::from_std(listener).expect("tokio listener");
            tidetally_server::serve_router(listener, router, std::future::pending())
                .await
                .expect("service runs");
        });
    });
    let demo = Demo {
        addr,
        state: app_state,
    };
    issue_a_past_season(&demo);
    demo
}

/// One GET; the answer as it came.
pub fn get(path: &str) -> HttpAnswer {
    request(demo().addr, "GET", path, &[], &[], Duration::from_secs(120))
}

/// One GET that must answer 200 with JSON.
pub fn get_json(path: &str) -> serde_json::Value {
    let answer = get(path);
    assert_eq!(answer.status, 200, "GET {path}: {}", answer.text());
    answer.json()
}

/// The demo's fit issues only the coming season's outlooks, which cannot be verified before
/// that season is over. So that the record of issued outlooks also shows a verified one, this
/// records the service's own outlook of the gauge's last observed season of that name
/// (computed by the service on demand) as issued, beside the real issued record it copies
/// the model version and driver inputs from. The service then verifies it against the
/// season's observed count.
fn issue_a_past_season(demo: &Demo) {
    let gauge = "port-tamsin";
    let get_here = |path: &str| {
        let a = request(demo.addr, "GET", path, &[], &[], Duration::from_secs(300));
        assert_eq!(a.status, 200, "GET {path}: {}", a.text());
        a
    };
    let next = get_here(&format!("/api/v1/gauges/{gauge}/outlook")).json();
    let past = next["last_season_observed"]["season"]
        .as_str()
        .unwrap_or_else(|| panic!("{gauge}'s outlook names no last observed season: {next}"))
        .to_owned();
    let outlook = get_here(&format!("/api/v1/gauges/{gauge}/outlook?season={past}")).text();
    let filter = IssuedFilter {
        gauge: Some(gauge.into()),
        season: None,
        limit: 1,
    };
    let mut record = demo
        .state
        .store
        .call_blocking(|c| store::list_issued(c, &filter))
        .expect("issued outlooks list")
        .pop()
        .unwrap_or_else(|| panic!("the demo fit issued no outlook for {gauge}"));
    record.season = past;
    record.outlook_json = outlook;
    demo.state
        .store
        .call_blocking(|c| store::record_issued(c, &[record]))
        .expect("issued outlook recorded");
}
