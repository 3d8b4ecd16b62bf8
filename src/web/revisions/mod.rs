//! A revision's page, and a new revision made by copying one and editing its parts.

pub mod model_panel;
pub mod part_fields;

use std::collections::BTreeMap;

use askama::Template;
use askama_web::WebTemplate;
use axum::Form;
use axum::extract::{Path, Query, State};
use axum::response::{IntoResponse, Redirect, Response};
use serde::Deserialize;

use crate::parts::{Parts, Role};
use crate::store::{Build, Revision, revision_number};
use crate::units::{Unit, eng};
use crate::web::accounts::session::Editor;
use crate::web::chrome::Chrome;
use crate::web::forms::FieldErrors;
use crate::web::reader::Reader;
use crate::web::routes::{Access, Routes};
use crate::web::view::date_time;
use crate::web::{AppError, AppState, Result};
use model_panel::{ModelPanel, WhatIfQuery};
use part_fields::{
    CONDUCTOR_FIELDS, EDITOR_ROLES, PART_FIELDS, PartField, field_name, parts_from_form,
    parts_to_form,
};

pub fn router() -> Routes {
    Routes::new()
        .post("/builds/{slug}/revisions", Access::Editor, create)
        .get("/builds/{slug}/revisions/new", Access::Editor, new_form)
        .get("/builds/{slug}/revisions/{label}", Access::Viewer, show)
        .get("/s/{slug}/revisions/{label}", Access::Share, show)
}

/// A revision of a build by its label, or 404.
pub async fn find_revision(state: &AppState, build: &Build, label: &str) -> Result<Revision> {
    let number = revision_number(label).ok_or(AppError::NotFound)?;
    Ok(state.store.revision_by_number(build.id, number).await?)
}

/// One part as the revision page lists it.
pub struct PartView {
    pub role: &'static str,
    pub label: String,
    pub quantity: u32,
    pub values: Vec<(String, String)>,
}

/// The parts of a revision as label/value rows in engineering notation.
pub fn part_views(parts: &Parts) -> Vec<PartView> {
    let json = serde_json::to_value(parts).expect("parts always serialise");
    let mut views = Vec::new();
    for role in EDITOR_ROLES {
        let Some(object) = json.get(role.key()) else {
            continue;
        };
        let mut values: Vec<(String, String)> = PART_FIELDS
            .iter()
            .filter(|f| f.role == role && f.key != "count")
            .filter_map(|f| {
                let number = object.get(f.key)?.as_f64()?;
                Some((f.title.to_string(), format_value(number, f)))
            })
            .collect();
        if let Some(conductor) = object.get("conductor") {
            values.push(("Conductor".into(), conductor_text(conductor)));
        }
        views.push(PartView {
            role: role.title(),
            label: parts.label(role).unwrap_or_default().to_string(),
            quantity: parts.quantity(role),
            values,
        });
    }
    for other in &parts.other {
        views.push(PartView {
            role: Role::Other.title(),
            label: other.label.clone(),
            quantity: other.quantity,
            values: Vec::new(),
        });
    }
    views
}

fn format_value(number: f64, spec: &PartField) -> String {
    match spec.unit {
        Unit::None => format!("{number}"),
        unit => eng(number, unit).to_string(),
    }
}

fn conductor_text(conductor: &serde_json::Value) -> String {
    let metres = |key: &str| {
        conductor
            .get(key)
            .and_then(|v| v.as_f64())
            .map(|v| eng(v, Unit::Metre).to_string())
    };
    match conductor.get("kind").and_then(|k| k.as_str()) {
        Some("tube") => format!(
            "tube {} outside, {} wall",
            metres("outer_diameter_m").unwrap_or_default(),
            metres("wall_m").unwrap_or_default()
        ),
        _ => match (
            metres("diameter_m"),
            conductor.get("awg").and_then(|v| v.as_u64()),
        ) {
            (Some(d), _) => format!("round wire {d}"),
            (None, Some(awg)) => format!("round wire AWG {awg}"),
            _ => "round wire".into(),
        },
    }
}

#[derive(Template, WebTemplate)]
#[template(path = "revisions/show.html")]
struct ShowPage {
    chrome: Chrome,
    build: Build,
    label: String,
    parent: String,
    created: String,
    notes: String,
    parts: Vec<PartView>,
    model: ModelPanel,
}

