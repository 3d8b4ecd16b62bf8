//! The scripting API: tokens, a run logged end to end by a script, bulk readings (JSON and
//! streamed CSV, all or nothing), roles, and the run page's CSV upload.

mod common;

use axum::body::Body;
use axum::http::{Request, StatusCode, header};
use common::{HOST, ORIGIN, Page, Session, TestApp};
use eddybench::store::{StoreError, UserRole};
use serde_json::{Value, json};

/// A user of the role and a token acting for them.
async fn token_for(app: &TestApp, name: &str, role: UserRole) -> String {
    app.add_user(name, role).await;
    let user = app.store.user_by_name(name).await.unwrap().unwrap();
    app.store.create_token(user.id, "test").await.unwrap().token
}

async fn get(app: &TestApp, path: &str, token: &str) -> Page {
    app.send(
        Request::get(path)
            .header(header::HOST, HOST)
            .header(header::AUTHORIZATION, format!("Bearer {token}"))
            .body(Body::empty())
            .unwrap(),
    )
    .await
}

async fn post(app: &TestApp, path: &str, token: &str, content_type: &str, body: &str) -> Page {
    app.send(
        Request::post(path)
            .header(header::HOST, HOST)
            .header(header::AUTHORIZATION, format!("Bearer {token}"))
            .header(header::CONTENT_TYPE, content_type)
            .body(Body::from(body.to_string()))
            .unwrap(),
    )
    .await
}

async fn post_json(app: &TestApp, path: &str, token: &str, body: Value) -> Page {
    app.post_json(path, Some(token), &body.to_string()).await
}

/// Six tank capacitors, a coil and the switches: no chokes, no gate resistors.
fn revision_body() -> Value {
    json!({
        "parts": {
            "tank_capacitor": {"capacitance_f": 3.3e-7, "count": 6, "max_temp_c": 85.0},
            "work_coil": {"inductance_h": 1.2e-6},
            "switch": {"vds_max_v": 100.0, "rds_on_ohm": 0.008}
        },
        "notes": "first bank"
    })
}

/// A build, its first revision and an open run, made through the API; returns the run's id.
async fn open_run(app: &TestApp, token: &str) -> i64 {
    let build = post_json(
        app,
        "/api/v1/builds",
        token,
        json!({"name": "Bench heater", "purpose": "brazing"}),
    )
    .await;
    assert_eq!(build.status, StatusCode::CREATED, "{}", build.body);
    let revision = post_json(
        app,
        "/api/v1/builds/bench-heater/revisions",
        token,
        revision_body(),
    )
    .await;
    assert_eq!(revision.status, StatusCode::CREATED, "{}", revision.body);
    let run = post_json(
        app,
        "/api/v1/builds/bench-heater/runs",
        token,
        json!({"revision": "r1", "supply_voltage_v": 24.0, "load": "ferrous"}),
    )
    .await;
    assert_eq!(run.status, StatusCode::CREATED, "{}", run.body);
    run.json()["id"].as_i64().unwrap()
}

fn csv_rows(count: usize) -> String {
    let mut text = String::from("t_s,channel,value\n");
    for i in 0..count {
        text.push_str(&format!(
            "{},temp.tank_capacitor.{},{}\n",
            i,
            i % 6 + 1,
            25.0 + i as f64 * 0.01
        ));
    }
    text
}

#[tokio::test]
async fn a_token_works_until_it_is_revoked() {
    let app = TestApp::new().await;
    app.add_user("ada", UserRole::Editor).await;
    let ada = app.store.user_by_name("ada").await.unwrap().unwrap();
    let made = app
        .store
        .create_token(ada.id, "bench logger")
        .await
        .unwrap();
    let stored: Vec<_> = app.store.list_tokens().await.unwrap();
    assert_eq!(stored.len(), 1);
    assert_eq!(
        (stored[0].user_name.as_str(), stored[0].label.as_str()),
        ("ada", "bench logger")
    );
    assert!(stored[0].last_used_at.is_none() && stored[0].revoked_at.is_none());

    let page = post_json(
        &app,
        "/api/v1/builds",
        &made.token,
        json!({"name": "Coil test"}),
    )
    .await;
    assert_eq!(page.status, StatusCode::CREATED, "{}", page.body);
    assert!(
        app.store.list_tokens().await.unwrap()[0]
            .last_used_at
            .is_some()
    );

    app.store.revoke_token(made.id).await.unwrap();
    let page = get(&app, "/api/v1/builds/coil-test", &made.token).await;
    assert_eq!(page.status, StatusCode::UNAUTHORIZED);
    assert!(page.json()["error"].as_str().unwrap().contains("revoked"));
    assert_eq!(
        page.headers.get(header::WWW_AUTHENTICATE).unwrap(),
        r#"Bearer error="invalid_token""#
    );
    assert!(
        app.store.list_tokens().await.unwrap()[0]
            .revoked_at
            .is_some()
    );
    assert!(matches!(
        app.store.revoke_token(made.id).await,
        Err(StoreError::Conflict(_))
    ));
    assert!(matches!(
        app.store.revoke_token(eddybench::store::TokenId(999)).await,
        Err(StoreError::NotFound)
    ));
}

