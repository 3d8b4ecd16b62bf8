//! The JSON API under `/api/v1`.

pub mod builds;
pub mod logbook;
pub mod model;

use axum::extract::rejection::JsonRejection;
use axum::extract::{FromRequest, Request};
use serde::de::DeserializeOwned;

use crate::web::AppError;

/// `Json` whose rejections are our 422 JSON error, naming the field where serde can.
pub struct ApiJson<T>(pub T);

impl<S, T> FromRequest<S> for ApiJson<T>
where
    T: DeserializeOwned,
    S: Send + Sync,
{
    type Rejection = AppError;

    async fn from_request(request: Request, state: &S) -> Result<Self, AppError> {
        match axum::Json::<T>::from_request(request, state).await {
            Ok(axum::Json(value)) => Ok(ApiJson(value)),
            Err(JsonRejection::JsonDataError(error)) => Err(json_error(&error.body_text())),
            Err(JsonRejection::JsonSyntaxError(error)) => Err(AppError::invalid(
                "body",
                format!("malformed JSON: {}", error.body_text()),
            )),
            Err(JsonRejection::MissingJsonContentType(_)) => Err(AppError::BadRequest(
                "send Content-Type: application/json".into(),
            )),
            Err(other) => Err(AppError::BadRequest(other.body_text())),
        }
    }
}

/// serde_path_to_error's text reads "path.to.field: message"; split it into field and message.
fn json_error(text: &str) -> AppError {
    let detail = text
        .strip_prefix("Failed to deserialize the JSON body into the target type: ")
        .unwrap_or(text);
    match detail.split_once(": ") {
        Some((field, message)) if !field.contains(' ') => AppError::invalid(field, message),
        _ => AppError::invalid("body", detail),
    }
}
