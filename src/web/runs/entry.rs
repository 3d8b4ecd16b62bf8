//! Logging at the bench: a reading stamped with the time since the start, a correction that
//! keeps the old value, and the end of the run.

use axum::Form;
use axum::extract::{Path, State};
use axum::response::{IntoResponse, Redirect, Response};
use serde::Deserialize;

use crate::checks;
use crate::store::{NewReading, Outcome, ReadingId, RunFinish, now_unix_s};
use crate::units::parse_elapsed_s;
use crate::web::accounts::session::Editor;
use crate::web::{AppError, AppState, Result};

use super::lookup::build_and_run;
use super::page::{EntryState, refused, render};
use crate::checks::readings::{ReadingBounds, typed_value};
use crate::store::SessionUser;
use crate::units::{Unit, eng};
use crate::web::reader::Reader;
use crate::web::view::minutes_seconds;

#[derive(Deserialize)]
pub(super) struct ReadingForm {
    channel: String,
    value: String,
    #[serde(default)]
    time: String,
}

/// The run page again with a message beside the field (status 422, nothing saved).
async fn refuse(
    state: &AppState,
    user: SessionUser,
    place: (&str, i64),
    channel: &str,
    kept: (&str, &str),
    message: &str,
) -> Result<Response> {
    let entry = EntryState {
        error: message.to_string(),
        channel: channel.chars().take(64).collect(),
        kept_value: kept.0.chars().take(64).collect(),
        kept_time: kept.1.chars().take(64).collect(),
        notice: String::new(),
    };
    refused(state, user, place.0, place.1, entry).await
}

/// A time typed at the bench: empty means `default_s`; otherwise within the run so far.
fn typed_time(
    text: &str,
    bounds: &ReadingBounds,
    default_s: f64,
) -> std::result::Result<f64, String> {
    if text.trim().is_empty() {
        return Ok(default_s.max(0.0));
    }
    let t_s = parse_elapsed_s(text).map_err(|_| "time: use 2:30 or 150 s".to_string())?;
    bounds.t_s(t_s).map_err(|m| format!("time: {m}"))
}

pub(super) async fn add_reading(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path((slug, id)): Path<(String, i64)>,
    Form(form): Form<ReadingForm>,
) -> Result<Response> {
    let (_, run) = build_and_run(&state, &slug, id).await?;
    if !run.is_open() {
        return Err(AppError::Conflict(
            "this run is finished; readings can no longer be added".into(),
        ));
    }
    let revision = state.store.revision_by_id(run.revision_id).await?;
    let elapsed_s = (now_unix_s() - run.started_at) as f64;
    let bounds = ReadingBounds::page(&revision.parts, elapsed_s);
    let kept = (form.value.as_str(), form.time.as_str());
    let checked = bounds.channel(&form.channel).and_then(|channel| {
        let typed = typed_value(channel, &form.value)?;
        let value = bounds.value(channel, typed.value)?;
        let t_s = typed_time(&form.time, &bounds, elapsed_s)?;
        Ok((channel, value, t_s, typed.assumed))
    });
    let (channel, value, t_s, assumed) = match checked {
        Ok(checked) => checked,
        Err(message) => {
            return refuse(&state, user, (&slug, id), &form.channel, kept, &message).await;
        }
    };
    state
        .store
        .add_readings(
            run.id,
            &[NewReading {
                t_s,
                channel: channel.to_string(),
                value,
                client_id: None,
            }],
            Some(user.user_id),
        )
        .await?;
    if let Some(unit) = assumed {
        // Say which unit a bare frequency was taken in.
        let entry = EntryState {
            notice: format!(
                "Logged {} at {}: the number was read as {unit}.",
                eng(value, Unit::Hertz),
                minutes_seconds(t_s)
            ),
            ..EntryState::default()
        };
        let page = render(&state, &Reader::User(user), &slug, id, entry).await?;
        return Ok(page.into_response());
    }
    Ok(Redirect::to(&format!("/builds/{slug}/runs/{id}#entry-{}", channel)).into_response())
}

#[derive(Deserialize)]
pub(super) struct CorrectionForm {
    value: String,
    /// A corrected time; empty keeps the reading's time.
    #[serde(default)]
    time: String,
}

