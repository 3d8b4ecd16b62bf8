//! Downloads of a build for any signed-in user: the export JSON (another instance imports it
//! with `eddybench import`) and its five CSV tables for a spreadsheet.

use axum::extract::{Path, State};
use axum::http::header;
use axum::response::{IntoResponse, Response};

use crate::export::BuildDocument;
use crate::export::tables::{Table, write_table};
use crate::web::accounts::session::CurrentUser;
use crate::web::routes::{Access, Routes};
use crate::web::{AppError, AppState, Result};

pub fn router() -> Routes {
    Routes::new()
        .get("/builds/{slug}/export.json", Access::Viewer, json)
        // The router matches whole segments only, so `{table}.csv` is split in the handler.
        .get("/builds/{slug}/export/{file}", Access::Viewer, csv_table)
}

async fn document(state: &AppState, slug: &str) -> Result<BuildDocument> {
    let mut document = state.store.export_build(slug).await?;
    // Fitting every run of a long build is CPU work; keep it off the request threads.
    let document = tokio::task::spawn_blocking(move || {
        document.add_analyses();
        document
    })
    .await
    .map_err(anyhow::Error::from)?;
    Ok(document)
}

/// A file the browser saves rather than shows. The name is the build's stored slug, which
/// holds only lower-case letters, digits and dashes.
fn download(file_name: &str, content_type: &'static str, body: Vec<u8>) -> Response {
    (
        [
            (header::CONTENT_TYPE, content_type.to_string()),
            (
                header::CONTENT_DISPOSITION,
                format!("attachment; filename=\"{file_name}\""),
            ),
            (header::CACHE_CONTROL, "private, no-store".to_string()),
        ],
        body,
    )
        .into_response()
}

#[tracing::instrument(skip_all, fields(slug = %slug), err(level = tracing::Level::INFO))]
async fn json(
    State(state): State<AppState>,
    CurrentUser(_user): CurrentUser,
    Path(slug): Path<String>,
) -> Result<Response> {
    let document = document(&state, &slug).await?;
    Ok(download(
        &format!("{}.json", document.build.slug),
        "application/json",
        document.to_json().into_bytes(),
    ))
}

#[tracing::instrument(skip_all, fields(slug = %slug, file = %file), err(level = tracing::Level::INFO))]
async fn csv_table(
    State(state): State<AppState>,
    CurrentUser(_user): CurrentUser,
    Path((slug, file)): Path<(String, String)>,
) -> Result<Response> {
    let table = file
        .strip_suffix(".csv")
        .and_then(Table::from_name)
        .ok_or(AppError::NotFound)?;
    let document = document(&state, &slug).await?;
    Ok(download(
        &format!("{}-{}", document.build.slug, table.file_name()),
        "text/csv; charset=utf-8",
        write_table(&document, table),
    ))
}
