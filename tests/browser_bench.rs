//! The bench loop in the real browser at 390 × 844: one tap logs a set; readings sent by a
//! script appear on the open page without a reload and the countdown ticks by itself; with the
//! network cut (chromedriver's network conditions) sets wait in the browser and, once it is
//! back, arrive exactly once with the time they were typed, not the time they were sent.

#[path = "common/browser.rs"]
mod browser;
mod common;

use std::time::{Duration, Instant, SystemTime, UNIX_EPOCH};

use axum::body::Bytes;
use axum::http::{Method, Request, header};
use browser::{
    Driver, Served, click, click_and_load, fill, horizontal_overflow_px, screenshot, texts,
    wait_for_texts,
};
use eddybench::secrets::hash_password;
use eddybench::store::{RunId, UserRole};
use http_body_util::{BodyExt, Full};
use hyper_util::client::legacy::Client as HttpClient;
use hyper_util::rt::TokioExecutor;
use serde_json::{Value, json};

/// A JSON request to a local server (the app's API, or chromedriver itself).
async fn send_json(method: Method, url: &str, token: Option<&str>, body: Value) -> Value {
    let client = HttpClient::builder(TokioExecutor::new()).build_http::<Full<Bytes>>();
    let mut request = Request::builder()
        .method(method)
        .uri(url)
        .header(header::CONTENT_TYPE, "application/json");
    if let Some(token) = token {
        request = request.header(header::AUTHORIZATION, format!("Bearer {token}"));
    }
    let request = request
        .body(Full::new(Bytes::from(body.to_string())))
        .unwrap();
    let response = client.request(request).await.unwrap();
    let status = response.status();
    let bytes = response.into_body().collect().await.unwrap().to_bytes();
    let answer: Value = serde_json::from_slice(&bytes).unwrap_or(Value::Null);
    assert!(status.is_success(), "{url}: {status} {answer}");
    answer
}

/// Cuts or restores the browser's network (ChromeDriver's network conditions command).
async fn set_offline(driver: &Driver, client: &fantoccini::Client, offline: bool) {
    let session = client.session_id().await.unwrap().unwrap();
    send_json(
        Method::POST,
        &format!(
            "{}/session/{session}/chromium/network_conditions",
            driver.url
        ),
        None,
        json!({"network_conditions": {
            "offline": offline, "latency": 0,
            "download_throughput": 10_000_000, "upload_throughput": 10_000_000
        }}),
    )
    .await;
}

