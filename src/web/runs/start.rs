//! Starting a run from the browser: the new-run form, prefilled from the revision's last run.

use askama::Template;
use askama_web::WebTemplate;
use axum::Form;
use axum::extract::{Path, Query, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Redirect, Response};
use serde::Deserialize;

use super::lookup::{LOADS, channels_of, default_channels};
use crate::channel::Channel;
use crate::parts::Parts;
use crate::store::{Build, NewRun, Revision, Run};
use crate::units::Unit;
use crate::web::accounts::session::Editor;
use crate::web::chrome::Chrome;
use crate::web::forms::{FieldErrors, optional_value};
use crate::web::revisions::find_revision;
use crate::web::view::date_time;
use crate::web::{AppState, Result};

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
pub(super) struct RevisionQuery {
    revision: Option<String>,
}

pub(super) async fn new_form(
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

pub(super) async fn create(
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
