//! The planner's web page in a real headless Chromium, driven over the W3C WebDriver
//! protocol: the real service runs in-process on a loopback port with the demo coastline.
//! Checks: a gauge is chosen by click and by keyboard, the numbers on the page equal the
//! API's, every chart is drawn, the cautions are visible, nothing is fetched from another
//! host, the downloads carry the API's numbers, and the console stays free of errors.
//!
//! Needs `chromium` and `chromedriver` (Debian: `apt-get install chromium chromium-driver`);
//! `CHROMIUM` and `CHROMEDRIVER` override the paths. Without them the test fails when `CI`
//! is set and otherwise prints a skip message. Screenshots go to `target/test-artifacts/`.
#![allow(clippy::unwrap_used)]

use std::net::{SocketAddr, TcpListener};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::sync::Arc;
use std::time::{Duration, Instant};

use serde_json::{Value, json};
use tidetally_server::store::Store;
use tidetally_server::{AppState, state};
use tidetally_test_support::webdriver::{Session, http};

const WAIT: Duration = Duration::from_secs(60);

/// Chromium's flags for a quiet, sandbox-free, offline-friendly headless run.
const CHROMIUM_FLAGS: &[&str] = &[
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--disable-dev-shm-usage",
    "--hide-scrollbars",
];

fn find_program(env: &str, names: &[&str]) -> Option<PathBuf> {
    if let Some(path) = std::env::var_os(env) {
        return Some(PathBuf::from(path));
    }
    let dirs = std::env::var_os("PATH")?;
    std::env::split_paths(&dirs)
        .flat_map(|dir| names.iter().map(move |n| dir.join(n)))
        .find(|p| p.is_file())
}

fn workspace() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn fresh_dir(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("tidetally-page-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("temp dir");
    dir
}

fn free_port() -> u16 {
    TcpListener::bind("127.0.0.1:0")
        .and_then(|l| l.local_addr())
        .expect("a free loopback port")
        .port()
}

// ---- the service ----

struct Service {
    addr: SocketAddr,
    stop: Option<tokio::sync::oneshot::Sender<()>>,
    thread: Option<std::thread::JoinHandle<()>>,
}

impl Drop for Service {
    fn drop(&mut self) {
        if let Some(stop) = self.stop.take() {
            let _ = stop.send(());
        }
        if let Some(thread) = self.thread.take() {
            let _ = thread.join();
        }
    }
}

/// Seeds the store with the demo coastline.
fn seed_demo(store: &Store) -> usize {
    let gauges = workspace().join("demo-data/gauges");
    store
        .call_blocking(|conn| Ok(state::seed_from_dir(conn, &gauges)))
        .expect("store answers")
        .unwrap_or_else(|err| panic!("demo data seeds: {err:?}"))
}

/// The real service over a temp SQLite store seeded with the demo coastline.
fn start_service() -> Service {
    // One store per service: the tests of this file run in parallel in one process.
    static SERVICES: std::sync::atomic::AtomicUsize = std::sync::atomic::AtomicUsize::new(0);
    let n = SERVICES.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
    let dir = fresh_dir(&format!("store-{n}"));
    let store = Store::open(&dir.join("store.db")).expect("store opens");
    let seeded = seed_demo(&store);
    assert_eq!(seeded, 4, "the demo coastline has four gauges");
    let app_state = AppState::new(store, None, Duration::from_secs(60));
    state::load_catalog(&app_state).expect("catalog loads");
    let router = tidetally_server::app(Arc::clone(&app_state));

    let listener = TcpListener::bind("127.0.0.1:0").expect("bind loopback");
    listener.set_nonblocking(true).expect("non-blocking");
    let addr = listener.local_addr().expect("address");
    let (stop, stopped) = tokio::sync::oneshot::channel::<()>();
    let thread = std::thread::spawn(move || {
        let runtime = tokio::runtime::Builder::new_multi_thread()
            .worker_threads(2)
            .enable_all()
            .build()
            .expect("runtime");
        runtime.block_on(async move {
            let listener = tokio::net::TcpListener::from_std(listener).expect("tokio listener");
            tidetally_server::serve_router(listener, router, async {
                let _ = stopped.await;
            })
            .await
            .expect("service runs");
        });
    });
    Service {
        addr,
        stop: Some(stop),
        thread: Some(thread),
    }
}

// ---- the browser ----

struct Driver {
    child: Child,
    addr: SocketAddr,
}

impl Drop for Driver {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

fn start_driver(program: &Path) -> Driver {
    let port = free_port();
    let child = Command::new(program)
        .arg(format!("--port={port}"))
        .arg("--allowed-ips=")
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap_or_else(|e| panic!("start {}: {e}", program.display()));
    let addr: SocketAddr = ([127, 0, 0, 1], port).into();
    // Owned before the wait, so the driver is stopped even if it never gets ready.
    let driver = Driver { child, addr };
    let start = Instant::now();
    loop {
        if std::net::TcpStream::connect(addr).is_ok()
            && http(addr, "GET", "/status", None).json()["value"]["ready"] == json!(true)
        {
            break;
        }
        assert!(start.elapsed() < WAIT, "chromedriver did not start");
        std::thread::sleep(Duration::from_millis(100));
    }
    driver
}

fn artifacts() -> PathBuf {
    let dir = std::env::var_os("CARGO_TARGET_DIR")
        .map(PathBuf::from)
        .unwrap_or_else(|| workspace().join("target"))
        .join("test-artifacts");
    std::fs::create_dir_all(&dir).expect("artifact dir");
    dir
}

// ---- what the page shows, formatted as the page formats it ----

/// The page's percent wording (static/app.js `percent`).
fn percent(p: f64) -> String {
    if p < 0.005 {
        "less than 1%".into()
    } else if p > 0.995 {
        "more than 99%".into()
    } else {
        format!("{}%", (p * 100.0).round())
    }
}

fn one_decimal(x: f64) -> String {
    format!("{:.1}", (x * 10.0).round() / 10.0)
}

/// Every `[data-field]` on the page as field -> (raw, text).
fn shown_fields(session: &Session) -> serde_json::Map<String, Value> {
    let value = session.script(
        "const out = {}; document.querySelectorAll('#outlook [data-field]').forEach(n => {
           out[n.dataset.field] = { raw: n.dataset.raw, text: n.textContent }; }); return out;",
        json!([]),
    );
    value.as_object().cloned().expect("an object of fields")
}