fn now_s() -> f64 {
    SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .unwrap()
        .as_secs_f64()
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_phone_logs_sets_live_and_through_a_dropped_network() {
    let served = Served::start().await;
    let user = served
        .store
        .create_user(
            "ada",
            "Ada",
            UserRole::Editor,
            &hash_password(common::PASSWORD),
        )
        .await
        .unwrap();
    let token = served
        .store
        .create_token(user, "bench")
        .await
        .unwrap()
        .token;
    let api = |path: &str, body: Value| {
        let url = served.url(path);
        let token = token.clone();
        async move { send_json(Method::POST, &url, Some(&token), body).await }
    };
    api("/api/v1/builds", json!({"name": "Phone rig"})).await;
    api(
        "/api/v1/builds/phone-rig/revisions",
        json!({"parts": {
            "tank_capacitor": {"capacitance_f": 3.3e-7, "count": 6, "max_temp_c": 85.0},
            "work_coil": {"inductance_h": 1.2e-6},
            "switch": {"vds_max_v": 100.0, "rds_on_ohm": 0.008}
        }}),
    )
    .await;
    let run = api(
        "/api/v1/builds/phone-rig/runs",
        json!({"revision": "r1", "load": "ferrous", "supply_voltage_v": 24.0,
               "channels": ["supply_voltage", "supply_current", "frequency", "temp.tank_capacitor"]}),
    )
    .await;
    let run_id = run["id"].as_i64().unwrap();
    served
        .store
        .backdate_run_start(RunId(run_id), 300)
        .await
        .unwrap();
    let started_at = served
        .store
        .run_by_id(RunId(run_id))
        .await
        .unwrap()
        .started_at as f64;
    let run_url = served.url(&format!("/builds/phone-rig/runs/{run_id}"));

    let driver = Driver::start();
    let profile = tempfile::tempdir().unwrap();
    let client = driver.phone(profile.path()).await;
    client.goto(&served.url("/login")).await.unwrap();
    fill(&client, "input[name=name]", "ada").await;
    fill(&client, "input[name=password]", common::PASSWORD).await;
    click_and_load(&client, "form[action='/login'] button[type=submit]").await;
    client.goto(&run_url).await.unwrap();
    wait_for_texts(&client, "#live-status", 10, |t| t.concat() == "live").await;

    // One set of four channels, one tap.
    fill(&client, "#v-supply_voltage", "24.0").await;
    fill(&client, "#v-supply_current", "8.0").await;
    fill(&client, "#v-frequency", "150").await;
    // On the warm-up curve the script sends next (about 76 °C five minutes in).
    fill(&client, "#v-temp\\.tank_capacitor", "76").await;
    click(&client, "#entry-set button.log").await;
    wait_for_texts(&client, "#entry-confirm", 10, |t| {
        t.concat().starts_with("logged 4 at")
    })
    .await;
    wait_for_texts(&client, "table.readings span.value", 10, |v| v.len() == 4).await;
    let focused = client
        .execute("return document.activeElement.id;", vec![])
        .await
        .unwrap();
    assert_eq!(
        focused, "v-supply_voltage",
        "focus returns to the first field"
    );
    assert!(
        horizontal_overflow_px(&client).await <= 0,
        "the run page fits the phone"
    );

    // A script's readings (a first-order warm-up, heading past the 85 °C limit) appear within
    // a second, without a reload, with a prediction that counts down.
    let warm_up: Vec<Value> = (0..=30)
        .map(|k| {
            let t_s = 10.0 * f64::from(k);
            json!({"t_s": t_s, "channel": "temp.tank_capacitor",
                   "value": 25.0 + 65.0 * (1.0 - (-t_s / 200.0).exp())})
        })
        .collect();
    api(
        &format!("/api/v1/runs/{run_id}/readings"),
        Value::Array(warm_up),
    )
    .await;
    let sent = Instant::now();
    wait_for_texts(&client, "#reading-count", 5, |t| t.concat() == "35").await;
    assert!(
        sent.elapsed() < Duration::from_secs(1),
        "the script's readings took {:?} to appear",
        sent.elapsed()
    );
    let first = wait_for_texts(&client, "#live-rows .countdown", 5, |t| {
        t.concat().starts_with("limit in about")
    })
    .await;
    let later = wait_for_texts(&client, "#live-rows .countdown", 5, |t| *t != first[..]).await;
    assert!(later.concat().starts_with("limit in about"), "{later:?}");
    screenshot(&client, "bench-live-phone").await;

    // The wifi drops: three sets over more than ten seconds wait in the browser.
    set_offline(&driver, &client, true).await;
    let mut typed = Vec::new();
    for (k, (volts, amps)) in [("24.1", "8.1"), ("24.2", "8.2"), ("24.3", "8.3")]
        .into_iter()
        .enumerate()
    {
        if k > 0 {
            tokio::time::sleep(Duration::from_secs(5)).await;
        }
        fill(&client, "#v-supply_voltage", volts).await;
        let volts_at = now_s() - started_at;
        fill(&client, "#v-supply_current", amps).await;
        let amps_at = now_s() - started_at;
        click(&client, "#entry-set button.log").await;
        typed.push(("supply_voltage", volts.parse::<f64>().unwrap(), volts_at));
        typed.push(("supply_current", amps.parse::<f64>().unwrap(), amps_at));
    }
    let waiting = wait_for_texts(&client, "#entry-queue", 5, |t| {
        t.concat() == "waiting to send (3)"
    })
    .await;
    assert_eq!(waiting, ["waiting to send (3)"]);
    wait_for_texts(&client, "#live-status", 10, |t| {
        t.concat().starts_with("not live")
    })
    .await;
    screenshot(&client, "bench-offline-phone").await;
    // A reload while offline (the browser shows its own page); the queue is in storage.
    let _ = client.refresh().await;
    tokio::time::sleep(Duration::from_secs(3)).await;

    set_offline(&driver, &client, false).await;
    client.goto(&run_url).await.unwrap();
    wait_for_texts(&client, "#entry-queue", 15, |t| t.concat().is_empty()).await;
    let stored = served.store.current_readings(RunId(run_id)).await.unwrap();
    for (channel, value, at) in typed {
        let matches: Vec<_> = stored
            .iter()
            .filter(|r| r.channel == channel && r.value == value)
            .collect();
        assert_eq!(matches.len(), 1, "{channel} {value} arrived exactly once");
        assert!(
            (matches[0].t_s - at).abs() < 1.0,
            "{channel} {value} is stamped {} s, typed at {at:.1} s",
            matches[0].t_s
        );
    }
    assert_eq!(stored.len(), 4 + 31 + 6);
    let values = texts(&client, "table.readings span.value").await;
    assert!(values.contains(&"24.3 V".to_string()), "{values:?}");
    client.close().await.unwrap();
}
