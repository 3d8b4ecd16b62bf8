//! Accounts: sign-in, sessions, CSRF and roles through the real router.

mod common;

use axum::http::StatusCode;
use common::{ORIGIN, PASSWORD, TestApp, form_body};
use eddybench::store::UserRole;

#[tokio::test]
async fn anonymous_visitors_get_the_login_page_and_nothing_else() {
    let app = TestApp::new().await;
    for path in ["/", "/builds/new", "/builds/anything", "/builds/x/runs/1"] {
        let page = app.get(path, None).await;
        assert_eq!(page.status, StatusCode::SEE_OTHER, "{path}");
        assert!(
            page.location().starts_with("/login?next="),
            "{path} → {}",
            page.location()
        );
    }
    let login = app.get("/login", None).await;
    assert_eq!(login.status, StatusCode::OK);
    assert_eq!(login.count("form[action='/login'] input[name=password]"), 1);
}

#[tokio::test]
async fn a_good_login_opens_a_session_with_a_fresh_id() {
    let app = TestApp::new().await;
    let first = app.signed_in("ada", UserRole::Editor).await;
    let second = app.login("ada", PASSWORD).await.unwrap();
    assert_ne!(
        first.cookie, second.cookie,
        "each sign-in gets a new session id"
    );
    let page = app.get("/", Some(&second)).await;
    assert_eq!(page.status, StatusCode::OK);
    assert_eq!(page.select_texts("h1"), vec!["Builds"]);
}

#[tokio::test]
async fn a_wrong_login_says_the_same_for_unknown_user_and_wrong_password() {
    let app = TestApp::new().await;
    app.add_user("ada", UserRole::Editor).await;
    // The two compared attempts come first: after three failures from one source the throttle
    // answers instead (see the next test), whatever the name.
    let known = app.login_attempt("ada", "nope nope", "/").await;
    let unknown = app.login_attempt("nobody", "nope nope", "/").await;
    assert!(app.login("ada", "wrong password").await.is_none());
    let (status_known, text_known) = (known.status, known.select_texts("p.error"));
    let (status_unknown, text_unknown) = (unknown.status, unknown.select_texts("p.error"));
    assert_eq!(status_known, StatusCode::UNAUTHORIZED);
    assert_eq!(status_known, status_unknown);
    assert_eq!(text_known, text_unknown);
    assert_eq!(app.count_rows("sessions").await, 0);
}

#[tokio::test]
async fn repeated_failures_on_one_account_are_slowed_down() {
    let app = TestApp::new().await;
    app.add_user("ada", UserRole::Editor).await;
    for _ in 0..4 {
        assert!(app.login("ada", "wrong password").await.is_none());
    }
    // Now even the right password must wait.
    assert!(
        app.login("ada", PASSWORD).await.is_none(),
        "a throttled account refuses at once"
    );
    // The failing source waits too, for any account it tries (all test requests share one
    // source).
    app.add_user("bob", UserRole::Viewer).await;
    assert!(
        app.login("bob", PASSWORD).await.is_none(),
        "a throttled source refuses at once"
    );
}

#[tokio::test]
async fn a_post_without_the_form_token_is_refused_and_saves_nothing() {
    let app = TestApp::new().await;
    let session = app.signed_in("ada", UserRole::Editor).await;
    let no_token = app
        .post_raw(
            "/builds",
            Some(&session),
            Some(ORIGIN),
            &form_body(&[("name", "Forged")]),
        )
        .await;
    assert_eq!(no_token.status, StatusCode::BAD_REQUEST);
    let wrong_token = app
        .post_raw(
            "/builds",
            Some(&session),
            Some(ORIGIN),
            &form_body(&[("csrf", "0000"), ("name", "Forged")]),
        )
        .await;
    assert_eq!(wrong_token.status, StatusCode::BAD_REQUEST);
    let other_site = app
        .post_raw(
            "/builds",
            Some(&session),
            Some("http://evil.test"),
            &form_body(&[("csrf", &session.csrf), ("name", "Forged")]),
        )
        .await;
    assert_eq!(other_site.status, StatusCode::BAD_REQUEST);
    assert_eq!(app.count_rows("builds").await, 0);
    // The same form with the token from this site goes through.
    let good = app
        .post_form("/builds", &session, &[("name", "Real")])
        .await;
    assert_eq!(good.status, StatusCode::SEE_OTHER);
    assert_eq!(app.count_rows("builds").await, 1);
}

#[tokio::test]
async fn a_viewer_reads_but_is_refused_a_write() {
    let app = TestApp::new().await;
    let editor = app.signed_in("ada", UserRole::Editor).await;
    app.post_form("/builds", &editor, &[("name", "Coil test rig")])
        .await;
    let viewer = app.signed_in("vic", UserRole::Viewer).await;
    let page = app.get("/builds/coil-test-rig", Some(&viewer)).await;
    assert_eq!(page.status, StatusCode::OK);
    assert_eq!(
        page.count("#start-run"),
        0,
        "a viewer sees no edit controls"
    );
    let refused = app
        .post_form("/builds", &viewer, &[("name", "Not allowed")])
        .await;
    assert_eq!(refused.status, StatusCode::FORBIDDEN);
    let refused_form = app.get("/builds/new", Some(&viewer)).await;
    assert_eq!(refused_form.status, StatusCode::FORBIDDEN);
    assert_eq!(app.count_rows("builds").await, 1);
}

#[tokio::test]
async fn logout_ends_the_session() {
    let app = TestApp::new().await;
    let session = app.signed_in("ada", UserRole::Editor).await;
    let out = app.post_form("/logout", &session, &[]).await;
    assert_eq!(out.status, StatusCode::SEE_OTHER);
    assert_eq!(app.count_rows("sessions").await, 0);
    let after = app.get("/", Some(&session)).await;
    assert_eq!(
        after.status,
        StatusCode::SEE_OTHER,
        "the old cookie no longer signs in"
    );
}

#[tokio::test]
async fn login_redirects_only_to_local_paths() {
    let app = TestApp::new().await;
    app.add_user("ada", UserRole::Editor).await;
    let response = app.login_attempt("ada", PASSWORD, "//evil.test/").await;
    assert_eq!(response.status, StatusCode::SEE_OTHER);
    assert_eq!(response.location(), "/");
}

#[tokio::test]
async fn cookies_are_http_only_and_same_site() {
    let app = TestApp::new().await;
    let page = app.get("/login", None).await;
    let set_cookie = page.headers.get("set-cookie").unwrap().to_str().unwrap();
    assert!(set_cookie.contains("HttpOnly"));
    assert!(set_cookie.contains("SameSite=Lax"));
    assert!(
        !set_cookie.contains("Secure"),
        "plain http in tests: not Secure"
    );
}

#[tokio::test]
async fn health_answers_ok() {
    let app = TestApp::new().await;
    let page = app.get("/healthz", None).await;
    assert_eq!(page.status, StatusCode::OK);
    assert_eq!(page.body, "ok");
}
