//! Runs from the browser: start one, log readings at the bench, correct them, finish it.

use askama::Template;
use askama_web::WebTemplate;
use axum::Form;
use axum::extract::{Path, Query, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Redirect, Response};
use serde::Deserialize;

use super::chrome::Chrome;
use super::forms::{FieldErrors, optional_value};
use super::reader::Reader;
use super::revisions::find_revision;
use super::routes::{Access, Routes};
use super::run_analysis::{analyse_stored_run, analysis_readings};
use super::run_view::AnalysisView;
use super::session::Editor;
use super::view::{date_time, load_title, maybe, minutes_seconds};
use super::{AppError, AppState, Result};
use crate::channel::{Channel, Quantity};
use crate::parts::{Parts, Role};
use crate::store::{
    Build, NewReading, NewRun, Outcome, ReadingId, Revision, Run, RunFinish, RunId, now_unix_s,
};
use crate::units::{Unit, parse_elapsed_s, parse_value};

pub fn router() -> Routes {
    Routes::new()
        .post("/builds/{slug}/runs", Access::Editor, create)
        .get("/builds/{slug}/runs/new", Access::Editor, new_form)
        .get("/builds/{slug}/runs/{id}", Access::Viewer, show)
        .get("/s/{slug}/runs/{id}", Access::Share, show)
        .post(
            "/builds/{slug}/runs/{id}/readings",
            Access::Editor,
            add_reading,
        )
        .post(
            "/builds/{slug}/runs/{id}/readings/{reading}/correct",
            Access::Editor,
            correct_reading,
        )
        .post("/builds/{slug}/runs/{id}/finish", Access::Editor, finish)
}

/// Readings shown at once on an open run's page, newest first; the rest fold away.
const RECENT_READINGS: usize = 20;

pub const LOADS: [&str; 4] = ["none", "ferrous", "non_ferrous", "water"];

/// Every channel a revision can log: the electrical ones, then each part's temperature (the
/// role as a whole, and each unit where a role has several).
pub fn channels_of(parts: &Parts) -> Vec<Channel> {
    let mut channels = vec![
        Channel::SupplyVoltage,
        Channel::SupplyCurrent,
        Channel::Frequency,
        Channel::TankVoltage,
        Channel::AmbientTemp,
        Channel::WaterTemp,
    ];
    for role in [
        Role::TankCapacitor,
        Role::Switch,
        Role::WorkCoil,
        Role::Choke,
        Role::GateResistor,
    ] {
        let quantity = parts.quantity(role);
        if quantity == 0 {
            continue;
        }
        channels.push(Channel::PartTemp { role, index: None });
        if quantity > 1 {
            channels.extend((1..=quantity.min(12)).map(|n| Channel::PartTemp {
                role,
                index: Some(n),
            }));
        }
    }
    channels
}

/// What a first run of a revision logs unless the operator says otherwise.
pub fn default_channels(parts: &Parts, load: &str) -> Vec<String> {
    let mut names = vec![
        "supply_voltage".to_string(),
        "supply_current".into(),
        "frequency".into(),
        "ambient_temp".into(),
    ];
    if load == "water" {
        names.push("water_temp".into());
    }
    for role in [
        Role::TankCapacitor,
        Role::Switch,
        Role::WorkCoil,
        Role::Choke,
    ] {
        if parts.quantity(role) > 0 {
            names.push(format!("temp.{}", role.key()));
        }
    }
    names
}

pub(super) async fn build_and_run(state: &AppState, slug: &str, id: i64) -> Result<(Build, Run)> {
    let build = state.store.build_by_slug(slug).await?;
    let run = state.store.run_by_id(RunId(id)).await?;
    if run.build_id != build.id {
        return Err(AppError::NotFound);
    }
    Ok((build, run))
}

/// The build and run of a read page, for a user or a share (limited to its revision).
pub(super) async fn reader_build_and_run(
    state: &AppState,
    reader: &Reader,
    slug: &str,
    id: i64,
) -> Result<(Build, Run)> {
    let build = reader.build(state, slug).await?;
    let run = state.store.run_by_id(RunId(id)).await?;
    if run.build_id != build.id {
        return Err(AppError::NotFound);
    }
    reader.check_revision(run.revision_number)?;
    Ok((build, run))
}

#[derive(Template, WebTemplate)]
#[template(path = "runs/new.html")]
struct NewPage {
    chrome: Chrome,
    build: Build,
    revisions: Vec<String>,
    form: RunForm,
    channels: Vec<ChannelChoice>,
    errors: FieldErrors,
    prefilled_from: String,
}

struct ChannelChoice {
    name: String,
    title: String,
    checked: bool,
}

#[derive(Deserialize, Default, Clone)]
struct RunForm {
    #[serde(default)]
    revision: String,
    #[serde(default)]
    supply_setting_v: String,
    #[serde(default)]
    supply_current_limit_a: String,
    #[serde(default)]
    load: String,
    #[serde(default)]
    water_mass_kg: String,
    #[serde(default)]
    vessel_heat_capacity_j_per_k: String,
    #[serde(default)]
    notes: String,
}