fn assert_field(fields: &serde_json::Map<String, Value>, name: &str, raw: f64, text: &str) {
    let field = fields
        .get(name)
        .unwrap_or_else(|| panic!("the page shows no {name}"));
    let shown: f64 = field["raw"]
        .as_str()
        .and_then(|s| s.parse().ok())
        .unwrap_or_else(|| panic!("{name} has no number: {field}"));
    // The page keeps the API's JSON number as text. serde_json's default float parser (no
    // `float_roundtrip`) may differ from the browser's by one unit in the last place, so
    // equality is to 1e-12 relative: far below any digit the page shows.
    assert!(
        (shown - raw).abs() <= 1e-12 * raw.abs().max(1.0),
        "{name}: page {shown} vs API {raw}"
    );
    assert_eq!(field["text"], json!(text), "{name} wording");
}

/// The outlook's figures on the page equal the API's outlook for the same gauge.
fn check_numbers(session: &Session, service: SocketAddr, gauge: &str) -> Value {
    let answer = http(
        service,
        "GET",
        &format!("/api/v1/gauges/{gauge}/outlook"),
        None,
    );
    assert_eq!(
        answer.status,
        200,
        "{}",
        String::from_utf8_lossy(&answer.body)
    );
    let outlook = answer.json();
    let fields = shown_fields(session);
    let num = |v: &Value| v.as_f64().expect("a number");
    assert_field(
        &fields,
        "mean",
        num(&outlook["mean"]),
        &one_decimal(num(&outlook["mean"])),
    );
    for q in ["p10", "p90"] {
        assert_field(&fields, q, num(&outlook[q]), &outlook[q].to_string());
    }
    assert_field(
        &fields,
        "climatological-mean",
        num(&outlook["climatological_mean"]),
        &one_decimal(num(&outlook["climatological_mean"])),
    );
    // The "chance of k or more" is one of the API's exceedance entries, worded as the page does.
    let days: f64 = fields["exceed-days"]["raw"]
        .as_str()
        .and_then(|s| s.parse().ok())
        .expect("a threshold in days");
    let entry = outlook["exceedance"]
        .as_array()
        .unwrap()
        .iter()
        .find(|e| num(&e["days"]) == days)
        .expect("the page's threshold is one of the API's");
    assert!(
        days > num(&outlook["median"]),
        "the threshold lies above the median"
    );
    assert_field(
        &fields,
        "exceed-probability",
        num(&entry["probability"]),
        &percent(num(&entry["probability"])),
    );
    let terciles = outlook["terciles"]
        .as_array()
        .unwrap()
        .iter()
        .find(|t| t["reference"] == "1991-2020 climatology")
        .expect("1991-2020 terciles");
    for part in ["below", "near", "above"] {
        assert_field(
            &fields,
            part,
            num(&terciles[part]),
            &percent(num(&terciles[part])),
        );
    }
    assert_eq!(
        fields["verdict"]["text"], outlook["skill"]["verdict_text"],
        "verdict in words"
    );
    let hindcast = http(
        service,
        "GET",
        &format!("/api/v1/gauges/{gauge}/hindcast"),
        None,
    );
    if hindcast.status == 200 {
        let shown = session.script(
            "return document.getElementById('verdict-skill').textContent",
            json!([]),
        );
        assert_eq!(
            shown,
            hindcast.json()["skill"]["verdict_text"],
            "hindcast verdict"
        );
    }
    outlook
}

