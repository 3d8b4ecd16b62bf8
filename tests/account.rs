//! Own account and the admin's accounts page: a password change ends the other sessions; only
//! an admin manages accounts; forwarded headers count only when configured.

mod common;

use std::sync::Arc;

use axum::body::Body;
use axum::http::{Request, StatusCode};
use common::{PASSWORD, TestApp, form_body};
use eddybench::AppState;
use eddybench::config::Config;
use eddybench::store::{Store, UserRole};

#[tokio::test]
async fn a_password_change_ends_every_other_session() {
    let app = TestApp::new().await;
    let phone = app.signed_in("ada", UserRole::Editor).await;
    let laptop = app.login("ada", PASSWORD).await.unwrap();
    let wrong = app
        .post_form(
            "/account/password",
            &phone,
            &[
                ("current", "not it"),
                ("new", "a brand new long password"),
                ("repeat", "a brand new long password"),
            ],
        )
        .await;
    assert_eq!(wrong.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(
        wrong.attr("input[name=current]", "aria-invalid").as_deref(),
        Some("true")
    );
    let short = app
        .post_form(
            "/account/password",
            &phone,
            &[("current", PASSWORD), ("new", "short"), ("repeat", "short")],
        )
        .await;
    assert_eq!(short.status, StatusCode::UNPROCESSABLE_ENTITY);
    assert_eq!(
        app.get("/", Some(&laptop)).await.status,
        StatusCode::OK,
        "nothing changed yet"
    );

    let done = app
        .post_form(
            "/account/password",
            &phone,
            &[
                ("current", PASSWORD),
                ("new", "a brand new long password"),
                ("repeat", "a brand new long password"),
            ],
        )
        .await;
    assert_eq!(done.status, StatusCode::OK);
    assert_eq!(done.count("#password-changed"), 1);
    assert_eq!(
        app.get("/", Some(&phone)).await.status,
        StatusCode::OK,
        "this session goes on"
    );
    assert_eq!(
        app.get("/", Some(&laptop)).await.status,
        StatusCode::SEE_OTHER,
        "the other one is signed out"
    );
    assert!(
        app.login("ada", PASSWORD).await.is_none(),
        "the old password is gone"
    );
    assert!(
        app.login("ada", "a brand new long password")
            .await
            .is_some()
    );
}

#[tokio::test]
async fn only_an_admin_manages_accounts() {
    let app = TestApp::new().await;
    let editor = app.signed_in("ed", UserRole::Editor).await;
    assert_eq!(
        app.get("/admin/users", Some(&editor)).await.status,
        StatusCode::FORBIDDEN
    );
    let refused = app
        .post_form(
            "/admin/users",
            &editor,
            &[("name", "mallory"), ("role", "admin")],
        )
        .await;
    assert_eq!(refused.status, StatusCode::FORBIDDEN);
    assert_eq!(app.count_rows("users").await, 1);

    let admin = app.signed_in("root", UserRole::Admin).await;
    let page = app.get("/admin/users", Some(&admin)).await;
    assert_eq!(page.select_texts("#users strong"), vec!["ed", "root"]);
    let bad = app
        .post_form(
            "/admin/users",
            &admin,
            &[("name", "has space"), ("role", "editor")],
        )
        .await;
    assert_eq!(bad.status, StatusCode::UNPROCESSABLE_ENTITY);
    let added = app
        .post_form(
            "/admin/users",
            &admin,
            &[("name", "vic"), ("display_name", "Vic"), ("role", "viewer")],
        )
        .await;
    assert_eq!(added.status, StatusCode::OK);
    let password = added.select_texts("#new-password code").join("");
    assert_eq!(password.len(), 20, "a generated password is shown once");
    assert!(app.login("vic", &password).await.is_some());
    let again = app
        .post_form(
            "/admin/users",
            &admin,
            &[("name", "vic"), ("role", "viewer")],
        )
        .await;
    assert_eq!(
        again.status,
        StatusCode::UNPROCESSABLE_ENTITY,
        "a taken name"
    );
}

async fn post_build(
    router: &axum::Router,
    cookie: &str,
    csrf: &str,
    origin: &str,
    forwarded_proto: Option<&str>,
) -> StatusCode {
    let mut request = Request::post("/builds")
        .header("host", common::HOST)
        .header("origin", origin)
        .header("cookie", cookie)
        .header("content-type", "application/x-www-form-urlencoded");
    if let Some(proto) = forwarded_proto {
        request = request.header("x-forwarded-proto", proto);
    }
    let body = form_body(&[("csrf", csrf), ("name", "Behind a proxy")]);
    tower::ServiceExt::oneshot(router.clone(), request.body(Body::from(body)).unwrap())
        .await
        .unwrap()
        .status()
}

#[tokio::test]
async fn forwarded_headers_count_only_when_configured() {
    let app = TestApp::new().await;
    let session = app.signed_in("ada", UserRole::Editor).await;
    let https_origin = format!("https://{}", common::HOST);
    // Not configured: a claimed https origin does not match the plain-http server.
    let plain = post_build(
        &app.router,
        &session.cookie,
        &session.csrf,
        &https_origin,
        Some("https"),
    )
    .await;
    assert_eq!(plain, StatusCode::BAD_REQUEST);
    // Configured behind a proxy: the same request is the proxy's https origin.
    let store: Store = app.store.clone();
    let mut config = Config::new(app.data_dir().to_path_buf());
    config.trust_forwarded = true;
    let proxied = eddybench::app(AppState {
        store,
        config: Arc::new(config),
        run_feeds: Default::default(),
    });
    let trusted = post_build(
        &proxied,
        &session.cookie,
        &session.csrf,
        &https_origin,
        Some("https"),
    )
    .await;
    assert_eq!(trusted, StatusCode::SEE_OTHER);
    assert_eq!(app.count_rows("builds").await, 1);
}
