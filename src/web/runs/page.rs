//! The run page: operating point, live margins, entry fields, readings and the analysis.

use askama::Template;
use askama_web::WebTemplate;
use axum::extract::{Path, Query, State};
use serde::Deserialize;

use crate::channel::Channel;
use crate::store::{Build, Outcome, Run, now_unix_s};
use crate::units::Unit;
use crate::web::chrome::Chrome;
use crate::web::reader::Reader;
use crate::web::runs::analysis::{analyse_stored_run, analysis_readings};
use crate::web::runs::view::AnalysisView;
use crate::web::view::{date_time, load_title, maybe, minutes_seconds};
use crate::web::{AppState, Result};

use super::entry_units::{entry_unit, unit_for};
use super::lookup::{RECENT_READINGS, channels_of, reader_build_and_run};

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
    entries: Vec<EntryField>,
    readings: Vec<ReadingLine>,
    /// On an open run the newest readings; the rest fold away (all of them once it is finished).
    shown_readings: Vec<ReadingLine>,
    folded_readings: Vec<ReadingLine>,
    history_count: usize,
    failed_part_choices: Vec<(String, String)>,
    outcome_title: String,
    failed_part_title: String,
    error: String,
    error_channel: String,
    analysis: AnalysisView,
    attachments: Vec<crate::web::attachments::AttachmentView>,
}

/// One big field and an "add" button per channel in use.
struct EntryField {
    channel: String,
    title: String,
    unit: &'static str,
    last: String,
}

#[derive(Clone)]
struct ReadingLine {
    id: i64,
    time: String,
    title: String,
    value: String,
    corrected_from: Vec<String>,
}

#[derive(Deserialize, Default)]
pub(super) struct ShowQuery {
    #[serde(default)]
    error: String,
    #[serde(default)]
    channel: String,
}

pub(super) async fn show(
    State(state): State<AppState>,
    reader: Reader,
    Path((slug, id)): Path<(String, i64)>,
    Query(query): Query<ShowQuery>,
) -> Result<ShowPage> {
    let (build, run) = reader_build_and_run(&state, &reader, &slug, id).await?;
    let revision = state.store.revision_by_id(run.revision_id).await?;
    let history = state.store.reading_history(run.id).await?;
    let analysis_readings = analysis_readings(&state.store, run.id).await?;
    let analysed = analyse_stored_run(&state.store, &run, &revision, &analysis_readings).await?;
    let open_at_s = run
        .is_open()
        .then(|| (now_unix_s() - run.started_at) as f64);
    let analysis = AnalysisView::build(
        run.id.0,
        &revision.parts,
        &analysed,
        &analysis_readings,
        open_at_s,
    );
    let titles = |name: &str| {
        name.parse::<Channel>()
            .map(Channel::title)
            .unwrap_or_else(|_| name.to_string())
    };
    let format_reading = |name: &str, value: f64| match name.parse::<Channel>() {
        Ok(channel) => crate::units::eng(value, unit_for(channel.quantity())).to_string(),
        Err(_) => format!("{value}"),
    };
    let current: Vec<_> = history.iter().filter(|r| !r.superseded).collect();
    let mut readings: Vec<ReadingLine> = current
        .iter()
        .map(|r| {
            // Walk back through the corrections to show what was replaced.
            let mut corrected_from = Vec::new();
            let mut previous = r.corrects_id;
            while let Some(old_id) = previous {
                let Some(old) = history.iter().find(|h| h.id == old_id) else {
                    break;
                };
                corrected_from.push(format_reading(&old.channel, old.value));
                previous = old.corrects_id;
            }
            ReadingLine {
                id: r.id.0,
                time: minutes_seconds(r.t_s),
                title: titles(&r.channel),
                value: format_reading(&r.channel, r.value),
                corrected_from,
            }
        })
        .collect();
    readings.reverse();
    let split = if run.is_open() {
        RECENT_READINGS.min(readings.len())
    } else {
        0
    };
    let shown_readings = readings[..split].to_vec();
    let folded_readings = readings[split..].to_vec();
    let entries = run
        .channels()
        .iter()
        .filter_map(|name| name.parse::<Channel>().ok())
        .map(|channel| EntryField {
            channel: channel.to_string(),
            title: channel.title(),
            unit: entry_unit(channel),
            last: current
                .iter()
                .rev()
                .find(|r| r.channel == channel.to_string())
                .map(|r| format_reading(&r.channel, r.value))
                .unwrap_or_default(),
        })
        .collect();
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
        entries,
        history_count: history.len(),
        readings,
        shown_readings,
        folded_readings,
        failed_part_choices,
        outcome_title: run
            .outcome
            .as_deref()
            .and_then(Outcome::parse)
            .map(|o| o.title().to_string())
            .unwrap_or_default(),
        failed_part_title,
        error: query.error.chars().take(200).collect(),
        error_channel: query.channel,
        analysis,
        attachments: crate::web::attachments::views_of_run(
            &state,
            &reader.chrome("", &build).base,
            &run,
            !reader.is_share(),
        )
        .await?,
        build,
        run,
    })
}
