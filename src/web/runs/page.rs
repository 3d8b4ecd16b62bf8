//! The run page: operating point, live margins, the entry form for a whole set, event marks,
//! the latest readings (older ones a page at a time) and the analysis.

use std::collections::HashMap;

use askama::Template;
use askama_web::WebTemplate;
use axum::extract::{Path, Query, State};
use serde::Deserialize;

use crate::analysis::entry_order::entry_order;
use crate::analysis::reading_set::FieldError;
use crate::channel::Channel;
use crate::store::{Build, EventMark, Outcome, ReadingRow, Run, now_unix_s};
use crate::units::Unit;
use crate::web::chrome::Chrome;
use crate::web::reader::Reader;
use crate::web::runs::analysis::{analyse_stored_run, analysis_readings};
use crate::web::runs::view::AnalysisView;
use crate::web::view::{date_time, load_title, maybe, minutes_seconds};
use crate::web::{AppState, Result};

use crate::analysis::reading_set::{entry_unit, unit_for};

use super::lookup::{channels_of, reader_build_and_run};

/// Readings in one page of the table, newest first.
pub(super) const READINGS_PER_PAGE: i64 = 40;

#[derive(Template, WebTemplate)]
#[template(path = "runs/show.html")]
pub(super) struct ShowPage {
    chrome: Chrome,
    build: Build,
    run: Run,
    started: String,
    finished: String,
    load: &'static str,
    supply: String,
    limit: String,
    entry: EntryForm,
    /// This page of the readings table, newest first, with the marks of its span.
    lines: Vec<TableLine>,
    reading_count: i64,
    page: i64,
    pages: i64,
    marks: Vec<MarkLine>,
    failed_part_choices: Vec<(String, String)>,
    outcome_title: String,
    failed_part_title: String,
    error: String,
    error_channel: String,
    analysis: AnalysisView,
    attachments: Vec<crate::web::attachments::AttachmentView>,
    /// For the page's script: the server's clock (Unix ms) when the page was made, the run's
    /// start (Unix s) and the newest reading id shown (where the live stream picks up).
    server_ms: i64,
    last_reading_id: i64,
}

/// The one form of the open run: a field per channel in use, in the revision's order.
#[derive(Default)]
pub(super) struct EntryForm {
    fields: Vec<EntryField>,
    time: String,
    time_error: String,
    set_error: String,
    /// "logged 4 at 2:31" after a set went in.
    logged: String,
    mark_text: String,
    mark_error: String,
}

struct EntryField {
    channel: String,
    title: String,
    unit: &'static str,
    last: String,
    typed: String,
    error: String,
}

/// A row of the readings table: a reading, or an event mark at its time.
struct TableLine {
    id: i64,
    time: String,
    title: String,
    value: String,
    corrected_from: Vec<String>,
    is_mark: bool,
}

struct MarkLine {
    time: String,
    text: String,
    voided: String,
}

/// What the user sent that the page shows again: typed values and the refusals.
#[derive(Default)]
pub(super) struct Submitted {
    pub values: HashMap<String, String>,
    pub time: String,
    pub errors: Vec<FieldError>,
    pub mark_text: String,
    pub mark_error: String,
}

#[derive(Deserialize, Default)]
pub(super) struct ShowQuery {
    #[serde(default)]
    error: String,
    #[serde(default)]
    channel: String,
    /// After a set went in without script: how many and the time since the start.
    #[serde(default)]
    logged: Option<u32>,
    #[serde(default)]
    at: Option<f64>,
    /// Page of the readings table (1 is the newest).
    #[serde(default)]
    page: Option<i64>,
}

