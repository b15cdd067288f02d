//! The planner's web page in a real headless Chromium, driven over the W3C WebDriver
//! protocol: the real service runs in-process on a loopback port with the demo coastline.
//! Checks: a gauge is chosen by click and by keyboard; each gauge shows exactly one plan-on
//! number, the API's `plan_on`, and no competing "expect about" number; score abbreviations
//! appear only inside the "How this was checked" disclosure; every driver name is explained
//! at its first use; a clock set past the season shows the past-season notice and the demo's
//! date does not; at 390 x 844 and 1,300 x 900 the headline is on the first screen, nothing
//! is wider than the viewport, charts keep their axes and count in whole days, and chooser
//! labels do not overlap; every chart is drawn, the cautions are visible, nothing is fetched
//! from another host, the downloads carry the API's numbers, and the console stays free of
//! errors.
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
    /// The service's state, to set its clock.
    state: Arc<AppState>,
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

/// The demo's "today": the day after its water-level records end (demo-data/README.md).
fn demo_today() -> chrono::NaiveDate {
    chrono::NaiveDate::from_ymd_opt(2026, 12, 1).expect("a date")
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
    // Today is the demo's first day of 2026-DJF (its records end 2026-11-30): nothing the page
    // shows depends on the real date.
    app_state.clock.set(Some(demo_today()));
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
        state: app_state,
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

/// Every `[data-field]` on the page as field -> (raw, text), the text without explanations.
fn shown_fields(session: &Session) -> serde_json::Map<String, Value> {
    let value = session.script(
        "const out = {}; document.querySelectorAll('#outlook [data-field]').forEach(n => {
           // The field's own words, without the explanations of terms put in them.
           const copy = n.cloneNode(true);
           copy.querySelectorAll('.gloss').forEach(g => g.remove());
           out[n.dataset.field] = { raw: n.dataset.raw, text: copy.textContent }; }); return out;",
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

/// The plan-on number as the page shows it (static/app.js `planOnText`, rounding as the
/// service's `about_days` does): "fewer than 1" below one day, else the nearest whole day.
fn plan_on_text(days: f64) -> String {
    if days < 1.0 {
        "fewer than 1".into()
    } else {
        format!("{}", days.round())
    }
}

/// The page's visible text, in reading order as laid out (the blocks of `main` by their
/// CSS `order`, which on a phone puts the answer above the cautions), as the reader sees it
/// (closed disclosures, hidden elements and the explanations of terms left out), and where
/// each explanation (`.gloss[data-gloss]`) sits in it.
const VISIBLE_TEXT: &str = "
  const parts = []; const glossAt = {}; let length = 0;
  const walker = document.createTreeWalker(document.body, NodeFilter.SHOW_TEXT);
  const nodes = [];
  for (let n = walker.nextNode(); n; n = walker.nextNode()) nodes.push(n);
  const blockRank = (n) => {
    const block = n.parentElement && n.parentElement.closest('main > *');
    if (!block) return n.parentElement && n.parentElement.closest('footer') ? Infinity : -Infinity;
    return Number(getComputedStyle(block).order) || 0;
  };
  const ranked = nodes.map((n, i) => [blockRank(n), i, n]);
  ranked.sort((a, b) => (a[0] - b[0]) || (a[1] - b[1]));
  for (const [, , n] of ranked) {
    const parent = n.parentElement;
    if (!parent || parent.closest('script, style') || !parent.checkVisibility()) continue;
    const gloss = parent.closest('.gloss');
    if (gloss) {
      const term = gloss.dataset.gloss;
      if (!(term in glossAt)) glossAt[term] = { at: length, text: gloss.textContent };
      continue;
    }
    parts.push(n.nodeValue); length += n.nodeValue.length;
  }
  return { text: parts.join(''), glossAt };";

/// The outlook's figures on the page equal the API's outlook for the same gauge: exactly one
/// plan-on number, the API's `plan_on.days` as the page rounds it, with the API's sentence,
/// and no second "expect about" number.
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
    let num = |v: &Value| v.as_f64().expect("a number");
    let plan = session.script(
        "return [...document.querySelectorAll('[data-plan-on]')].map(n => ({ raw: n.dataset.raw,
           text: n.textContent, visible: n.checkVisibility() }))",
        json!([]),
    );
    let plan = plan.as_array().expect("a list");
    assert_eq!(
        plan.len(),
        1,
        "exactly one plan-on number on the page: {plan:?}"
    );
    let days = num(&outlook["plan_on"]["days"]);
    let raw: f64 = plan[0]["raw"].as_str().unwrap().parse().unwrap();
    assert!(
        (raw - days).abs() <= 1e-12 * days.max(1.0),
        "plan-on {raw} vs API {days}"
    );
    assert_eq!(
        plan[0]["text"],
        json!(plan_on_text(days)),
        "plan-on wording"
    );
    assert_eq!(plan[0]["visible"], json!(true));
    let fields = shown_fields(session);
    assert_eq!(
        fields["plan-sentence"]["text"], outlook["plan_on"]["sentence"],
        "the plan-on sentence is the API's"
    );
    for competing in ["mean", "climatological-mean", "p10", "p90"] {
        assert!(
            !fields.contains_key(competing),
            "a second number: {competing}"
        );
    }
    let seen = session.script(VISIBLE_TEXT, json!([]));
    let text = seen["text"].as_str().unwrap();
    assert!(
        !text.contains("expect about"),
        "a competing 'expect about' number"
    );
    assert!(
        !text.contains("share of days"),
        "'share of days' on the page"
    );
    // Plurals (common practice in English): never "1 days", "fewer than 1 days".
    assert!(
        !text.contains(" 1 days") && !text.contains("(1 days"),
        "a wrong plural: {text}"
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
    let verdict = session.script(
        "const n = document.getElementById('verdict-skill');
         return { text: n.textContent, inside: Boolean(n.closest('details#how-checked')) }",
        json!([]),
    );
    assert_eq!(
        verdict["text"], outlook["skill"]["verdict_text"],
        "the verdict with its scores"
    );
    assert_eq!(
        verdict["inside"],
        json!(true),
        "the scores sit in the disclosure"
    );
    outlook
}