#[tokio::test]
async fn a_bad_token_is_refused_rather_than_treated_as_anonymous() {
    let app = TestApp::new().await;
    for path in ["/api/v1/builds/x", "/api/v1/runs/1"] {
        let page = get(&app, path, "not-a-token").await;
        assert_eq!(page.status, StatusCode::UNAUTHORIZED, "{path}");
        assert!(page.json()["error"].is_string());
    }
    let page = post_json(&app, "/api/v1/builds", "", json!({"name": "x"})).await;
    assert_eq!(page.status, StatusCode::UNAUTHORIZED);
    assert_eq!(app.count_rows("builds").await, 0);
}

#[tokio::test]
async fn the_token_commands_print_the_token_once_list_and_revoke() {
    let app = TestApp::new().await;
    app.add_user("ada", UserRole::Editor).await;
    let cli = |args: &[&str]| {
        let output = std::process::Command::new(env!("CARGO_BIN_EXE_eddybench"))
            .args(args)
            .arg("--data-dir")
            .arg(app.data_dir())
            .env_remove("EDDYBENCH_DATA")
            .output()
            .unwrap();
        let stdout = String::from_utf8(output.stdout).unwrap();
        (
            output.status.success(),
            stdout,
            String::from_utf8_lossy(&output.stderr).into_owned(),
        )
    };
    let (ok, out, err) = cli(&["token", "add", "ada", "--label", "thermocouple logger"]);
    assert!(ok, "{err}");
    let token = out
        .lines()
        .find_map(|l| l.strip_prefix("Token: "))
        .expect("the token is printed")
        .to_string();
    assert_eq!(token.len(), 64);
    assert!(out.starts_with("Token 1 for ada (editor)."), "{out}");
    let (ok, listed, _) = cli(&["token", "list"]);
    assert!(ok);
    let line = listed.lines().nth(1).expect("one token listed");
    assert!(
        line.contains("ada") && line.contains("thermocouple logger"),
        "{line}"
    );
    assert!(!listed.contains(&token), "the list never shows a token");

    let page = post_json(
        &app,
        "/api/v1/builds",
        &token,
        json!({"name": "Bench heater"}),
    )
    .await;
    assert_eq!(page.status, StatusCode::CREATED);

    let (ok, out, err) = cli(&["token", "revoke", "1"]);
    assert!(ok, "{err}");
    assert_eq!(out.trim(), "Revoked token 1.");
    let page = get(&app, "/api/v1/builds/bench-heater", &token).await;
    assert_eq!(page.status, StatusCode::UNAUTHORIZED);
    let (ok, _, err) = cli(&["token", "revoke", "7"]);
    assert!(!ok && err.contains("no token 7"), "{err}");
    let (ok, _, err) = cli(&["token", "add", "nobody"]);
    assert!(!ok && err.contains("no user named nobody"), "{err}");
}