async fn show(
    State(state): State<AppState>,
    reader: Reader,
    Path((slug, label)): Path<(String, String)>,
    Query(what_if): Query<WhatIfQuery>,
) -> Result<ShowPage> {
    let build = reader.build(&state, &slug).await?;
    let revision = find_revision(&state, &build, &label).await?;
    reader.check_revision(revision.number)?;
    Ok(ShowPage {
        chrome: reader.chrome(format!("{} {}", build.name, revision.label()), &build),
        label: revision.label(),
        // A link to one revision does not open its parent: no link to a page it cannot show.
        parent: revision
            .parent_number
            .filter(|&n| reader.check_revision(n).is_ok())
            .map(|n| format!("r{n}"))
            .unwrap_or_default(),
        created: date_time(revision.created_at),
        notes: revision.notes.clone(),
        parts: part_views(&revision.parts),
        model: ModelPanel::build(&revision.parts, what_if),
        build,
    })
}

/// The parts editor: the copied revision's values, editable, grouped by role.
#[derive(Template, WebTemplate)]
#[template(path = "revisions/new.html")]
struct EditPage {
    chrome: Chrome,
    build: Build,
    from: String,
    notes: String,
    values: BTreeMap<String, String>,
    errors: FieldErrors,
    groups: Vec<EditGroup>,
}

struct EditGroup {
    role: &'static str,
    title: &'static str,
    fields: Vec<EditField>,
}

struct EditField {
    name: String,
    title: &'static str,
    example: &'static str,
    required: bool,
    decimal_keyboard: bool,
}

fn edit_groups() -> Vec<EditGroup> {
    EDITOR_ROLES
        .iter()
        .map(|&role| {
            let mut fields: Vec<EditField> = PART_FIELDS
                .iter()
                .filter(|f| f.role == role)
                .map(|f| EditField {
                    name: field_name(role, f.key),
                    title: f.title,
                    example: f.example,
                    required: f.required,
                    // Counts and plain numbers get the numeric keyboard; values with units need
                    // letters (nF, µH), so they get the full one.
                    decimal_keyboard: f.unit == Unit::None || f.unit == Unit::Celsius,
                })
                .collect();
            if role == Role::WorkCoil {
                fields.extend(
                    CONDUCTOR_FIELDS
                        .iter()
                        .map(|(key, title, example)| EditField {
                            name: format!("work_coil.conductor_{key}"),
                            title,
                            example,
                            required: false,
                            decimal_keyboard: *key == "awg",
                        }),
                );
            }
            EditGroup {
                role: role.key(),
                title: role.title(),
                fields,
            }
        })
        .collect()
}

impl EditPage {
    fn value(&self, name: &str) -> &str {
        self.values.get(name).map_or("", String::as_str)
    }

    fn present(&self, role: &str) -> bool {
        !self.value(&format!("{role}.present")).is_empty()
    }
}

#[derive(Deserialize)]
struct FromQuery {
    from: Option<String>,
}

async fn new_form(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path(slug): Path<String>,
    Query(query): Query<FromQuery>,
) -> Result<EditPage> {
    let build = state.store.build_by_slug(&slug).await?;
    let source = match query.from.as_deref() {
        Some(label) => Some(find_revision(&state, &build, label).await?),
        None => state.store.latest_revision(build.id).await?,
    };
    Ok(EditPage {
        chrome: Chrome::new(format!("New revision of {}", build.name), &user),
        from: source.as_ref().map(Revision::label).unwrap_or_default(),
        notes: String::new(),
        values: source
            .as_ref()
            .map(|r| parts_to_form(&r.parts))
            .unwrap_or_default(),
        errors: FieldErrors::default(),
        groups: edit_groups(),
        build,
    })
}

async fn create(
    State(state): State<AppState>,
    Editor(user): Editor,
    Path(slug): Path<String>,
    Form(form): Form<Vec<(String, String)>>,
) -> Result<Response> {
    let build = state.store.build_by_slug(&slug).await?;
    let values: BTreeMap<String, String> = form.into_iter().collect();
    let from = values.get("from").cloned().unwrap_or_default();
    let notes = values.get("notes").cloned().unwrap_or_default();
    let parent = match from.as_str() {
        "" => None,
        label => Some(find_revision(&state, &build, label).await?.id),
    };
    let mut parsed = parts_from_form(&values);
    if notes.len() > 20_000 {
        let mut errors = parsed.err().unwrap_or_default();
        errors.add("notes", "keep the notes under 20000 characters");
        parsed = Err(errors);
    }
    let parts = match parsed {
        Ok(parts) => parts,
        Err(errors) => {
            let page = EditPage {
                chrome: Chrome::new(format!("New revision of {}", build.name), &user),
                from,
                notes,
                values,
                errors,
                groups: edit_groups(),
                build,
            };
            return Ok((axum::http::StatusCode::UNPROCESSABLE_ENTITY, page).into_response());
        }
    };
    let revision = state
        .store
        .create_revision(build.id, parent, &parts, notes.trim(), Some(user.user_id))
        .await?;
    Ok(Redirect::to(&format!(
        "/builds/{}/revisions/{}",
        build.slug,
        revision.label()
    ))
    .into_response())
}
