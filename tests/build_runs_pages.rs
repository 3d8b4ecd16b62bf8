//! The build page shows the latest runs only; older ones are a page at a time, so no page grows
//! with the logbook.

mod common;

use axum::http::StatusCode;
use common::{PASSWORD, TestApp};
use eddybench::store::UserRole;
use serde_json::json;

/// A build with `runs` runs made through the API, and an editor's session.
async fn build_with_runs(runs: usize) -> (TestApp, common::Session) {
    let app = TestApp::new().await;
    app.add_user("editor", UserRole::Editor).await;
    let user = app.store.user_by_name("editor").await.unwrap().unwrap();
    let token = app.store.create_token(user.id, "test").await.unwrap().token;
    for (path, body) in [
        ("/api/v1/builds", json!({"name": "Bench heater"})),
        (
            "/api/v1/builds/bench-heater/revisions",
            json!({"parts": {"work_coil": {"inductance_h": 1.2e-6}}}),
        ),
    ] {
        let page = app.post_json(path, Some(&token), &body.to_string()).await;
        assert_eq!(page.status, StatusCode::CREATED, "{}", page.body);
    }
    let run = json!({"revision": "r1", "supply_voltage_v": 24.0, "load": "none"}).to_string();
    for _ in 0..runs {
        let page = app
            .post_json("/api/v1/builds/bench-heater/runs", Some(&token), &run)
            .await;
        assert_eq!(page.status, StatusCode::CREATED, "{}", page.body);
    }
    let session = app.login("editor", PASSWORD).await.unwrap();
    (app, session)
}

fn run_titles(page: &common::Page) -> Vec<String> {
    page.select_texts("#runs li strong")
}

#[tokio::test]
async fn the_build_page_shows_the_latest_fifty_and_pages_lead_to_the_rest() {
    let (app, session) = build_with_runs(120).await;
    let build = app.get("/builds/bench-heater", Some(&session)).await;
    assert_eq!(build.status, StatusCode::OK);
    let titles = run_titles(&build);
    assert_eq!(titles.len(), 50);
    assert_eq!(titles[0], "Run 120");
    assert_eq!(titles[49], "Run 71");
    let older = build
        .attr("#older-runs", "href")
        .expect("a link to older runs");
    assert_eq!(older, "/builds/bench-heater/runs?page=2");

    let second = app.get(&older, Some(&session)).await;
    assert_eq!(second.status, StatusCode::OK);
    let titles = run_titles(&second);
    assert_eq!((titles.len(), titles[0].as_str()), (50, "Run 70"));
    assert_eq!(
        second.attr("#newer-runs", "href").as_deref(),
        Some("/builds/bench-heater/runs?page=1")
    );
    assert_eq!(
        second.attr("#older-runs", "href").as_deref(),
        Some("/builds/bench-heater/runs?page=3")
    );

    let last = app
        .get("/builds/bench-heater/runs?page=3", Some(&session))
        .await;
    let titles = run_titles(&last);
    assert_eq!(titles.len(), 20);
    assert_eq!(titles.last().map(String::as_str), Some("Run 1"));
    assert!(last.attr("#older-runs", "href").is_none());
    assert!(last.body.contains("120 runs"), "the total is said");
}

#[tokio::test]
async fn pages_outside_the_list_are_not_found_and_a_short_build_has_no_pager() {
    let (app, session) = build_with_runs(3).await;
    let build = app.get("/builds/bench-heater", Some(&session)).await;
    assert_eq!(run_titles(&build).len(), 3);
    assert!(build.attr("#older-runs", "href").is_none());
    for path in [
        "/builds/bench-heater/runs?page=2",
        "/builds/bench-heater/runs?page=0",
        "/builds/bench-heater/runs?page=-4",
        "/builds/no-such-build/runs",
    ] {
        let page = app.get(path, Some(&session)).await;
        assert_eq!(page.status, StatusCode::NOT_FOUND, "{path}");
    }
    let bad = app
        .get("/builds/bench-heater/runs?page=many", Some(&session))
        .await;
    assert_eq!(bad.status, StatusCode::BAD_REQUEST);
    let first = app.get("/builds/bench-heater/runs", Some(&session)).await;
    assert_eq!(run_titles(&first).len(), 3);
    // Signed out: sent to sign in, nothing shown.
    let anonymous = app.get("/builds/bench-heater/runs", None).await;
    assert!(anonymous.status.is_redirection());
}
