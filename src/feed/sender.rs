//! The sender: takes the oldest queued readings, posts them in one batch with their ids, and
//! marks them done only once the server has answered that it stored them. An outage is waited
//! out with backoff; a finished run ends the feed.

use std::sync::Arc;
use std::time::{Duration, Instant};

use hyper::{Method, StatusCode};
use serde_json::{Value, json};

use super::reading::QueuedReading;
use super::server::{ApiError, Server};
use super::state::{Feed, backoff};

/// Readings per request: large enough to catch up after an outage in few requests.
const BATCH: usize = 500;
/// With nothing to send, look at the run this often to notice it was finished.
const RUN_CHECK_EVERY: Duration = Duration::from_secs(5);

/// Why the feed ended.
#[derive(Debug, Clone, PartialEq)]
pub enum Ended {
    /// The run was finished (on the phone or through the API), at this time.
    RunFinished(String),
    /// Asked to stop (Ctrl-C); what was queued and not sent waits on disk.
    Stopped,
    /// Cannot go on: the token was refused, the run does not exist, the disk is full, ...
    Failed(String),
}

pub async fn send(feed: Arc<Feed>, server: Server, run: i64) -> Ended {
    let mut started = lock(&feed).meta().run_started_unix_s;
    let mut attempt = 0;
    let mut limit = BATCH;
    let mut last_run_check: Option<Instant> = None;
    loop {
        if let Some(fatal) = feed.fatal.lock().unwrap_or_else(|p| p.into_inner()).clone() {
            return Ended::Failed(fatal);
        }
        let batch = lock(&feed).oldest(limit);
        let check_due = last_run_check.is_none_or(|t| t.elapsed() >= RUN_CHECK_EVERY);
        if started.is_none() || (batch.is_empty() && check_due) {
            last_run_check = Some(Instant::now());
            match server.run(run).await {
                Ok(state) => {
                    if let Some(finished) = state.finished_at {
                        return Ended::RunFinished(finished);
                    }
                    started = state.started_unix_s();
                    if let Some(unix_s) = started
                        && let Err(e) = lock(&feed).set_run_started(unix_s)
                    {
                        return Ended::Failed(format!("cannot write the queue on disk: {e}"));
                    }
                    feed.server_note(None);
                }
                Err(ApiError::Unreachable(why)) if !feed.is_stopping() => {
                    let wait = backoff(attempt);
                    attempt += 1;
                    feed.server_note(Some(format!(
                        "unreachable ({why}); trying again in {wait:.1?}"
                    )));
                    wait_or_stop(&feed, wait).await;
                    continue;
                }
                Err(ApiError::Unreachable(_)) => return Ended::Stopped,
                Err(refused) => return Ended::Failed(refusal(run, &refused)),
            }
        }
        let Some(started) = started else { continue };
        if batch.is_empty() {
            if feed.is_stopping() {
                return Ended::Stopped;
            }
            let _ = tokio::time::timeout(Duration::from_secs(1), feed.queued.notified()).await;
            continue;
        }
        let body = body_of(&batch, started as f64);
        let path = format!("/api/v1/runs/{run}/readings");
        match server.call(Method::POST, &path, Some(body)).await {
            Ok(_) => {
                attempt = 0;
                limit = BATCH;
                if let Err(e) = done(&feed, &batch, batch.len(), false) {
                    return Ended::Failed(e);
                }
                feed.server_note(None);
            }
            Err(ApiError::Unreachable(_)) if feed.is_stopping() => return Ended::Stopped,
            Err(ApiError::Unreachable(why)) => {
                let wait = backoff(attempt);
                attempt += 1;
                feed.server_note(Some(format!(
                    "unreachable ({why}); {} waiting; trying again in {wait:.1?}",
                    lock(&feed).len()
                )));
                wait_or_stop(&feed, wait).await;
            }
            Err(ApiError::Status(StatusCode::CONFLICT, body)) => {
                // Either the run was finished or an id came back with another value.
                if let Ok(state) = server.run(run).await
                    && let Some(finished) = state.finished_at
                {
                    return Ended::RunFinished(finished);
                }
                return Ended::Failed(refusal(run, &ApiError::Status(StatusCode::CONFLICT, body)));
            }
            Err(ApiError::Status(StatusCode::UNPROCESSABLE_ENTITY, body))
                if body.get("row").and_then(Value::as_u64).is_some() =>
            {
                // One reading the server will never take (a part this revision lacks): drop
                // it once those before it are stored, counting it on its source's line.
                let row = body["row"].as_u64().unwrap_or(1) as usize;
                if row <= 1 {
                    let message = ApiError::Status(StatusCode::UNPROCESSABLE_ENTITY, body);
                    feed.fault(
                        batch[0].source,
                        Some(format!("server refused: {}", message.message())),
                    );
                    if let Err(e) = done(&feed, &batch, 1, true) {
                        return Ended::Failed(e);
                    }
                } else {
                    limit = row - 1;
                }
            }
            Err(refused) => return Ended::Failed(refusal(run, &refused)),
        }
    }
}

/// The JSON array the readings API takes.
pub fn body_of(batch: &[QueuedReading], run_started_unix_s: f64) -> Vec<u8> {
    let rows: Vec<Value> = batch
        .iter()
        .map(|r| {
            json!({
                "id": r.id,
                "t_s": r.time.elapsed_s(run_started_unix_s),
                "channel": r.channel,
                "value": r.value,
            })
        })
        .collect();
    serde_json::to_vec(&rows).unwrap_or_default()
}

/// Marks the first `count` of a batch done and counts them on their sources' lines.
fn done(feed: &Feed, batch: &[QueuedReading], count: usize, refused: bool) -> Result<(), String> {
    let Some(last) = batch[..count].last() else {
        return Ok(());
    };
    lock(feed)
        .done_up_to(last.seq)
        .map_err(|e| format!("cannot write the queue on disk: {e}"))?;
    for reading in &batch[..count] {
        feed.with_status(reading.source, |s| {
            if refused {
                s.refused_by_server += 1;
            } else {
                s.sent += 1;
            }
        });
    }
    Ok(())
}

fn refusal(run: i64, error: &ApiError) -> String {
    match error {
        ApiError::Status(StatusCode::UNAUTHORIZED, _) => {
            "the server refused the token; make one with `eddybench token add`".into()
        }
        ApiError::Status(StatusCode::FORBIDDEN, _) => {
            "the token's user may not add readings (an editor's token is needed)".into()
        }
        ApiError::Status(StatusCode::NOT_FOUND, _) => format!("the server has no run {run}"),
        other => format!("the server refused the readings: {}", other.message()),
    }
}

fn lock(feed: &Feed) -> std::sync::MutexGuard<'_, super::queue::Queue> {
    feed.queue.lock().unwrap_or_else(|p| p.into_inner())
}

async fn wait_or_stop(feed: &Feed, wait: Duration) {
    let until = Instant::now() + wait;
    while !feed.is_stopping() && Instant::now() < until {
        tokio::time::sleep(Duration::from_millis(100)).await;
    }
}
