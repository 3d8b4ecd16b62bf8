//! Disabling an account, changing its role, and revoking tokens with a password change: from
//! the admin page and the command line, in force at the account's next request.

mod common;

use std::process::Command;

use axum::body::Body;
use axum::http::{Request, StatusCode, header};
use common::{HOST, PASSWORD, TestApp};
use eddybench::store::UserRole;

async fn api_status(app: &TestApp, token: &str) -> StatusCode {
    app.send(
        Request::get("/api/v1/builds")
            .header(header::HOST, HOST)
            .header(header::AUTHORIZATION, format!("Bearer {token}"))
            .body(Body::empty())
            .unwrap(),
    )
    .await
    .status
}

#[tokio::test]
async fn a_disabled_account_stops_at_once_and_comes_back_when_enabled() {
    let app = TestApp::new().await;
    let admin = app.signed_in("root", UserRole::Admin).await;
    let ada = app.signed_in("ada", UserRole::Editor).await;
    let id = app.store.user_by_name("ada").await.unwrap().unwrap().id;
    let token = app.store.create_token(id, "logger").await.unwrap().token;
    assert_eq!(api_status(&app, &token).await, StatusCode::OK);

    let page = app
        .post_form(
            "/admin/users/ada/access",
            &admin,
            &[("role", "editor"), ("disabled", "on")],
        )
        .await;
    assert_eq!(page.status, StatusCode::SEE_OTHER, "{}", page.body);
    // The session and the token stop at the next request; signing in is refused.
    let after = app.get("/account/password", Some(&ada)).await;
    assert_eq!(after.status, StatusCode::SEE_OTHER, "signed out");
    assert_eq!(api_status(&app, &token).await, StatusCode::UNAUTHORIZED);
    assert!(app.login("ada", PASSWORD).await.is_none());
    let listed = app.get("/admin/users", Some(&admin)).await;
    assert!(
        listed
            .select_texts("#user-ada")
            .join(" ")
            .contains("disabled")
    );

    // Enabled again, as a viewer: signs in, reads, cannot write.
    let page = app
        .post_form("/admin/users/ada/access", &admin, &[("role", "viewer")])
        .await;
    assert_eq!(page.status, StatusCode::SEE_OTHER);
    let back = app.login("ada", PASSWORD).await.expect("signs in again");
    assert_eq!(
        app.get("/account/password", Some(&back)).await.status,
        StatusCode::OK
    );
    let write = app
        .post_form("/builds", &back, &[("name", "Viewer build")])
        .await;
    assert_eq!(write.status, StatusCode::FORBIDDEN);
}

#[tokio::test]
async fn the_last_admin_is_never_disabled_or_demoted() {
    let app = TestApp::new().await;
    let admin = app.signed_in("root", UserRole::Admin).await;
    let before = app
        .store
        .table_fingerprints(&["sessions.last_seen_at"])
        .await
        .unwrap();
    for fields in [
        vec![("role", "admin"), ("disabled", "on")],
        vec![("role", "editor")],
        vec![("role", "emperor")],
    ] {
        let page = app
            .post_form("/admin/users/root/access", &admin, &fields)
            .await;
        assert_eq!(page.status, StatusCode::UNPROCESSABLE_ENTITY, "{fields:?}");
        assert_eq!(page.count("#access-error"), 1);
    }
    let after = app
        .store
        .table_fingerprints(&["sessions.last_seen_at"])
        .await
        .unwrap();
    assert_eq!(before, after, "nothing changed");
}

#[tokio::test]
async fn a_password_change_can_revoke_the_accounts_tokens() {
    let app = TestApp::new().await;
    let ada = app.signed_in("ada", UserRole::Editor).await;
    let id = app.store.user_by_name("ada").await.unwrap().unwrap().id;
    let token = app.store.create_token(id, "logger").await.unwrap().token;
    let changed = app
        .post_form(
            "/account/password",
            &ada,
            &[
                ("current", PASSWORD),
                ("new", "a much longer passphrase"),
                ("repeat", "a much longer passphrase"),
                ("revoke_tokens", "on"),
            ],
        )
        .await;
    assert_eq!(changed.status, StatusCode::OK, "{}", changed.body);
    assert_eq!(api_status(&app, &token).await, StatusCode::UNAUTHORIZED);
}

#[test]
fn the_command_line_disables_enables_and_changes_roles() {
    let dir = tempfile::tempdir().unwrap();
    let run = |args: &[&str]| {
        Command::new(env!("CARGO_BIN_EXE_eddybench"))
            .args(args)
            .arg("--data-dir")
            .arg(dir.path())
            .env("RUST_BACKTRACE", "0")
            .output()
            .unwrap()
    };
    assert!(
        run(&["user", "add", "root", "--role", "admin"])
            .status
            .success()
    );
    assert!(
        run(&["user", "add", "ada", "--role", "editor"])
            .status
            .success()
    );
    let disabled = run(&["user", "disable", "ada"]);
    assert!(disabled.status.success(), "{disabled:?}");
    let list = String::from_utf8(run(&["user", "list"]).stdout).unwrap();
    assert!(
        list.lines()
            .any(|l| l.starts_with("ada") && l.contains("disabled")),
        "{list}"
    );
    assert!(run(&["user", "enable", "ada"]).status.success());
    assert!(run(&["user", "role", "ada", "viewer"]).status.success());
    let list = String::from_utf8(run(&["user", "list"]).stdout).unwrap();
    assert!(
        list.lines()
            .any(|l| l.starts_with("ada") && l.contains("viewer") && !l.contains("disabled")),
        "{list}"
    );
    // The last admin stays; an unknown name is named.
    let refused = run(&["user", "disable", "root"]);
    assert!(!refused.status.success());
    assert!(String::from_utf8_lossy(&refused.stderr).contains("last admin"));
    let missing = run(&["user", "role", "nobody", "admin"]);
    assert!(String::from_utf8_lossy(&missing.stderr).contains("no user named nobody"));
}