pub(super) async fn show(
    State(state): State<AppState>,
    reader: Reader,
    Path((slug, id)): Path<(String, i64)>,
    Query(query): Query<ShowQuery>,
) -> Result<ShowPage> {
    let (build, run) = reader_build_and_run(&state, &reader, &slug, id).await?;
    let logged = match (query.logged, query.at) {
        (Some(n), Some(at)) if at.is_finite() => format!("logged {n} at {}", minutes_seconds(at)),
        _ => String::new(),
    };
    let mut page = render(
        &state,
        &reader,
        build,
        run,
        Submitted::default(),
        query.page,
    )
    .await?;
    page.entry.logged = logged;
    page.error = query.error.chars().take(200).collect();
    page.error_channel = query.channel;
    Ok(page)
}

fn format_reading(name: &str, value: f64) -> String {
    match name.parse::<Channel>() {
        Ok(channel) => crate::units::eng(value, unit_for(channel.quantity())).to_string(),
        Err(_) => format!("{value}"),
    }
}

fn channel_title(name: &str) -> String {
    name.parse::<Channel>()
        .map(Channel::title)
        .unwrap_or_else(|_| name.to_string())
}

/// The run page, with what was just submitted shown again (values kept, refusals beside their
/// fields). Reads one page of readings, not the whole run.
pub(super) async fn render(
    state: &AppState,
    reader: &Reader,
    build: Build,
    run: Run,
    submitted: Submitted,
    page: Option<i64>,
) -> Result<ShowPage> {
    let revision = state.store.revision_by_id(run.revision_id).await?;
    let analysis_readings = analysis_readings(&state.store, run.id).await?;
    let analysed = analyse_stored_run(&state.store, &run, &revision, &analysis_readings).await?;
    let marks = state.store.event_marks(run.id).await?;
    let live_marks: Vec<&EventMark> = marks.iter().filter(|m| !m.is_voided()).collect();
    let open_at_s = run
        .is_open()
        .then(|| (now_unix_s() - run.started_at) as f64);
    let chart_marks: Vec<(f64, String)> =
        live_marks.iter().map(|m| (m.t_s, m.text.clone())).collect();
    let analysis = AnalysisView::build(
        run.id.0,
        &revision.parts,
        &analysed,
        &analysis_readings,
        open_at_s,
        &chart_marks,
    );
    let reading_count = analysis_readings.len() as i64;
    let pages = ((reading_count + READINGS_PER_PAGE - 1) / READINGS_PER_PAGE).max(1);
    let page = page.unwrap_or(1).clamp(1, pages);
    let rows = state
        .store
        .readings_page(run.id, (page - 1) * READINGS_PER_PAGE, READINGS_PER_PAGE)
        .await?;
    let lines = table_lines(state, &rows, &live_marks, page == 1).await?;
    let last_reading_id = state.store.last_reading_id(run.id).await?;
    let entry = entry_form(state, &run, &revision, &analysis_readings, submitted).await?;
    let failed_part_choices = channels_of(&revision.parts)
        .into_iter()
        .filter_map(|c| match c {
            Channel::PartTemp { .. } => Some((
                c.to_string().trim_start_matches("temp.").to_string(),
                c.title().trim_end_matches(" temperature").to_string(),
            )),
            _ => None,
        })
        .collect::<Vec<_>>();
    let failed_part_title = run
        .failed_part
        .as_deref()
        .and_then(|p| failed_part_choices.iter().find(|(k, _)| k == p))
        .map(|(_, t)| t.clone())
        .unwrap_or_default();
    Ok(ShowPage {
        chrome: reader.chrome(format!("Run {} of {}", run.id, build.name), &build),
        started: date_time(run.started_at),
        finished: run.finished_at.map(date_time).unwrap_or_default(),
        load: load_title(&run.load),
        supply: maybe(run.supply_setting_v, Unit::Volt),
        limit: maybe(run.supply_current_limit_a, Unit::Ampere),
        entry,
        lines,
        reading_count,
        page,
        pages,
        marks: marks
            .iter()
            .map(|m| MarkLine {
                time: minutes_seconds(m.t_s),
                text: m.text.clone(),
                voided: m.void_reason.clone().unwrap_or_default(),
            })
            .collect(),
        failed_part_choices,
        outcome_title: run
            .outcome
            .as_deref()
            .and_then(Outcome::parse)
            .map(|o| o.title().to_string())
            .unwrap_or_default(),
        failed_part_title,
        error: String::new(),
        error_channel: String::new(),
        analysis,
        attachments: crate::web::attachments::views_of_run(
            state,
            &reader.chrome("", &build).base,
            &run,
            !reader.is_share(),
        )
        .await?,
        server_ms: (time::OffsetDateTime::now_utc().unix_timestamp_nanos() / 1_000_000) as i64,
        last_reading_id,
        build,
        run,
    })
}