/// Each chart has a canvas of non-zero size with non-blank pixels, a text alternative and
/// a table.
fn check_charts(session: &Session) {
    let report = session.script(
        "return ['counts', 'history', 'skill', 'drivers'].map(name => {
           const box = document.getElementById('chart-' + name);
           const canvas = box.querySelector('canvas');
           if (!canvas) return { name, drawn: 0, w: 0, h: 0 };
           // Count dark, opaque pixels inside the plotting area only (uPlot's .u-over):
           // axes and labels lie outside it and grid lines are light, so only data counts.
           const c = canvas.getBoundingClientRect();
           const o = box.querySelector('.u-over').getBoundingClientRect();
           const k = canvas.width / c.width;
           const x0 = Math.round((o.left - c.left) * k), y0 = Math.round((o.top - c.top) * k);
           const w = Math.max(1, Math.round(o.width * k)), h = Math.max(1, Math.round(o.height * k));
           const px = canvas.getContext('2d').getImageData(x0, y0, w, h).data;
           let drawn = 0;
           for (let i = 0; i < px.length; i += 4) {
             const lum = (0.2126 * px[i] + 0.7152 * px[i + 1] + 0.0722 * px[i + 2]) / 255;
             if (px[i + 3] > 128 && lum < 0.5) drawn += 1;
           }
           return { name, drawn, w: canvas.width, h: canvas.height,
                    alt: document.getElementById('alt-' + name).textContent.length,
                    label: (canvas.getAttribute('aria-label') || '').length,
                    rows: document.querySelectorAll('#table-' + name + ' tbody tr').length };
         });",
        json!([]),
    );
    for chart in report.as_array().expect("a list") {
        let name = &chart["name"];
        assert!(
            chart["w"].as_u64().unwrap() > 100 && chart["h"].as_u64().unwrap() > 100,
            "{name} canvas size: {chart}"
        );
        assert!(
            chart["drawn"].as_u64().unwrap() > 300,
            "{name} is blank: {chart}"
        );
        assert!(
            chart["alt"].as_u64().unwrap() > 40,
            "{name} text alternative: {chart}"
        );
        assert!(
            chart["label"].as_u64().unwrap() > 40,
            "{name} canvas label: {chart}"
        );
        assert!(
            chart["rows"].as_u64().unwrap() > 0,
            "{name} table view: {chart}"
        );
    }
}