#[derive(Deserialize)]
struct RevisionQuery {
    revision: Option<String>,
}

async fn new_form(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path(slug): Path<String>,
    Query(query): Query<RevisionQuery>,
) -> Result<Response> {
    let build = state.store.build_by_slug(&slug).await?;
    let revisions = state.store.revisions_of_build(build.id).await?;
    let revision = match query.revision.as_deref() {
        Some(label) => find_revision(&state, &build, label).await?,
        None => match revisions.last() {
            Some(latest) => latest.clone(),
            None => {
                return Ok(Redirect::to(&format!("/builds/{slug}/revisions/new")).into_response());
            }
        },
    };
    let previous = state.store.latest_run_of_revision(revision.id).await?;
    let supply = revision.parts.supply.clone().unwrap_or_default();
    let form = match &previous {
        Some(run) => RunForm {
            revision: revision.label(),
            supply_setting_v: run
                .supply_setting_v
                .map(|v| format!("{v}"))
                .unwrap_or_default(),
            supply_current_limit_a: run
                .supply_current_limit_a
                .map(|v| format!("{v}"))
                .unwrap_or_default(),
            load: run.load.clone(),
            water_mass_kg: run
                .water_mass_kg
                .map(|v| format!("{v}"))
                .unwrap_or_default(),
            vessel_heat_capacity_j_per_k: run
                .vessel_heat_capacity_j_per_k
                .map(|v| format!("{v}"))
                .unwrap_or_default(),
            notes: String::new(),
        },
        None => RunForm {
            revision: revision.label(),
            supply_setting_v: supply
                .nominal_voltage_v
                .map(|v| format!("{v}"))
                .unwrap_or_default(),
            supply_current_limit_a: supply
                .current_limit_a
                .map(|v| format!("{v}"))
                .unwrap_or_default(),
            load: "none".into(),
            ..RunForm::default()
        },
    };
    let in_use = previous
        .as_ref()
        .map(Run::channels)
        .filter(|c| !c.is_empty())
        .unwrap_or_else(|| default_channels(&revision.parts, &form.load));
    let page = NewPage {
        chrome: Chrome::new(format!("New run of {}", build.name), &user),
        revisions: revisions.iter().rev().map(Revision::label).collect(),
        channels: choices(&revision.parts, &in_use),
        prefilled_from: previous
            .map(|r| format!("run {} on {}", r.id, date_time(r.started_at)))
            .unwrap_or_default(),
        errors: FieldErrors::default(),
        form,
        build,
    };
    Ok(page.into_response())
}

fn choices(parts: &Parts, in_use: &[String]) -> Vec<ChannelChoice> {
    channels_of(parts)
        .into_iter()
        .map(|c| ChannelChoice {
            name: c.to_string(),
            title: c.title(),
            checked: in_use.contains(&c.to_string()),
        })
        .collect()
}

async fn create(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path(slug): Path<String>,
    Form(fields): Form<Vec<(String, String)>>,
) -> Result<Response> {
    let build = state.store.build_by_slug(&slug).await?;
    let get = |key: &str| {
        fields
            .iter()
            .find(|(k, _)| k == key)
            .map(|(_, v)| v.clone())
            .unwrap_or_default()
    };
    let form = RunForm {
        revision: get("revision"),
        supply_setting_v: get("supply_setting_v"),
        supply_current_limit_a: get("supply_current_limit_a"),
        load: get("load"),
        water_mass_kg: get("water_mass_kg"),
        vessel_heat_capacity_j_per_k: get("vessel_heat_capacity_j_per_k"),
        notes: get("notes"),
    };
    let chosen: Vec<String> = fields
        .iter()
        .filter(|(k, _)| k == "channel")
        .map(|(_, v)| v.clone())
        .collect();
    let revision = find_revision(&state, &build, &form.revision).await?;
    let mut errors = FieldErrors::default();
    let supply = optional_value(
        &form.supply_setting_v,
        Unit::Volt,
        "supply_setting_v",
        &mut errors,
    );
    let limit = optional_value(
        &form.supply_current_limit_a,
        Unit::Ampere,
        "supply_current_limit_a",
        &mut errors,
    );
    let water = optional_value(
        &form.water_mass_kg,
        Unit::None,
        "water_mass_kg",
        &mut errors,
    );
    let vessel = optional_value(
        &form.vessel_heat_capacity_j_per_k,
        Unit::None,
        "vessel_heat_capacity_j_per_k",
        &mut errors,
    );
    for (name, value, max) in [
        ("supply_setting_v", supply, 10_000.0),
        ("supply_current_limit_a", limit, 1_000.0),
        ("water_mass_kg", water, 1_000.0),
        ("vessel_heat_capacity_j_per_k", vessel, 1e7),
    ] {
        if let Some(v) = value
            && (v <= 0.0 || v > max)
        {
            errors.add(name, format!("must be above 0 and at most {max}"));
        }
    }
    if !LOADS.contains(&form.load.as_str()) {
        errors.add("load", "choose a load");
    }
    if form.load == "water" && water.is_none() {
        errors.add(
            "water_mass_kg",
            "a water calorimeter run needs the mass of water",
        );
    }
    let known: Vec<String> = channels_of(&revision.parts)
        .iter()
        .map(Channel::to_string)
        .collect();
    if chosen.is_empty() {
        errors.add("channel", "choose at least one channel to log");
    } else if let Some(bad) = chosen.iter().find(|c| !known.contains(c)) {
        errors.add(
            "channel",
            format!("{bad} is not a channel of this revision"),
        );
    }
    if form.notes.len() > 20_000 {
        errors.add("notes", "keep the notes under 20000 characters");
    }
    if !errors.is_empty() {
        let revisions = state.store.revisions_of_build(build.id).await?;
        let page = NewPage {
            chrome: Chrome::new(format!("New run of {}", build.name), &user),
            revisions: revisions.iter().rev().map(Revision::label).collect(),
            channels: choices(&revision.parts, &chosen),
            prefilled_from: String::new(),
            errors,
            form,
            build,
        };
        return Ok((StatusCode::UNPROCESSABLE_ENTITY, page).into_response());
    }
    let id = state
        .store
        .create_run(&NewRun {
            build_id: build.id,
            revision_id: revision.id,
            operator: &user.display_name,
            created_by: Some(user.user_id),
            started_at: None,
            supply_setting_v: supply,
            supply_current_limit_a: limit,
            load: &form.load,
            water_mass_kg: water,
            vessel_heat_capacity_j_per_k: vessel,
            notes: form.notes.trim(),
            channels: &chosen,
        })
        .await?;
    Ok(Redirect::to(&format!("/builds/{slug}/runs/{id}")).into_response())
}