#[tokio::test]
async fn a_script_logs_a_whole_run() {
    let app = TestApp::new().await;
    let token = token_for(&app, "logger", UserRole::Editor).await;

    let build = post_json(
        &app,
        "/api/v1/builds",
        &token,
        json!({"name": "Bench heater", "purpose": "brazing"}),
    )
    .await;
    assert_eq!(build.status, StatusCode::CREATED);
    assert_eq!(build.location(), "/api/v1/builds/bench-heater");
    let body = build.json();
    assert_eq!(
        (&body["slug"], &body["name"], &body["purpose"], &body["url"]),
        (
            &json!("bench-heater"),
            &json!("Bench heater"),
            &json!("brazing"),
            &json!("/builds/bench-heater")
        )
    );

    let revision = post_json(
        &app,
        "/api/v1/builds/bench-heater/revisions",
        &token,
        revision_body(),
    )
    .await;
    assert_eq!(revision.status, StatusCode::CREATED, "{}", revision.body);
    assert_eq!(revision.json()["label"], "r1");
    assert_eq!(revision.json()["parts"]["tank_capacitor"]["count"], 6);
    let mut second = revision_body();
    second["parent"] = json!("r1");
    second["parts"]["tank_capacitor"]["count"] = json!(8);
    let revision = post_json(
        &app,
        "/api/v1/builds/bench-heater/revisions",
        &token,
        second,
    )
    .await;
    assert_eq!(
        (
            revision.json()["label"].as_str(),
            revision.json()["parent"].as_str()
        ),
        (Some("r2"), Some("r1"))
    );
    let shown = get(&app, "/api/v1/builds/bench-heater/revisions/r2", &token).await;
    assert_eq!(shown.status, StatusCode::OK);
    assert_eq!(shown.json()["parts"]["tank_capacitor"]["count"], 8);

    let run = post_json(
        &app,
        "/api/v1/builds/bench-heater/runs",
        &token,
        json!({
            "revision": "r2", "supply_voltage_v": 24.0, "supply_current_limit_a": 10.0,
            "load": "water", "water_mass_kg": 0.5, "vessel_heat_capacity_j_per_k": 120.0,
            "notes": "500 ml beaker", "operator": "Ada at the bench",
            "channels": ["supply_voltage", "supply_current", "water_temp", "temp.tank_capacitor.8"]
        }),
    )
    .await;
    assert_eq!(run.status, StatusCode::CREATED, "{}", run.body);
    let run = run.json();
    let id = run["id"].as_i64().unwrap();
    assert_eq!(run["url"], format!("/builds/bench-heater/runs/{id}"));
    assert_eq!(
        (run["revision"].as_str(), run["operator"].as_str()),
        (Some("r2"), Some("Ada at the bench"))
    );
    assert_eq!(run["readings"], 0);

    let readings = post_json(
        &app,
        &format!("/api/v1/runs/{id}/readings"),
        &token,
        json!([
            {"t_s": 0, "channel": "supply_voltage", "value": 24.1},
            {"t_s": 0, "channel": "supply_current", "value": 8.2},
            {"t_s": 12.5, "channel": "temp.tank_capacitor", "value": 41.2}
        ]),
    )
    .await;
    assert_eq!(readings.status, StatusCode::CREATED, "{}", readings.body);
    assert_eq!(readings.json(), json!({"inserted": 3, "already_stored": 0}));

    let csv = "t_s,channel,value\r\n30,water_temp,24.5\r\n30,\"temp.tank_capacitor.8\",44.0\r\n60,frequency,152000\r\n";
    let readings = post(
        &app,
        &format!("/api/v1/runs/{id}/readings"),
        &token,
        "text/csv; charset=utf-8",
        csv,
    )
    .await;
    assert_eq!(readings.status, StatusCode::CREATED, "{}", readings.body);
    assert_eq!(readings.json(), json!({"inserted": 3, "already_stored": 0}));

    let finished = post_json(
        &app,
        &format!("/api/v1/runs/{id}/finish"),
        &token,
        json!({"outcome": "part_failed", "failed_part": "tank_capacitor.3", "note": "cracked"}),
    )
    .await;
    assert_eq!(finished.status, StatusCode::OK, "{}", finished.body);
    assert_eq!(finished.json()["outcome"], "part_failed");

    let shown = get(&app, &format!("/api/v1/runs/{id}"), &token)
        .await
        .json();
    assert_eq!(shown["readings"], 6);
    assert_eq!(
        (
            shown["failed_part"].as_str(),
            shown["outcome_note"].as_str()
        ),
        (Some("tank_capacitor.3"), Some("cracked"))
    );
    assert!(shown["finished_at"].as_str().unwrap().ends_with('Z'));
    assert_eq!(shown["supply_voltage_v"], 24.0);

    let build = get(&app, "/api/v1/builds/bench-heater", &token)
        .await
        .json();
    assert_eq!(build["revisions"][1]["label"], "r2");
    assert_eq!(build["runs"][0]["id"], id);

    let late = post(
        &app,
        &format!("/api/v1/runs/{id}/readings"),
        &token,
        "text/csv",
        "t_s,channel,value\n90,frequency,1\n",
    )
    .await;
    assert_eq!(late.status, StatusCode::CONFLICT);
    assert!(late.json()["error"].as_str().unwrap().contains("finished"));
    let again = post_json(
        &app,
        &format!("/api/v1/runs/{id}/finish"),
        &token,
        json!({"outcome": "completed"}),
    )
    .await;
    assert_eq!(again.status, StatusCode::CONFLICT);
    assert_eq!(app.count_rows("readings").await, 6);
}

