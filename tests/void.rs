//! Taking mistakes back: a wrong reading is voided with a reason from the run page or the API,
//! leaves the analysis, stays in the history and the export, and is restored; and one table of
//! bad readings sent through every door (the run page, the JSON API, a CSV upload) gets the same
//! field refused with nothing saved.

mod common;

use axum::body::Body;
use axum::http::{Request, StatusCode, header};
use common::{HOST, Page, Session, TestApp};
use eddybench::store::{RunId, UserRole};
use serde_json::{Value, json};

async fn post_json(app: &TestApp, path: &str, token: &str, body: Value) -> Page {
    app.post_json(path, Some(token), &body.to_string()).await
}

async fn get_json(app: &TestApp, path: &str, token: &str) -> Value {
    app.send(
        Request::get(path)
            .header(header::HOST, HOST)
            .header(header::AUTHORIZATION, format!("Bearer {token}"))
            .body(Body::empty())
            .unwrap(),
    )
    .await
    .json()
}

/// An editor signed in on the page, a token for the same account, and an open run of a
/// revision with six tank capacitors and a coil, started ten minutes ago.
async fn bench() -> (TestApp, Session, String, i64) {
    let app = TestApp::new().await;
    let session = app.signed_in("ada", UserRole::Editor).await;
    let user = app.store.user_by_name("ada").await.unwrap().unwrap();
    let token = app.store.create_token(user.id, "test").await.unwrap().token;
    let made = post_json(
        &app,
        "/api/v1/builds",
        &token,
        json!({"name": "Bench heater"}),
    )
    .await;
    assert_eq!(made.status, StatusCode::CREATED, "{}", made.body);
    let parts = json!({"parts": {
        "tank_capacitor": {"capacitance_f": 3.3e-7, "count": 6, "max_temp_c": 85.0},
        "work_coil": {"inductance_h": 1.2e-6}
    }});
    let revision = post_json(&app, "/api/v1/builds/bench-heater/revisions", &token, parts).await;
    assert_eq!(revision.status, StatusCode::CREATED, "{}", revision.body);
    let run = post_json(
        &app,
        "/api/v1/builds/bench-heater/runs",
        &token,
        json!({"revision": "r1", "supply_voltage_v": 24.0, "load": "ferrous",
               "channels": ["temp.tank_capacitor", "frequency"]}),
    )
    .await;
    assert_eq!(run.status, StatusCode::CREATED, "{}", run.body);
    let id = run.json()["id"].as_i64().unwrap();
    app.store.backdate_run_start(RunId(id), 600).await.unwrap();
    (app, session, token, id)
}

/// A capacitor bank warming towards 45 °C, logged each minute.
fn warming() -> Vec<Value> {
    (0..=9)
        .map(|m| {
            let t = 60.0 * m as f64;
            json!({"t_s": t, "channel": "temp.tank_capacitor",
                   "value": 45.0 - 20.0 * (-t / 240.0_f64).exp()})
        })
        .collect()
}

async fn analysis_of_run(app: &TestApp, index: usize) -> Value {
    let mut document = app.store.export_build("bench-heater").await.unwrap();
    document.add_analyses();
    document.runs[index].analysis.clone().expect("an analysis")
}

