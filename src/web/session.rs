//! Who is asking: the session cookie resolved to a user once per request, and the extractors that
//! demand a role.

use axum::extract::{FromRequestParts, Request, State};
use axum::http::request::Parts;
use axum::http::{HeaderMap, header};
use axum::middleware::Next;
use axum::response::Response;

use super::{AppError, AppState};
use crate::secrets::token_hash;
use crate::store::{SessionUser, UserRole};

pub const SESSION_COOKIE: &str = "eb_session";
/// The token a form must echo before there is a session (the login form).
pub const PRE_SESSION_CSRF_COOKIE: &str = "eb_csrf";

/// The signed-in user of this request, if any (`None` for anonymous visitors).
#[derive(Clone, Debug)]
pub struct Visitor(pub Option<SessionUser>);

/// A signed-in user; extracting it refuses anonymous visitors.
#[derive(Clone, Debug)]
pub struct CurrentUser(pub SessionUser);

/// A signed-in user who may write (editor or admin).
#[derive(Clone, Debug)]
pub struct Editor(pub SessionUser);

/// Resolves the session cookie before any handler runs.
pub async fn load(State(state): State<AppState>, mut request: Request, next: Next) -> Response {
    let user = match cookie(request.headers(), SESSION_COOKIE) {
        Some(id) => state
            .store
            .session_user(
                &token_hash(&id),
                state.config.session_idle_s,
                state.config.session_absolute_s,
            )
            .await
            .unwrap_or_else(|error| {
                tracing::error!(?error, "session lookup failed");
                None
            }),
        None => None,
    };
    request.extensions_mut().insert(Visitor(user));
    next.run(request).await
}

impl<S: Send + Sync> FromRequestParts<S> for Visitor {
    type Rejection = AppError;
    async fn from_request_parts(parts: &mut Parts, _: &S) -> Result<Self, AppError> {
        Ok(parts
            .extensions
            .get::<Visitor>()
            .cloned()
            .unwrap_or(Visitor(None)))
    }
}

impl<S: Send + Sync> FromRequestParts<S> for CurrentUser {
    type Rejection = AppError;
    async fn from_request_parts(parts: &mut Parts, state: &S) -> Result<Self, AppError> {
        let Visitor(user) = Visitor::from_request_parts(parts, state).await?;
        user.map(CurrentUser).ok_or(AppError::LoginRequired)
    }
}

impl<S: Send + Sync> FromRequestParts<S> for Editor {
    type Rejection = AppError;
    async fn from_request_parts(parts: &mut Parts, state: &S) -> Result<Self, AppError> {
        let CurrentUser(user) = CurrentUser::from_request_parts(parts, state).await?;
        if user.role >= UserRole::Editor {
            Ok(Editor(user))
        } else {
            Err(AppError::Forbidden)
        }
    }
}

/// The value of one cookie of the request.
pub fn cookie(headers: &HeaderMap, name: &str) -> Option<String> {
    headers
        .get_all(header::COOKIE)
        .iter()
        .filter_map(|v| v.to_str().ok())
        .flat_map(|v| v.split(';'))
        .filter_map(|pair| pair.trim().split_once('='))
        .find(|(key, _)| *key == name)
        .map(|(_, value)| value.to_string())
}

/// A `Set-Cookie` value: HttpOnly and SameSite=Lax always, Secure when served over https.
pub fn set_cookie(name: &str, value: &str, max_age_s: i64, secure: bool) -> String {
    let secure = if secure { "; Secure" } else { "" };
    format!("{name}={value}; Path=/; HttpOnly; SameSite=Lax; Max-Age={max_age_s}{secure}")
}
