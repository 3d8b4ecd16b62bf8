//! Logging at the bench on the run page: one form for a whole set (all or nothing, values kept
//! on a refusal), the script's path with its stamps and ids (a resend stores nothing twice),
//! event marks, the remembered order of the fields, a bounded readings table, and the live
//! stream that carries readings from any source.

mod common;

use std::time::Duration;

use axum::body::Body;
use axum::http::{Request, StatusCode, header};
use common::{HOST, ORIGIN, Page, Session, TestApp, form_body};
use eddybench::store::{RunId, UserRole};
use http_body_util::BodyExt;
use serde_json::{Value, json};
use tower::ServiceExt;

struct Bench {
    app: TestApp,
    session: Session,
    token: String,
    run_path: String,
    run_id: i64,
}

/// A build with six tank capacitors and an open run that logs the supply, the frequency and
/// the capacitors, started five minutes ago.
async fn bench() -> Bench {
    let app = TestApp::new().await;
    let session = app.signed_in("ada", UserRole::Editor).await;
    let user = app.store.user_by_name("ada").await.unwrap().unwrap();
    let token = app
        .store
        .create_token(user.id, "bench")
        .await
        .unwrap()
        .token;
    let api = |path: &str, body: Value| {
        let app = &app;
        let token = token.clone();
        let path = path.to_string();
        async move { app.post_json(&path, Some(&token), &body.to_string()).await }
    };
    let build = api("/api/v1/builds", json!({"name": "Bench heater"})).await;
    assert_eq!(build.status, StatusCode::CREATED, "{}", build.body);
    let revision = api(
        "/api/v1/builds/bench-heater/revisions",
        json!({"parts": {
            "tank_capacitor": {"capacitance_f": 3.3e-7, "count": 6, "max_temp_c": 85.0},
            "work_coil": {"inductance_h": 1.2e-6},
            "switch": {"vds_max_v": 100.0, "rds_on_ohm": 0.008}
        }}),
    )
    .await;
    assert_eq!(revision.status, StatusCode::CREATED, "{}", revision.body);
    let run = api(
        "/api/v1/builds/bench-heater/runs",
        json!({"revision": "r1", "load": "ferrous", "supply_voltage_v": 24.0,
               "channels": ["temp.tank_capacitor", "frequency", "supply_current", "supply_voltage"]}),
    )
    .await;
    assert_eq!(run.status, StatusCode::CREATED, "{}", run.body);
    let run_id = run.json()["id"].as_i64().unwrap();
    app.store
        .backdate_run_start(RunId(run_id), 300)
        .await
        .unwrap();
    Bench {
        app,
        session,
        token,
        run_path: format!("/builds/bench-heater/runs/{run_id}"),
        run_id,
    }
}

impl Bench {
    /// The form as the page's script sends it: asking for JSON.
    async fn post_script(&self, path: &str, fields: &[(&str, &str)]) -> Page {
        let mut all = vec![("csrf", self.session.csrf.as_str())];
        all.extend_from_slice(fields);
        self.app
            .send(
                Request::post(path)
                    .header(header::HOST, HOST)
                    .header(header::ORIGIN, ORIGIN)
                    .header(header::COOKIE, &self.session.cookie)
                    .header(header::ACCEPT, "application/json")
                    .header(header::CONTENT_TYPE, "application/x-www-form-urlencoded")
                    .body(Body::from(form_body(&all)))
                    .unwrap(),
            )
            .await
    }

    async fn stored(&self) -> Vec<(f64, String, f64)> {
        self.app
            .store
            .current_readings(RunId(self.run_id))
            .await
            .unwrap()
            .into_iter()
            .map(|r| (r.t_s, r.channel, r.value))
            .collect()
    }
}

