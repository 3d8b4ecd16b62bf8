//! Voiding and restoring readings over the API: the same check of the reason and the same store
//! call as the run page.

use axum::Json;
use axum::extract::{Path, State};
use serde::{Deserialize, Serialize};

use crate::checks;
use crate::run_feed::RunChange;
use crate::store::{ReadingId, RunId};
use crate::web::accounts::session::Editor;
use crate::web::api::ApiJson;
use crate::web::routes::{Access, Routes};
use crate::web::{AppError, AppState, Result};

pub fn router() -> Routes {
    Routes::new()
        .post(
            "/api/v1/runs/{id}/readings/{reading}/void",
            Access::Editor,
            void_reading,
        )
        .post(
            "/api/v1/runs/{id}/readings/{reading}/restore",
            Access::Editor,
            restore_reading,
        )
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct VoidBody {
    #[serde(default)]
    reason: String,
}

#[derive(Serialize)]
struct VoidAnswer {
    reading: i64,
    voided: bool,
}

async fn void_reading(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path((id, reading)): Path<(i64, i64)>,
    ApiJson(body): ApiJson<VoidBody>,
) -> Result<Json<VoidAnswer>> {
    let run = state.store.run_by_id(RunId(id)).await?;
    let reason = checks::text::void_reason(&body.reason)
        .map_err(|message| AppError::invalid("reason", message))?;
    state
        .store
        .set_reading_void(
            run.id,
            ReadingId(reading),
            Some(&reason),
            Some(user.user_id),
        )
        .await?;
    state.run_feeds.notify(run.id, RunChange::Readings);
    Ok(Json(VoidAnswer {
        reading,
        voided: true,
    }))
}

async fn restore_reading(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path((id, reading)): Path<(i64, i64)>,
) -> Result<Json<VoidAnswer>> {
    let run = state.store.run_by_id(RunId(id)).await?;
    state
        .store
        .set_reading_void(run.id, ReadingId(reading), None, Some(user.user_id))
        .await?;
    state.run_feeds.notify(run.id, RunChange::Readings);
    Ok(Json(VoidAnswer {
        reading,
        voided: false,
    }))
}
