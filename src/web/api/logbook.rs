//! The logging API for scripts that read instruments: builds, revisions, runs, readings (a JSON
//! array, or CSV streamed into the database) and finishing a run, under `/api/v1`. Also the run
//! page's CSV upload, which shares the import. A bearer token acts with its user's role: viewers
//! may read, editors and admins may also write.

use axum::Json;
use axum::body::Bytes;
use axum::extract::{DefaultBodyLimit, FromRequest, Multipart, Path, Request, State};
use axum::http::{HeaderMap, StatusCode, header};
use axum::response::{IntoResponse, Redirect, Response};
use axum::routing::post;
use serde::{Deserialize, Serialize};

use crate::analysis::{OperatingPoint, validate};
use crate::channel::Channel;
use crate::parts::Parts;
use crate::run_feed::RunChange;
use crate::store::{
    Build, NewBuild, NewRun, Outcome, Revision, Run, RunFinish, RunId, revision_number,
};
use crate::web::accounts::session::{CurrentUser, Editor};
use crate::web::api::ApiJson;
use crate::web::error::{ErrorBody, urlencode};
use crate::web::routes::{Access, Routes};
use crate::web::runs::lookup::{LOADS, channels_of, default_channels};
use crate::web::runs::readings_import::{ImportError, RowCheck, import_csv, json_rows};
use crate::web::{AppError, AppState, Result};

/// JSON bodies are read whole; a CSV body streams and may be much larger.
const JSON_LIMIT_BYTES: usize = 32 * 1024 * 1024;
const CSV_LIMIT_BYTES: u64 = 256 * 1024 * 1024;
/// The multipart envelope around the file: its boundaries and part headers.
const MULTIPART_OVERHEAD_BYTES: usize = 64 * 1024;

pub fn router() -> Routes {
    Routes::new()
        .post("/api/v1/builds", Access::Editor, create_build)
        .get("/api/v1/builds/{slug}", Access::Viewer, show_build)
        .post(
            "/api/v1/builds/{slug}/revisions",
            Access::Editor,
            create_revision,
        )
        .get(
            "/api/v1/builds/{slug}/revisions/{label}",
            Access::Viewer,
            show_revision,
        )
        .post("/api/v1/builds/{slug}/runs", Access::Editor, create_run)
        .get("/api/v1/runs/{id}", Access::Viewer, show_run)
        .post_with(
            "/api/v1/runs/{id}/readings",
            Access::Editor,
            post(add_readings).layer(DefaultBodyLimit::max(JSON_LIMIT_BYTES)),
        )
        .post("/api/v1/runs/{id}/finish", Access::Editor, finish_run)
        .post_with(
            "/builds/{slug}/runs/{id}/readings.csv",
            Access::Editor,
            post(upload_csv).layer(DefaultBodyLimit::max(
                CSV_LIMIT_BYTES as usize + MULTIPART_OVERHEAD_BYTES,
            )),
        )
}

/// RFC 3339 in UTC, the time format of the API.
fn timestamp(unix_s: i64) -> String {
    time::OffsetDateTime::from_unix_timestamp(unix_s)
        .ok()
        .and_then(|t| {
            t.format(&time::format_description::well_known::Rfc3339)
                .ok()
        })
        .unwrap_or_default()
}

/// 201 with the new resource's API address in `Location`.
fn created(location: &str, body: impl Serialize) -> Response {
    (
        StatusCode::CREATED,
        [(header::LOCATION, location.to_string())],
        Json(body),
    )
        .into_response()
}

fn too_long(field: &str, text: &str, max_chars: usize) -> Result<()> {
    if text.chars().count() > max_chars {
        return Err(AppError::invalid(
            field,
            format!("keep it under {max_chars} characters"),
        ));
    }
    Ok(())
}

// ----- builds -----

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct NewBuildBody {
    name: String,
    #[serde(default)]
    purpose: String,
    #[serde(default)]
    notes: String,
}

#[derive(Serialize)]
struct BuildJson {
    slug: String,
    name: String,
    purpose: String,
    notes: String,
    created_at: String,
    /// The build's page.
    url: String,
}

impl From<&Build> for BuildJson {
    fn from(build: &Build) -> BuildJson {
        BuildJson {
            slug: build.slug.clone(),
            name: build.name.clone(),
            purpose: build.purpose.clone(),
            notes: build.notes.clone(),
            created_at: timestamp(build.created_at),
            url: format!("/builds/{}", build.slug),
        }
    }
}

#[derive(Serialize)]
struct BuildDetail {
    #[serde(flatten)]
    build: BuildJson,
    revisions: Vec<RevisionLine>,
    /// Newest first.
    runs: Vec<RunLine>,
}