#[tokio::test]
async fn one_submit_logs_a_whole_set_in_the_order_the_bench_reads_it() {
    let b = bench().await;
    let page = b.app.get(&b.run_path, Some(&b.session)).await;
    let names: Vec<String> = page
        .html()
        .select(&scraper::Selector::parse("#entry-set input[name^='value.']").unwrap())
        .map(|e| e.value().attr("name").unwrap().to_string())
        .collect();
    assert_eq!(
        names,
        [
            "value.supply_voltage",
            "value.supply_current",
            "value.frequency",
            "value.temp.tank_capacitor"
        ],
        "electrical first, then the parts' temperatures"
    );
    assert_eq!(
        page.attr("#v-frequency", "inputmode").as_deref(),
        Some("decimal")
    );
    assert_eq!(
        page.attr("#v-supply_voltage", "enterkeyhint").as_deref(),
        Some("next")
    );

    let logged = b
        .app
        .post_form(
            &format!("{}/readings", b.run_path),
            &b.session,
            &[
                ("value.supply_voltage", "24.1"),
                ("value.supply_current", "8.2"),
                ("value.frequency", "152"),
                ("value.temp.tank_capacitor", "41.5"),
            ],
        )
        .await;
    assert_eq!(logged.status, StatusCode::SEE_OTHER, "{}", logged.body);
    let page = b.app.get(&logged.location(), Some(&b.session)).await;
    let confirm = page.select_texts("#entry-confirm").concat();
    assert!(confirm.starts_with("logged 4 at 5:0"), "{confirm}");
    let stored = b.stored().await;
    assert_eq!(stored.len(), 4);
    assert!(
        stored
            .iter()
            .all(|(t, _, _)| (*t - stored[0].0).abs() < 1e-9 && *t >= 300.0),
        "without script the set is stamped at the submit: {stored:?}"
    );
    assert!(stored.contains(&(stored[0].0, "frequency".into(), 152e3)));

    // A field moved earlier stays earlier for every run of the revision.
    let moved = b
        .app
        .post_form(
            &format!("{}/entry-order", b.run_path),
            &b.session,
            &[("earlier", "temp.tank_capacitor")],
        )
        .await;
    assert_eq!(moved.status, StatusCode::SEE_OTHER);
    let page = b.app.get(&b.run_path, Some(&b.session)).await;
    let order: Vec<String> = page
        .html()
        .select(&scraper::Selector::parse("#entry-set .entry").unwrap())
        .map(|e| e.value().attr("data-channel").unwrap().to_string())
        .collect();
    assert_eq!(
        order,
        [
            "supply_voltage",
            "supply_current",
            "temp.tank_capacitor",
            "frequency"
        ]
    );
    let stranger = b
        .app
        .post_form(
            &format!("{}/entry-order", b.run_path),
            &b.session,
            &[("earlier", "water_temp")],
        )
        .await;
    assert_eq!(stranger.status, StatusCode::UNPROCESSABLE_ENTITY);
}

