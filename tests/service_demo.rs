//! The service end to end on a real loopback socket (port 0, a temporary store file): start on
//! the demo coastline, read every gauge's outlook, upload a researcher's gauge with the write
//! token, refit it, read its outlook, see a failed refit keep the previous model serving, and
//! restart on the same store to find everything still there.
//!
//! The uploaded gauge is a copy of a demo gauge (same TOML under a new id, same level and wind
//! files), so its outlook must equal the demo gauge's: the pipeline is deterministic (seeded
//! draws) and its result depends only on the stored inputs.
#![allow(clippy::unwrap_used, clippy::expect_used)]

use std::net::SocketAddr;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::Duration;

use serde_json::Value;
use tidetally_server::auth::Token;
use tidetally_server::store::Store;
use tidetally_server::{AppState, state};
use tidetally_test_support::http::{HttpAnswer, request};
use tidetally_test_support::table::csv_table;

const TOKEN: &str = "e2e-token-0123456789abcdef";
const DEMO_GAUGE: &str = "port-tamsin";
const COPY: &str = "tamsin-copy";

/// Rounding allowance of sums over a pmf of at most a few hundred terms in f64.
const SUM_TOLERANCE: f64 = 1e-9;

fn demo_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data/gauges")
}

fn temp_dir(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("tidetally-e2e-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("temp dir");
    dir
}

/// One request through the shared test client (with the write token when asked); returns
/// status and body text.
fn http(addr: SocketAddr, method: &str, path: &str, token: bool, body: &[u8]) -> (u16, String) {
    let auth = format!("Bearer {TOKEN}");
    let headers: &[(&str, &str)] = if token {
        &[("Authorization", &auth)]
    } else {
        &[]
    };
    let answer = request(addr, method, path, headers, body, Duration::from_secs(120));
    (answer.status, answer.text())
}

/// A request from a blocking thread; the answer's JSON body, checked for `status`.
async fn call(
    addr: SocketAddr,
    method: &'static str,
    path: &str,
    body: Vec<u8>,
    status: u16,
) -> Value {
    let path = path.to_owned();
    let (got, text) = tokio::task::spawn_blocking(move || http(addr, method, &path, true, &body))
        .await
        .expect("client task");
    assert_eq!(got, status, "{method}: {text}");
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("not JSON ({e}): {text}"))
}

struct Running {
    addr: SocketAddr,
    stop: tokio::sync::oneshot::Sender<()>,
    server: tokio::task::JoinHandle<std::io::Result<()>>,
}

/// What an empty store starts with.
#[derive(Clone, Copy, PartialEq)]
enum Seed {
    /// The demo coastline.
    Demo,
    /// Nothing.
    Empty,
}

/// Opens the store file (seeding an empty one as asked), loads the catalog (fitting every
/// gauge without a stored fit) and serves on port 0.
async fn start(db: &Path, seed: Seed) -> Running {
    let store = Store::open(db).expect("store opens");
    let state = AppState::new(
        store,
        Some(Token::new(TOKEN.into())),
        Duration::from_secs(60),
    );
    let loader = Arc::clone(&state);
    tokio::task::spawn_blocking(move || {
        let empty = loader
            .store
            .call_blocking(|c| tidetally_server::store::list_gauges(c))
            .expect("store lists")
            .is_empty();
        if empty && seed == Seed::Demo {
            loader
                .store
                .call_blocking(|c| Ok(state::seed_from_dir(c, &demo_dir())))
                .expect("store")
                .expect("demo data seeds");
        }
        state::load_catalog(&loader).expect("catalog loads")
    })
    .await
    .expect("loader task");
    let listener = tokio::net::TcpListener::bind("127.0.0.1:0")
        .await
        .expect("bind");
    let addr = listener.local_addr().expect("address");
    let (stop, stopped) = tokio::sync::oneshot::channel::<()>();
    let server = tokio::spawn(tidetally_server::run(listener, state, async {
        let _ = stopped.await;
    }));
    Running { addr, stop, server }
}

async fn stop(running: Running) {
    running.stop.send(()).expect("server still running");
    running
        .server
        .await
        .expect("server task")
        .expect("clean shutdown");
}

