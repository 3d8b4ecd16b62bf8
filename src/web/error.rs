//! One error type for every handler. It renders as an HTML page on pages and as JSON under
//! `/api`: the handler's response carries the error, and `render` picks the format by path.

use axum::Json;
use axum::extract::Request;
use axum::http::{StatusCode, header};
use axum::middleware::Next;
use axum::response::{Html, IntoResponse, Redirect, Response};
use serde::Serialize;

use crate::store::StoreError;

pub type Result<T, E = AppError> = std::result::Result<T, E>;

#[derive(Debug, thiserror::Error)]
pub enum AppError {
    #[error("not found")]
    NotFound,
    #[error("sign in first")]
    LoginRequired,
    #[error("your account may not do this")]
    Forbidden,
    #[error("{0}")]
    BadRequest(String),
    /// A value that failed validation; `field` names it (a form field or a JSON path).
    #[error("{field}: {message}")]
    Invalid { field: String, message: String },
    #[error("{0}")]
    Conflict(String),
    #[error("internal error")]
    Internal(#[from] anyhow::Error),
}

impl AppError {
    pub fn invalid(field: impl Into<String>, message: impl Into<String>) -> AppError {
        AppError::Invalid {
            field: field.into(),
            message: message.into(),
        }
    }

    fn status(&self) -> StatusCode {
        match self {
            AppError::NotFound => StatusCode::NOT_FOUND,
            AppError::LoginRequired => StatusCode::UNAUTHORIZED,
            AppError::Forbidden => StatusCode::FORBIDDEN,
            AppError::BadRequest(_) => StatusCode::BAD_REQUEST,
            AppError::Invalid { .. } => StatusCode::UNPROCESSABLE_ENTITY,
            AppError::Conflict(_) => StatusCode::CONFLICT,
            AppError::Internal(_) => StatusCode::INTERNAL_SERVER_ERROR,
        }
    }
}

impl From<StoreError> for AppError {
    fn from(error: StoreError) -> AppError {
        match error {
            StoreError::NotFound => AppError::NotFound,
            StoreError::Conflict(message) => AppError::Conflict(message),
            other => AppError::Internal(other.into()),
        }
    }
}

/// What the client is told: never an internal cause.
#[derive(Debug, Clone, Serialize)]
pub struct ErrorBody {
    pub error: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub field: Option<String>,
}

impl IntoResponse for AppError {
    fn into_response(self) -> Response {
        let status = self.status();
        if let AppError::Internal(cause) = &self {
            tracing::error!(error = ?cause, "request failed");
        }
        let body = ErrorBody {
            error: match &self {
                AppError::Invalid { message, .. } => message.clone(),
                other => other.to_string(),
            },
            field: match &self {
                AppError::Invalid { field, .. } => Some(field.clone()),
                _ => None,
            },
        };
        let mut response = status.into_response();
        response.extensions_mut().insert(body);
        response
    }
}

/// Renders errors raised by handlers (and axum's own rejections) in the format of the area.
pub async fn render(request: Request, next: Next) -> Response {
    let path = request.uri().path().to_string();
    let is_api = path.starts_with("/api/");
    let response = next.run(request).await;
    let status = response.status();
    let body = response.extensions().get::<ErrorBody>().cloned();
    let body = match body {
        Some(body) => body,
        // Rejections of extractors (a malformed form, a wrong content type) come as plain text.
        None if is_bare_error(&response) => ErrorBody {
            error: default_message(status),
            field: None,
        },
        None => return response,
    };
    if is_api {
        return (status, Json(body)).into_response();
    }
    if status == StatusCode::UNAUTHORIZED {
        let next = urlencode(&path);
        return Redirect::to(&format!("/login?next={next}")).into_response();
    }
    (
        status,
        Html(crate::web::chrome::error_page(status, &body.error)),
    )
        .into_response()
}

/// An error status with no body of ours: empty or axum's plain-text rejection.
fn is_bare_error(response: &Response) -> bool {
    let status = response.status();
    let content_type = response
        .headers()
        .get(header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok());
    (status.is_client_error() || status.is_server_error())
        && content_type.is_none_or(|v| v.starts_with("text/plain"))
}

fn default_message(status: StatusCode) -> String {
    match status {
        StatusCode::NOT_FOUND => "not found".into(),
        StatusCode::METHOD_NOT_ALLOWED => "method not allowed".into(),
        StatusCode::PAYLOAD_TOO_LARGE => "the request is too large".into(),
        StatusCode::UNSUPPORTED_MEDIA_TYPE => "unsupported content type".into(),
        s if s.is_server_error() => "internal error".into(),
        _ => "the request could not be read".into(),
    }
}

/// Percent-encodes a path for a query parameter.
pub fn urlencode(text: &str) -> String {
    text.bytes()
        .map(|b| match b {
            b'A'..=b'Z' | b'a'..=b'z' | b'0'..=b'9' | b'-' | b'_' | b'.' | b'~' | b'/' => {
                (b as char).to_string()
            }
            _ => format!("%{b:02X}"),
        })
        .collect()
}