#[tokio::test]
async fn a_bad_field_refuses_the_whole_set_and_keeps_what_was_typed() {
    let b = bench().await;
    let refused = b
        .app
        .post_form(
            &format!("{}/readings", b.run_path),
            &b.session,
            &[
                ("value.supply_voltage", "24.1"),
                ("value.supply_current", "8,2 A!"),
                ("value.temp.tank_capacitor", "4100"),
            ],
        )
        .await;
    assert_eq!(refused.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(
        refused.attr("#v-supply_voltage", "value").as_deref(),
        Some("24.1")
    );
    assert_eq!(
        refused.attr("#v-supply_current", "value").as_deref(),
        Some("8,2 A!")
    );
    assert_eq!(
        refused.attr("#v-supply_current", "aria-invalid").as_deref(),
        Some("true")
    );
    assert_eq!(refused.count("#err-supply_current"), 1);
    assert_eq!(refused.count("[id='err-temp.tank_capacitor']"), 1);
    assert_eq!(
        refused.count("#err-supply_voltage"),
        0,
        "the good field is fine"
    );
    for (fields, field) in [
        (vec![("value.frequency", " ")], "#set-error"),
        (
            vec![("value.frequency", "150"), ("time", "9:00")],
            "#time-error",
        ),
        (
            vec![("value.frequency", "150"), ("time", "-0:10")],
            "#time-error",
        ),
        (vec![("value.water_temp", "20")], "#set-error"),
    ] {
        let page = b
            .app
            .post_form(&format!("{}/readings", b.run_path), &b.session, &fields)
            .await;
        assert_eq!(page.status, StatusCode::UNPROCESSABLE_ENTITY, "{fields:?}");
        assert_eq!(page.count(field), 1, "{fields:?}");
    }
    assert_eq!(
        b.app.count_rows("readings").await,
        0,
        "a set is all or nothing"
    );
}

#[tokio::test]
async fn the_script_stamps_each_value_and_a_resent_set_is_stored_once() {
    let b = bench().await;
    let path = format!("{}/readings", b.run_path);
    let set = [
        ("value.supply_voltage", "24.0"),
        ("at.supply_voltage", "250.25"),
        ("id.supply_voltage", "ph1-a"),
        ("value.temp.tank_capacitor", "44"),
        ("at.temp.tank_capacitor", "254.5"),
        ("id.temp.tank_capacitor", "ph1-b"),
    ];
    let first = b.post_script(&path, &set).await;
    assert_eq!(first.status, StatusCode::OK, "{}", first.body);
    let answer = first.json();
    assert_eq!(
        (answer["logged"].as_u64(), answer["already_stored"].as_u64()),
        (Some(2), Some(0))
    );
    assert_eq!(answer["at"], "4:15");
    assert!(answer["server_ms"].as_i64().unwrap() > 1_700_000_000_000);
    let mut stored = b.stored().await;
    stored.sort_by(|a, b| a.0.total_cmp(&b.0));
    assert_eq!(
        stored,
        [
            (250.25, "supply_voltage".into(), 24.0),
            (254.5, "temp.tank_capacitor".into(), 44.0)
        ],
        "each value at the moment its field was filled in, not at the send"
    );

    // The phone lost the answer and sends the same entry again.
    let again = b.post_script(&path, &set).await;
    assert_eq!(again.status, StatusCode::OK);
    assert_eq!(
        (
            again.json()["logged"].as_u64(),
            again.json()["already_stored"].as_u64()
        ),
        (Some(0), Some(2))
    );
    assert_eq!(b.app.count_rows("readings").await, 2);

    // The same id with another value is refused, not overwritten.
    let reused = b
        .post_script(
            &path,
            &[
                ("value.supply_voltage", "30"),
                ("at.supply_voltage", "250.25"),
                ("id.supply_voltage", "ph1-a"),
            ],
        )
        .await;
    assert_eq!(reused.status, StatusCode::CONFLICT, "{}", reused.body);
    assert!(reused.json()["error"].as_str().unwrap().contains("ph1-a"));

    // A refusal to the script is JSON naming the fields.
    let bad = b
        .post_script(
            &path,
            &[("value.frequency", "fast"), ("at.frequency", "1e12")],
        )
        .await;
    assert_eq!(bad.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(bad.json()["errors"][0]["field"], "frequency");
    assert_eq!(b.app.count_rows("readings").await, 2);
}

#[tokio::test]
async fn marks_go_on_the_table_the_charts_and_the_export() {
    let b = bench().await;
    let readings = (0..10)
        .map(|i| json!({"t_s": 20.0 * f64::from(i), "channel": "temp.tank_capacitor", "value": 25.0 + f64::from(i)}))
        .collect::<Vec<_>>();
    let sent = b
        .app
        .post_json(
            &format!("/api/v1/runs/{}/readings", b.run_id),
            Some(&b.token),
            &Value::Array(readings).to_string(),
        )
        .await;
    assert_eq!(sent.status, StatusCode::CREATED);
    let marked = b
        .app
        .post_form(
            &format!("{}/marks", b.run_path),
            &b.session,
            &[("text", "fan on"), ("time", "1:30")],
        )
        .await;
    assert_eq!(marked.status, StatusCode::SEE_OTHER, "{}", marked.body);
    let by_script = b
        .post_script(
            &format!("{}/marks", b.run_path),
            &[("text", "workpiece in"), ("at", "200"), ("id", "ph-m1")],
        )
        .await;
    assert_eq!(by_script.json()["marked"], "workpiece in");
    let twice = b
        .post_script(
            &format!("{}/marks", b.run_path),
            &[("text", "workpiece in"), ("at", "200"), ("id", "ph-m1")],
        )
        .await;
    assert_eq!(twice.json()["already_stored"], true);
    assert_eq!(b.app.count_rows("event_marks").await, 2);

    let page = b.app.get(&b.run_path, Some(&b.session)).await;
    let marks = page.select_texts("table.readings tr.mark td");
    assert!(
        marks.windows(3).any(|w| w == ["1:30", "Mark", "fan on"]),
        "{marks:?}"
    );
    assert!(
        page.select_texts("#marks li")
            .concat()
            .contains("workpiece in")
    );
    let chart = page.select_texts("figure svg text").join(" | ");
    assert!(chart.contains("fan on"), "marks label the charts: {chart}");

    for (text, time) in [("", ""), ("two\nlines", ""), ("fan off", "99:00")] {
        let refused = b
            .app
            .post_form(
                &format!("{}/marks", b.run_path),
                &b.session,
                &[("text", text), ("time", time)],
            )
            .await;
        assert_eq!(refused.status, StatusCode::UNPROCESSABLE_ENTITY, "{text:?}");
        assert_eq!(refused.count("#mark-error"), 1);
    }
    assert_eq!(b.app.count_rows("event_marks").await, 2);

    let csv = b
        .app
        .get("/builds/bench-heater/export/marks.csv", Some(&b.session))
        .await;
    assert!(csv.body.contains("fan on"), "{}", csv.body);
}

#[tokio::test]
async fn a_long_run_shows_the_latest_readings_a_page_at_a_time() {
    let b = bench().await;
    let readings = (0..100)
        .map(|i| json!({"t_s": f64::from(i), "channel": "supply_current", "value": 8.0 + f64::from(i) / 100.0}))
        .collect::<Vec<_>>();
    b.app
        .post_json(
            &format!("/api/v1/runs/{}/readings", b.run_id),
            Some(&b.token),
            &Value::Array(readings).to_string(),
        )
        .await;
    let page = b.app.get(&b.run_path, Some(&b.session)).await;
    assert_eq!(page.count("table.readings tbody tr"), 40);
    assert_eq!(page.select_texts("#reading-count"), ["100"]);
    assert_eq!(
        page.select_texts("table.readings tbody tr td:first-child")[0],
        "1:39"
    );
    let last = b
        .app
        .get(&format!("{}?page=3", b.run_path), Some(&b.session))
        .await;
    assert_eq!(last.count("table.readings tbody tr"), 20);
    assert_eq!(
        last.select_texts("table.readings tbody tr td:first-child")[19],
        "0:00"
    );
    assert_eq!(last.count(".pager a[rel=prev]"), 1);
    let beyond = b
        .app
        .get(&format!("{}?page=99", b.run_path), Some(&b.session))
        .await;
    assert_eq!(beyond.count("table.readings tbody tr"), 20, "the last page");
}

/// The events of a run as a script that does not stream sees them: one update.
#[tokio::test]
async fn the_event_stream_catches_up_from_the_last_reading_seen() {
    let b = bench().await;
    let path = format!("/api/v1/runs/{}/readings", b.run_id);
    for t_s in [10.0, 20.0] {
        let body =
            json!([{"t_s": t_s, "channel": "temp.tank_capacitor", "value": 30.0 + t_s / 10.0}]);
        b.app
            .post_json(&path, Some(&b.token), &body.to_string())
            .await;
    }
    let first_id = b.app.store.current_readings(RunId(b.run_id)).await.unwrap()[0]
        .id
        .0;
    let request = Request::get(format!("{}/events", b.run_path))
        .header(header::HOST, HOST)
        .header(header::COOKIE, &b.session.cookie)
        .header("last-event-id", first_id.to_string())
        .body(Body::empty())
        .unwrap();
    let page = b.app.send(request).await;
    assert_eq!(page.status, StatusCode::OK);
    let update = sse_data(&page.body);
    let readings = update["readings"].as_array().unwrap();
    assert_eq!(
        readings.len(),
        1,
        "only what came after {first_id}: {update}"
    );
    assert_eq!(readings[0]["time"], "0:20");
    assert_eq!(readings[0]["value"], "32 °C");
    assert_eq!(update["open"], true);
    assert_eq!(update["reading_count"], 2);
    assert!(
        page.body.contains(&format!("id: {}", first_id + 1)),
        "{}",
        page.body
    );
}

/// The data of the first event of a server-sent-events body.
fn sse_data(body: &str) -> Value {
    let data: String = body
        .lines()
        .filter_map(|l| l.strip_prefix("data: ").or_else(|| l.strip_prefix("data:")))
        .take(1)
        .collect();
    serde_json::from_str(&data).unwrap_or_else(|e| panic!("{e}: {body}"))
}

/// A reading posted through the API reaches an open page's stream within a second.
#[tokio::test]
async fn a_reading_from_the_api_reaches_the_live_stream_within_a_second() {
    let b = bench().await;
    let request = Request::get(format!("{}/events?after=0", b.run_path))
        .header(header::HOST, HOST)
        .header(header::COOKIE, &b.session.cookie)
        .header(header::ACCEPT, "text/event-stream")
        .body(Body::empty())
        .unwrap();
    let response = b.app.router.clone().oneshot(request).await.unwrap();
    assert_eq!(response.status(), StatusCode::OK);
    assert_eq!(
        response.headers()[header::CONTENT_TYPE],
        "text/event-stream"
    );
    let mut body = response.into_body();
    let mut next_event = async || loop {
        let frame = tokio::time::timeout(Duration::from_secs(1), body.frame())
            .await
            .expect("an event within a second")
            .unwrap()
            .unwrap();
        if let Ok(data) = frame.into_data() {
            let text = String::from_utf8_lossy(&data).into_owned();
            if text.contains("data:") {
                return sse_data(&text);
            }
        }
    };
    let first = next_event().await;
    assert_eq!(first["readings"].as_array().unwrap().len(), 0);
    let sent = b
        .app
        .post_json(
            &format!("/api/v1/runs/{}/readings", b.run_id),
            Some(&b.token),
            &json!([{"t_s": 42.0, "channel": "temp.tank_capacitor", "value": 47.5}]).to_string(),
        )
        .await;
    assert_eq!(sent.status, StatusCode::CREATED);
    let update = next_event().await;
    assert_eq!(update["readings"][0]["value"], "47.5 °C");
    assert_eq!(update["readings"][0]["time"], "0:42");
    assert!(
        !update["live"].as_array().unwrap().is_empty(),
        "the margins come with the reading: {update}"
    );
}