#[derive(Template, WebTemplate)]
#[template(path = "runs/show.html")]
struct ShowPage {
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
    attachments: Vec<super::attachments::AttachmentView>,
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

/// What a bare number in an entry field means: the frequency field takes kHz (the numeric
/// keyboard of a phone has no `k`, and no driver of this kind runs below a few kHz); every other
/// field its SI unit. Typed units and prefixes always win: `152k`, `152000 Hz`.
fn parse_entry(channel: Channel, text: &str) -> Result<f64, crate::units::UnitError> {
    let bare = text.trim().replace(',', ".").parse::<f64>().is_ok();
    let value = parse_value(text, unit_for(channel.quantity()))?;
    Ok(if bare && channel == Channel::Frequency {
        value * 1e3
    } else {
        value
    })
}

fn entry_unit(channel: Channel) -> &'static str {
    match channel {
        Channel::Frequency => "kHz",
        other => other.quantity().unit(),
    }
}

fn unit_for(quantity: Quantity) -> Unit {
    match quantity {
        Quantity::Voltage => Unit::Volt,
        Quantity::Current => Unit::Ampere,
        Quantity::Frequency => Unit::Hertz,
        Quantity::Temperature => Unit::Celsius,
    }
}

#[derive(Deserialize, Default)]
struct ShowQuery {
    #[serde(default)]
    error: String,
    #[serde(default)]
    channel: String,
}

async fn show(
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
        attachments: super::attachments::views_of_run(
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

#[derive(Deserialize)]
struct ReadingForm {
    channel: String,
    value: String,
    #[serde(default)]
    time: String,
}

/// Back to the run page with a message beside the field (the page keeps no typed values, so
/// the message says what was wrong and the user types again).
fn back_with_error(slug: &str, id: i64, channel: &str, message: &str) -> Response {
    let message = super::error::urlencode(message);
    let channel = super::error::urlencode(channel);
    Redirect::to(&format!(
        "/builds/{slug}/runs/{id}?error={message}&channel={channel}#entry-{channel}"
    ))
    .into_response()
}

async fn add_reading(
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
            }],
            Some(user.user_id),
        )
        .await?;
    Ok(Redirect::to(&format!("/builds/{slug}/runs/{id}#entry-{}", channel)).into_response())
}

#[derive(Deserialize)]
struct CorrectionForm {
    value: String,
}

async fn correct_reading(
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
struct FinishForm {
    outcome: String,
    #[serde(default)]
    failed_part: String,
    #[serde(default)]
    note: String,
}

async fn finish(
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
    super::digests::keep_digest_of_finished_run(&state.store, run.id).await?;
    Ok(Redirect::to(&format!("/builds/{slug}/runs/{id}")).into_response())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_bare_frequency_is_khz_and_typed_units_win() {
        for (text, hz) in [
            ("152", 152e3),
            ("152,5", 152.5e3),
            ("152k", 152e3),
            ("152000 Hz", 152e3),
            ("0.15 MHz", 150e3),
        ] {
            let got = parse_entry(Channel::Frequency, text).unwrap();
            assert!((got - hz).abs() < 1e-6, "{text}: {got}");
        }
        assert_eq!(
            parse_entry(Channel::SupplyCurrent, "3").unwrap(),
            3.0,
            "other channels keep SI"
        );
        assert!(parse_entry(Channel::Frequency, "fast").is_err());
        assert_eq!(entry_unit(Channel::Frequency), "kHz");
    }
}
