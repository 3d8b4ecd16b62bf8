//! The builds list, a new build, and a build's page.

pub mod export;
mod history;
pub mod runs_list;
pub mod view;

use askama::Template;
use askama_web::WebTemplate;
use axum::Form;
use axum::extract::{Path, State};
use axum::http::HeaderMap;
use axum::response::{IntoResponse, Redirect, Response};
use serde::Deserialize;

use crate::analysis::run_summary::RunDigest;
use crate::store::{Build, BuildSummary, NewBuild, Revision, Run};
use crate::web::accounts::session::{CurrentUser, Editor};
use crate::web::builds::view::{BuildHealth, build_charts, build_health};
use crate::web::chrome::Chrome;
use crate::web::forms::FieldErrors;
use crate::web::page_cache::page_key;
use crate::web::reader::Reader;
use crate::web::routes::{Access, Routes};
use crate::web::runs::digests::digests_of;
use crate::web::runs::view::ChartView;
use crate::web::shares::{ShareLine, share_lines};
use crate::web::view::{RunLine, date_time};
use crate::web::{AppError, AppState, Result};

pub fn router() -> Routes {
    Routes::new()
        .get("/", Access::Viewer, list)
        .post("/builds", Access::Editor, create)
        .get("/builds/new", Access::Editor, new_form)
        .get("/builds/{slug}", Access::Viewer, show)
        // A share link's overview; `{slug}` is the link's token there (see reader.rs).
        .get("/s/{slug}", Access::Share, show)
        .get("/builds/{slug}/runs", Access::Viewer, runs_list::show)
        .get("/s/{slug}/runs", Access::Share, runs_list::show)
}

#[derive(Template, WebTemplate)]
#[template(path = "builds/list.html")]
struct ListPage {
    chrome: Chrome,
    builds: Vec<BuildLine>,
}

struct BuildLine {
    summary: BuildSummary,
    last_run: String,
}

async fn list(State(state): State<AppState>, CurrentUser(user): CurrentUser) -> Result<ListPage> {
    let builds = state
        .store
        .list_builds()
        .await?
        .into_iter()
        .map(|summary| BuildLine {
            last_run: summary
                .last_run_at
                .map(date_time)
                .unwrap_or_else(|| "no runs yet".into()),
            summary,
        })
        .collect();
    Ok(ListPage {
        chrome: Chrome::new("Builds", &user),
        builds,
    })
}

#[derive(Template, WebTemplate)]
#[template(path = "builds/new.html")]
struct NewPage {
    chrome: Chrome,
    name: String,
    purpose: String,
    notes: String,
    errors: FieldErrors,
}

async fn new_form(Editor(user): Editor) -> NewPage {
    NewPage {
        chrome: Chrome::new("New build", &user),
        name: String::new(),
        purpose: String::new(),
        notes: String::new(),
        errors: FieldErrors::default(),
    }
}

#[derive(Deserialize)]
struct NewBuildForm {
    name: String,
    #[serde(default)]
    purpose: String,
    #[serde(default)]
    notes: String,
}

async fn create(
    State(state): State<AppState>,
    Editor(user): Editor,
    Form(form): Form<NewBuildForm>,
) -> Result<Response> {
    let checked = crate::checks::builds::new_build(&form.name, &form.purpose, &form.notes);
    let checked = match checked {
        Ok(checked) => checked,
        Err(errors) => {
            let page = NewPage {
                chrome: Chrome::new("New build", &user),
                name: form.name,
                purpose: form.purpose,
                notes: form.notes,
                errors,
            };
            return Ok((axum::http::StatusCode::UNPROCESSABLE_ENTITY, page).into_response());
        }
    };
    let build = state
        .store
        .create_build(&NewBuild {
            name: &checked.name,
            purpose: &checked.purpose,
            notes: &checked.notes,
            created_by: Some(user.user_id),
        })
        .await?;
    Ok(Redirect::to(&format!("/builds/{}", build.slug)).into_response())
}

#[derive(Template, WebTemplate)]
#[template(path = "builds/show.html")]
struct ShowPage {
    chrome: Chrome,
    build: Build,
    revisions: Vec<RevisionLine>,
    runs: Vec<RunLine>,
    /// More runs than the page shows: a link to the older ones.
    older_runs: bool,
    health: Option<BuildHealth>,
    charts: Vec<ChartView>,
    revision_labels: Vec<String>,
    shares: Vec<ShareLine>,
    /// (when, the logbook sentence)
    history: Vec<(String, String)>,
}