fn f64_of(v: &Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

/// The documented outlook shape (DEVELOPERS.md, "HTTP API") and its internal consistency.
fn check_outlook(o: &Value) {
    let gauge = o["gauge"].as_str().expect("gauge id");
    let pmf: Vec<f64> = o["pmf"].as_array().unwrap().iter().map(f64_of).collect();
    assert_eq!(
        pmf.len() as u64,
        o["season_days"].as_u64().unwrap() + 1,
        "{gauge}"
    );
    assert!(
        pmf.iter().all(|p| (0.0..=1.0).contains(p)),
        "{gauge}: {pmf:?}"
    );
    let total: f64 = pmf.iter().sum();
    assert!(
        (total - 1.0).abs() < SUM_TOLERANCE,
        "{gauge}: pmf sums to {total}"
    );
    let mean: f64 = pmf.iter().enumerate().map(|(k, p)| k as f64 * p).sum();
    assert!(
        (mean - f64_of(&o["mean"])).abs() < 1e-6,
        "{gauge}: mean {mean} vs {}",
        o["mean"]
    );
    for e in o["exceedance"].as_array().unwrap() {
        let k = e["days"].as_u64().unwrap() as usize;
        let tail: f64 = pmf[k..].iter().sum();
        assert!(
            (tail - f64_of(&e["probability"])).abs() < 1e-6,
            "{gauge}: P(N >= {k})"
        );
    }
    let refs: Vec<&str> = o["terciles"]
        .as_array()
        .unwrap()
        .iter()
        .map(|t| t["reference"].as_str().unwrap())
        .collect();
    assert!(refs.contains(&"1991-2020 climatology"), "{gauge}: {refs:?}");
    for t in o["terciles"].as_array().unwrap() {
        let sum = f64_of(&t["below"]) + f64_of(&t["near"]) + f64_of(&t["above"]);
        assert!((sum - 1.0).abs() < 1e-6, "{gauge}: terciles sum to {sum}");
    }
    let cautions = o["cautions"].as_array().unwrap();
    assert!(!cautions.is_empty(), "{gauge}: no cautions");
    let joined = cautions
        .iter()
        .map(|c| c.as_str().unwrap().to_lowercase())
        .collect::<Vec<_>>()
        .join(" ");
    assert!(joined.contains("not a warning"), "{gauge}: {joined}");
    assert!(joined.contains("emergency managers"), "{gauge}: {joined}");
    let verdict = o["skill"]["verdict"].as_str().unwrap();
    assert!(
        [
            "beats_climatology",
            "trend_only",
            "no_better_than_climatology",
            "not_measured"
        ]
        .contains(&verdict),
        "{gauge}: {verdict}"
    );
    assert!(!o["skill"]["verdict_text"].as_str().unwrap().is_empty());
    assert!(
        o["skill"]["seasons_scored"].as_u64().unwrap() > 0,
        "{gauge}: nothing scored"
    );
    for d in o["drivers"].as_array().unwrap() {
        let rr = f64_of(&d["rate_ratio"]);
        let ci = d["rate_ratio_ci"].as_array().unwrap();
        assert!(f64_of(&ci[0]) <= rr && rr <= f64_of(&ci[1]), "{gauge}: {d}");
    }
    assert!(o["model_version"].as_str().unwrap().contains('+'));
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn demo_outlooks_uploads_refits_and_restarts() {
    let dir = temp_dir("service");
    let db = dir.join("store.db");
    let running = start(&db, Seed::Demo).await;
    let addr = running.addr;

    // Every demo gauge serves a real outlook of the first season after its record.
    let list = call(addr, "GET", "/api/v1/gauges", vec![], 200).await;
    let gauges = list["gauges"].as_array().unwrap();
    assert_eq!(gauges.len(), 4, "{list}");
    for g in gauges {
        let id = g["id"].as_str().unwrap();
        assert_eq!(g["model_ready"], true, "{g}");
        let o = call(
            addr,
            "GET",
            &format!("/api/v1/gauges/{id}/outlook"),
            vec![],
            200,
        )
        .await;
        assert_eq!(o["season"], "2026-DJF");
        check_outlook(&o);
        let h = call(
            addr,
            "GET",
            &format!("/api/v1/gauges/{id}/hindcast"),
            vec![],
            200,
        )
        .await;
        assert_eq!(
            h["skill"], o["skill"],
            "{id}: the outlook carries its hindcast's skill"
        );
        assert!(!h["cases"].as_array().unwrap().is_empty());
    }
    let set = call(addr, "GET", "/api/v1/outlooks?season=2026-DJF", vec![], 200).await;
    assert_eq!(set["outlooks"].as_array().unwrap().len(), 4, "{set}");
    // Without a season, every gauge's next outlook, each with its own season and dates
    // (a label names the year of the season's first month: 2026-DJF is December 2026 to
    // February 2027, common practice for seasons spanning the new year).
    let next = call(addr, "GET", "/api/v1/outlooks", vec![], 200).await;
    assert!(next["season"].is_null(), "{next}");
    let outlooks = next["outlooks"].as_array().unwrap();
    assert_eq!(outlooks.len(), 4, "{next}");
    for o in outlooks {
        let id = o["gauge"].as_str().unwrap();
        let own = call(
            addr,
            "GET",
            &format!("/api/v1/gauges/{id}/outlook"),
            vec![],
            200,
        )
        .await;
        assert_eq!(o, &own, "{id}: the set holds the gauge's default outlook");
        assert_eq!(o["season"], "2026-DJF");
        assert_eq!(o["first_day"], "2026-12-01");
        assert_eq!(o["last_day"], "2027-02-28");
        assert_eq!(o["valid_until"], "2027-02-28");
        assert_eq!(o["count_unit"], "days");
        let record_last = o["record_last_day"].as_str().expect("record's last day");
        assert!(
            record_last < "2026-12-01",
            "{id}: record ends {record_last}"
        );
        let changes = o["would_change"].as_array().unwrap();
        assert!(
            changes.iter().any(|c| c.as_str().unwrap().contains("ENSO")),
            "{id}: {changes:?}"
        );
        assert!(!o["plan_on"]["sentence"].as_str().unwrap().is_empty());
    }
    check_map_and_spreadsheets(addr).await;

    // The season history carries the predictors and ENSO categories.
    let history = call(
        addr,
        "GET",
        &format!("/api/v1/gauges/{DEMO_GAUGE}/seasons"),
        vec![],
        200,
    )
    .await;
    let with_enso = history["seasons"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|s| s["predictors"]["enso"].is_number() && s["enso_category"].is_string())
        .count();
    assert!(with_enso > 100, "{with_enso} seasons with ENSO");

    // k overrides the exceedance list; a bad label is a 400 problem.
    let k = call(
        addr,
        "GET",
        &format!("/api/v1/gauges/{DEMO_GAUGE}/outlook?k=1,2"),
        vec![],
        200,
    )
    .await;
    let days: Vec<u64> = k["exceedance"]
        .as_array()
        .unwrap()
        .iter()
        .map(|e| e["days"].as_u64().unwrap())
        .collect();
    assert_eq!(days, [1, 2]);
    call(
        addr,
        "GET",
        &format!("/api/v1/gauges/{DEMO_GAUGE}/outlook?season=2026-XYZ"),
        vec![],
        400,
    )
    .await;

    // A researcher uploads a copy of a demo gauge under a new id and refits it.
    let demo = demo_dir();
    let toml = std::fs::read_to_string(demo.join(format!("{DEMO_GAUGE}.toml")))
        .unwrap()
        .replace(
            &format!("id = \"{DEMO_GAUGE}\""),
            &format!("id = \"{COPY}\""),
        );
    call(
        addr,
        "PUT",
        &format!("/api/v1/gauges/{COPY}"),
        toml.into_bytes(),
        200,
    )
    .await;
    let levels = std::fs::read(demo.join(format!("{DEMO_GAUGE}-levels.csv.gz"))).unwrap();
    call(
        addr,
        "PUT",
        &format!("/api/v1/gauges/{COPY}/levels"),
        levels,
        200,
    )
    .await;
    let wind = std::fs::read(demo.join(format!("{DEMO_GAUGE}-wind.csv"))).unwrap();
    call(
        addr,
        "PUT",
        &format!("/api/v1/drivers/wind/{DEMO_GAUGE}-wind"),
        wind,
        200,
    )
    .await;
    let before_refit = call(addr, "GET", &format!("/api/v1/gauges/{COPY}"), vec![], 200).await;
    assert_eq!(before_refit["model_ready"], false);
    let refit = call(
        addr,
        "POST",
        &format!("/api/v1/gauges/{COPY}/refit"),
        vec![],
        200,
    )
    .await;
    assert_eq!(refit["model_ready"], true, "{refit}");
    let copy = call(
        addr,
        "GET",
        &format!("/api/v1/gauges/{COPY}/outlook"),
        vec![],
        200,
    )
    .await;
    check_outlook(&copy);
    let original = call(
        addr,
        "GET",
        &format!("/api/v1/gauges/{DEMO_GAUGE}/outlook"),
        vec![],
        200,
    )
    .await;
    assert_eq!(
        copy["pmf"], original["pmf"],
        "same inputs, same seeded pipeline"
    );
    assert_eq!(copy["skill"]["scores"], original["skill"]["scores"]);

    // A refit that fails (a record far too short to fit, replacing the whole record, which
    // takes the shrink confirmation) keeps the previous model serving.
    let short = "time,level\n2020-01-01T00:00:00Z,0.10\n2020-01-01T01:00:00Z,0.30\n";
    call(
        addr,
        "PUT",
        &format!("/api/v1/gauges/{COPY}/levels?mode=replace&confirm=shrink"),
        short.into(),
        200,
    )
    .await;
    let failed = call(
        addr,
        "POST",
        &format!("/api/v1/gauges/{COPY}/refit"),
        vec![],
        422,
    )
    .await;
    assert_eq!(failed["type"], "/problems/pipeline-failed", "{failed}");
    let still = call(
        addr,
        "GET",
        &format!("/api/v1/gauges/{COPY}/outlook"),
        vec![],
        200,
    )
    .await;
    assert_eq!(still["model_version"], copy["model_version"]);
    stop(running).await;

    // Restarted on the same store, the uploaded gauge and its stored fit are still served.
    let running = start(&db, Seed::Demo).await;
    let addr = running.addr;
    let list = call(addr, "GET", "/api/v1/gauges", vec![], 200).await;
    assert_eq!(list["gauges"].as_array().unwrap().len(), 5);
    let again = call(
        addr,
        "GET",
        &format!("/api/v1/gauges/{COPY}/outlook"),
        vec![],
        200,
    )
    .await;
    assert_eq!(again, copy, "the stored fit is served as it was");
    let issued = call(
        addr,
        "GET",
        &format!("/api/v1/outlooks/issued?gauge={COPY}"),
        vec![],
        200,
    )
    .await;
    let issued = issued["issued"].as_array().unwrap();
    assert_eq!(issued.len(), 1, "one successful fit, one issued outlook");
    assert!(
        issued[0]["verification"].is_null(),
        "2026-DJF is not observed yet"
    );
    stop(running).await;
    let _ = std::fs::remove_dir_all(&dir);
}

/// One GET from a blocking thread, with an `Accept` header when given.
async fn fetch(addr: SocketAddr, path: &str, accept: Option<&'static str>) -> HttpAnswer {
    let path = path.to_owned();
    tokio::task::spawn_blocking(move || {
        let headers: Vec<(&str, &str)> = accept.iter().map(|a| ("Accept", *a)).collect();
        request(addr, "GET", &path, &headers, b"", Duration::from_secs(120))
    })
    .await
    .expect("client task")
}

/// A CSV body parsed with the `csv` crate (RFC 4180): the header, then the records.
fn parse_csv(answer: &HttpAnswer) -> (Vec<String>, Vec<Vec<String>>) {
    assert_eq!(answer.status, 200, "{}", answer.text());
    assert_eq!(
        answer.header("content-type").as_deref(),
        Some("text/csv; charset=utf-8")
    );
    csv_table(&answer.body)
}

fn cell(header: &[String], row: &[String], name: &str) -> String {
    let i = header
        .iter()
        .position(|h| h == name)
        .unwrap_or_else(|| panic!("no column {name} in {header:?}"));
    row[i].clone()
}

fn number(text: &str) -> f64 {
    text.parse()
        .unwrap_or_else(|e| panic!("{text:?} is not a number: {e}"))
}

/// The exceedance an outlook headlines: the smallest listed `days` above the median, else the
/// largest (as the web page words it).
fn headline(o: &Value) -> (u64, f64) {
    let mut listed: Vec<(u64, f64)> = o["exceedance"]
        .as_array()
        .unwrap()
        .iter()
        .map(|e| (e["days"].as_u64().unwrap(), f64_of(&e["probability"])))
        .collect();
    listed.sort_by_key(|e| e.0);
    let median = o["median"].as_u64().unwrap();
    *listed
        .iter()
        .find(|e| e.0 > median)
        .or(listed.last())
        .expect("a demo outlook lists exceedances")
}

/// The GeoJSON carries each gauge's next-outlook summary; the outlook and the outlook set
/// answer CSV equal to their JSON numbers, negotiated by `?format=` or `Accept` (q-values),
/// with a 406 for a format they cannot give.
async fn check_map_and_spreadsheets(addr: SocketAddr) {
    let geo = fetch(addr, "/api/v1/gauges.geojson", None).await.json();
    let features = geo["features"].as_array().unwrap();
    assert_eq!(features.len(), 4);
    let set = fetch(addr, "/api/v1/outlooks?format=csv", None).await;
    let (set_header, set_rows) = parse_csv(&set);
    assert_eq!(set_rows.len(), 4, "one row per gauge");
    for (feature, row) in features.iter().zip(&set_rows) {
        let id = feature["id"].as_str().unwrap();
        let json = fetch(addr, &format!("/api/v1/gauges/{id}/outlook"), None).await;
        let o = json.json();
        let s = &feature["properties"]["next_outlook"];
        assert_eq!(s["season"], o["season"], "{id}");
        assert_eq!(s["mean"], o["mean"], "{id}");
        assert_eq!(
            s["range_80"],
            serde_json::json!([o["p10"], o["p90"]]),
            "{id}"
        );
        assert_eq!(s["plan_on"], o["plan_on"], "{id}");
        let (k, p) = headline(&o);
        assert_eq!(s["at_least_k"]["k"].as_u64(), Some(k), "{id}");
        assert_eq!(f64_of(&s["at_least_k"]["probability"]), p, "{id}");
        let climatology = o["terciles"]
            .as_array()
            .unwrap()
            .iter()
            .find(|t| t["reference"] == "1991-2020 climatology")
            .expect("climatology terciles");
        for field in ["reference", "below", "near", "above"] {
            assert_eq!(s["terciles"][field], climatology[field], "{id}: {field}");
        }
        assert_eq!(s["verdict"], o["skill"]["verdict"], "{id}");
        assert_eq!(s["engine"], o["engine"], "{id}");

        // The set's CSV row holds the same headline numbers.
        let at = |name: &str| cell(&set_header, row, name);
        assert_eq!(at("gauge"), id);
        assert_eq!(at("season"), o["season"].as_str().unwrap());
        assert_eq!(number(&at("mean")), f64_of(&o["mean"]), "{id}");
        assert_eq!(at("p10"), o["p10"].to_string());
        assert_eq!(at("p90"), o["p90"].to_string());
        assert_eq!(number(&at("plan_on_days")), f64_of(&o["plan_on"]["days"]));
        assert_eq!(at("plan_on_basis"), o["plan_on"]["basis"].as_str().unwrap());
        assert_eq!(
            at("plan_on_sentence"),
            o["plan_on"]["sentence"].as_str().unwrap()
        );
        assert_eq!(at("k"), k.to_string(), "{id}");
        assert_eq!(number(&at("probability_at_least_k")), p, "{id}");
        assert_eq!(at("tercile_reference"), "1991-2020 climatology");
        for field in ["below", "near", "above"] {
            assert_eq!(
                number(&at(field)),
                f64_of(&climatology[field]),
                "{id}: {field}"
            );
        }
        assert_eq!(at("verdict"), o["skill"]["verdict"].as_str().unwrap());
        assert_eq!(at("engine"), o["engine"].as_str().unwrap());
        assert_eq!(at("unavailable"), "");

        // The outlook's count table: pmf exactly, P(N >= k) as its JSON exceedance.
        let csv = fetch(
            addr,
            &format!("/api/v1/gauges/{id}/outlook?format=csv"),
            None,
        )
        .await;
        let (header, rows) = parse_csv(&csv);
        assert_eq!(
            header,
            [
                "days",
                "probability",
                "probability_at_least",
                "probability_at_most"
            ]
        );
        let pmf: Vec<f64> = o["pmf"].as_array().unwrap().iter().map(f64_of).collect();
        assert_eq!(rows.len(), pmf.len(), "{id}");
        for (days, r) in rows.iter().enumerate() {
            assert_eq!(number(&r[0]) as usize, days);
            assert_eq!(number(&r[1]), pmf[days], "{id}: pmf[{days}]");
            let tail: f64 = pmf[days..].iter().sum();
            assert!((number(&r[2]) - tail).abs() < SUM_TOLERANCE, "{id}: {r:?}");
        }
        for e in o["exceedance"].as_array().unwrap() {
            let k = e["days"].as_u64().unwrap() as usize;
            let listed = f64_of(&e["probability"]);
            assert!(
                (number(&rows[k][2]) - listed).abs() < 1e-6,
                "{id}: P(N >= {k})"
            );
        }
        assert_ne!(
            csv.header("etag"),
            json.header("etag"),
            "{id}: its own ETag"
        );
    }

    // Accept with q-values (RFC 9110 section 12.5.1), and a 406 for what cannot be given.
    let path = format!("/api/v1/gauges/{DEMO_GAUGE}/outlook");
    let by_word = fetch(addr, &format!("{path}?format=csv"), None).await;
    let weighed = fetch(addr, &path, Some("application/json;q=0.1, text/csv;q=0.9")).await;
    assert_eq!(weighed.body, by_word.body);
    let json = fetch(addr, &path, Some("text/csv;q=0.4, application/json")).await;
    assert_eq!(
        json.header("content-type").as_deref(),
        Some("application/json")
    );
    json.json();
    for (path, accept) in [
        (path.clone(), Some("application/xml")),
        (format!("{path}?format=xml"), None),
        ("/api/v1/outlooks".to_owned(), Some("application/xml")),
    ] {
        let refused = fetch(addr, &path, accept).await;
        assert_eq!(refused.status, 406, "{path}: {}", refused.text());
        assert_eq!(
            refused.header("content-type").as_deref(),
            Some("application/problem+json")
        );
        assert_eq!(refused.json()["type"], "/problems/not-acceptable");
    }
}

/// Keeps the rows of a level CSV before `cut` (times in the file's `Z` form sort as text).
fn levels_before(csv: &[u8], cut: &str) -> Vec<u8> {
    let text = std::str::from_utf8(csv).expect("UTF-8 levels");
    let mut out = String::new();
    for (i, line) in text.lines().enumerate() {
        if i == 0 || line < cut {
            out.push_str(line);
            out.push('\n');
        }
    }
    out.into_bytes()
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn an_issued_outlook_is_scored_once_its_season_is_in_the_record() {
    let dir = temp_dir("verify");
    let running = start(&dir.join("store.db"), Seed::Empty).await;
    let addr = running.addr;
    let demo = demo_dir();
    let id = "tamsin-hindsight";
    let toml = std::fs::read_to_string(demo.join(format!("{DEMO_GAUGE}.toml")))
        .unwrap()
        .replace(&format!("id = \"{DEMO_GAUGE}\""), &format!("id = \"{id}\""));
    call(
        addr,
        "PUT",
        &format!("/api/v1/gauges/{id}"),
        toml.into_bytes(),
        200,
    )
    .await;
    for (path, file) in [
        (
            "/api/v1/drivers/enso/enso-monthly".to_owned(),
            "../drivers/enso-monthly.csv".to_owned(),
        ),
        (
            "/api/v1/drivers/rmm/rmm-daily".to_owned(),
            "../drivers/rmm-daily.csv".to_owned(),
        ),
        (
            format!("/api/v1/drivers/wind/{DEMO_GAUGE}-wind"),
            format!("{DEMO_GAUGE}-wind.csv"),
        ),
    ] {
        call(
            addr,
            "PUT",
            &path,
            std::fs::read(demo.join(file)).unwrap(),
            200,
        )
        .await;
    }
    // The record as it stood before 2025-DJF (local midnight at UTC-03:00), and an ENSO
    // forecast for that season (invented category odds: this test checks the plumbing).
    let gz = std::fs::read(demo.join(format!("{DEMO_GAUGE}-levels.csv.gz"))).unwrap();
    let full = tidetally_server::upload::decode_body("levels", &gz, 1 << 30).unwrap();
    let early = levels_before(&full, "2025-12-01T03:00:00Z");
    call(
        addr,
        "PUT",
        &format!("/api/v1/gauges/{id}/levels"),
        early,
        200,
    )
    .await;
    let forecast = r#"{"season": "2025-DJF", "issued": "2025-11-15", "note": "plumbing check",
        "probabilities": {"la_nina": 0.5, "neutral": 0.4, "el_nino": 0.1}}"#;
    call(
        addr,
        "PUT",
        "/api/v1/forecasts/enso/enso-forecast-2026-DJF",
        forecast.into(),
        200,
    )
    .await;
    call(
        addr,
        "POST",
        &format!("/api/v1/gauges/{id}/refit"),
        vec![],
        200,
    )
    .await;
    let o = call(
        addr,
        "GET",
        &format!("/api/v1/gauges/{id}/outlook"),
        vec![],
        200,
    )
    .await;
    assert_eq!(o["season"], "2025-DJF");
    check_outlook(&o);
    // The forecast's free-text note survives the upload, as it does from a file.
    assert!(
        o["notes"]
            .as_array()
            .unwrap()
            .iter()
            .any(|n| n == "ENSO forecast note: plumbing check"),
        "{}",
        o["notes"]
    );
    let issued_path = format!("/api/v1/outlooks/issued?gauge={id}&season=2025-DJF");
    let issued = call(addr, "GET", &issued_path, vec![], 200).await;
    assert!(
        issued["issued"][0]["verification"].is_null(),
        "{}",
        issued["issued"][0]["verification"]
    );

    // The rest of the record arrives, merged into the stored one, with the forecast for the
    // season after it; uploads change nothing served until a refit, after which the outlook
    // issued earlier is scored against the record.
    call(
        addr,
        "PUT",
        &format!("/api/v1/gauges/{id}/levels"),
        full,
        200,
    )
    .await;
    call(
        addr,
        "PUT",
        "/api/v1/forecasts/enso/enso-forecast-2026-DJF",
        std::fs::read(demo.join("../drivers/enso-forecast-2026-DJF.json")).unwrap(),
        200,
    )
    .await;
    call(
        addr,
        "POST",
        &format!("/api/v1/gauges/{id}/refit"),
        vec![],
        200,
    )
    .await;
    let history = call(
        addr,
        "GET",
        &format!("/api/v1/gauges/{id}/seasons"),
        vec![],
        200,
    )
    .await;
    let season = history["seasons"]
        .as_array()
        .unwrap()
        .iter()
        .find(|s| s["season"] == "2025-DJF")
        .expect("2025-DJF in the record")
        .clone();
    let observed = season["flood_days"].as_u64().unwrap() as usize;
    let issued = call(addr, "GET", &issued_path, vec![], 200).await;
    let v = &issued["issued"][0]["verification"];
    assert_eq!(v["observed"].as_u64().unwrap() as usize, observed, "{v}");
    let pmf: Vec<f64> = o["pmf"].as_array().unwrap().iter().map(f64_of).collect();
    // CRPS of a count forecast: sum over k of (F(k) - 1{k >= observed})^2 (definition
    // recalled from memory: Gneiting & Raftery 2007, discretised over counts).
    let mut cdf = 0.0;
    let mut crps = 0.0;
    for (k, p) in pmf.iter().enumerate() {
        cdf += p;
        let step = if k >= observed { 1.0 } else { 0.0 };
        crps += (cdf - step) * (cdf - step);
    }
    assert!((f64_of(&v["crps"]) - crps).abs() < 1e-9, "{v} vs {crps}");
    assert!(
        (f64_of(&v["log_score"]) + pmf[observed].ln()).abs() < 1e-9,
        "{v}"
    );
    let served = call(
        addr,
        "GET",
        &format!("/api/v1/gauges/{id}/outlook"),
        vec![],
        200,
    )
    .await;
    assert_ne!(
        served["model_version"], o["model_version"],
        "the refit serves"
    );
    assert_eq!(
        issued["issued"][0]["model_version"], o["model_version"],
        "the issued outlook keeps its model version"
    );
    stop(running).await;
    let _ = std::fs::remove_dir_all(&dir);
}