pub(super) async fn correct_reading(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path((slug, id, reading)): Path<(String, i64, i64)>,
    Form(form): Form<CorrectionForm>,
) -> Result<Response> {
    let (_, run) = build_and_run(&state, &slug, id).await?;
    let history = state.store.reading_history(run.id).await?;
    let old = history
        .iter()
        .find(|r| r.id.0 == reading)
        .ok_or(AppError::NotFound)?;
    let revision = state.store.revision_by_id(run.revision_id).await?;
    let until = run.finished_at.unwrap_or_else(now_unix_s);
    let bounds = ReadingBounds::page(&revision.parts, (until - run.started_at) as f64);
    let checked = bounds.channel(&old.channel).and_then(|channel| {
        let value = bounds.value(channel, typed_value(channel, &form.value)?.value)?;
        let t_s = typed_time(&form.time, &bounds, old.t_s)?;
        Ok((value, t_s))
    });
    let (value, t_s) = match checked {
        Ok(checked) => checked,
        Err(message) => {
            let message = format!("correction: {message}");
            let kept = (form.value.as_str(), form.time.as_str());
            return refuse(&state, user, (&slug, id), &old.channel, kept, &message).await;
        }
    };
    state
        .store
        .correct_reading(
            run.id,
            ReadingId(reading),
            Some(t_s),
            value,
            Some(user.user_id),
        )
        .await?;
    Ok(Redirect::to(&format!("/builds/{slug}/runs/{id}#readings")).into_response())
}

#[derive(Deserialize)]
pub(super) struct VoidForm {
    #[serde(default)]
    reason: String,
}

/// Voids a wrong reading with a reason: it leaves the charts, the fit and the flags, and stays
/// in the history and the export.
pub(super) async fn void_reading(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path((slug, id, reading)): Path<(String, i64, i64)>,
    Form(form): Form<VoidForm>,
) -> Result<Response> {
    let (_, run) = build_and_run(&state, &slug, id).await?;
    let reason = match checks::text::void_reason(&form.reason) {
        Ok(reason) => reason,
        Err(message) => {
            let message = format!("void: {message}");
            let kept = (form.reason.as_str(), "");
            return refuse(&state, user, (&slug, id), "void", kept, &message).await;
        }
    };
    state
        .store
        .set_reading_void(
            run.id,
            ReadingId(reading),
            Some(&reason),
            Some(user.user_id),
        )
        .await?;
    Ok(Redirect::to(&format!("/builds/{slug}/runs/{id}#readings")).into_response())
}

/// Puts a voided reading back.
pub(super) async fn restore_reading(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path((slug, id, reading)): Path<(String, i64, i64)>,
) -> Result<Response> {
    let (_, run) = build_and_run(&state, &slug, id).await?;
    state
        .store
        .set_reading_void(run.id, ReadingId(reading), None, Some(user.user_id))
        .await?;
    Ok(Redirect::to(&format!("/builds/{slug}/runs/{id}#readings")).into_response())
}

#[derive(Deserialize)]
pub(super) struct FinishForm {
    outcome: String,
    #[serde(default)]
    failed_part: String,
    #[serde(default)]
    note: String,
}

pub(super) async fn finish(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path((slug, id)): Path<(String, i64)>,
    Form(form): Form<FinishForm>,
) -> Result<Response> {
    let (_, run) = build_and_run(&state, &slug, id).await?;
    let revision = state.store.revision_by_id(run.revision_id).await?;
    let checked = match checks::runs::finish(
        &form.outcome,
        &form.failed_part,
        &form.note,
        &revision.parts,
    ) {
        Ok(checked) => checked,
        Err(refusal) => {
            let (_, message) = refusal.first().unwrap_or(("finish", "refused"));
            return refuse(&state, user, (&slug, id), "finish", ("", ""), message).await;
        }
    };
    let outcome = Outcome::parse(checked.outcome).ok_or(AppError::NotFound)?;
    state
        .store
        .finish_run(
            run.id,
            &RunFinish {
                by: Some(user.user_id),
                outcome,
                failed_part: checked.failed_part.as_deref(),
                note: &checked.note,
                finished_at: None,
            },
        )
        .await?;
    crate::web::runs::digests::keep_digest_of_finished_run(&state.store, run.id).await?;
    Ok(Redirect::to(&format!("/builds/{slug}/runs/{id}")).into_response())
}
