//! Corrections that keep the old value (its time as well), voids and restores with a reason,
//! and the end of the run (sets of readings and marks are in `set`).

use axum::Form;
use axum::extract::{Path, State};
use axum::response::{IntoResponse, Redirect, Response};
use serde::Deserialize;

use crate::checks;
use crate::checks::readings::{ReadingBounds, typed_value};
use crate::run_feed::RunChange;
use crate::store::{Outcome, ReadingId, RunFinish, SessionUser, now_unix_s};
use crate::web::accounts::session::Editor;
use crate::web::{AppError, AppState, Result};

use super::lookup::build_and_run;
use super::page::{Submitted, refused};

/// The run page again with a message beside the form (status 422, nothing saved).
async fn refuse(
    state: &AppState,
    user: SessionUser,
    place: (&str, i64),
    form: &str,
    message: &str,
) -> Result<Response> {
    let submitted = Submitted {
        error: message.to_string(),
        error_channel: form.to_string(),
        ..Submitted::default()
    };
    refused(state, user, place.0, place.1, submitted).await
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
    bounds.typed_time(text).map_err(|m| format!("time: {m}"))
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
            return refuse(&state, user, (&slug, id), &old.channel, &message).await;
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
    state.run_feeds.notify(run.id, RunChange::Readings);
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
            return refuse(&state, user, (&slug, id), "void", &message).await;
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
    state.run_feeds.notify(run.id, RunChange::Readings);
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
    state.run_feeds.notify(run.id, RunChange::Readings);
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
            return refuse(&state, user, (&slug, id), "finish", message).await;
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
    state.run_feeds.notify(run.id, RunChange::Finished);
    Ok(Redirect::to(&format!("/builds/{slug}/runs/{id}")).into_response())
}