/// Score abbreviations (CRPSS, CRPS, RPS, BSS, SEDI, ...) appear only inside the "How this
/// was checked" disclosure: with every other disclosure open and that one closed, none is
/// visible; opening it shows the scores, each named in words.
fn check_scores_only_in_disclosure(session: &Session) {
    let abbreviations = [
        "CRPSS", "CRPS", "RPS", "BSS", "SEDI", "RMSE", "MAE", "AUC", "ROC",
    ];
    session.script(
        "document.querySelectorAll('details').forEach(d => { d.open = d.id !== 'how-checked'; })",
        json!([]),
    );
    let seen = session.script(VISIBLE_TEXT, json!([]));
    let text = seen["text"].as_str().unwrap();
    for abbr in abbreviations {
        let found = text
            .split(|c: char| !c.is_ascii_alphanumeric())
            .any(|word| word == abbr);
        assert!(!found, "{abbr} is visible outside the disclosure");
    }
    session.script(
        "document.getElementById('how-checked').open = true",
        json!([]),
    );
    let opened = session.script(VISIBLE_TEXT, json!([]));
    let text = opened["text"].as_str().unwrap();
    assert!(text.contains("CRPS"), "the disclosure holds the scores");
    // Each score is named in words once, with what 0 and 1 mean.
    let words = session.script(
        "return [...document.querySelectorAll('#how-checked dt')].map(n => [n.textContent, n.nextElementSibling.textContent])",
        json!([]),
    );
    let words = words.as_array().unwrap();
    assert!(words.len() >= 3, "scores named: {words:?}");
    let mut names: Vec<&str> = Vec::new();
    for pair in words {
        let (name, meaning) = (pair[0].as_str().unwrap(), pair[1].as_str().unwrap());
        assert!(!names.contains(&name), "{name} is explained twice");
        names.push(name);
        // What a perfect score is (0, or 1 for a skill score) and which way is worse.
        assert!(
            meaning.contains("0 ") && meaning.contains("worse"),
            "{name}: {meaning}"
        );
    }
    assert!(
        names.iter().any(|n| n.contains("CRPSS")) && names.iter().any(|n| n.contains("(CRPS)")),
        "the skill score and the CRPS are named: {names:?}"
    );
    session.script(
        "document.querySelectorAll('details').forEach(d => { d.open = false; })",
        json!([]),
    );
}

