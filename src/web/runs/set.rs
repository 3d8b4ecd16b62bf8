//! Logging at the bench: a whole set of readings in one submit, event marks, and the order of
//! the entry fields. Without script the page posts a form and gets the page back; the page's
//! script posts the same form (its offline queue included) asking for JSON, and both get the
//! same verdict from the same checks (`analysis::reading_set`, `analysis::event_mark`).

use std::collections::HashMap;

use axum::extract::{Path, State};
use axum::http::{HeaderMap, StatusCode, header};
use axum::response::{IntoResponse, Redirect, Response};
use axum::{Form, Json};

use super::lookup::build_and_run;
use super::page::{Submitted, render};
use crate::analysis::entry_order::{entry_order, move_earlier};
use crate::analysis::event_mark::check_event_mark;
use crate::analysis::reading_set::{FieldError, check_reading_set};
use crate::channel::Channel;
use crate::run_feed::RunChange;
use crate::store::{MarkStored, NewEventMark, NewReading, Run, StoreError};
use crate::web::accounts::session::Editor;
use crate::web::reader::Reader;
use crate::web::view::minutes_seconds;
use crate::web::{AppError, AppState, Result};

/// Whether the page's script sent this (it asks for JSON) rather than a plain form.
fn wants_json(headers: &HeaderMap) -> bool {
    headers
        .get(header::ACCEPT)
        .and_then(|v| v.to_str().ok())
        .is_some_and(|v| v.contains("application/json"))
}

/// Seconds since the run started, by the server's clock (sub-second, for stamps).
fn elapsed_now_s(run: &Run) -> f64 {
    let now_ns = time::OffsetDateTime::now_utc().unix_timestamp_nanos();
    now_ns as f64 / 1e9 - run.started_at as f64
}

fn server_ms() -> i64 {
    (time::OffsetDateTime::now_utc().unix_timestamp_nanos() / 1_000_000) as i64
}

fn open_run(run: &Run) -> Result<()> {
    if run.is_open() {
        Ok(())
    } else {
        Err(AppError::Conflict(
            "this run is finished; readings and marks can no longer be added".into(),
        ))
    }
}

/// An id reused for another value, told to the script (which keeps the entry with the reason).
fn conflict_json(message: String) -> Response {
    (
        StatusCode::CONFLICT,
        Json(serde_json::json!({ "error": message, "server_ms": server_ms() })),
    )
        .into_response()
}

/// The refusal of a set: JSON for the script, the page again (values kept) for a form.
async fn refuse(
    state: &AppState,
    reader: &Reader,
    slug: &str,
    run: Run,
    json: bool,
    submitted: Submitted,
) -> Result<Response> {
    if json {
        return Ok((
            StatusCode::UNPROCESSABLE_ENTITY,
            Json(serde_json::json!({ "errors": submitted.errors, "server_ms": server_ms() })),
        )
            .into_response());
    }
    let build = state.store.build_by_slug(slug).await?;
    let page = render(state, reader, build, run, submitted, None).await?;
    Ok((StatusCode::UNPROCESSABLE_ENTITY, page).into_response())
}

/// `POST /builds/{slug}/runs/{id}/readings`: one set, all or nothing.
#[tracing::instrument(skip_all, fields(run = id))]
pub(super) async fn add_set(
    State(state): State<AppState>,
    Editor(user): Editor,
    reader: Reader,
    Path((slug, id)): Path<(String, i64)>,
    headers: HeaderMap,
    Form(fields): Form<Vec<(String, String)>>,
) -> Result<Response> {
    let (_, run) = build_and_run(&state, &slug, id).await?;
    open_run(&run)?;
    let json = wants_json(&headers);
    let channels: Vec<Channel> = run
        .channels()
        .iter()
        .filter_map(|n| n.parse().ok())
        .collect();
    let set = match check_reading_set(&fields, &channels, elapsed_now_s(&run)) {
        Ok(set) => set,
        Err(errors) => {
            let values: HashMap<String, String> = fields
                .iter()
                .filter_map(|(k, v)| Some((k.strip_prefix("value.")?.to_string(), v.clone())))
                .collect();
            let time = fields
                .iter()
                .find(|(k, _)| k == "time")
                .map(|(_, v)| v.clone())
                .unwrap_or_default();
            let submitted = Submitted {
                values,
                time,
                errors,
                ..Submitted::default()
            };
            return refuse(&state, &reader, &slug, run, json, submitted).await;
        }
    };
    let readings: Vec<NewReading> = set
        .iter()
        .map(|r| NewReading {
            t_s: r.t_s,
            channel: r.channel.to_string(),
            value: r.value,
            client_id: r.client_id.clone(),
        })
        .collect();
    let already_stored = match state
        .store
        .add_readings(run.id, &readings, Some(user.user_id))
        .await
    {
        Ok(n) => n,
        Err(StoreError::Conflict(message)) if json => return Ok(conflict_json(message)),
        Err(error) => return Err(error.into()),
    };
    let logged = readings.len() as u64 - already_stored;
    if logged > 0 {
        state.run_feeds.notify(run.id, RunChange::Readings);
    }
    let at_s = set.iter().map(|r| r.t_s).fold(0.0, f64::max);
    tracing::info!(logged, already_stored, "set logged");
    if json {
        return Ok(Json(serde_json::json!({
            "logged": logged,
            "already_stored": already_stored,
            "at": minutes_seconds(at_s),
            "server_ms": server_ms(),
        }))
        .into_response());
    }
    Ok(Redirect::to(&format!(
        "/builds/{slug}/runs/{id}?logged={}&at={at_s:.0}#entry",
        readings.len()
    ))
    .into_response())
}

