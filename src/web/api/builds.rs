//! The builds over the API.

use axum::Json;
use axum::extract::State;
use serde::Serialize;

use crate::web::accounts::session::CurrentUser;
use crate::web::routes::{Access, Routes};
use crate::web::{AppState, Result};

pub fn router() -> Routes {
    Routes::new().get("/api/v1/builds", Access::Viewer, list)
}

#[derive(Serialize)]
struct BuildJson {
    slug: String,
    name: String,
    purpose: String,
    latest_revision: Option<String>,
    runs: i64,
}

/// The builds a token (or session) may read: every build of this instance.
async fn list(
    State(state): State<AppState>,
    CurrentUser(_user): CurrentUser,
) -> Result<Json<Vec<BuildJson>>> {
    let builds = state.store.list_builds().await?;
    Ok(Json(
        builds
            .into_iter()
            .map(|b| BuildJson {
                slug: b.slug,
                name: b.name,
                purpose: b.purpose,
                latest_revision: b.latest_revision.map(|n| format!("r{n}")),
                runs: b.run_count,
            })
            .collect(),
    ))
}