#[tokio::test]
async fn a_wrong_reading_is_voided_and_restored_and_leaves_the_analysis() {
    let (app, session, token, id) = bench().await;
    let readings = format!("/api/v1/runs/{id}/readings");
    let sent = post_json(&app, &readings, &token, Value::Array(warming())).await;
    assert!(sent.status.is_success(), "{}", sent.body);
    let clean = analysis_of_run(&app, 0).await;
    // A probe slipped onto the heat sink: one wild value.
    let wild = json!([{"t_s": 330, "channel": "temp.tank_capacitor", "value": 140.0}]);
    assert!(
        post_json(&app, &readings, &token, wild)
            .await
            .status
            .is_success()
    );
    let spoiled = analysis_of_run(&app, 0).await;
    assert_ne!(clean, spoiled, "the wild value moves the analysis");
    let history = app.store.reading_history(RunId(id)).await.unwrap();
    let wrong = history.iter().find(|r| r.value == 140.0).unwrap().id.0;
    let void_path = format!("/builds/bench-heater/runs/{id}/readings/{wrong}/void");

    // The open run page, seen before the void (what it derives is kept until the run changes).
    let run_page = format!("/builds/bench-heater/runs/{id}");
    let seen = app.get(&run_page, Some(&session)).await;
    assert_eq!(seen.select_texts("#reading-count"), vec!["11"]);

    // No reason: refused on the page, nothing changed.
    let before = app.store.table_fingerprints(&[]).await.unwrap();
    let refused = app
        .post_form(&void_path, &session, &[("reason", "  ")])
        .await;
    assert_eq!(refused.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(
        refused
            .select_texts("#entry-error")
            .join(" ")
            .contains("say why")
    );
    assert_eq!(before, app.store.table_fingerprints(&[]).await.unwrap());
    let api_refused = post_json(
        &app,
        &format!("/api/v1/runs/{id}/readings/{wrong}/void"),
        &token,
        json!({"reason": ""}),
    )
    .await;
    assert_eq!(api_refused.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(api_refused.json()["field"], "reason");
    assert_eq!(before, app.store.table_fingerprints(&[]).await.unwrap());

    // With a reason: voided, out of the analysis and the counts, still in the history.
    let voided = app
        .post_form(&void_path, &session, &[("reason", "probe slipped")])
        .await;
    assert_eq!(voided.status, StatusCode::SEE_OTHER, "{}", voided.body);
    assert_eq!(analysis_of_run(&app, 0).await, clean);
    let run = get_json(&app, &format!("/api/v1/runs/{id}"), &token).await;
    assert_eq!(run["readings"], 10, "{run}");
    let page = app
        .get(&format!("/builds/bench-heater/runs/{id}"), Some(&session))
        .await;
    let row = page
        .select_texts(&format!("#reading-{wrong} .void-note"))
        .join(" ");
    assert!(row.contains("probe slipped"), "{row}");
    assert_eq!(page.count(&format!("#reading-{wrong} del.value")), 1);
    assert_eq!(
        page.select_texts("#reading-count"),
        vec!["10"],
        "the page no longer counts it"
    );
    // The export keeps it, marked, with the reason.
    let document = app.store.export_build("bench-heater").await.unwrap();
    let kept = document.runs[0]
        .readings
        .iter()
        .find(|r| r.value == 140.0)
        .expect("the voided reading stays in the export");
    assert_eq!(kept.voided.as_ref().unwrap().reason, "probe slipped");
    // The audit trail records it.
    let audit = |prints: &[eddybench::store::TableFingerprint]| {
        prints
            .iter()
            .find(|t| t.table == "audit_events")
            .map(|t| t.rows)
            .unwrap()
    };
    let after_void = app.store.table_fingerprints(&[]).await.unwrap();
    assert_eq!(audit(&after_void), audit(&before) + 1);

    // Restored over the API: back in the analysis, and recorded.
    let restored = post_json(
        &app,
        &format!("/api/v1/runs/{id}/readings/{wrong}/restore"),
        &token,
        json!({}),
    )
    .await;
    assert_eq!(restored.status, StatusCode::OK, "{}", restored.body);
    assert_eq!(analysis_of_run(&app, 0).await, spoiled);
    let after_restore = app.store.table_fingerprints(&[]).await.unwrap();
    assert_eq!(audit(&after_restore), audit(&after_void) + 1);
    // Voided again over the API, then resent: the second changes nothing.
    let api_void = format!("/api/v1/runs/{id}/readings/{wrong}/void");
    let first = post_json(&app, &api_void, &token, json!({"reason": "probe slipped"})).await;
    assert_eq!(first.status, StatusCode::OK);
    let once = app.store.table_fingerprints(&[]).await.unwrap();
    let again = post_json(&app, &api_void, &token, json!({"reason": "probe slipped"})).await;
    assert_eq!(again.status, StatusCode::OK);
    assert_eq!(once, app.store.table_fingerprints(&[]).await.unwrap());
}

#[tokio::test]
async fn a_correction_fixes_the_time_as_well_as_the_value() {
    let (app, session, _token, id) = bench().await;
    let added = app
        .post_form(
            &format!("/builds/bench-heater/runs/{id}/readings"),
            &session,
            &[("value.temp.tank_capacitor", "41"), ("time", "2:00")],
        )
        .await;
    assert_eq!(added.status, StatusCode::SEE_OTHER, "{}", added.body);
    let history = app.store.reading_history(RunId(id)).await.unwrap();
    let reading = history[0].id.0;
    let correct = format!("/builds/bench-heater/runs/{id}/readings/{reading}/correct");
    let late = app
        .post_form(&correct, &session, &[("value", "42"), ("time", "99:00")])
        .await;
    assert_eq!(
        late.status,
        StatusCode::UNPROCESSABLE_ENTITY,
        "a time after now"
    );
    assert_eq!(app.count_rows("readings").await, 1);
    let fixed = app
        .post_form(&correct, &session, &[("value", "42"), ("time", "3:10")])
        .await;
    assert_eq!(fixed.status, StatusCode::SEE_OTHER, "{}", fixed.body);
    let current = app.store.current_readings(RunId(id)).await.unwrap();
    assert_eq!((current[0].t_s, current[0].value), (190.0, 42.0));
}

/// One bad reading and the field every door must name.
struct Bad {
    what: &'static str,
    channel: &'static str,
    value: &'static str,
    t_s: &'static str,
    field: &'static str,
}

#[tokio::test]
async fn the_same_bad_reading_gets_the_same_answer_from_every_door() {
    let (app, session, token, id) = bench().await;
    let cases = [
        Bad {
            what: "garbage value",
            channel: "temp.tank_capacitor",
            value: "warm",
            t_s: "60",
            field: "value",
        },
        Bad {
            what: "NaN",
            channel: "temp.tank_capacitor",
            value: "NaN",
            t_s: "60",
            field: "value",
        },
        Bad {
            what: "1e308",
            channel: "temp.tank_capacitor",
            value: "1e308",
            t_s: "60",
            field: "value",
        },
        Bad {
            what: "below absolute plausibility",
            channel: "temp.tank_capacitor",
            value: "-500",
            t_s: "60",
            field: "value",
        },
        Bad {
            what: "unit 30 of 6",
            channel: "temp.tank_capacitor.30",
            value: "40",
            t_s: "60",
            field: "channel",
        },
        Bad {
            what: "a part the revision lacks",
            channel: "temp.choke",
            value: "40",
            t_s: "60",
            field: "channel",
        },
        Bad {
            what: "control characters",
            channel: "temp.\u{1}tank",
            value: "40",
            t_s: "60",
            field: "channel",
        },
        Bad {
            what: "an oversize channel",
            channel: "temp.xxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxx",
            value: "40",
            t_s: "60",
            field: "channel",
        },
        Bad {
            what: "a negative time",
            channel: "temp.tank_capacitor",
            value: "40",
            t_s: "-5",
            field: "t_s",
        },
        Bad {
            what: "a time in the far future",
            channel: "temp.tank_capacitor",
            value: "40",
            t_s: "1e12",
            field: "t_s",
        },
    ];
    let before = app.store.table_fingerprints(&[]).await.unwrap();
    for bad in &cases {
        // The run page's set form (the time typed in seconds).
        let value_field = format!("value.{}", bad.channel);
        let page = app
            .post_form(
                &format!("/builds/bench-heater/runs/{id}/readings"),
                &session,
                &[
                    (value_field.as_str(), bad.value),
                    ("time", &format!("{} s", bad.t_s)),
                ],
            )
            .await;
        assert_eq!(
            page.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "page: {}",
            bad.what
        );
        // The page marks the field: the time, the set (a channel it has no field for), or
        // the value's own field.
        let (page_field, page_message) = [
            ("t_s", "#time-error"),
            ("channel", "#set-error"),
            ("value", "#entry-set .entry p.error"),
        ]
        .into_iter()
        .find_map(|(field, selector)| {
            let texts = page.select_texts(selector);
            (!texts.is_empty()).then(|| (field, texts.join(" ")))
        })
        .unwrap_or_else(|| panic!("page: {}: no field marked", bad.what));
        assert_eq!(page_field, bad.field, "page: {}: {page_message}", bad.what);
        // The JSON API (numbers as JSON numbers where they are numbers).
        let number = |text: &str| {
            text.parse::<f64>()
                .ok()
                .filter(|v| v.is_finite())
                .map_or(json!(text), |v| json!(v))
        };
        let row =
            json!([{"t_s": number(bad.t_s), "channel": bad.channel, "value": number(bad.value)}]);
        let api = post_json(&app, &format!("/api/v1/runs/{id}/readings"), &token, row).await;
        assert_eq!(
            api.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "api: {}: {}",
            bad.what,
            api.body
        );
        let answer = api.json();
        assert_eq!(answer["row"], 1, "api: {}: {answer}", bad.what);
        // A NaN or 1e308 is not JSON of a finite number: the API names the column all the same.
        assert_eq!(answer["column"], bad.field, "api: {}: {answer}", bad.what);
        // The page says what the API says (the time bounds differ by design: now on the page,
        // a week from scripts).
        if bad.field != "t_s" && bad.value != "NaN" && bad.value != "warm" {
            // The page's text comes with its no-break spaces read as spaces.
            let api_message = answer["error"].as_str().unwrap().replace('\u{a0}', " ");
            assert!(
                api_message.ends_with(&page_message),
                "{}: page {page_message:?}, api {api_message:?}",
                bad.what
            );
        }
        // A CSV upload.
        let csv = format!(
            "t_s,channel,value\n{},{},{}\n",
            bad.t_s, bad.channel, bad.value
        );
        let upload = app
            .send(
                Request::post(format!("/api/v1/runs/{id}/readings"))
                    .header(header::HOST, HOST)
                    .header(header::AUTHORIZATION, format!("Bearer {token}"))
                    .header(header::CONTENT_TYPE, "text/csv")
                    .body(Body::from(csv))
                    .unwrap(),
            )
            .await;
        assert_eq!(
            upload.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "csv: {}: {}",
            bad.what,
            upload.body
        );
        assert_eq!(upload.json()["column"], bad.field, "csv: {}", bad.what);
    }
    assert_eq!(
        before,
        app.store.table_fingerprints(&[]).await.unwrap(),
        "nothing saved"
    );
}

#[tokio::test]
async fn frequencies_are_hz_from_scripts_and_a_khz_number_is_refused() {
    let (app, session, token, id) = bench().await;
    let row = json!([{"t_s": 60, "channel": "frequency", "value": 104.2}]);
    let api = post_json(&app, &format!("/api/v1/runs/{id}/readings"), &token, row).await;
    assert_eq!(api.status, StatusCode::UNPROCESSABLE_ENTITY);
    let message = api.json()["error"].as_str().unwrap().to_string();
    assert!(
        message.contains("kHz") && message.contains("104200"),
        "{message}"
    );
    assert_eq!(app.count_rows("readings").await, 0);
    // On the page a bare 152000 is Hz and a bare 152 is kHz; the confirmation says which.
    for (typed, unit) in [("152000", "Hz"), ("152", "kHz")] {
        let page = app
            .post_form(
                &format!("/builds/bench-heater/runs/{id}/readings"),
                &session,
                &[("value.frequency", typed)],
            )
            .await;
        assert_eq!(page.status, StatusCode::SEE_OTHER, "{typed}: {}", page.body);
        let shown = app.get(&page.location(), Some(&session)).await;
        let confirm = shown.select_texts("#entry-confirm").join(" ");
        assert!(
            confirm.ends_with(&format!("read as {unit}")),
            "{typed}: {confirm}"
        );
    }
}
