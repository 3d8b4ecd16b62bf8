//! A build's runs a page at a time, newest first: the build page shows the latest page, and
//! older runs are reached from here, so no page grows with the logbook.

use askama::Template;
use askama_web::WebTemplate;
use axum::extract::{Path, Query, State};
use serde::Deserialize;

use crate::store::Build;
use crate::web::chrome::Chrome;
use crate::web::reader::Reader;
use crate::web::view::RunLine;
use crate::web::{AppError, AppState, Result};

/// Runs on the build page and on each page of this list.
pub const RUNS_PER_PAGE: i64 = 50;

#[derive(Template, WebTemplate)]
#[template(path = "builds/runs.html")]
pub struct RunsPage {
    chrome: Chrome,
    build: Build,
    runs: Vec<RunLine>,
    page: i64,
    pages: i64,
    total: i64,
}

#[derive(Deserialize)]
pub struct PageQuery {
    /// 1 is the newest page (the one the build page shows).
    #[serde(default = "first_page")]
    page: i64,
}

fn first_page() -> i64 {
    1
}

/// `GET /builds/{slug}/runs?page=N` (and under a share link).
pub async fn show(
    State(state): State<AppState>,
    reader: Reader,
    Path(slug): Path<String>,
    Query(query): Query<PageQuery>,
) -> Result<RunsPage> {
    let build = reader.build(&state, &slug).await?;
    if query.page < 1 {
        return Err(AppError::NotFound);
    }
    let skip = (query.page - 1).saturating_mul(RUNS_PER_PAGE);
    let (runs, total) = state
        .store
        .runs_of_build_page(build.id, reader.only_revision(), RUNS_PER_PAGE, skip)
        .await?;
    // An empty page past the end is not a page; the first page may be empty (no runs yet).
    if runs.is_empty() && query.page > 1 {
        return Err(AppError::NotFound);
    }
    Ok(RunsPage {
        chrome: reader.chrome(format!("Runs of {}", build.name), &build),
        runs: runs.iter().map(RunLine::from_run).collect(),
        page: query.page,
        pages: pages_for(total),
        total,
        build,
    })
}

/// Pages needed for `total` runs (at least one, to say there are none).
pub fn pages_for(total: i64) -> i64 {
    ((total + RUNS_PER_PAGE - 1) / RUNS_PER_PAGE).max(1)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pages_round_up() {
        assert_eq!(pages_for(0), 1);
        assert_eq!(pages_for(1), 1);
        assert_eq!(pages_for(50), 1);
        assert_eq!(pages_for(51), 2);
        assert_eq!(pages_for(1000), 20);
    }
}