/// Every caution from the API is on the page, displayed with a non-zero size, and the box
/// says to follow local emergency managers and official forecasts.
fn check_cautions(session: &Session, outlook: &Value) {
    let shown = session.script(
        "const box = document.getElementById('cautions');
         const r = box.getBoundingClientRect();
         const style = getComputedStyle(box);
         return { w: r.width, h: r.height, visible: style.display !== 'none' && style.visibility === 'visible',
                  items: [...box.querySelectorAll('li')].map(li => li.textContent) };",
        json!([]),
    );
    assert!(shown["visible"] == json!(true), "cautions hidden: {shown}");
    assert!(shown["w"].as_f64().unwrap() > 100.0 && shown["h"].as_f64().unwrap() > 40.0);
    let items: Vec<&str> = shown["items"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(Value::as_str)
        .collect();
    for caution in outlook["cautions"].as_array().expect("cautions") {
        let caution = caution.as_str().expect("a sentence");
        assert!(items.contains(&caution), "caution missing: {caution}");
    }
    assert!(
        items
            .iter()
            .any(|c| c.contains("local emergency managers") && c.contains("official forecasts")),
        "defer to local emergency managers: {items:?}"
    );
}

/// The CSV download holds the API's pmf; the JSON download is the API's outlook; a chart
/// exports as a PNG.
fn check_downloads(session: &Session, service: SocketAddr, outlook: &Value) {
    let got = session.script_async(
        "const done = arguments[arguments.length - 1];
         Promise.all([
           fetch(document.getElementById('dl-csv').href).then(r => r.text()),
           fetch(document.getElementById('dl-json').href).then(r => r.text()),
           new Promise(ok => tidetallyPage.chartPng('counts', b => ok(b ? { type: b.type, size: b.size } : null))),
         ]).then(([csv, json, png]) => done({ csv, json, png }), e => done({ error: String(e) }));",
        json!([]),
    );
    assert!(got.get("error").is_none(), "downloads failed: {got}");
    let path = format!(
        "/api/v1/gauges/{}/outlook?season={}",
        outlook["gauge"].as_str().unwrap(),
        outlook["season"].as_str().unwrap()
    );
    let api = http(service, "GET", &path, None);
    assert_eq!(
        got["json"].as_str(),
        Some(String::from_utf8_lossy(&api.body).as_ref()),
        "JSON download is the API's outlook"
    );
    let csv = got["csv"].as_str().expect("CSV text");
    let mut lines = csv.lines();
    assert_eq!(
        lines.next(),
        Some("gauge,season,days,probability,probability_at_least")
    );
    let pmf = outlook["pmf"].as_array().unwrap();
    let rows: Vec<&str> = lines.collect();
    assert_eq!(rows.len(), pmf.len(), "one CSV row per count of days");
    for (days, (row, p)) in rows.iter().zip(pmf).enumerate() {
        let cells: Vec<&str> = row.split(',').collect();
        assert_eq!(cells[2], days.to_string());
        let value: f64 = cells[3].parse().expect("a probability");
        let want = p.as_f64().unwrap();
        assert!(
            (value - want).abs() <= 1e-12,
            "CSV probability at {days} days: {value} vs {want}"
        );
    }
    assert_eq!(got["png"]["type"], "image/png", "PNG export: {got}");
    assert!(
        got["png"]["size"].as_u64().unwrap() > 2000,
        "PNG export: {got}"
    );
}

/// Every resource came from the page's own origin, and the page carries a CSP of `'self'`.
fn check_same_origin(session: &Session, service: SocketAddr) {
    let foreign = session.script(
        "return performance.getEntriesByType('resource').map(e => new URL(e.name).origin)
           .concat([location.origin]).filter(o => o !== location.origin);",
        json!([]),
    );
    assert_eq!(foreign, json!([]), "requests to other hosts");
    let count = session.script(
        "return performance.getEntriesByType('resource').length",
        json!([]),
    );
    assert!(
        count.as_u64().unwrap() >= 5,
        "resource timing entries: {count}"
    );
    let page = http(service, "GET", "/", None);
    assert_eq!(page.status, 200);
    assert!(
        page.head
            .contains("content-security-policy: default-src 'self'"),
        "CSP header: {}",
        page.head
    );
    assert!(String::from_utf8_lossy(&page.body).contains("content=\"default-src 'self'"));
}

fn check_console(session: &Session) {
    let errors: Vec<Value> = session
        .browser_log()
        .into_iter()
        .filter(|e| e["level"] == "SEVERE")
        .collect();
    assert!(errors.is_empty(), "console errors: {errors:?}");
    let hooked = session.script("return window.tidetallyErrors || []", json!([]));
    assert_eq!(hooked, json!([]), "uncaught errors");
}

fn ready_for(gauge: &str) -> String {
    format!(
        "return document.body.dataset.state === 'ready' && document.body.dataset.gauge === '{gauge}'"
    )
}

#[test]
fn planner_page_in_headless_chromium() {
    let chromium = find_program(
        "CHROMIUM",
        &["chromium", "chromium-browser", "google-chrome"],
    );
    let driver = find_program("CHROMEDRIVER", &["chromedriver"]);
    let (Some(chromium), Some(driver)) = (chromium, driver) else {
        assert!(
            std::env::var_os("CI").is_none(),
            "CI is set but chromium or chromedriver is missing (apt-get install chromium chromium-driver)"
        );
        eprintln!(
            "SKIPPED planner_page_in_headless_chromium: chromium and chromedriver not found \
             (apt-get install chromium chromium-driver, or set CHROMIUM and CHROMEDRIVER)"
        );
        return;
    };

    let service = start_service();
    let driver = start_driver(&driver);
    let profile = fresh_dir("profile");
    let mut args: Vec<String> = CHROMIUM_FLAGS.iter().map(|s| s.to_string()).collect();
    args.push(format!("--user-data-dir={}", profile.display()));
    let session = Session::start(
        driver.addr,
        json!({
            "browserName": "chrome",
            "goog:chromeOptions": { "binary": chromium.to_string_lossy(), "args": args },
            "goog:loggingPrefs": { "browser": "ALL" },
        }),
    );
    session.window_size(1280, 2400);
    session.goto(&format!("http://{}/", service.addr));

    // The page opens on a gauge by itself; its list has every demo gauge.
    session.wait_for(
        "return ['ready', 'no-outlook'].includes(document.body.dataset.state)",
        WAIT,
    );
    let status = session.script(
        "return [document.body.dataset.state, document.getElementById('status').textContent]",
        json!([]),
    );
    if status[0] != "ready" {
        std::fs::write(
            artifacts().join("page-no-outlook.png"),
            session.screenshot(),
        )
        .expect("screenshot");
        panic!("the page shows no outlook: {}", status[1]);
    }
    let options = session.script(
        "return [...document.querySelectorAll('#gauge-select option')].map(o => o.value)",
        json!([]),
    );
    assert_eq!(
        options,
        json!([
            "corrin-quay",
            "port-tamsin",
            "saltlow-sound",
            "wrenmouth-inlet"
        ])
    );
    let dots = session.script(
        "return document.querySelectorAll('#gauge-plot .gauge-dot').length",
        json!([]),
    );
    assert_eq!(dots, json!(4), "one position per gauge");

    // Choose by clicking its position.
    let dot = session.find("#gauge-plot .gauge-dot[data-gauge='saltlow-sound']");
    session.click(&dot);
    session.wait_for(&ready_for("saltlow-sound"), WAIT);
    assert_eq!(
        session.script(
            "return document.getElementById('gauge-select').value",
            json!([])
        ),
        json!("saltlow-sound")
    );
    check_numbers(&session, service.addr, "saltlow-sound");

    // Choose by keyboard: focus a position and press Enter.
    session.script(
        "document.querySelector(\"#gauge-plot .gauge-dot[data-gauge='port-tamsin']\").focus()",
        json!([]),
    );
    session.press("\u{E007}");
    session.wait_for(&ready_for("port-tamsin"), WAIT);
    check_numbers(&session, service.addr, "port-tamsin");

    // Choose from the list by keyboard: the next gauge after Port Tamsin is Saltlow Sound,
    // then back up to Port Tamsin.
    session.script("document.getElementById('gauge-select').focus()", json!([]));
    session.press("\u{E015}");
    session.wait_for(&ready_for("saltlow-sound"), WAIT);
    session.press("\u{E013}");
    session.wait_for(&ready_for("port-tamsin"), WAIT);
    let outlook = check_numbers(&session, service.addr, "port-tamsin");
    check_charts(&session);
    check_cautions(&session, &outlook);
    check_downloads(&session, service.addr, &outlook);
    check_same_origin(&session, service.addr);
    check_console(&session);

    let dir = artifacts();
    let height = session.script(
        "return Math.ceil(document.documentElement.scrollHeight)",
        json!([]),
    );
    session.window_size(1280, height.as_u64().unwrap_or(2400).min(6000) as u32);
    std::fs::write(dir.join("page-desktop.png"), session.screenshot()).expect("screenshot");
    // Printing: the print style sheet hides the controls and keeps the outlook and cautions.
    let hidden_in_print = session.script(
        "const rules = [...document.styleSheets].flatMap(s => { try { return [...s.cssRules]; } catch (e) { return []; } });
         return rules.some(r => r.media && r.media.mediaText === 'print' && r.cssText.includes('.card-tools'));",
        json!([]),
    );
    assert_eq!(hidden_in_print, json!(true), "a print style sheet");
    let pdf = session.print_pdf();
    assert!(
        pdf.starts_with(b"%PDF") && pdf.len() > 20_000,
        "printed page"
    );
    std::fs::write(dir.join("page-print.pdf"), pdf).expect("PDF");

    // A phone-width view: one column, still drawn.
    session.window_size(390, 3000);
    std::thread::sleep(Duration::from_millis(600));
    check_charts(&session);
    let height = session.script(
        "return Math.ceil(document.documentElement.scrollHeight)",
        json!([]),
    );
    session.window_size(390, height.as_u64().unwrap_or(3000).min(8000) as u32);
    std::thread::sleep(Duration::from_millis(300));
    let overflow = session.script(
        "return document.documentElement.scrollWidth - document.documentElement.clientWidth",
        json!([]),
    );
    assert!(
        overflow.as_i64().unwrap() <= 0,
        "sideways scrolling on a phone: {overflow}"
    );
    std::fs::write(dir.join("page-phone.png"), session.screenshot()).expect("screenshot");
    check_console(&session);
    session.quit();

    eprintln!("screenshots in {}", dir.display());
}

// ---- the season calendar (static/calendar.js) ----

/// The season calendar on a phone-width page: shown for the chosen gauge, its days to watch
/// marked by a sign (not colour alone) and equal in number to the API's `watch_days`, its
/// week table one row per API week, its downloads the API's CSV and `.ics`, and nothing
/// wider than a 390 px viewport.
#[test]
fn season_calendar_in_headless_chromium() {
    let chromium = find_program(
        "CHROMIUM",
        &["chromium", "chromium-browser", "google-chrome"],
    );
    let driver = find_program("CHROMEDRIVER", &["chromedriver"]);
    let (Some(chromium), Some(driver)) = (chromium, driver) else {
        assert!(
            std::env::var_os("CI").is_none(),
            "CI is set but chromium or chromedriver is missing (apt-get install chromium chromium-driver)"
        );
        eprintln!(
            "SKIPPED season_calendar_in_headless_chromium: chromium and chromedriver not found \
             (apt-get install chromium chromium-driver, or set CHROMIUM and CHROMEDRIVER)"
        );
        return;
    };
    let service = start_service();
    let driver = start_driver(&driver);
    let profile = fresh_dir("calendar-profile");
    let mut args: Vec<String> = CHROMIUM_FLAGS.iter().map(|s| s.to_string()).collect();
    args.push(format!("--user-data-dir={}", profile.display()));
    let session = Session::start(
        driver.addr,
        json!({
            "browserName": "chrome",
            "goog:chromeOptions": { "binary": chromium.to_string_lossy(), "args": args },
            "goog:loggingPrefs": { "browser": "ALL" },
        }),
    );
    session.window_size(390, 844);
    session.goto(&format!("http://{}/#gauge=port-tamsin", service.addr));
    session.wait_for(&ready_for("port-tamsin"), WAIT);
    session.wait_for(
        "const s = document.getElementById('season-calendar');
         return s.dataset.state === 'ready' && s.dataset.gauge === 'port-tamsin' && !s.hidden",
        WAIT,
    );
    let calendar = http(
        service.addr,
        "GET",
        "/api/v1/gauges/port-tamsin/calendar",
        None,
    )
    .json();
    let weeks = calendar["weeks"].as_array().unwrap();
    let shown = session.script(
        "const s = document.getElementById('season-calendar');
         return {
           marks: s.querySelectorAll('.cal-month .cal-watch-day .cal-mark').length,
           watchDays: [...s.querySelectorAll('.cal-month .cal-watch-day')].map(c => c.dataset.date),
           days: s.querySelectorAll('.cal-month .cal-day').length,
           watchWords: s.querySelectorAll('.cal-month .cal-watch-week .cal-watch-word').length,
           months: s.querySelectorAll('.cal-month').length,
           rows: s.querySelectorAll('.cal-weeks tbody tr').length,
           csv: document.getElementById('dl-calendar-csv').getAttribute('href'),
           ics: document.getElementById('dl-calendar-ics').getAttribute('href'),
           explain: document.getElementById('calendar-explain').textContent,
           right: Math.max(...[...s.querySelectorAll('*')].map(n => n.getBoundingClientRect().right)),
           width: document.documentElement.clientWidth,
         };",
        json!([]),
    );
    let watch: Vec<&str> = weeks
        .iter()
        .flat_map(|w| w["days"].as_array().unwrap())
        .filter(|d| d["watch"] == true)
        .map(|d| d["date"].as_str().unwrap())
        .collect();
    let days: usize = weeks
        .iter()
        .map(|w| w["days"].as_array().unwrap().len())
        .sum();
    assert!(!watch.is_empty(), "the demo gauge has days to watch");
    assert_eq!(shown["watchDays"], json!(watch), "{shown}");
    assert_eq!(
        shown["marks"],
        json!(watch.len()),
        "every day to watch has its sign"
    );
    assert_eq!(
        shown["days"],
        json!(days),
        "every season day is in the grid"
    );
    // DJF spans December, January and February.
    assert_eq!(shown["months"], json!(3));
    assert_eq!(shown["rows"], json!(weeks.len()), "one table row per week");
    assert!(shown["watchWords"].as_u64().unwrap() >= 1);
    let explain = shown["explain"].as_str().unwrap();
    assert!(
        explain.contains(&format!("{} days", watch.len())),
        "{explain}"
    );
    assert!(explain.contains("not a warning"), "{explain}");
    // Nothing of the calendar reaches past the phone's width.
    assert!(
        shown["right"].as_f64().unwrap() <= shown["width"].as_f64().unwrap() + 0.5,
        "the calendar overflows a 390 px phone: {shown}"
    );
    // The downloads are the API's own files.
    let csv = http(service.addr, "GET", shown["csv"].as_str().unwrap(), None);
    assert_eq!(csv.status, 200);
    assert!(
        csv.text()
            .starts_with("date,weekday,predicted_high_water_m,chance,watch\r\n")
    );
    let ics = http(service.addr, "GET", shown["ics"].as_str().unwrap(), None);
    assert_eq!(ics.status, 200);
    assert_eq!(ics.text().matches("BEGIN:VEVENT").count(), watch.len());

    session.script(
        "document.getElementById('season-calendar').scrollIntoView()",
        json!([]),
    );
    std::fs::write(artifacts().join("calendar-phone.png"), session.screenshot())
        .expect("screenshot");
    session.window_size(1300, 900);
    std::thread::sleep(Duration::from_millis(300));
    session.script(
        "document.getElementById('season-calendar').scrollIntoView()",
        json!([]),
    );
    std::fs::write(
        artifacts().join("calendar-desktop.png"),
        session.screenshot(),
    )
    .expect("screenshot");
    check_console(&session);
    session.quit();
}
