//! Cross-site request forgery protection for every state-changing request: the Origin (or
//! Referer) must be this server's, and the form must echo the session's token.
//!
//! Requests with a bearer token (scripts) carry no ambient authority and skip both checks.
//! A request with no Origin, no Referer and no cookie is not a browser acting for a signed-in
//! user either (a script on the model endpoint, say), and passes; the handler still demands a
//! session or token where one is needed.

use axum::body::{Body, to_bytes};
use axum::extract::{Request, State};
use axum::http::{HeaderMap, Method, header};
use axum::middleware::Next;
use axum::response::{IntoResponse, Response};

use crate::web::accounts::session::{PRE_SESSION_CSRF_COOKIE, Visitor, cookie};
use crate::web::{AppError, AppState};

/// Form bodies larger than this are refused before parsing (uploads go by multipart).
const FORM_LIMIT_BYTES: usize = 256 * 1024;
pub const CSRF_FIELD: &str = "csrf";
pub const CSRF_HEADER: &str = "x-csrf-token";

pub async fn guard(State(state): State<AppState>, request: Request, next: Next) -> Response {
    if matches!(
        *request.method(),
        Method::GET | Method::HEAD | Method::OPTIONS
    ) {
        return next.run(request).await;
    }
    let headers = request.headers();
    if has_bearer(headers) {
        return next.run(request).await;
    }
    let origin = request_origin(headers);
    let has_cookie = headers.contains_key(header::COOKIE);
    match origin {
        Some(origin) if origin == expected_origin(&state, headers) => {}
        None if !has_cookie => return next.run(request).await,
        _ => return refused("this form came from another site; reload the page and try again"),
    }
    let expected = match request.extensions().get::<Visitor>() {
        Some(Visitor(Some(user))) => Some(user.csrf_token.clone()),
        _ => cookie(headers, PRE_SESSION_CSRF_COOKIE),
    };
    let Some(expected) = expected else {
        return refused("your session has expired; reload the page and try again");
    };
    let (request, presented) = match presented_token(request).await {
        Ok(found) => found,
        Err(response) => return response,
    };
    if presented.as_deref() != Some(expected.as_str()) {
        return refused("this form is out of date; reload the page and try again");
    }
    next.run(request).await
}

fn refused(message: &str) -> Response {
    AppError::BadRequest(message.to_string()).into_response()
}

fn has_bearer(headers: &HeaderMap) -> bool {
    headers
        .get(header::AUTHORIZATION)
        .and_then(|v| v.to_str().ok())
        .is_some_and(|v| v.starts_with("Bearer "))
}

/// The origin a browser says the request came from: Origin, else the Referer's origin.
fn request_origin(headers: &HeaderMap) -> Option<String> {
    if let Some(origin) = headers.get(header::ORIGIN).and_then(|v| v.to_str().ok()) {
        return Some(origin.to_string());
    }
    let referer = headers.get(header::REFERER)?.to_str().ok()?;
    let (scheme, rest) = referer.split_once("://")?;
    let host = rest.split('/').next()?;
    Some(format!("{scheme}://{host}"))
}

/// The origin users reach this server at: the configured one, else the request's Host.
pub fn expected_origin(state: &AppState, headers: &HeaderMap) -> String {
    if let Some(origin) = &state.config.public_origin {
        return origin.trim_end_matches('/').to_string();
    }
    let header_text = |name: &str| headers.get(name).and_then(|v| v.to_str().ok());
    let forwarded = |name: &str| header_text(name).filter(|_| state.config.trust_forwarded);
    let host = forwarded("x-forwarded-host")
        .or_else(|| header_text(header::HOST.as_str()))
        .unwrap_or("");
    let scheme = match forwarded("x-forwarded-proto") {
        Some(proto) if proto.eq_ignore_ascii_case("https") => "https",
        Some(_) => "http",
        None if state.config.secure_cookies => "https",
        None => "http",
    };
    format!("{scheme}://{host}")
}

/// The token the request presents: the header, or the `csrf` field of a url-encoded form (the
/// body is read and put back for the handler), or the `csrf` query parameter of a multipart form.
async fn presented_token(request: Request) -> Result<(Request, Option<String>), Response> {
    if let Some(token) = request
        .headers()
        .get(CSRF_HEADER)
        .and_then(|v| v.to_str().ok())
    {
        let token = token.to_string();
        return Ok((request, Some(token)));
    }
    let content_type = request
        .headers()
        .get(header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
        .unwrap_or("")
        .to_string();
    if content_type.starts_with("application/x-www-form-urlencoded") {
        let (parts, body) = request.into_parts();
        let bytes = to_bytes(body, FORM_LIMIT_BYTES)
            .await
            .map_err(|_| AppError::BadRequest("the form is too large".into()).into_response())?;
        let token = form_urlencoded::parse(&bytes)
            .find(|(key, _)| key == CSRF_FIELD)
            .map(|(_, value)| value.into_owned());
        return Ok((Request::from_parts(parts, Body::from(bytes)), token));
    }
    let token = request.uri().query().and_then(|query| {
        form_urlencoded::parse(query.as_bytes())
            .find(|(key, _)| key == CSRF_FIELD)
            .map(|(_, value)| value.into_owned())
    });
    Ok((request, token))
}