#[derive(Serialize)]
struct RevisionLine {
    label: String,
    parent: Option<String>,
    created_at: String,
}

#[derive(Serialize)]
struct RunLine {
    id: RunId,
    revision: String,
    started_at: String,
    outcome: Option<String>,
}

async fn create_build(
    State(state): State<AppState>,
    Editor(user): Editor,
    ApiJson(body): ApiJson<NewBuildBody>,
) -> Result<Response> {
    let name = body.name.trim();
    if name.is_empty() {
        return Err(AppError::invalid("name", "give the build a name"));
    }
    too_long("name", name, 120)?;
    too_long("purpose", &body.purpose, 4000)?;
    too_long("notes", &body.notes, 20_000)?;
    let build = state
        .store
        .create_build(&NewBuild {
            name,
            purpose: body.purpose.trim(),
            notes: body.notes.trim(),
            created_by: Some(user.user_id),
        })
        .await?;
    let location = format!("/api/v1/builds/{}", build.slug);
    Ok(created(&location, BuildJson::from(&build)))
}

async fn show_build(
    State(state): State<AppState>,
    CurrentUser(_user): CurrentUser,
    Path(slug): Path<String>,
) -> Result<Json<BuildDetail>> {
    let build = state.store.build_by_slug(&slug).await?;
    let revisions = state.store.revisions_of_build(build.id).await?;
    let runs = state.store.runs_of_build(build.id, i64::MAX).await?;
    Ok(Json(BuildDetail {
        build: BuildJson::from(&build),
        revisions: revisions
            .iter()
            .map(|r| RevisionLine {
                label: r.label(),
                parent: r.parent_number.map(|n| format!("r{n}")),
                created_at: timestamp(r.created_at),
            })
            .collect(),
        runs: runs
            .iter()
            .map(|r| RunLine {
                id: r.id,
                revision: r.revision_label(),
                started_at: timestamp(r.started_at),
                outcome: r.outcome.clone(),
            })
            .collect(),
    }))
}

// ----- revisions -----

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct NewRevisionBody {
    parts: Parts,
    #[serde(default)]
    notes: String,
    /// The revision this one was changed from (`r2`); none for a first design.
    #[serde(default)]
    parent: Option<String>,
}

#[derive(Serialize)]
struct RevisionJson {
    build: String,
    label: String,
    parent: Option<String>,
    notes: String,
    created_at: String,
    parts: Parts,
    url: String,
}

fn revision_json(build: &Build, revision: &Revision) -> RevisionJson {
    RevisionJson {
        build: build.slug.clone(),
        label: revision.label(),
        parent: revision.parent_number.map(|n| format!("r{n}")),
        notes: revision.notes.clone(),
        created_at: timestamp(revision.created_at),
        parts: revision.parts.clone(),
        url: format!("/builds/{}/revisions/{}", build.slug, revision.label()),
    }
}

/// A revision of the build named in a body field: a label that names none is a bad value (422)
/// of that field, not a missing page.
async fn revision_in_body(
    state: &AppState,
    build: &Build,
    field: &str,
    label: &str,
) -> Result<Revision> {
    let missing = || AppError::invalid(field, format!("{} has no revision {label:?}", build.slug));
    let number = revision_number(label.trim()).ok_or_else(missing)?;
    match state.store.revision_by_number(build.id, number).await {
        Ok(revision) => Ok(revision),
        Err(crate::store::StoreError::NotFound) => Err(missing()),
        Err(other) => Err(other.into()),
    }
}

async fn create_revision(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path(slug): Path<String>,
    ApiJson(body): ApiJson<NewRevisionBody>,
) -> Result<Response> {
    let build = state.store.build_by_slug(&slug).await?;
    // The parts checks of the model; an operating point of 0 V checks nothing else.
    let no_operating_point = OperatingPoint {
        supply_voltage_v: 0.0,
        supply_current_a: None,
        frequency_hz: None,
        ambient_c: None,
        temperatures_c: Default::default(),
    };
    validate(&body.parts, &no_operating_point)
        .map_err(|e| AppError::invalid(e.field, e.message))?;
    too_long("notes", &body.notes, 20_000)?;
    let parent = match body.parent.as_deref() {
        Some(label) => Some(revision_in_body(&state, &build, "parent", label).await?.id),
        None => None,
    };
    let revision = state
        .store
        .create_revision(
            build.id,
            parent,
            &body.parts,
            body.notes.trim(),
            Some(user.user_id),
        )
        .await?;
    let location = format!("/api/v1/builds/{slug}/revisions/{}", revision.label());
    Ok(created(&location, revision_json(&build, &revision)))
}