#[derive(serde::Deserialize)]
pub(super) struct MarkForm {
    #[serde(default)]
    text: String,
    #[serde(default)]
    time: String,
    #[serde(default)]
    at: String,
    #[serde(default)]
    id: String,
}

/// `POST /builds/{slug}/runs/{id}/marks`: a short text at a time of the run.
#[tracing::instrument(skip_all, fields(run = id))]
pub(super) async fn add_mark(
    State(state): State<AppState>,
    Editor(user): Editor,
    reader: Reader,
    Path((slug, id)): Path<(String, i64)>,
    headers: HeaderMap,
    Form(form): Form<MarkForm>,
) -> Result<Response> {
    let (_, run) = build_and_run(&state, &slug, id).await?;
    open_run(&run)?;
    let json = wants_json(&headers);
    let mark = match check_event_mark(
        &form.text,
        &form.time,
        &form.at,
        &form.id,
        elapsed_now_s(&run),
    ) {
        Ok(mark) => mark,
        Err(error) => {
            let submitted = Submitted {
                mark_text: form.text.chars().take(200).collect(),
                mark_error: error.message.clone(),
                errors: vec![FieldError {
                    field: format!("mark.{}", error.field),
                    message: error.message,
                }],
                ..Submitted::default()
            };
            return refuse(&state, &reader, &slug, run, json, submitted).await;
        }
    };
    let stored = match state
        .store
        .add_event_mark(
            run.id,
            &NewEventMark {
                t_s: mark.t_s,
                text: mark.text.clone(),
                client_id: mark.client_id,
            },
            Some(user.user_id),
        )
        .await
    {
        Ok(stored) => stored,
        Err(StoreError::Conflict(message)) if json => return Ok(conflict_json(message)),
        Err(error) => return Err(error.into()),
    };
    if matches!(stored, MarkStored::New(_)) {
        state.run_feeds.notify(run.id, RunChange::Marks);
    }
    if json {
        return Ok(Json(serde_json::json!({
            "marked": mark.text,
            "at": minutes_seconds(mark.t_s),
            "already_stored": matches!(stored, MarkStored::AlreadyStored(_)),
            "server_ms": server_ms(),
        }))
        .into_response());
    }
    Ok(Redirect::to(&format!("/builds/{slug}/runs/{id}#readings")).into_response())
}

#[derive(serde::Deserialize)]
pub(super) struct OrderForm {
    earlier: String,
}

/// `POST /builds/{slug}/runs/{id}/entry-order`: moves a field a place earlier, for every run
/// of this revision.
pub(super) async fn move_field_earlier(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path((slug, id)): Path<(String, i64)>,
    Form(form): Form<OrderForm>,
) -> Result<Response> {
    let (_, run) = build_and_run(&state, &slug, id).await?;
    let in_use: Vec<Channel> = run
        .channels()
        .iter()
        .filter_map(|n| n.parse().ok())
        .collect();
    let saved = state.store.entry_order(run.revision_id).await?;
    let order = entry_order(&in_use, &saved);
    let moved = move_earlier(&order, &form.earlier)
        .ok_or_else(|| AppError::invalid("earlier", "this run does not log that channel"))?;
    let names: Vec<String> = moved.iter().map(Channel::to_string).collect();
    state
        .store
        .save_entry_order(run.revision_id, &names, Some(user.user_id))
        .await?;
    Ok(Redirect::to(&format!("/builds/{slug}/runs/{id}#entry-order")).into_response())
}
