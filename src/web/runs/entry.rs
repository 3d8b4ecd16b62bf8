//! Corrections that keep the old value, and the end of the run (sets of readings and marks are
//! in `set`).

use axum::Form;
use axum::extract::{Path, State};
use axum::response::{IntoResponse, Redirect, Response};
use serde::Deserialize;

use crate::analysis::reading_set::parse_entry;
use crate::channel::Channel;
use crate::run_feed::RunChange;
use crate::store::{Outcome, ReadingId, RunFinish};
use crate::web::accounts::session::Editor;
use crate::web::{AppError, AppState, Result};

use super::lookup::{build_and_run, channels_of};

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
    Ok(Redirect::to(&format!("/builds/{slug}/runs/{id}")).into_response())
}