async fn show_revision(
    State(state): State<AppState>,
    CurrentUser(_user): CurrentUser,
    Path((slug, label)): Path<(String, String)>,
) -> Result<Json<RevisionJson>> {
    let build = state.store.build_by_slug(&slug).await?;
    let number = revision_number(&label).ok_or(AppError::NotFound)?;
    let revision = state.store.revision_by_number(build.id, number).await?;
    Ok(Json(revision_json(&build, &revision)))
}

// ----- runs -----

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct NewRunBody {
    revision: String,
    #[serde(default)]
    supply_voltage_v: Option<f64>,
    #[serde(default)]
    supply_current_limit_a: Option<f64>,
    load: String,
    #[serde(default)]
    water_mass_kg: Option<f64>,
    #[serde(default)]
    vessel_heat_capacity_j_per_k: Option<f64>,
    #[serde(default)]
    notes: String,
    /// Who stood at the bench; the token's user when absent.
    #[serde(default)]
    operator: Option<String>,
    /// The channels the run page offers for entry; the usual ones for the load when absent.
    #[serde(default)]
    channels: Option<Vec<String>>,
}

#[derive(Serialize)]
struct RunJson {
    id: RunId,
    build: String,
    revision: String,
    started_at: String,
    operator: String,
    supply_voltage_v: Option<f64>,
    supply_current_limit_a: Option<f64>,
    load: String,
    water_mass_kg: Option<f64>,
    vessel_heat_capacity_j_per_k: Option<f64>,
    notes: String,
    channels: Vec<String>,
    finished_at: Option<String>,
    outcome: Option<String>,
    failed_part: Option<String>,
    outcome_note: String,
    /// Current values (a corrected reading counts once).
    readings: i64,
    /// The run's page.
    url: String,
}

async fn run_json(state: &AppState, build: &Build, run: Run) -> Result<RunJson> {
    let readings = state.store.current_reading_count(run.id).await?;
    Ok(RunJson {
        id: run.id,
        build: build.slug.clone(),
        revision: run.revision_label(),
        started_at: timestamp(run.started_at),
        supply_voltage_v: run.supply_setting_v,
        supply_current_limit_a: run.supply_current_limit_a,
        water_mass_kg: run.water_mass_kg,
        vessel_heat_capacity_j_per_k: run.vessel_heat_capacity_j_per_k,
        channels: run.channels(),
        finished_at: run.finished_at.map(timestamp),
        url: format!("/builds/{}/runs/{}", build.slug, run.id),
        readings,
        operator: run.operator,
        load: run.load,
        notes: run.notes,
        outcome: run.outcome,
        failed_part: run.failed_part,
        outcome_note: run.outcome_note,
    })
}

async fn create_run(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path(slug): Path<String>,
    ApiJson(body): ApiJson<NewRunBody>,
) -> Result<Response> {
    let build = state.store.build_by_slug(&slug).await?;
    let revision = revision_in_body(&state, &build, "revision", &body.revision).await?;
    for (field, value, max) in [
        ("supply_voltage_v", body.supply_voltage_v, 10_000.0),
        (
            "supply_current_limit_a",
            body.supply_current_limit_a,
            1_000.0,
        ),
        ("water_mass_kg", body.water_mass_kg, 1_000.0),
        (
            "vessel_heat_capacity_j_per_k",
            body.vessel_heat_capacity_j_per_k,
            1e7,
        ),
    ] {
        if let Some(v) = value
            && !(v > 0.0 && v <= max)
        {
            return Err(AppError::invalid(
                field,
                format!("must be above 0 and at most {max}, got {v}"),
            ));
        }
    }
    if !LOADS.contains(&body.load.as_str()) {
        return Err(AppError::invalid(
            "load",
            format!("one of {}", LOADS.join(", ")),
        ));
    }
    if body.load == "water" && body.water_mass_kg.is_none() {
        return Err(AppError::invalid(
            "water_mass_kg",
            "a water calorimeter run needs the mass of water",
        ));
    }
    too_long("notes", &body.notes, 20_000)?;
    let operator = body
        .operator
        .as_deref()
        .map(str::trim)
        .unwrap_or(&user.display_name);
    too_long("operator", operator, 120)?;
    let channels = match body.channels {
        None => default_channels(&revision.parts, &body.load),
        Some(chosen) => {
            let known: Vec<String> = channels_of(&revision.parts)
                .iter()
                .map(Channel::to_string)
                .collect();
            if chosen.is_empty() {
                return Err(AppError::invalid("channels", "name at least one channel"));
            }
            if let Some((i, bad)) = chosen.iter().enumerate().find(|(_, c)| !known.contains(c)) {
                return Err(AppError::invalid(
                    format!("channels[{i}]"),
                    format!("{bad} is not a channel of {}", revision.label()),
                ));
            }
            chosen
        }
    };
    let id = state
        .store
        .create_run(&NewRun {
            build_id: build.id,
            revision_id: revision.id,
            operator,
            created_by: Some(user.user_id),
            started_at: None,
            supply_setting_v: body.supply_voltage_v,
            supply_current_limit_a: body.supply_current_limit_a,
            load: &body.load,
            water_mass_kg: body.water_mass_kg,
            vessel_heat_capacity_j_per_k: body.vessel_heat_capacity_j_per_k,
            notes: body.notes.trim(),
            channels: &channels,
        })
        .await?;
    let run = state.store.run_by_id(id).await?;
    Ok(created(
        &format!("/api/v1/runs/{id}"),
        run_json(&state, &build, run).await?,
    ))
}