/// The rows of one page of the table, with the marks that fall in its span of time (the
/// newest page also takes the marks after its newest reading).
async fn table_lines(
    state: &AppState,
    rows: &[ReadingRow],
    marks: &[&EventMark],
    newest_page: bool,
) -> Result<Vec<TableLine>> {
    let mut lines = Vec::with_capacity(rows.len() + marks.len());
    for r in rows {
        let corrected_from = match r.corrects_id {
            Some(_) => state
                .store
                .replaced_values(r.id)
                .await?
                .iter()
                .map(|old| format_reading(&old.channel, old.value))
                .collect(),
            None => Vec::new(),
        };
        lines.push((
            r.t_s,
            TableLine {
                id: r.id.0,
                time: minutes_seconds(r.t_s),
                title: channel_title(&r.channel),
                value: format_reading(&r.channel, r.value),
                corrected_from,
                is_mark: false,
            },
        ));
    }
    let newest = if newest_page {
        f64::INFINITY
    } else {
        rows.first().map_or(f64::NEG_INFINITY, |r| r.t_s)
    };
    let oldest = rows.last().map_or(f64::NEG_INFINITY, |r| r.t_s);
    for m in marks.iter().filter(|m| m.t_s >= oldest && m.t_s <= newest) {
        lines.push((
            m.t_s,
            TableLine {
                id: m.id,
                time: minutes_seconds(m.t_s),
                title: "Mark".into(),
                value: m.text.clone(),
                corrected_from: Vec::new(),
                is_mark: true,
            },
        ));
    }
    // Newest first; a mark goes above the readings of its own second.
    lines.sort_by(|a, b| b.0.total_cmp(&a.0).then(b.1.is_mark.cmp(&a.1.is_mark)));
    Ok(lines.into_iter().map(|(_, line)| line).collect())
}

async fn entry_form(
    state: &AppState,
    run: &Run,
    revision: &crate::store::Revision,
    readings: &[crate::analysis::reading::Reading],
    submitted: Submitted,
) -> Result<EntryForm> {
    let in_use: Vec<Channel> = run
        .channels()
        .iter()
        .filter_map(|name| name.parse().ok())
        .collect();
    let saved = state.store.entry_order(revision.id).await?;
    let error_of = |field: &str| {
        submitted
            .errors
            .iter()
            .filter(|e| e.field == field)
            .map(|e| e.message.as_str())
            .collect::<Vec<_>>()
            .join("; ")
    };
    let fields = entry_order(&in_use, &saved)
        .into_iter()
        .map(|channel| {
            let name = channel.to_string();
            EntryField {
                title: channel.title(),
                unit: entry_unit(channel),
                last: readings
                    .iter()
                    .rev()
                    .find(|r| r.channel == channel)
                    .map(|r| format_reading(&name, r.value))
                    .unwrap_or_default(),
                typed: submitted.values.get(&name).cloned().unwrap_or_default(),
                error: error_of(&name),
                channel: name,
            }
        })
        .collect();
    Ok(EntryForm {
        fields,
        time: submitted.time,
        time_error: error_of("time"),
        set_error: error_of("set"),
        logged: String::new(),
        mark_text: submitted.mark_text,
        mark_error: submitted.mark_error,
    })
}
