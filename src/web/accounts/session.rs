//! Who is asking: the bearer token or the session cookie resolved to a user once per request,
//! and the extractors that demand a role. A token acts with its user's role.

use axum::Json;
use axum::extract::{FromRequestParts, Request, State};
use axum::http::request::Parts;
use axum::http::{HeaderMap, StatusCode, header};
use axum::middleware::Next;
use axum::response::{IntoResponse, Response};

use crate::secrets::token_hash;
use crate::store::{SessionUser, UserRole};
use crate::web::error::ErrorBody;
use crate::web::{AppError, AppState};

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

/// Resolves the bearer token or the session cookie before any handler runs.
pub async fn load(State(state): State<AppState>, mut request: Request, next: Next) -> Response {
    if let Some(hash) = bearer_token(request.headers()).map(token_hash) {
        let user = match state.store.token_user(&hash).await {
            Ok(Some(user)) => user,
            // A script with a bad token must hear so, not carry on as an anonymous visitor.
            Ok(None) => return invalid_token(),
            Err(error) => return AppError::Internal(error.into()).into_response(),
        };
        request.extensions_mut().insert(Visitor(Some(SessionUser {
            user_id: user.user_id,
            name: user.name,
            display_name: user.display_name,
            role: user.role,
            // Bearer requests skip the form-token check (csrf.rs); there is no form to echo it.
            csrf_token: String::new(),
        })));
        return next.run(request).await;
    }
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

/// The token of an `Authorization: Bearer <token>` header (the same test as csrf.rs makes).
fn bearer_token(headers: &HeaderMap) -> Option<&str> {
    headers
        .get(header::AUTHORIZATION)?
        .to_str()
        .ok()?
        .strip_prefix("Bearer ")
        .map(str::trim)
}

/// 401 with the RFC 6750 challenge, as JSON on every path (only scripts send bearer tokens).
fn invalid_token() -> Response {
    (
        StatusCode::UNAUTHORIZED,
        [(header::WWW_AUTHENTICATE, r#"Bearer error="invalid_token""#)],
        Json(ErrorBody {
            error: "the API token is not valid or has been revoked".into(),
            field: None,
        }),
    )
        .into_response()
}

/// A signed-in administrator.
#[derive(Clone, Debug)]
pub struct Admin(pub SessionUser);

impl<S: Send + Sync> FromRequestParts<S> for Admin {
    type Rejection = AppError;
    async fn from_request_parts(parts: &mut Parts, state: &S) -> Result<Self, AppError> {
        let CurrentUser(user) = CurrentUser::from_request_parts(parts, state).await?;
        if user.role >= UserRole::Admin {
            Ok(Admin(user))
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
