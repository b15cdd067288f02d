//! One writer per gauge and fair shares, on a real loopback socket: an upload arriving while
//! a refit is between fitting and installing waits for it (made deterministic by the refit's
//! test hook); on-demand outlooks queue in their own bounded pool and never hold up a refit;
//! and uploads, refits and reads of two gauges interleaved leave each gauge serving its newest
//! stored model and the other gauge's outlook byte-identical.
#![allow(clippy::unwrap_used)]

mod support;

use std::sync::{Arc, Mutex, mpsc};
use std::time::{Duration, Instant};

use support::demo::{demo_folder, seeded_state, seeded_state_with};
use support::socket::{Reply, call, serve};
use support::*;
use tidetally_server::pool::Pool;
use tidetally_server::{AppState, state, store};

fn ok(reply: &Reply, what: &str) {
    assert_eq!(reply.status, 200, "{what}: {} {}", reply.head, reply.body);
}

/// The demo TOML with other exceedance days (a change of input, so a refit fits anew).
fn demo_toml_with(data: &std::path::Path, id: &str, exceed: &str) -> Vec<u8> {
    std::fs::read_to_string(data.join("gauges/port-tamsin.toml"))
        .unwrap()
        .replace("id = \"port-tamsin\"", &format!("id = \"{id}\""))
        .replace(
            "exceed_days = [3, 5, 10]",
            &format!("exceed_days = {exceed}"),
        )
        .into_bytes()
}