/// Every driver name shown on the page is explained in one short sentence right after its
/// first visible use. The names and the ways they are written are listed here, apart from
/// the page's own list (static/app.js `GLOSSARY`); the datum also by the gauges' datum codes.
fn check_glossary(session: &Session, service: SocketAddr) {
    let gauges = http(service, "GET", "/api/v1/gauges", None).json();
    let codes: Vec<String> = gauges["gauges"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|g| g["datum"].as_str().map(str::to_owned))
        .collect();
    let datum = format!(r"\bdatum\b|\b(?:{})\b", codes.join("|"));
    let terms = json!([
        ["enso", r"\bENSO\b|El Ni[ñn]o|La Ni[ñn]a", ""],
        ["mjo", r"\bMJO\b", ""],
        ["wind", r"\bwinds?\b", "i"],
        ["sea_level", r"\bsea[- ]level(?: trend)?\b", "i"],
        ["tide", r"\b(?:astronomical )?tides?\b", "i"],
        ["datum", datum, "i"],
    ]);
    let report = session.script(
        &format!(
            "const seen = (() => {{ {VISIBLE_TEXT} }})();
             return arguments[0].map(([term, pattern, flags]) => {{
               const m = new RegExp(pattern, flags).exec(seen.text);
               const g = seen.glossAt[term];
               return {{ term, used: m ? m[0] : null, end: m ? m.index + m[0].length : null,
                        gloss: g ? g.at : null, text: g ? g.text : null }};
             }});"
        ),
        json!([terms]),
    );
    let mut used = 0;
    for entry in report.as_array().unwrap() {
        let term = &entry["term"];
        if entry["used"].is_null() {
            continue;
        }
        used += 1;
        assert_eq!(
            entry["gloss"], entry["end"],
            "{term} is not explained at its first use: {entry}"
        );
        let text = entry["text"].as_str().unwrap();
        let inner = text.trim().trim_start_matches('(').trim_end_matches(')');
        assert!(
            (20..=160).contains(&inner.len()) && !inner.contains(". "),
            "{term}: one short sentence: {text:?}"
        );
    }
    assert!(used >= 3, "the page names its drivers: {report}");
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
                  items: [...box.querySelectorAll('li')].map(li => {
                    // The caution's own words, without the explanations of terms put in it.
                    const copy = li.cloneNode(true);
                    copy.querySelectorAll('.gloss').forEach(g => g.remove());
                    return copy.textContent; }) };",
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

