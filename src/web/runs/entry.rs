//! Logging at the bench: a reading stamped with the time since the start, a correction that
//! keeps the old value, and the end of the run.

use axum::Form;
use axum::extract::{Path, State};
use axum::response::{IntoResponse, Redirect, Response};
use serde::Deserialize;

use crate::channel::Channel;
use crate::store::{NewReading, Outcome, ReadingId, RunFinish, now_unix_s};
use crate::units::parse_elapsed_s;
use crate::web::accounts::session::Editor;
use crate::web::{AppError, AppState, Result};

use super::entry_units::parse_entry;
use super::lookup::{build_and_run, channels_of};

#[derive(Deserialize)]
pub(super) struct ReadingForm {
    channel: String,
    value: String,
    #[serde(default)]
    time: String,
}

/// Back to the run page with a message beside the field (the page keeps no typed values, so
/// the message says what was wrong and the user types again).
fn back_with_error(slug: &str, id: i64, channel: &str, message: &str) -> Response {
    let message = crate::web::error::urlencode(message);
    let channel = crate::web::error::urlencode(channel);
    Redirect::to(&format!(
        "/builds/{slug}/runs/{id}?error={message}&channel={channel}#entry-{channel}"
    ))
    .into_response()
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
    let channel: Channel = match form.channel.parse() {
        Ok(c) => c,
        Err(e) => return Ok(back_with_error(&slug, id, &form.channel, &e.to_string())),
    };
    let value = match parse_entry(channel, &form.value) {
        Ok(v) => v,
        Err(e) => return Ok(back_with_error(&slug, id, &form.channel, &e.to_string())),
    };
    let (low, high) = channel.plausible_range();
    if !(low..=high).contains(&value) {
        return Ok(back_with_error(
            &slug,
            id,
            &form.channel,
            &format!("{} is outside {low}..{high}", form.value.trim()),
        ));
    }
    let t_s = if form.time.trim().is_empty() {
        (now_unix_s() - run.started_at).max(0) as f64
    } else {
        match parse_elapsed_s(&form.time) {
            Ok(t) => t,
            Err(_) => {
                return Ok(back_with_error(
                    &slug,
                    id,
                    &form.channel,
                    "time: use 2:30 or 150 s",
                ));
            }
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
    Ok(Redirect::to(&format!("/builds/{slug}/runs/{id}#entry-{}", channel)).into_response())
}

#[derive(Deserialize)]
pub(super) struct CorrectionForm {
    value: String,
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
    let channel: Channel = old.channel.parse().map_err(|_| AppError::NotFound)?;
    let value = match parse_entry(channel, &form.value) {
        Ok(v) if (channel.plausible_range().0..=channel.plausible_range().1).contains(&v) => v,
        Ok(_) => {
            return Ok(back_with_error(
                &slug,
                id,
                &old.channel,
                "the corrected value is out of range",
            ));
        }
        Err(e) => return Ok(back_with_error(&slug, id, &old.channel, &e.to_string())),
    };
    state
        .store
        .correct_reading(run.id, ReadingId(reading), value, Some(user.user_id))
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
    let outcome = Outcome::parse(&form.outcome)
        .ok_or_else(|| AppError::invalid("outcome", "choose how the run ended"))?;
    let revision = state.store.revision_by_id(run.revision_id).await?;
    let failed_part = match (outcome, form.failed_part.trim()) {
        (Outcome::PartFailed, "") => {
            return Ok(back_with_error(
                &slug,
                id,
                "finish",
                "say which part failed",
            ));
        }
        (Outcome::PartFailed, part) => {
            let known = channels_of(&revision.parts)
                .iter()
                .any(|c| c.to_string() == format!("temp.{part}"));
            if !known {
                return Ok(back_with_error(
                    &slug,
                    id,
                    "finish",
                    "that part is not in this revision",
                ));
            }
            Some(part.to_string())
        }
        _ => None,
    };
    state
        .store
        .finish_run(
            run.id,
            &RunFinish {
                by: Some(user.user_id),
                outcome,
                failed_part: failed_part.as_deref(),
                note: form.note.trim(),
                finished_at: None,
            },
        )
        .await?;
    crate::web::runs::digests::keep_digest_of_finished_run(&state.store, run.id).await?;
    Ok(Redirect::to(&format!("/builds/{slug}/runs/{id}")).into_response())
}
