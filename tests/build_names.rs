//! A new build's name, purpose and notes get one check from the new-build form and the API: the
//! same bad input names the same field from both doors and saves nothing; reserved words never
//! become an address.

mod common;

use axum::http::StatusCode;
use common::TestApp;
use eddybench::store::UserRole;
use serde_json::json;

#[tokio::test]
async fn the_same_bad_build_gets_the_same_answer_from_the_form_and_the_api() {
    let app = TestApp::new().await;
    let session = app.signed_in("ada", UserRole::Editor).await;
    let user = app.store.user_by_name("ada").await.unwrap().unwrap();
    let token = app.store.create_token(user.id, "test").await.unwrap().token;
    let long_name = "x".repeat(121);
    let long_purpose = "p".repeat(4001);
    let long_notes = "n".repeat(20_001);
    // (what, name, purpose, notes, the field refused)
    let cases: [(&str, &str, &str, &str, &str); 8] = [
        ("empty", "", "", "", "name"),
        ("blank", "   ", "", "", "name"),
        ("a NUL", "coil\u{0}two", "", "", "name"),
        ("a right-to-left override", "coil\u{202E}3v", "", "", "name"),
        ("a line break", "two\nlines", "", "", "name"),
        ("oversize name", &long_name, "", "", "name"),
        ("oversize purpose", "ok", &long_purpose, "", "purpose"),
        ("oversize notes", "ok", "", &long_notes, "notes"),
    ];
    let before = app
        .store
        .table_fingerprints(&["api_tokens.last_used_at"])
        .await
        .unwrap();
    for (what, name, purpose, notes, field) in cases {
        let page = app
            .post_form(
                "/builds",
                &session,
                &[("name", name), ("purpose", purpose), ("notes", notes)],
            )
            .await;
        assert_eq!(
            page.status,
            StatusCode::UNPROCESSABLE_ENTITY,
            "form: {what}"
        );
        let marked = page.attr(&format!("[name={field}]"), "aria-invalid");
        let message = page.select_texts("p.error").join(" ");
        assert!(
            marked.as_deref() == Some("true") || !message.is_empty(),
            "form: {what}: the field is marked"
        );
        let api = app
            .post_json(
                "/api/v1/builds",
                Some(&token),
                &json!({"name": name, "purpose": purpose, "notes": notes}).to_string(),
            )
            .await;
        assert_eq!(api.status, StatusCode::UNPROCESSABLE_ENTITY, "api: {what}");
        let answer = api.json();
        assert_eq!(answer["field"], field, "api: {what}: {answer}");
        assert!(
            message.contains(answer["error"].as_str().unwrap_or("?")),
            "{what}: page {message:?}, api {answer}"
        );
    }
    assert_eq!(
        before,
        app.store
            .table_fingerprints(&["api_tokens.last_used_at"])
            .await
            .unwrap(),
        "nothing saved"
    );
}

#[tokio::test]
async fn a_reserved_word_never_becomes_an_address() {
    let app = TestApp::new().await;
    let session = app.signed_in("ada", UserRole::Editor).await;
    for (name, slug) in [
        ("new", "new-build"),
        ("Export", "export-build"),
        ("New coil", "new-coil"),
    ] {
        let made = app.post_form("/builds", &session, &[("name", name)]).await;
        assert_eq!(made.status, StatusCode::SEE_OTHER, "{name}: {}", made.body);
        assert_eq!(made.location(), format!("/builds/{slug}"), "{name}");
        let shown = app.get(&made.location(), Some(&session)).await;
        assert_eq!(shown.status, StatusCode::OK, "{name}");
        assert!(shown.body.contains(name), "{name}");
    }
    // The new-build form still answers at its own address.
    let form = app.get("/builds/new", Some(&session)).await;
    assert_eq!(form.count("form[action='/builds']"), 1);
}