/// The page at `width` x `height`: the headline (plan-on number and sentence) lies within
/// the first screen, no element is wider than the viewport, each chart fits its box with
/// every axis inside the canvas, count axes tick at whole numbers, and no two labels of the
/// gauge chooser overlap. Saves the first screen and the whole page as screenshots.
fn check_layout(session: &Session, width: u32, height: u32, name: &str) {
    set_viewport(session, width, height);
    // The page redraws its charts 150 ms after a resize.
    std::thread::sleep(Duration::from_millis(900));
    let report = session.script(
        "window.scrollTo(0, 0);
         const vw = document.documentElement.clientWidth, vh = window.innerHeight;
         const rect = (n) => { const r = n.getBoundingClientRect();
           return { top: r.top, bottom: r.bottom, left: r.left, right: r.right }; };
         const name = (n) => `${n.tagName}#${n.id}.${n.getAttribute('class') || ''}`;
         const wide = [...document.body.querySelectorAll('*')]
           .filter(n => n.checkVisibility() && !n.closest('.skip'))
           .map(n => ({ n, r: n.getBoundingClientRect() }))
           .filter(({ r }) => r.width > 0 && (r.right > vw + 0.5 || r.left < -0.5))
           .map(({ n, r }) => `${name(n)} ${r.left.toFixed(0)}..${r.right.toFixed(0)}`);
         const charts = tidetallyPage.charts();
         const whole = { counts: [0], history: [0, 1], drivers: [1] };
         const chartReport = ['counts', 'history', 'skill', 'drivers'].map(id => {
           const box = document.getElementById('chart-' + id);
           const canvas = box.querySelector('canvas');
           if (!canvas) return { id, drawn: false };
           const b = rect(box), c = rect(canvas), o = rect(box.querySelector('.u-over'));
           const u = charts[id];
           const ticks = (whole[id] || []).flatMap(i => (u.axes[i]._splits || []));
           return { id, drawn: true, box: b, canvas: c, over: o,
                    rightAxis: u.axes.some(a => a.side === 1 && a.show !== false),
                    fractional: ticks.filter(t => !Number.isInteger(t)),
                    ticks: ticks.length };
         });
         const labels = [...document.querySelectorAll('#gauge-plot text')].map(t => ({ text: t.textContent, r: rect(t) }));
         const overlaps = [];
         labels.forEach((a, i) => labels.slice(i + 1).forEach(b => {
           if (a.r.left < b.r.right - 0.5 && b.r.left < a.r.right - 0.5 && a.r.top < b.r.bottom - 0.5 && b.r.top < a.r.bottom - 0.5)
             overlaps.push(`${a.text} / ${b.text}`);
         }));
         return { vw, vh, scroll: document.documentElement.scrollWidth - vw, wide,
                  plan: rect(document.getElementById('plan')),
                  sentence: rect(document.getElementById('plan-sentence')),
                  charts: chartReport, labels: labels.length, overlaps };",
        json!([]),
    );
    let vh = report["vh"].as_f64().unwrap();
    for part in ["plan", "sentence"] {
        let r = &report[part];
        assert!(
            r["top"].as_f64().unwrap() >= 0.0 && r["bottom"].as_f64().unwrap() <= vh,
            "{name}: the headline's {part} is not on the first screen ({vh} px high): {r}"
        );
    }
    assert!(
        report["scroll"].as_f64().unwrap() <= 0.0,
        "{name}: sideways scrolling: {report}"
    );
    assert_eq!(
        report["wide"],
        json!([]),
        "{name}: elements wider than the viewport"
    );
    for chart in report["charts"].as_array().unwrap() {
        let id = &chart["id"];
        assert_eq!(chart["drawn"], json!(true), "{name}: {id} not drawn");
        let (b, c, o) = (&chart["box"], &chart["canvas"], &chart["over"]);
        let f = |v: &Value, k: &str| v[k].as_f64().unwrap();
        assert!(
            f(c, "left") >= f(b, "left") - 0.5 && f(c, "right") <= f(b, "right") + 0.5,
            "{name}: {id} is wider than its box: {chart}"
        );
        // Room for the tick labels of the left and bottom axes (and the right one where the
        // chart has one) inside the canvas: 20 px holds a line of 12 px text.
        assert!(
            f(o, "left") - f(c, "left") >= 20.0 && f(c, "bottom") - f(o, "bottom") >= 20.0,
            "{name}: {id} axes cut off: {chart}"
        );
        if chart["rightAxis"] == json!(true) {
            assert!(
                f(c, "right") - f(o, "right") >= 20.0,
                "{name}: {id} right axis cut off: {chart}"
            );
        }
        assert_eq!(
            chart["fractional"],
            json!([]),
            "{name}: {id} count axis ticks between whole days"
        );
    }
    assert!(report["labels"].as_u64().unwrap() >= 4, "{report}");
    assert_eq!(
        report["overlaps"],
        json!([]),
        "{name}: chooser labels overlap"
    );
    let dir = artifacts();
    std::fs::write(
        dir.join(format!("page-{name}-first-screen.png")),
        session.screenshot(),
    )
    .expect("screenshot");
    let full = session.script(
        "return Math.ceil(document.documentElement.scrollHeight)",
        json!([]),
    );
    set_viewport(
        session,
        width,
        full.as_u64().unwrap_or(3000).min(9000) as u32,
    );
    std::thread::sleep(Duration::from_millis(900));
    let overflow = session.script(
        "return document.documentElement.scrollWidth - document.documentElement.clientWidth",
        json!([]),
    );
    assert!(
        overflow.as_i64().unwrap() <= 0,
        "{name}: sideways scrolling on the whole page: {overflow}"
    );
    std::fs::write(dir.join(format!("page-{name}.png")), session.screenshot()).expect("screenshot");
}

/// Sizes the window so its viewport (not the outer window, which holds the browser's own
/// bars even when headless) is `width` x `height`.
fn set_viewport(session: &Session, width: u32, height: u32) {
    let (mut outer_w, mut outer_h) = (i64::from(width), i64::from(height));
    let mut inner = json!(null);
    // The window manager applies a size a moment later; correct by the measured difference.
    for _ in 0..10 {
        session.window_size(outer_w as u32, outer_h as u32);
        std::thread::sleep(Duration::from_millis(150));
        inner = session.script("return [window.innerWidth, window.innerHeight]", json!([]));
        let (w, h) = (inner[0].as_i64().unwrap(), inner[1].as_i64().unwrap());
        if (w, h) == (i64::from(width), i64::from(height)) {
            return;
        }
        outer_w += i64::from(width) - w;
        outer_h += i64::from(height) - h;
    }
    panic!("the viewport could not be sized to {width} x {height}: {inner}");
}

