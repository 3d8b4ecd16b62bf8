//! Holding under load and abuse: a stalled or slow CSV upload holds no other writer back, is
//! cut off when it stalls, and keeps nothing; answers are compressed when asked.

mod common;

use std::time::{Duration, Instant};

use axum::body::{Body, Bytes};
use axum::http::{Request, StatusCode, header};
use common::{HOST, TestApp};
use eddybench::store::UserRole;
use futures_util::StreamExt;
use serde_json::json;

async fn token_for(app: &TestApp, name: &str) -> String {
    app.add_user(name, UserRole::Editor).await;
    let user = app.store.user_by_name(name).await.unwrap().unwrap();
    app.store.create_token(user.id, "test").await.unwrap().token
}

async fn open_run(app: &TestApp, token: &str) -> i64 {
    for (path, body) in [
        ("/api/v1/builds", json!({"name": "Bench heater"})),
        (
            "/api/v1/builds/bench-heater/revisions",
            json!({"parts": {
                "tank_capacitor": {"capacitance_f": 3.3e-7, "count": 6, "max_temp_c": 85.0},
                "work_coil": {"inductance_h": 1.2e-6}
            }}),
        ),
    ] {
        let page = app.post_json(path, Some(token), &body.to_string()).await;
        assert_eq!(page.status, StatusCode::CREATED, "{}", page.body);
    }
    let run = json!({"revision": "r1", "supply_voltage_v": 24.0, "load": "none"});
    let page = app
        .post_json(
            "/api/v1/builds/bench-heater/runs",
            Some(token),
            &run.to_string(),
        )
        .await;
    page.json()["id"].as_i64().unwrap()
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_stalled_upload_holds_no_other_write_and_keeps_nothing() {
    let app = TestApp::with_config(|c| c.body_stall_timeout = Duration::from_secs(2)).await;
    let token = token_for(&app, "uploader").await;
    let other = token_for(&app, "someone").await;
    let run = open_run(&app, &token).await;
    // 600 good rows, then the body stalls (never ends).
    let mut head = String::from("t_s,channel,value\n");
    for i in 0..600 {
        head.push_str(&format!("{i},ambient_temp,21.5\n"));
    }
    let body =
        futures_util::stream::once(async move { Ok::<_, std::io::Error>(Bytes::from(head)) })
            .chain(futures_util::stream::pending());
    let request = Request::post(format!("/api/v1/runs/{run}/readings"))
        .header(header::HOST, HOST)
        .header(header::AUTHORIZATION, format!("Bearer {token}"))
        .header(header::CONTENT_TYPE, "text/csv")
        .body(Body::from_stream(body))
        .unwrap();
    let router = app.router.clone();
    let started = Instant::now();
    let upload = tokio::spawn(async move {
        use tower::ServiceExt;
        let response = router.oneshot(request).await.unwrap();
        (response.status(), started.elapsed())
    });
    // Let the upload stage its rows, then write beside it: answered well within a second.
    tokio::time::sleep(Duration::from_millis(300)).await;
    for i in 0..5 {
        let reading = json!([{"t_s": 1000 + i, "channel": "ambient_temp", "value": 22.0}]);
        let begun = Instant::now();
        let page = app
            .post_json(
                &format!("/api/v1/runs/{run}/readings"),
                Some(&other),
                &reading.to_string(),
            )
            .await;
        assert_eq!(page.status, StatusCode::CREATED, "{}", page.body);
        assert!(
            begun.elapsed() < Duration::from_secs(1),
            "a write beside a stalled upload took {:?}",
            begun.elapsed()
        );
    }
    // The stalled body is cut off after the stall timeout, and none of its rows are kept.
    let (status, elapsed) = upload.await.unwrap();
    assert_eq!(status, StatusCode::BAD_REQUEST);
    assert!(
        elapsed < Duration::from_secs(10),
        "cut off after {elapsed:?}"
    );
    assert_eq!(app.count_rows("readings").await, 5);
    // Its staged copies are cleared away.
    for _ in 0..50 {
        if app.count_rows("staged_readings").await == 0 {
            return;
        }
        tokio::time::sleep(Duration::from_millis(100)).await;
    }
    panic!("the stalled upload's staged rows were never cleared");
}

#[tokio::test]
async fn pages_are_gzipped_only_when_the_client_asks() {
    let app = TestApp::new().await;
    let session = app.signed_in("ada", UserRole::Editor).await;
    let get = |gzip: bool| {
        let mut request = Request::get("/builds/new")
            .header(header::HOST, HOST)
            .header(header::COOKIE, session.cookie.clone());
        if gzip {
            request = request.header(header::ACCEPT_ENCODING, "gzip");
        }
        request.body(Body::empty()).unwrap()
    };
    let plain = app.send(get(false)).await;
    assert_eq!(plain.status, StatusCode::OK);
    assert!(plain.headers.get(header::CONTENT_ENCODING).is_none());
    assert!(plain.body.contains("<html"), "a readable page without gzip");
    use tower::ServiceExt;
    let response = app.router.clone().oneshot(get(true)).await.unwrap();
    assert_eq!(response.headers()[header::CONTENT_ENCODING], "gzip");
    use http_body_util::BodyExt;
    let bytes = response.into_body().collect().await.unwrap().to_bytes();
    // The gzip magic number (RFC 1952, section 2.3.1).
    assert_eq!(&bytes[..2], &[0x1f, 0x8b]);
    assert!(bytes.len() < plain.body.len(), "compressed is smaller");
}

#[tokio::test]
async fn the_build_page_is_kept_until_the_build_changes() {
    let app = TestApp::new().await;
    let token = token_for(&app, "logger").await;
    let session = app.signed_in("ada", UserRole::Viewer).await;
    let run = open_run(&app, &token).await;
    let get = |etag: Option<&str>| {
        let mut request = Request::get("/builds/bench-heater")
            .header(header::HOST, HOST)
            .header(header::COOKIE, session.cookie.clone());
        if let Some(etag) = etag {
            request = request.header(header::IF_NONE_MATCH, etag);
        }
        request.body(Body::empty()).unwrap()
    };
    let first = app.send(get(None)).await;
    assert_eq!(first.status, StatusCode::OK);
    let etag = first.headers[header::ETAG].to_str().unwrap().to_string();
    let again = app.send(get(None)).await;
    assert_eq!(
        again.headers[header::ETAG],
        etag.as_str(),
        "unchanged build, same page"
    );
    assert_eq!(again.body, first.body);
    let revalidated = app.send(get(Some(&etag))).await;
    assert_eq!(revalidated.status, StatusCode::NOT_MODIFIED);
    assert!(revalidated.body.is_empty());
    // A reading changes the build: the kept page is not served any more.
    let reading = json!([{"t_s": 1, "channel": "ambient_temp", "value": 22.0}]);
    let page = app
        .post_json(
            &format!("/api/v1/runs/{run}/readings"),
            Some(&token),
            &reading.to_string(),
        )
        .await;
    assert_eq!(page.status, StatusCode::CREATED);
    let changed = app.send(get(Some(&etag))).await;
    assert_eq!(changed.status, StatusCode::OK);
    assert_ne!(changed.headers[header::ETAG], etag.as_str());
    // Another viewer never gets a page rendered for someone else (names, form tokens).
    let other = app.signed_in("bob", UserRole::Viewer).await;
    let theirs = app
        .send(
            Request::get("/builds/bench-heater")
                .header(header::HOST, HOST)
                .header(header::COOKIE, other.cookie.clone())
                .body(Body::empty())
                .unwrap(),
        )
        .await;
    assert_ne!(theirs.headers[header::ETAG], changed.headers[header::ETAG]);
}