/// The newest stored fit of a gauge.
async fn newest_stored(state: &Arc<AppState>, id: &'static str) -> String {
    state
        .store
        .call(move |c| store::latest_model(c, id))
        .await
        .unwrap()
        .unwrap()
        .model_version
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn an_upload_during_a_refit_waits_and_never_puts_the_old_model_back() {
    let data = demo_folder("race");
    let (reached_tx, reached) = mpsc::channel::<()>();
    let (go, go_rx) = mpsc::channel::<()>();
    let hook_channels = Mutex::new((reached_tx, go_rx));
    let state = seeded_state_with(&data, move |mut s| {
        s.refit_hook = Some(Box::new(move |_| {
            let channels = hook_channels.lock().unwrap();
            let _ = channels.0.send(());
            let _ = channels.1.recv_timeout(Duration::from_secs(30));
        }));
        s
    })
    .await;
    let (addr, _stop, _server) = serve(Arc::clone(&state)).await;
    let before = newest_stored(&state, "port-tamsin").await;
    let r = call(
        addr,
        "PUT",
        "/api/v1/gauges/port-tamsin".into(),
        Some(TOKEN),
        demo_toml_with(&data, "port-tamsin", "[2, 4, 8]"),
    )
    .await;
    ok(&r, "new TOML");
    let refit = tokio::spawn(call(
        addr,
        "POST",
        "/api/v1/gauges/port-tamsin/refit".into(),
        Some(TOKEN),
        vec![],
    ));
    tokio::task::spawn_blocking(move || reached.recv_timeout(Duration::from_secs(60)).unwrap())
        .await
        .unwrap();
    // The refit has fitted and not yet stored or installed: an upload now waits its turn.
    let upload = tokio::spawn(call(
        addr,
        "PUT",
        "/api/v1/gauges/port-tamsin/levels".into(),
        Some(TOKEN),
        b"time,level\n2026-11-30T12:00:00Z,1.0\n".to_vec(),
    ));
    tokio::time::sleep(Duration::from_millis(300)).await;
    assert!(
        !upload.is_finished(),
        "the upload did not wait for the refit"
    );
    go.send(()).unwrap();
    ok(&refit.await.unwrap(), "refit");
    ok(&upload.await.unwrap(), "upload");

    let served = call(
        addr,
        "GET",
        "/api/v1/gauges/port-tamsin/outlook".into(),
        None,
        vec![],
    )
    .await;
    ok(&served, "outlook");
    let served = served.json()["model_version"].as_str().unwrap().to_owned();
    let newest = newest_stored(&state, "port-tamsin").await;
    assert_ne!(newest, before, "the refit stored a new model");
    assert_eq!(served, newest, "the refit's model serves");
    // The model was stored with its issued outlook in one transaction.
    let issued = call(
        addr,
        "GET",
        "/api/v1/outlooks/issued?gauge=port-tamsin&limit=1".into(),
        None,
        vec![],
    )
    .await
    .json();
    assert_eq!(issued["issued"][0]["model_version"], newest.as_str());
    // A restart serves the same model.
    let restarted = AppState::new(state.store.clone(), None, Duration::from_secs(60));
    let loader = Arc::clone(&restarted);
    tokio::task::spawn_blocking(move || state::load_catalog(&loader))
        .await
        .unwrap()
        .unwrap();
    let entry = restarted.catalog.get("port-tamsin").unwrap();
    assert_eq!(entry.model.as_ref().unwrap().results.model_version, newest);
    let _ = std::fs::remove_dir_all(&data);
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn on_demand_outlooks_queue_in_their_own_bounded_pool() {
    let data = demo_folder("pool");
    let state = seeded_state_with(&data, |mut s| {
        s.on_demand = Pool::new(1, 0);
        s
    })
    .await;
    let (addr, _stop, _server) = serve(Arc::clone(&state)).await;
    // Every on-demand run is busy (the test holds the only permit): a further one is refused
    // at once with Retry-After, and a refit does not wait behind it.
    let held = state.on_demand.enter().await.unwrap();
    let r = call(
        addr,
        "GET",
        "/api/v1/gauges/port-tamsin/outlook?season=2010-DJF".into(),
        None,
        vec![],
    )
    .await;
    assert_eq!(r.status, 503, "{}", r.body);
    assert_eq!(r.json()["type"], "/problems/busy");
    assert!(r.header("retry-after").is_some(), "{}", r.head);
    let r = call(
        addr,
        "PUT",
        "/api/v1/gauges/port-tamsin".into(),
        Some(TOKEN),
        demo_toml_with(&data, "port-tamsin", "[2, 4]"),
    )
    .await;
    ok(&r, "TOML");
    let r = call(
        addr,
        "POST",
        "/api/v1/gauges/port-tamsin/refit".into(),
        Some(TOKEN),
        vec![],
    )
    .await;
    ok(&r, "refit while the on-demand pool is full");
    drop(held);
    // Seasons the record cannot support are refused without a pipeline run.
    let r = call(
        addr,
        "GET",
        "/api/v1/gauges/port-tamsin/outlook?season=1850-DJF".into(),
        None,
        vec![],
    )
    .await;
    assert_eq!(r.status, 404, "{}", r.body);
    let _ = std::fs::remove_dir_all(&data);
}

/// Uploads, refits and reads of two gauges interleaved for a few seconds (bounded to keep
/// the suite quick on two shared cores): each gauge serves its newest stored model at the
/// end, and the gauge left alone serves byte-identical outlooks throughout.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn interleaved_uploads_refits_and_reads_of_two_gauges() {
    let data = demo_folder("interleaved");
    // A second gauge: the demo gauge under another id, same files.
    let second = std::fs::read_to_string(data.join("gauges/port-tamsin.toml"))
        .unwrap()
        .replace("id = \"port-tamsin\"", "id = \"tamsin-two\"");
    std::fs::write(data.join("gauges/tamsin-two.toml"), second).unwrap();
    let state = seeded_state(&data).await;
    let (addr, _stop, _server) = serve(Arc::clone(&state)).await;
    let outlook_b = || {
        call(
            addr,
            "GET",
            "/api/v1/gauges/tamsin-two/outlook".into(),
            None,
            vec![],
        )
    };
    let b_before = outlook_b().await;
    ok(&b_before, "b outlook");

    let deadline = Instant::now() + Duration::from_secs(4);
    let mut round = 0u32;
    while Instant::now() < deadline && round < 6 {
        round += 1;
        let exceed = format!("[{}, {}]", round + 1, round + 5);
        let toml = call(
            addr,
            "PUT",
            "/api/v1/gauges/port-tamsin".into(),
            Some(TOKEN),
            demo_toml_with(&data, "port-tamsin", &exceed),
        );
        let levels = call(
            addr,
            "PUT",
            "/api/v1/gauges/port-tamsin/levels".into(),
            Some(TOKEN),
            format!("time,level\n2026-11-{:02}T12:00:00Z,1.0\n", round + 1).into_bytes(),
        );
        let refit = call(
            addr,
            "POST",
            "/api/v1/gauges/port-tamsin/refit".into(),
            Some(TOKEN),
            vec![],
        );
        let read_a = call(
            addr,
            "GET",
            "/api/v1/gauges/port-tamsin/outlook".into(),
            None,
            vec![],
        );
        let read_b = outlook_b();
        let seasons_b = call(
            addr,
            "GET",
            "/api/v1/gauges/tamsin-two/seasons".into(),
            None,
            vec![],
        );
        let (t, l, f, a, b, s) = tokio::join!(toml, levels, refit, read_a, read_b, seasons_b);
        ok(&t, "toml");
        ok(&l, "levels");
        ok(&f, "refit");
        ok(&a, "read a");
        ok(&s, "seasons b");
        ok(&b, "read b");
        assert_eq!(b.body, b_before.body, "the other gauge's outlook changed");
    }
    // The last writes, then one refit that sees them all.
    let r = call(
        addr,
        "POST",
        "/api/v1/gauges/port-tamsin/refit".into(),
        Some(TOKEN),
        vec![],
    )
    .await;
    ok(&r, "final refit");
    let served = call(
        addr,
        "GET",
        "/api/v1/gauges/port-tamsin/outlook".into(),
        None,
        vec![],
    )
    .await;
    assert_eq!(
        served.json()["model_version"].as_str().unwrap(),
        newest_stored(&state, "port-tamsin").await
    );
    assert_eq!(
        outlook_b().await.body,
        b_before.body,
        "the other gauge's outlook changed"
    );
    assert_eq!(
        state
            .catalog
            .get("tamsin-two")
            .unwrap()
            .model
            .as_ref()
            .unwrap()
            .results
            .model_version,
        newest_stored(&state, "tamsin-two").await
    );
    let _ = std::fs::remove_dir_all(&data);
}