/// With the service's clock far past the demo season the page says the outlook is for a
/// past season and needs newer data; with the clock at the demo's date it does not.
fn check_freshness(session: &Session, service: &Service) {
    let url = format!("http://{}/#gauge=port-tamsin", service.addr);
    let notice = "const n = document.getElementById('stale-notice');
         return { visible: n.checkVisibility(), text: n.textContent,
                  fresh: document.getElementById('freshness').textContent }";
    for (today, stale) in [
        (chrono::NaiveDate::from_ymd_opt(2031, 6, 1).unwrap(), true),
        // The season is over the day after 2027-02-28 (valid_until).
        (chrono::NaiveDate::from_ymd_opt(2027, 3, 1).unwrap(), true),
        (chrono::NaiveDate::from_ymd_opt(2027, 2, 28).unwrap(), false),
        (demo_today(), false),
    ] {
        service.state.clock.set(Some(today));
        let clock = http(service.addr, "GET", "/api/v1/clock", None);
        assert_eq!(
            clock.json()["today"],
            json!(today.format("%Y-%m-%d").to_string())
        );
        assert!(
            clock.head.contains("cache-control: no-store"),
            "{}",
            clock.head
        );
        session.goto("about:blank");
        session.goto(&url);
        session.wait_for(&ready_for("port-tamsin"), WAIT);
        let shown = session.script(notice, json!([]));
        assert_eq!(shown["visible"], json!(stale), "today {today}: {shown}");
        if stale {
            let text = shown["text"].as_str().unwrap();
            assert!(
                text.contains("past season") && text.contains("newer"),
                "{text}"
            );
            std::fs::write(
                artifacts().join(format!("page-stale-{today}.png")),
                session.screenshot(),
            )
            .expect("screenshot");
        }
        // The chooser gives the record's last day as the same local day as the outlook.
        let facts = session.script(
            "return document.getElementById('gauge-facts').textContent",
            json!([]),
        );
        assert!(facts.as_str().unwrap().contains("to 2026-11-30"), "{facts}");
        // The issue date and the record's last day sit next to the headline.
        let fresh = shown["fresh"].as_str().unwrap();
        assert!(
            fresh.contains("issued") && fresh.contains("2026-11-30"),
            "{fresh}"
        );
    }
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

/// A headless Chromium session on the demo service, or `None` (with a skip message) when
/// chromium or chromedriver is missing outside CI; under CI a missing browser fails the test.
/// Fields drop in order: the session ends before its driver and the service stop.
struct Browser {
    session: Session,
    _driver: Driver,
    service: Service,
}

impl Browser {
    fn open(test: &str, profile: &str) -> Option<Browser> {
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
                "SKIPPED {test}: chromium and chromedriver not found \
                 (apt-get install chromium chromium-driver, or set CHROMIUM and CHROMEDRIVER)"
            );
            return None;
        };
        let service = start_service();
        let driver = start_driver(&driver);
        let profile = fresh_dir(profile);
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
        Some(Browser {
            session,
            _driver: driver,
            service,
        })
    }
}

#[test]
fn planner_page_in_headless_chromium() {
    let Some(browser) = Browser::open("planner_page_in_headless_chromium", "profile") else {
        return;
    };
    let Browser {
        session,
        _driver,
        service,
    } = browser;
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
    check_scores_only_in_disclosure(&session);
    check_glossary(&session, service.addr);
    check_console(&session);

    // Phones first, then a desktop width: the same checks at both.
    // The explanations follow the reading order when the layout changes with the width.
    check_layout(&session, 390, 844, "phone");
    check_charts(&session);
    check_glossary(&session, service.addr);
    check_layout(&session, 1300, 900, "desktop");
    check_charts(&session);
    check_glossary(&session, service.addr);

    let dir = artifacts();
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
    check_console(&session);

    // Each demo gauge: its one plan-on number and its explained words, at phone width.
    set_viewport(&session, 390, 844);
    for gauge in ["corrin-quay", "saltlow-sound", "wrenmouth-inlet"] {
        session.goto("about:blank");
        session.goto(&format!("http://{}/#gauge={gauge}", service.addr));
        session.wait_for(&ready_for(gauge), WAIT);
        check_numbers(&session, service.addr, gauge);
        check_scores_only_in_disclosure(&session);
        check_glossary(&session, service.addr);
    }
    check_freshness(&session, &service);
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
    let Some(browser) = Browser::open("season_calendar_in_headless_chromium", "calendar-profile")
    else {
        return;
    };
    let Browser {
        session,
        _driver,
        service,
    } = browser;
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
            .starts_with("date,weekday,predicted_high_m,chance,watch\r\n")
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
