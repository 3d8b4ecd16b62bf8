//! The live stream of an open run page (server-sent events): what changed since the reading
//! the page last saw, and the margins recomputed, pushed whenever the run changes. A page that
//! lost its stream reconnects by itself (the browser's EventSource) and names the last reading
//! it had (`Last-Event-ID`), so it catches up on what it missed.
//!
//! A request that does not ask for `text/event-stream` gets one update and the end of the
//! body: the same catch-up for a script that polls.

use std::convert::Infallible;
use std::time::Duration;

use axum::extract::{Path, Query, State};
use axum::http::{HeaderMap, header};
use axum::response::sse::{Event, KeepAlive, Sse};
use axum::response::{IntoResponse, Response};
use futures_util::stream::{self, StreamExt};
use serde::{Deserialize, Serialize};
use tokio::sync::broadcast::error::RecvError;

use super::analysis::analysis_readings;
use super::lookup::reader_build_and_run;
use super::view::{LiveRow, live_row};
use crate::analysis::live::live_margins;
use crate::analysis::operating_point::operating_point;
use crate::channel::Channel;
use crate::store::{Run, RunId};
use crate::web::reader::Reader;
use crate::web::view::minutes_seconds;
use crate::web::{AppState, Result};

/// Readings one update carries at most; a page that missed more reloads instead.
const CATCH_UP_READINGS: i64 = 200;
/// How long a browser waits before reconnecting a dropped stream.
const RECONNECT_AFTER: Duration = Duration::from_secs(2);

#[derive(Deserialize, Default)]
pub(super) struct EventsQuery {
    /// The newest reading id the page has (when there is no `Last-Event-ID`).
    #[serde(default)]
    after: Option<i64>,
}

#[derive(Serialize)]
struct LiveReading {
    id: i64,
    t_s: f64,
    time: String,
    title: String,
    value: String,
    /// The reading this one replaces, when it is a correction.
    corrects: Option<i64>,
}

#[derive(Serialize)]
struct LiveMark {
    id: i64,
    time: String,
    text: String,
}

/// One push to the page.
#[derive(Serialize)]
struct LiveUpdate {
    readings: Vec<LiveReading>,
    /// More readings arrived than one update carries: the page should reload.
    missed_some: bool,
    marks: Vec<LiveMark>,
    live: Vec<LiveRow>,
    reading_count: i64,
    /// Seconds since the start when the margins were computed (the countdowns start here).
    elapsed_s: f64,
    open: bool,
}

fn format_value(name: &str, value: f64) -> String {
    match name.parse::<Channel>() {
        Ok(channel) => crate::units::eng(
            value,
            crate::analysis::reading_set::unit_for(channel.quantity()),
        )
        .to_string(),
        Err(_) => format!("{value}"),
    }
}

/// What changed after reading `after` and the margins now; returns the update and the newest
/// reading id it covers.
async fn update_after(state: &AppState, run_id: RunId, after: i64) -> Result<(LiveUpdate, i64)> {
    let run: Run = state.store.run_by_id(run_id).await?;
    let rows = state
        .store
        .readings_after(run.id, after, CATCH_UP_READINGS + 1)
        .await?;
    let missed_some = rows.len() as i64 > CATCH_UP_READINGS;
    let newest = rows.last().map_or(after, |r| r.id.0);
    let readings = rows
        .iter()
        .skip(usize::from(missed_some))
        .map(|r| LiveReading {
            id: r.id.0,
            t_s: r.t_s,
            time: minutes_seconds(r.t_s),
            title: r
                .channel
                .parse::<Channel>()
                .map(Channel::title)
                .unwrap_or_else(|_| r.channel.clone()),
            value: format_value(&r.channel, r.value),
            corrects: r.corrects_id.map(|c| c.0),
        })
        .collect();
    let marks = state
        .store
        .event_marks(run.id)
        .await?
        .into_iter()
        .filter(|m| !m.is_voided())
        .map(|m| LiveMark {
            id: m.id,
            time: minutes_seconds(m.t_s),
            text: m.text,
        })
        .collect();
    let elapsed_s = (crate::store::now_unix_s() - run.started_at) as f64;
    let live = if run.is_open() {
        let revision = state.store.revision_by_id(run.revision_id).await?;
        let all = analysis_readings(&state.store, run.id).await?;
        let setting = operating_point(&all, run.supply_setting_v).map(|op| op.supply_voltage_v);
        live_margins(&revision.parts, &all, setting, elapsed_s)
            .iter()
            .map(live_row)
            .collect()
    } else {
        Vec::new()
    };
    let reading_count = state.store.current_reading_count(run.id).await?;
    let update = LiveUpdate {
        readings,
        missed_some,
        marks,
        live,
        reading_count,
        elapsed_s,
        open: run.is_open(),
    };
    Ok((update, newest))
}

fn event_of(update: &LiveUpdate, newest: i64) -> Event {
    Event::default()
        .event("run")
        .id(newest.to_string())
        .retry(RECONNECT_AFTER)
        .json_data(update)
        .unwrap_or_else(|_| Event::default().comment("update could not be written"))
}

/// Where the stream picks up: the browser's `Last-Event-ID` on a reconnect, else `?after=`.
fn starting_after(headers: &HeaderMap, query: &EventsQuery) -> i64 {
    headers
        .get("last-event-id")
        .and_then(|v| v.to_str().ok())
        .and_then(|v| v.trim().parse().ok())
        .or(query.after)
        .unwrap_or(0)
        .max(0)
}

/// `GET /builds/{slug}/runs/{id}/events` (and the share page's twin).
pub(super) async fn events(
    State(state): State<AppState>,
    reader: Reader,
    Path((slug, id)): Path<(String, i64)>,
    Query(query): Query<EventsQuery>,
    headers: HeaderMap,
) -> Result<Response> {
    let (_, run) = reader_build_and_run(&state, &reader, &slug, id).await?;
    let after = starting_after(&headers, &query);
    let streaming = headers
        .get(header::ACCEPT)
        .and_then(|v| v.to_str().ok())
        .is_some_and(|v| v.contains("text/event-stream"));
    // Subscribe before the first read, so nothing written in between goes unnoticed.
    let notices = state.run_feeds.subscribe(run.id);
    let (first, newest) = update_after(&state, run.id, after).await?;
    let first_event = event_of(&first, newest);
    if !streaming || !first.open {
        let once = stream::iter([Ok::<_, Infallible>(first_event)]);
        return Ok(Sse::new(once).into_response());
    }
    let later = stream::unfold(
        (state, run.id, newest, notices, true),
        |(state, run_id, newest, mut notices, open)| async move {
            if !open {
                return None;
            }
            match notices.recv().await {
                Ok(_) | Err(RecvError::Lagged(_)) => {}
                Err(RecvError::Closed) => return None,
            }
            // Notices that piled up meanwhile are covered by this one read.
            while notices.try_recv().is_ok() {}
            match update_after(&state, run_id, newest).await {
                Ok((update, newest)) => {
                    let event = event_of(&update, newest);
                    let open = update.open;
                    Some((
                        Ok::<_, Infallible>(event),
                        (state, run_id, newest, notices, open),
                    ))
                }
                Err(error) => {
                    tracing::warn!(%error, "live update failed");
                    None
                }
            }
        },
    );
    let all = stream::iter([Ok(first_event)]).chain(later);
    Ok(Sse::new(all)
        .keep_alive(KeepAlive::new().interval(Duration::from_secs(15)))
        .into_response())
}