struct RevisionLine {
    label: String,
    parent: String,
    created: String,
    notes: String,
    summary: String,
}

/// A one-line description of a revision's tank and coil, for lists.
pub fn parts_summary(revision: &Revision) -> String {
    use crate::units::{Unit, eng};
    let parts = &revision.parts;
    let mut bits = Vec::new();
    if let Some(c) = &parts.tank_capacitor {
        bits.push(format!(
            "{} × {}",
            c.count,
            eng(c.capacitance_f, Unit::Farad)
        ));
    }
    if let Some(l) = parts.work_coil.as_ref().and_then(|c| c.inductance_h) {
        bits.push(format!("coil {}", eng(l, Unit::Henry)));
    }
    if let Some(ch) = &parts.choke {
        bits.push(format!("chokes {}", eng(ch.inductance_h, Unit::Henry)));
    }
    bits.join(", ")
}

/// The build page, from the page cache while the build is unchanged (ETag / 304).
async fn show(
    State(state): State<AppState>,
    reader: Reader,
    Path(slug): Path<String>,
    headers: HeaderMap,
) -> Result<Response> {
    let build = reader.build(&state, &slug).await?;
    let validator = state.store.build_validator(build.id).await?;
    let viewer = match &reader {
        Reader::User(user) => format!(
            "user {} {} {}",
            user.user_id,
            user.role.as_str(),
            user.csrf_token
        ),
        Reader::Share { token, .. } => format!("share {token}"),
    };
    let key = page_key(&format!("build {}", build.id), &viewer);
    if let Some(response) = state.pages.answer(&key, &validator, &headers) {
        return Ok(response);
    }
    let html = render_show(&state, &reader, build)
        .await?
        .render()
        .map_err(|e| AppError::Internal(e.into()))?;
    Ok(state.pages.keep(key, validator, html, &headers))
}

async fn render_show(state: &AppState, reader: &Reader, build: Build) -> Result<ShowPage> {
    let mut revisions = state.store.revisions_of_build(build.id).await?;
    let mut all_runs = state.store.runs_of_build(build.id, i64::MAX).await?;
    // A link to one revision shows that revision and its runs only.
    if let Some(only) = reader.only_revision() {
        revisions.retain(|r| r.number == only);
        all_runs.retain(|r| r.revision_number == only);
    }
    all_runs.reverse();
    let digests = digests_of(&state.store, &build, &all_runs, &revisions).await?;
    let latest = revisions.last().map(Revision::label);
    let health = latest.as_ref().map(|label| {
        let current: Vec<&RunDigest> = digests
            .iter()
            .filter(|d| &d.trend.revision_label == label)
            .collect();
        build_health(label, &current)
    });
    let charts = build_charts(&build.slug, &digests);
    let older_runs = all_runs.len() as i64 > runs_list::RUNS_PER_PAGE;
    let runs: Vec<&Run> = all_runs
        .iter()
        .rev()
        .take(runs_list::RUNS_PER_PAGE as usize)
        .collect();
    let chrome = reader.chrome(build.name.clone(), &build);
    // Share pages show no links, no names of who changed what.
    let shares = match chrome.can_edit() {
        true => share_lines(&state.store.shares_of_build(build.id).await?),
        false => Vec::new(),
    };
    let revision_of_run: std::collections::HashMap<i64, String> = all_runs
        .iter()
        .map(|r| (r.id.0, r.revision_label()))
        .collect();
    let history = match reader.is_share() {
        true => Vec::new(),
        false => state
            .store
            .audit_of_build(build.id, 50)
            .await?
            .into_iter()
            .map(|e| {
                let entry = history::Entry {
                    who: &e.actor_name,
                    action: &e.action,
                    subject: &e.subject,
                    detail: &e.detail,
                };
                (
                    date_time(e.at),
                    history::logbook_line(&entry, &revision_of_run),
                )
            })
            .collect(),
    };
    Ok(ShowPage {
        shares,
        history,
        health,
        charts,
        revision_labels: revisions.iter().rev().map(Revision::label).collect(),
        chrome,
        revisions: revisions
            .iter()
            .rev()
            .map(|r| RevisionLine {
                label: r.label(),
                parent: r.parent_number.map(|n| format!("r{n}")).unwrap_or_default(),
                created: date_time(r.created_at),
                notes: r.notes.clone(),
                summary: parts_summary(r),
            })
            .collect(),
        runs: runs.into_iter().map(RunLine::from_run).collect(),
        older_runs,
        build,
    })
}