#[tokio::test]
async fn a_csv_with_a_bad_row_inserts_nothing_and_names_the_row() {
    let app = TestApp::new().await;
    let token = token_for(&app, "logger", UserRole::Editor).await;
    let id = open_run(&app, &token).await;
    let path = format!("/api/v1/runs/{id}/readings");

    let csv = "t_s,channel,value\n0,supply_voltage,24\n1,supply_current,8\n2,frequency,12O000\n3,frequency,120000\n";
    let page = post(&app, &path, &token, "text/csv", csv).await;
    assert_eq!(page.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(
        page.json(),
        json!({"error": "row 3 (line 4), column value: not a number", "row": 3, "column": "value", "line": 4})
    );
    assert_eq!(app.count_rows("readings").await, 0);

    // Past the first written batches too: the transaction takes everything back.
    let mut csv = csv_rows(1_600);
    csv.push_str("1600,temp.choke,40\n");
    let page = post(&app, &path, &token, "text/csv", &csv).await;
    assert_eq!(page.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(
        (page.json()["row"].as_u64(), page.json()["column"].as_str()),
        (Some(1_601), Some("channel"))
    );
    assert_eq!(app.count_rows("readings").await, 0);

    let page = post(&app, &path, &token, "text/csv", &csv_rows(1_600)).await;
    assert_eq!(page.json(), json!({"inserted": 1_600, "already_stored": 0}));
    assert_eq!(app.count_rows("readings").await, 1_600);

    for bad in [
        "",
        "time,channel,value\n1,frequency,1\n",
        "t_s,channel,value,unit\n",
    ] {
        let page = post(&app, &path, &token, "text/csv", bad).await;
        assert_eq!(page.status, StatusCode::UNPROCESSABLE_ENTITY, "{bad:?}");
        assert_eq!(page.json()["field"], "header");
    }
    assert_eq!(app.count_rows("readings").await, 1_600);
}

#[tokio::test]
async fn json_readings_are_checked_row_by_row() {
    let app = TestApp::new().await;
    let token = token_for(&app, "logger", UserRole::Editor).await;
    let id = open_run(&app, &token).await;
    let path = format!("/api/v1/runs/{id}/readings");
    let good = json!({"t_s": 1.0, "channel": "supply_voltage", "value": 24.0});
    for (bad, column, says) in [
        (
            json!({"t_s": 2, "channel": "supply_current", "value": "NaN"}),
            "value",
            "not a number",
        ),
        (
            json!({"t_s": 2, "channel": "coil_voltage", "value": 1}),
            "channel",
            "unknown channel",
        ),
        (
            json!({"t_s": -1, "channel": "frequency", "value": 1e5}),
            "t_s",
            "0 or more",
        ),
        (
            json!({"t_s": 2, "channel": "temp.switch", "value": 4000}),
            "value",
            "plausible range",
        ),
        (
            json!({"t_s": 2, "channel": "temp.choke", "value": 40}),
            "channel",
            "no choke",
        ),
        (
            json!({"t_s": 2, "channel": "temp.tank_capacitor.7", "value": 40}),
            "channel",
            "no number 7",
        ),
        (
            json!({"t_s": 2, "channel": "frequency"}),
            "value",
            "missing",
        ),
        (
            json!({"t_s": "2", "channel": "frequency", "value": 1}),
            "t_s",
            "not a number",
        ),
        (
            json!({"t_s": 1e12, "channel": "frequency", "value": 1e5}),
            "t_s",
            "more than a week",
        ),
        (
            json!({"t_s": 2, "channel": "frequency", "value": 1e5, "id": 42}),
            "id",
            "must be a string",
        ),
        (
            json!({"t_s": 2, "channel": "frequency", "value": 1e5, "id": ""}),
            "id",
            "empty",
        ),
        (
            json!({"t_s": 2, "channel": "frequency", "value": 1e5, "id": "a b"}),
            "id",
            "only letters",
        ),
    ] {
        let page = post_json(&app, &path, &token, json!([good, good, bad, good])).await;
        assert_eq!(page.status, StatusCode::UNPROCESSABLE_ENTITY, "{bad}");
        let body = page.json();
        assert_eq!(
            (body["row"].as_u64(), body["column"].as_str()),
            (Some(3), Some(column)),
            "{bad}: {body}"
        );
        let error = body["error"].as_str().unwrap();
        assert!(
            error.starts_with(&format!("row 3, column {column}: ")) && error.contains(says),
            "{error}"
        );
    }
    let page = post_json(
        &app,
        &path,
        &token,
        json!([good, {"t_s": 1, "channel": "frequency", "value": 1, "unit": "Hz"}]),
    )
    .await;
    assert_eq!(page.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(page.json()["row"], 2);
    assert!(
        page.json()["error"]
            .as_str()
            .unwrap()
            .contains("unknown column `unit`")
    );
    for malformed in ["{\"t_s\": 1}", "[{\"t_s\": 1,", "nope"] {
        let page = post(&app, &path, &token, "application/json", malformed).await;
        assert_eq!(page.status, StatusCode::UNPROCESSABLE_ENTITY, "{malformed}");
        assert_eq!(page.json()["field"], "body");
    }
    assert_eq!(app.count_rows("readings").await, 0);
}

/// A script that resends after a lost answer: the same id with the same time and value is
/// stored once and the answer says so; the same id with another value is refused whole (409).
#[tokio::test]
async fn a_resent_reading_id_is_stored_once_and_a_reused_one_is_refused() {
    let app = TestApp::new().await;
    let token = token_for(&app, "logger", UserRole::Editor).await;
    let id = open_run(&app, &token).await;
    let path = format!("/api/v1/runs/{id}/readings");
    let a1 = json!({"id": "cell-a1", "t_s": 10.0, "channel": "supply_voltage", "value": 24.0});
    let a2 = json!({"id": "cell-a2", "t_s": 10.0, "channel": "supply_current", "value": 8.5});
    let a3 = json!({"id": "cell-a3", "t_s": 20.0, "channel": "supply_current", "value": 8.6});

    let first = post_json(&app, &path, &token, json!([a1, a2])).await;
    assert_eq!(first.status, StatusCode::CREATED, "{}", first.body);
    assert_eq!(first.json(), json!({"inserted": 2, "already_stored": 0}));
    let resent = post_json(&app, &path, &token, json!([a1, a2])).await;
    assert_eq!(resent.status, StatusCode::CREATED, "{}", resent.body);
    assert_eq!(resent.json(), json!({"inserted": 0, "already_stored": 2}));
    let mixed = post_json(&app, &path, &token, json!([a2, a3, a3])).await;
    assert_eq!(mixed.json(), json!({"inserted": 1, "already_stored": 2}));
    assert_eq!(app.count_rows("readings").await, 3);
    let run = get(&app, &format!("/api/v1/runs/{id}"), &token)
        .await
        .json();
    assert_eq!(
        run["readings"], 3,
        "the run's count holds each reading once"
    );

    // The same id with another value, or another time: the whole set is refused.
    let a4 = json!({"id": "cell-a4", "t_s": 30.0, "channel": "frequency", "value": 150e3});
    for reused in [
        json!({"id": "cell-a1", "t_s": 10.0, "channel": "supply_voltage", "value": 24.5}),
        json!({"id": "cell-a1", "t_s": 11.0, "channel": "supply_voltage", "value": 24.0}),
    ] {
        let refused = post_json(&app, &path, &token, json!([a4, reused])).await;
        assert_eq!(refused.status, StatusCode::CONFLICT, "{}", refused.body);
        let error = refused.json()["error"].as_str().unwrap().to_string();
        assert!(
            error.contains("cell-a1") && error.contains("new id"),
            "{error}"
        );
    }
    // Twice in one body with different values: refused too.
    let twice = json!([a4, {"id": "cell-a4", "t_s": 30.0, "channel": "frequency", "value": 151e3}]);
    let refused = post_json(&app, &path, &token, twice).await;
    assert_eq!(refused.status, StatusCode::CONFLICT, "{}", refused.body);
    assert_eq!(
        app.count_rows("readings").await,
        3,
        "nothing of a refused set"
    );

    // Ids are the sender's, per run: another run may use the same one.
    let other = post_json(
        &app,
        "/api/v1/builds/bench-heater/runs",
        &token,
        json!({"revision": "r1", "supply_voltage_v": 24.0, "load": "none"}),
    )
    .await;
    assert_eq!(other.status, StatusCode::CREATED, "{}", other.body);
    let other_id = other.json()["id"].as_i64().unwrap();
    let elsewhere = post_json(
        &app,
        &format!("/api/v1/runs/{other_id}/readings"),
        &token,
        json!([a1]),
    )
    .await;
    assert_eq!(
        elsewhere.json(),
        json!({"inserted": 1, "already_stored": 0})
    );
    // Readings without an id are stored each time, as before.
    let plain = json!({"t_s": 40.0, "channel": "frequency", "value": 150e3});
    post_json(&app, &path, &token, json!([plain])).await;
    let again = post_json(&app, &path, &token, json!([plain])).await;
    assert_eq!(again.json(), json!({"inserted": 1, "already_stored": 0}));
    assert_eq!(app.count_rows("readings").await, 6);
}

#[tokio::test]
async fn readings_need_a_json_or_csv_content_type_and_a_bounded_body() {
    let app = TestApp::new().await;
    let token = token_for(&app, "logger", UserRole::Editor).await;
    let id = open_run(&app, &token).await;
    let path = format!("/api/v1/runs/{id}/readings");
    for content_type in [
        "text/plain",
        "application/x-www-form-urlencoded",
        "application/xml",
    ] {
        let page = post(
            &app,
            &path,
            &token,
            content_type,
            "t_s,channel,value\n1,frequency,1\n",
        )
        .await;
        assert_eq!(
            page.status,
            StatusCode::UNSUPPORTED_MEDIA_TYPE,
            "{content_type}"
        );
        assert!(page.json()["error"].as_str().unwrap().contains("text/csv"));
    }
    let huge = format!("[{}]", " ".repeat(33 * 1024 * 1024));
    let page = post(&app, &path, &token, "application/json", &huge).await;
    assert_eq!(page.status, StatusCode::PAYLOAD_TOO_LARGE);
    assert!(page.json()["error"].is_string());
    assert_eq!(app.count_rows("readings").await, 0);
}

#[tokio::test]
async fn revision_and_run_bodies_are_checked_field_by_field() {
    let app = TestApp::new().await;
    let token = token_for(&app, "logger", UserRole::Editor).await;
    open_run(&app, &token).await;
    let revisions = "/api/v1/builds/bench-heater/revisions";
    let cases = [
        (
            json!({"parts": {"tank_capacitor": {"capacitance_f": -1e-7}}}),
            "parts.tank_capacitor.capacitance_f",
        ),
        (
            json!({"parts": {"tank_capacitor": {"capacitance_f": 2e-7, "colour": "red"}}}),
            "parts.tank_capacitor.colour",
        ),
        (
            json!({"parts": {"choke": {"inductance_h": "47u"}}}),
            "parts.choke.inductance_h",
        ),
        (json!({"parts": {}, "parent": "r9"}), "parent"),
        (json!({"parts": {}, "extra": 1}), "extra"),
    ];
    for (body, field) in cases {
        let page = post_json(&app, revisions, &token, body.clone()).await;
        assert_eq!(
            page.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "{body}: {}",
            page.body
        );
        let answer = page.json();
        assert_eq!(answer["field"], field, "{body}: {answer}");
    }
    assert_eq!(app.count_rows("revisions").await, 1);

    let runs = "/api/v1/builds/bench-heater/runs";
    for (body, field) in [
        (json!({"revision": "r1", "load": "lava"}), "load"),
        (json!({"revision": "r4", "load": "none"}), "revision"),
        (json!({"revision": "r1", "load": "water"}), "water_mass_kg"),
        (
            json!({"revision": "r1", "load": "none", "supply_voltage_v": -12.0}),
            "supply_voltage_v",
        ),
        (
            json!({"revision": "r1", "load": "none", "channels": ["temp.choke"]}),
            "channels[0]",
        ),
    ] {
        let page = post_json(&app, runs, &token, body.clone()).await;
        assert_eq!(page.status, StatusCode::UNPROCESSABLE_ENTITY, "{body}");
        assert_eq!(page.json()["field"], field, "{body}");
    }
    assert_eq!(app.count_rows("runs").await, 1);
    let missing = post_json(
        &app,
        "/api/v1/builds/no-such/runs",
        &token,
        json!({"revision": "r1", "load": "none"}),
    )
    .await;
    assert_eq!(missing.status, StatusCode::NOT_FOUND);
    assert_eq!(missing.json()["error"], "not found");
}

#[tokio::test]
async fn finishing_needs_a_known_failed_part() {
    let app = TestApp::new().await;
    let token = token_for(&app, "logger", UserRole::Editor).await;
    let id = open_run(&app, &token).await;
    let path = format!("/api/v1/runs/{id}/finish");
    for body in [
        json!({"outcome": "part_failed"}),
        json!({"outcome": "part_failed", "failed_part": "choke"}),
        json!({"outcome": "part_failed", "failed_part": "tank_capacitor.9"}),
        json!({"outcome": "completed", "failed_part": "switch"}),
    ] {
        let page = post_json(&app, &path, &token, body.clone()).await;
        assert_eq!(page.status, StatusCode::UNPROCESSABLE_ENTITY, "{body}");
        assert_eq!(page.json()["field"], "failed_part", "{body}");
    }
    let page = post_json(&app, &path, &token, json!({"outcome": "exploded"})).await;
    assert_eq!(page.json()["field"], "outcome");
    let page = post_json(
        &app,
        &path,
        &token,
        json!({"outcome": "stopped", "note": "smell"}),
    )
    .await;
    assert_eq!(page.status, StatusCode::OK);
    assert_eq!(page.json()["outcome"], "stopped");
}

#[tokio::test]
async fn a_viewer_token_reads_but_every_write_is_refused() {
    let app = TestApp::new().await;
    let editor = token_for(&app, "ada", UserRole::Editor).await;
    let viewer = token_for(&app, "vic", UserRole::Viewer).await;
    let id = open_run(&app, &editor).await;
    let counts = || async {
        let mut counts = Vec::new();
        for table in ["builds", "revisions", "runs", "readings"] {
            counts.push(app.count_rows(table).await);
        }
        counts
    };
    let before = counts().await;
    let writes = [
        (
            "/api/v1/builds".to_string(),
            "application/json",
            json!({"name": "Mine"}).to_string(),
        ),
        (
            "/api/v1/builds/bench-heater/revisions".into(),
            "application/json",
            revision_body().to_string(),
        ),
        (
            "/api/v1/builds/bench-heater/runs".into(),
            "application/json",
            json!({"revision": "r1", "load": "none"}).to_string(),
        ),
        (
            format!("/api/v1/runs/{id}/readings"),
            "application/json",
            json!([{"t_s": 1, "channel": "frequency", "value": 1e5}]).to_string(),
        ),
        (
            format!("/api/v1/runs/{id}/readings"),
            "text/csv",
            "t_s,channel,value\n1,frequency,100000\n".into(),
        ),
        (
            format!("/api/v1/runs/{id}/finish"),
            "application/json",
            json!({"outcome": "completed"}).to_string(),
        ),
    ];
    for (path, content_type, body) in &writes {
        let page = post(&app, path, &viewer, content_type, body).await;
        assert_eq!(page.status, StatusCode::FORBIDDEN, "{path}");
        assert!(page.json()["error"].is_string());
        let anonymous = app
            .send(
                Request::post(path.as_str())
                    .header(header::HOST, HOST)
                    .header(header::CONTENT_TYPE, *content_type)
                    .body(Body::from(body.clone()))
                    .unwrap(),
            )
            .await;
        assert_eq!(anonymous.status, StatusCode::UNAUTHORIZED, "{path}");
        assert!(anonymous.json()["error"].is_string());
    }
    assert_eq!(counts().await, before);
    assert_eq!(
        get(&app, &format!("/api/v1/runs/{id}"), &viewer)
            .await
            .status,
        StatusCode::OK
    );
    assert_eq!(
        get(&app, "/api/v1/builds/bench-heater", &viewer)
            .await
            .status,
        StatusCode::OK
    );
}

#[tokio::test]
async fn a_cookie_post_to_the_api_needs_the_csrf_header() {
    let app = TestApp::new().await;
    let session = app.signed_in("ada", UserRole::Editor).await;
    let send = |csrf: Option<String>| {
        let mut request = Request::post("/api/v1/builds")
            .header(header::HOST, HOST)
            .header(header::ORIGIN, ORIGIN)
            .header(header::COOKIE, &session.cookie)
            .header(header::CONTENT_TYPE, "application/json");
        if let Some(token) = csrf {
            request = request.header("x-csrf-token", token);
        }
        app.send(
            request
                .body(Body::from(json!({"name": "From the browser"}).to_string()))
                .unwrap(),
        )
    };
    let refused = send(None).await;
    assert_eq!(refused.status, StatusCode::BAD_REQUEST);
    assert!(refused.json()["error"].is_string());
    assert_eq!(
        send(Some("wrong".into())).await.status,
        StatusCode::BAD_REQUEST
    );
    assert_eq!(app.count_rows("builds").await, 0);
    let accepted = send(Some(session.csrf.clone())).await;
    assert_eq!(accepted.status, StatusCode::CREATED, "{}", accepted.body);
    assert_eq!(app.count_rows("builds").await, 1);
}

fn multipart(file: &str) -> (String, String) {
    let boundary = "eddybench-test-boundary";
    let body = format!(
        "--{boundary}\r\nContent-Disposition: form-data; name=\"file\"; filename=\"log.csv\"\r\n\
         Content-Type: text/csv\r\n\r\n{file}\r\n--{boundary}--\r\n"
    );
    (format!("multipart/form-data; boundary={boundary}"), body)
}

async fn upload(app: &TestApp, session: &Session, id: i64, csrf: &str, file: &str) -> Page {
    let (content_type, body) = multipart(file);
    app.send(
        Request::post(format!(
            "/builds/bench-heater/runs/{id}/readings.csv?csrf={csrf}"
        ))
        .header(header::HOST, HOST)
        .header(header::ORIGIN, ORIGIN)
        .header(header::COOKIE, &session.cookie)
        .header(header::CONTENT_TYPE, content_type)
        .body(Body::from(body))
        .unwrap(),
    )
    .await
}

#[tokio::test]
async fn the_run_page_imports_a_csv_file() {
    let app = TestApp::new().await;
    let session = app.signed_in("ada", UserRole::Editor).await;
    let user = app.store.user_by_name("ada").await.unwrap().unwrap();
    let token = app.store.create_token(user.id, "").await.unwrap().token;
    let id = open_run(&app, &token).await;
    let page_path = format!("/builds/bench-heater/runs/{id}");

    let page = app.get(&page_path, Some(&session)).await;
    assert_eq!(
        page.attr("#entry form#csv-upload", "enctype").as_deref(),
        Some("multipart/form-data")
    );
    assert_eq!(
        page.attr("form#csv-upload", "action"),
        Some(format!(
            "/builds/bench-heater/runs/{id}/readings.csv?csrf={}",
            session.csrf
        ))
    );
    assert_eq!(page.count("form#csv-upload input[type=file][name=file]"), 1);

    let bad = upload(
        &app,
        &session,
        id,
        &session.csrf,
        "t_s,channel,value\n0,frequency,1e5\n1,frequency,fast\n",
    )
    .await;
    assert_eq!(bad.status, StatusCode::SEE_OTHER);
    assert!(
        bad.location()
            .starts_with(&format!("{page_path}?error=row%202%20%28line%203%29")),
        "{}",
        bad.location()
    );
    assert!(bad.location().contains("&channel=csv"));
    assert_eq!(app.count_rows("readings").await, 0);
    let shown = app.get(&bad.location(), Some(&session)).await;
    assert!(shown.select_texts("#entry-error")[0].contains("column value: not a number"));
    assert_eq!(
        shown.attr("#csv-file", "aria-invalid").as_deref(),
        Some("true")
    );

    let refused = upload(&app, &session, id, "forged", &csv_rows(10)).await;
    assert_eq!(refused.status, StatusCode::BAD_REQUEST);
    assert_eq!(app.count_rows("readings").await, 0);

    let good = upload(&app, &session, id, &session.csrf, &csv_rows(700)).await;
    assert_eq!(good.status, StatusCode::SEE_OTHER);
    assert_eq!(good.location(), format!("{page_path}#readings"));
    assert_eq!(app.count_rows("readings").await, 700);
}
