//! Signing in and out.

use askama::Template;
use askama_web::WebTemplate;
use axum::Form;
use axum::extract::{Query, State};
use axum::http::header;
use axum::response::{AppendHeaders, IntoResponse, Redirect, Response};
use serde::Deserialize;

use crate::secrets::{decoy_hash, random_token, token_hash, verify_password};
use crate::web::accounts::session::{
    PRE_SESSION_CSRF_COOKIE, SESSION_COOKIE, Visitor, cookie, set_cookie,
};
use crate::web::chrome::Chrome;
use crate::web::routes::{Access, Routes};
use crate::web::{AppError, AppState, Result};

pub fn router() -> Routes {
    Routes::new()
        .get("/login", Access::Public, login_page)
        .post("/login", Access::Public, login)
        .post("/logout", Access::Public, logout)
}

#[derive(Template, WebTemplate)]
#[template(path = "auth/login.html")]
struct LoginPage {
    chrome: Chrome,
    name: String,
    next: String,
    error: String,
}

#[derive(Deserialize)]
struct NextQuery {
    next: Option<String>,
}

/// Only local paths: `next` must not send a user to another site after signing in. Browsers
/// drop tabs and line breaks from an address (so `/<tab>/evil` reads `//evil`) and take `\` for
/// `/`, so a path with either is refused too.
fn safe_next(next: Option<&str>) -> String {
    match next {
        Some(path)
            if path.starts_with('/')
                && !path.starts_with("//")
                && !path.contains('\\')
                && !path.chars().any(char::is_control) =>
        {
            path.to_string()
        }
        _ => "/".to_string(),
    }
}

fn login_form(state: &AppState, headers: &axum::http::HeaderMap, page: LoginPage) -> Response {
    let _ = headers;
    let csrf = page.chrome.csrf.clone();
    let cookie = set_cookie(
        PRE_SESSION_CSRF_COOKIE,
        &csrf,
        3600,
        state.config.secure_cookies,
    );
    ([(header::SET_COOKIE, cookie)], page).into_response()
}

fn pre_session_token(headers: &axum::http::HeaderMap) -> String {
    cookie(headers, PRE_SESSION_CSRF_COOKIE)
        .filter(|t| t.len() == 64 && t.bytes().all(|b| b.is_ascii_hexdigit()))
        .unwrap_or_else(random_token)
}

async fn login_page(
    State(state): State<AppState>,
    Visitor(user): Visitor,
    headers: axum::http::HeaderMap,
    Query(query): Query<NextQuery>,
) -> Response {
    let next = safe_next(query.next.as_deref());
    if user.is_some() {
        return Redirect::to(&next).into_response();
    }
    let page = LoginPage {
        chrome: Chrome::anonymous("Sign in", pre_session_token(&headers)),
        name: String::new(),
        next,
        error: String::new(),
    };
    login_form(&state, &headers, page)
}

#[derive(Deserialize)]
struct LoginForm {
    name: String,
    password: String,
    next: Option<String>,
}

/// After this many failures on one account name, each further try waits, doubling up to a
/// minute: at most about 60 guesses an hour, and the real user is back in within a minute.
const FREE_FAILURES: i64 = 3;
const MAX_WAIT_S: i64 = 60;

fn wait_after_failures_s(failures: i64) -> i64 {
    if failures < FREE_FAILURES {
        0
    } else {
        (1i64 << (failures - FREE_FAILURES).min(6)).min(MAX_WAIT_S)
    }
}

async fn login(
    State(state): State<AppState>,
    headers: axum::http::HeaderMap,
    Form(form): Form<LoginForm>,
) -> Result<Response> {
    let name = form.name.trim().to_string();
    let next = safe_next(form.next.as_deref());
    let again = |error: &str| {
        let page = LoginPage {
            chrome: Chrome::anonymous("Sign in", pre_session_token(&headers)),
            name: name.clone(),
            next: next.clone(),
            error: error.to_string(),
        };
        let mut response = login_form(&state, &headers, page);
        *response.status_mut() = axum::http::StatusCode::UNAUTHORIZED;
        response
    };
    // The attempt counts as a failure before the password is checked, so that guesses sent
    // at once cannot all pass the wait.
    if let Some(wait) = state
        .store
        .claim_login_attempt(&name, wait_after_failures_s)
        .await?
    {
        return Ok(again(&format!(
            "Too many failed sign-ins for this name. Wait {wait} s and try again."
        )));
    }
    let user = state.store.user_by_name(&name).await?;
    let stored_hash = user
        .as_ref()
        .map_or_else(|| decoy_hash().to_string(), |u| u.password_hash.clone());
    let password = form.password;
    let verified = tokio::task::spawn_blocking(move || verify_password(&password, &stored_hash))
        .await
        .map_err(|e| AppError::Internal(e.into()))?;
    let user = match (user, verified) {
        (Some(user), true) => user,
        _ => return Ok(again("That name and password do not match an account.")),
    };
    state.store.clear_login_failures(&name).await?;
    // A fresh session id on every sign-in: an id planted before sign-in is worth nothing.
    if let Some(old) = cookie(&headers, SESSION_COOKIE) {
        state.store.delete_session(&token_hash(&old)).await?;
    }
    let session_id = random_token();
    state
        .store
        .create_session(&token_hash(&session_id), user.id, &random_token())
        .await?;
    let secure = state.config.secure_cookies;
    let session_cookie = set_cookie(
        SESSION_COOKIE,
        &session_id,
        state.config.session_absolute_s,
        secure,
    );
    let clear_pre = set_cookie(PRE_SESSION_CSRF_COOKIE, "", 0, secure);
    Ok((
        AppendHeaders([
            (header::SET_COOKIE, session_cookie),
            (header::SET_COOKIE, clear_pre),
        ]),
        Redirect::to(&next),
    )
        .into_response())
}

async fn logout(State(state): State<AppState>, headers: axum::http::HeaderMap) -> Result<Response> {
    if let Some(id) = cookie(&headers, SESSION_COOKIE) {
        state.store.delete_session(&token_hash(&id)).await?;
    }
    let clear = set_cookie(SESSION_COOKIE, "", 0, state.config.secure_cookies);
    Ok(([(header::SET_COOKIE, clear)], Redirect::to("/login")).into_response())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn next_stays_on_this_site() {
        assert_eq!(safe_next(Some("/builds/x")), "/builds/x");
        assert_eq!(safe_next(Some("//evil.example")), "/");
        assert_eq!(safe_next(Some("https://evil.example")), "/");
        assert_eq!(safe_next(Some("/\\evil.example")), "/");
        assert_eq!(safe_next(Some("/\t/evil.example")), "/");
        assert_eq!(safe_next(Some("/\r\n/evil.example")), "/");
        assert_eq!(safe_next(None), "/");
    }

    #[test]
    fn waits_grow_and_are_capped() {
        assert_eq!(wait_after_failures_s(0), 0);
        assert_eq!(wait_after_failures_s(2), 0);
        assert_eq!(wait_after_failures_s(3), 1);
        assert_eq!(wait_after_failures_s(5), 4);
        assert_eq!(wait_after_failures_s(50), MAX_WAIT_S);
    }
}
