//! `POST /api/v1/model`: the driver model for a parts list at an operating point. It stores
//! nothing, so it needs no sign-in.

use axum::Json;
use serde::{Deserialize, Serialize};

use crate::analysis::model::{ModelReport, OperatingPoint, evaluate, validate};
use crate::parts::Parts;
use crate::web::api::ApiJson;
use crate::web::routes::{Access, Routes};
use crate::web::{AppError, Result};

pub fn router() -> Routes {
    Routes::new().post("/api/v1/model", Access::Public, model)
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ModelRequest {
    pub parts: Parts,
    pub operating_point: OperatingPoint,
}

#[derive(Serialize)]
struct ModelAnswer {
    #[serde(flatten)]
    report: ModelReport,
    caveats: &'static [&'static str],
}

/// Validates and evaluates a model request: the one path shared by the endpoint and the
/// command line, so both give the same numbers.
pub fn evaluate_request(request: &ModelRequest) -> std::result::Result<ModelReport, AppError> {
    validate(&request.parts, &request.operating_point)
        .map_err(|e| AppError::invalid(e.field, e.message))?;
    Ok(evaluate(&request.parts, &request.operating_point))
}

async fn model(ApiJson(request): ApiJson<ModelRequest>) -> Result<Json<serde_json::Value>> {
    let report = evaluate_request(&request)?;
    let answer = ModelAnswer {
        report,
        caveats: crate::analysis::model_table::MODEL_CAVEATS,
    };
    Ok(Json(
        serde_json::to_value(answer).map_err(|e| AppError::Internal(e.into()))?,
    ))
}