/// A run and its build, by the run's id.
async fn find_run(state: &AppState, id: i64) -> Result<(Build, Run)> {
    let run = state.store.run_by_id(RunId(id)).await?;
    let build = state.store.build_by_id(run.build_id).await?;
    Ok((build, run))
}

async fn show_run(
    State(state): State<AppState>,
    CurrentUser(_user): CurrentUser,
    Path(id): Path<i64>,
) -> Result<Json<RunJson>> {
    let (build, run) = find_run(&state, id).await?;
    Ok(Json(run_json(&state, &build, run).await?))
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct FinishBody {
    outcome: Outcome,
    /// The part that failed, as in its temperature channel without `temp.` (`tank_capacitor.3`).
    #[serde(default)]
    failed_part: Option<String>,
    #[serde(default)]
    note: String,
}

async fn finish_run(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path(id): Path<i64>,
    ApiJson(body): ApiJson<FinishBody>,
) -> Result<Json<RunJson>> {
    let (build, run) = find_run(&state, id).await?;
    let revision = state.store.revision_by_id(run.revision_id).await?;
    let failed_part = match (body.outcome, body.failed_part.as_deref().map(str::trim)) {
        (Outcome::PartFailed, None | Some("")) => {
            return Err(AppError::invalid("failed_part", "say which part failed"));
        }
        (Outcome::PartFailed, Some(part)) => {
            match RowCheck::new(&revision.parts).channel(&format!("temp.{part}")) {
                Ok(Channel::PartTemp { .. }) => Some(part.to_string()),
                _ => {
                    return Err(AppError::invalid(
                        "failed_part",
                        format!("{part:?} is not a part of {}", revision.label()),
                    ));
                }
            }
        }
        (_, None) => None,
        (_, Some(_)) => {
            return Err(AppError::invalid(
                "failed_part",
                "only a run whose outcome is part_failed names a failed part",
            ));
        }
    };
    too_long("note", &body.note, 20_000)?;
    state
        .store
        .finish_run(
            run.id,
            &RunFinish {
                by: Some(user.user_id),
                outcome: body.outcome,
                failed_part: failed_part.as_deref(),
                note: body.note.trim(),
                finished_at: None,
            },
        )
        .await?;
    crate::web::runs::digests::keep_digest_of_finished_run(&state.store, run.id).await?;
    state.run_feeds.notify(run.id, RunChange::Finished);
    let run = state.store.run_by_id(run.id).await?;
    Ok(Json(run_json(&state, &build, run).await?))
}

// ----- readings -----

/// The media type of the body, lower-cased, without parameters.
fn media_type(headers: &HeaderMap) -> String {
    headers
        .get(header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
        .and_then(|v| v.split(';').next())
        .map(|v| v.trim().to_ascii_lowercase())
        .unwrap_or_default()
}

fn json_error(status: StatusCode, message: String) -> Response {
    let body = ErrorBody {
        error: message,
        field: None,
    };
    (status, Json(body)).into_response()
}

impl IntoResponse for ImportError {
    fn into_response(self) -> Response {
        match self {
            ImportError::Row(row) => (StatusCode::UNPROCESSABLE_ENTITY, Json(row)).into_response(),
            ImportError::TooLarge(limit) => json_error(
                StatusCode::PAYLOAD_TOO_LARGE,
                format!("the body is larger than {} MiB", limit >> 20),
            ),
            ImportError::App(error) => error.into_response(),
        }
    }
}

/// The run readings may be added to, with the checks of its revision's parts.
async fn open_run(state: &AppState, run: &Run) -> Result<Revision> {
    if !run.is_open() {
        return Err(AppError::Conflict(
            "this run is finished; readings can no longer be added".into(),
        ));
    }
    Ok(state.store.revision_by_id(run.revision_id).await?)
}

/// `application/json`: an array of `{"t_s", "channel", "value"}`, each with an optional `"id"`
/// its sender made, read whole (up to 32 MiB). A row whose id is stored already with the same
/// time and value is a resend and is counted as `already_stored`, not stored again; the same id
/// with another value refuses the set (409).
/// `text/csv`: a header `t_s,channel,value` and one reading a line, streamed (up to 256 MiB).
/// Either way all rows are saved or none.
#[tracing::instrument(skip_all, fields(run = id))]
async fn add_readings(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path(id): Path<i64>,
    request: Request,
) -> Result<Response, ImportError> {
    let (_, run) = find_run(&state, id).await?;
    let revision = open_run(&state, &run).await?;
    let check = RowCheck::new(&revision.parts);
    let mut import = state.store.readings_import(run.id, Some(user.user_id));
    match media_type(request.headers()).as_str() {
        "application/json" => {
            let body = match Bytes::from_request(request, &state).await {
                Ok(body) => body,
                Err(rejection) if rejection.status() == StatusCode::PAYLOAD_TOO_LARGE => {
                    return Err(ImportError::TooLarge(JSON_LIMIT_BYTES as u64));
                }
                Err(rejection) => return Err(AppError::BadRequest(rejection.body_text()).into()),
            };
            let rows = json_rows(&body, &check)?;
            import.push(&rows).await?;
        }
        "text/csv" => {
            let body = request.into_body().into_data_stream();
            import_csv(body, CSV_LIMIT_BYTES, &check, &mut import).await?;
        }
        _ => {
            return Ok(json_error(
                StatusCode::UNSUPPORTED_MEDIA_TYPE,
                "send Content-Type: application/json (an array of readings) or text/csv".into(),
            ));
        }
    }
    let already_stored = import.already_stored();
    let inserted = import.commit().await?;
    if inserted > 0 {
        state.run_feeds.notify(run.id, RunChange::Readings);
    }
    tracing::info!(inserted, already_stored, "readings imported");
    Ok((
        StatusCode::CREATED,
        Json(serde_json::json!({ "inserted": inserted, "already_stored": already_stored })),
    )
        .into_response())
}

/// The run page's CSV upload (multipart field `file`; the form token in the `csrf` query
/// parameter). Problems go back to the page beside the upload form, with nothing saved.
#[tracing::instrument(skip_all, fields(run = id))]
async fn upload_csv(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path((slug, id)): Path<(String, i64)>,
    mut multipart: Multipart,
) -> Result<Response> {
    let (build, run) = find_run(&state, id).await?;
    if build.slug != slug {
        return Err(AppError::NotFound);
    }
    let revision = open_run(&state, &run).await?;
    let check = RowCheck::new(&revision.parts);
    let back = |message: &str| {
        let message = urlencode(message);
        Redirect::to(&format!(
            "/builds/{slug}/runs/{id}?error={message}&channel=csv#csv-upload"
        ))
        .into_response()
    };
    let mut import = state.store.readings_import(run.id, Some(user.user_id));
    loop {
        let field = match multipart.next_field().await {
            Ok(Some(field)) => field,
            Ok(None) => return Ok(back("choose a CSV file to import")),
            Err(error) => return Ok(back(&error.body_text())),
        };
        if field.name() != Some("file") {
            continue;
        }
        if field.file_name().is_some_and(str::is_empty) {
            return Ok(back("choose a CSV file to import"));
        }
        match import_csv(field, CSV_LIMIT_BYTES, &check, &mut import).await {
            Ok(()) => break,
            Err(ImportError::Row(row)) => return Ok(back(&row.error)),
            Err(ImportError::TooLarge(limit)) => {
                return Ok(back(&format!(
                    "the file is larger than {} MiB",
                    limit >> 20
                )));
            }
            Err(ImportError::App(AppError::Invalid { message, .. }))
            | Err(ImportError::App(AppError::BadRequest(message))) => return Ok(back(&message)),
            Err(ImportError::App(error)) => return Err(error),
        }
    }
    let inserted = import.commit().await?;
    state.run_feeds.notify(run.id, RunChange::Readings);
    tracing::info!(inserted, "readings imported from the run page");
    Ok(Redirect::to(&format!("/builds/{slug}/runs/{id}#readings")).into_response())
}
