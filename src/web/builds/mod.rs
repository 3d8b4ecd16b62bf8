//! The builds list, a new build, and a build's page.

pub mod export;
pub mod view;

use askama::Template;
use askama_web::WebTemplate;
use axum::Form;
use axum::extract::{Path, State};
use axum::response::{IntoResponse, Redirect, Response};
use serde::Deserialize;

use crate::analysis::run_summary::RunDigest;
use crate::store::{Build, BuildSummary, NewBuild, Revision, Run};
use crate::web::accounts::session::{CurrentUser, Editor};
use crate::web::builds::view::{BuildHealth, build_charts, build_health};
use crate::web::chrome::Chrome;
use crate::web::forms::FieldErrors;
use crate::web::reader::Reader;
use crate::web::routes::{Access, Routes};
use crate::web::runs::digests::digests_of;
use crate::web::runs::view::ChartView;
use crate::web::shares::{ShareLine, share_lines};
use crate::web::view::{RunLine, date_time};
use crate::web::{AppState, Result};

pub fn router() -> Routes {
    Routes::new()
        .get("/", Access::Viewer, list)
        .post("/builds", Access::Editor, create)
        .get("/builds/new", Access::Editor, new_form)
        .get("/builds/{slug}", Access::Viewer, show)
        // A share link's overview; `{slug}` is the link's token there (see reader.rs).
        .get("/s/{slug}", Access::Share, show)
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
    let name = form.name.trim();
    let mut errors = FieldErrors::default();
    if name.is_empty() {
        errors.add("name", "give the build a name");
    } else if name.chars().count() > 120 {
        errors.add("name", "keep the name under 120 characters");
    }
    if form.purpose.len() > 4000 {
        errors.add("purpose", "keep the purpose under 4000 characters");
    }
    if form.notes.len() > 20_000 {
        errors.add("notes", "keep the notes under 20000 characters");
    }
    if !errors.is_empty() {
        let page = NewPage {
            chrome: Chrome::new("New build", &user),
            name: form.name,
            purpose: form.purpose,
            notes: form.notes,
            errors,
        };
        return Ok((axum::http::StatusCode::UNPROCESSABLE_ENTITY, page).into_response());
    }
    let build = state
        .store
        .create_build(&NewBuild {
            name,
            purpose: form.purpose.trim(),
            notes: form.notes.trim(),
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
    health: Option<BuildHealth>,
    charts: Vec<ChartView>,
    revision_labels: Vec<String>,
    shares: Vec<ShareLine>,
    history: Vec<(String, String, String, String)>,
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

async fn show(
    State(state): State<AppState>,
    reader: Reader,
    Path(slug): Path<String>,
) -> Result<ShowPage> {
    let build = reader.build(&state, &slug).await?;
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
    let runs: Vec<&Run> = all_runs.iter().rev().take(50).collect();
    let chrome = reader.chrome(build.name.clone(), &build);
    // Share pages show no links, no names of who changed what.
    let shares = match chrome.can_edit() {
        true => share_lines(&state.store.shares_of_build(build.id).await?),
        false => Vec::new(),
    };
    let history = match reader.is_share() {
        true => Vec::new(),
        false => state
            .store
            .audit_of_build(build.id, 50)
            .await?
            .into_iter()
            .map(|e| {
                (
                    date_time(e.at),
                    e.actor_name,
                    e.action,
                    format!("{} {}", e.subject, e.detail).trim().to_string(),
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
        build,
    })
}
