//! Comparing revisions of a build side by side, and the build's printable report.
//!
//! `GET /builds/{slug}/compare?revs=r2,r3` (or `rev=r2&rev=r3` from the build page's picker):
//! what changed in the parts, the model of each at one common supply, the measured results of
//! each with the better value marked, and charts that overlay them. `GET /builds/{slug}/report`
//! (`?rev=r3` for one revision) is one page for a team lead, made for paper.

mod charts;
mod measured;
mod model_rows;
pub mod parts_diff;
mod report;
mod rows;

use askama::Template;
use askama_web::WebTemplate;
use axum::extract::{Path, Query, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Response};

use self::charts::{Figure, LatestCurve, latest_temperature_chart, margin_chart};
use self::measured::{RevisionRuns, measured_rows};
use self::model_rows::{default_supply_v, model_rows};
use self::parts_diff::StepDiff;
use self::rows::CompareRow;
use crate::analysis::model::{OperatingPoint, validate};
use crate::analysis::model_table::MODEL_CAVEATS;
use crate::analysis::run_summary::RunDigest;
use crate::analysis::series::samples;
use crate::channel::Channel;
use crate::parts::{Parts, Role};
use crate::store::{Build, Outcome, Revision, Run, Store};
use crate::units::{Unit, eng, parse_value};
use crate::web::chrome::Chrome;
use crate::web::forms::FieldErrors;
use crate::web::reader::Reader;
use crate::web::routes::{Access, Routes};
use crate::web::runs::analysis::analysis_readings;
use crate::web::runs::digests::digests_of;
use crate::web::{AppError, AppState, Result};

/// How many revisions one comparison may hold: more no longer reads as rows on a phone.
pub const MAX_COMPARED: usize = 4;

pub fn router() -> Routes {
    Routes::new()
        .get("/builds/{slug}/compare", Access::Viewer, compare)
        .get("/builds/{slug}/report", Access::Viewer, report::report)
        .get("/s/{slug}/compare", Access::Share, compare)
        .get("/s/{slug}/report", Access::Share, report::report)
}

/// The chosen labels in the order given: `revs=r2,r3` (comma list) and repeated `rev=`.
pub fn chosen_labels(query: &[(String, String)]) -> Vec<String> {
    query
        .iter()
        .filter(|(key, _)| key == "revs" || key == "rev")
        .flat_map(|(_, value)| value.split(','))
        .map(|label| label.trim().to_string())
        .filter(|label| !label.is_empty())
        .collect()
}

/// Why a choice of revisions cannot be compared, in words for the page; `None` when it can.
pub fn refuse_choice(chosen: &[String], existing: &[String]) -> Option<String> {
    let shown = |label: &str| label.chars().take(20).collect::<String>();
    if chosen.len() > MAX_COMPARED {
        return Some(format!(
            "Choose at most {MAX_COMPARED} revisions to compare; {} were chosen.",
            chosen.len()
        ));
    }
    if let Some(unknown) = chosen.iter().find(|l| !existing.contains(l)) {
        return Some(format!(
            "“{}” is not a revision of this build (it has {}).",
            shown(unknown),
            if existing.is_empty() {
                "none yet".to_string()
            } else {
                existing.join(", ")
            }
        ));
    }
    for (i, label) in chosen.iter().enumerate() {
        if chosen[..i].contains(label) {
            return Some(format!(
                "{label} is chosen twice: choose different revisions."
            ));
        }
    }
    match chosen.len() {
        0 => Some(format!(
            "Choose two to {MAX_COMPARED} revisions to compare; none was chosen."
        )),
        1 => Some(format!(
            "Choose two to {MAX_COMPARED} revisions to compare; only {} was chosen.",
            chosen[0]
        )),
        _ => None,
    }
}

#[derive(Template, WebTemplate)]
#[template(path = "compare/invalid.html")]
struct InvalidPage {
    chrome: Chrome,
    build: Build,
    message: String,
    labels: Vec<String>,
    chosen: Vec<String>,
}

#[derive(Template, WebTemplate)]
#[template(path = "compare/show.html")]
struct ComparePage {
    chrome: Chrome,
    build: Build,
    labels: Vec<String>,
    reversed: String,
    steps: Vec<StepDiff>,
    supply_text: String,
    supply_typed: String,
    supply_basis: String,
    revs_value: String,
    errors: FieldErrors,
    model_rows: Vec<CompareRow>,
    measured_rows: Vec<CompareRow>,
    figures: Vec<Figure>,
    caveats: &'static [&'static str],
}

/// Runs of a build, oldest first.
async fn runs_oldest_first(store: &Store, build: &Build) -> Result<Vec<Run>> {
    let mut runs = store.runs_of_build(build.id, i64::MAX).await?;
    runs.reverse();
    Ok(runs)
}

#[tracing::instrument(skip_all, err)]
async fn compare(
    State(state): State<AppState>,
    reader: Reader,
    Path(slug): Path<String>,
    Query(query): Query<Vec<(String, String)>>,
) -> Result<Response> {
    let build = reader.build(&state, &slug).await?;
    // A link to one revision has nothing to compare it with.
    if reader.only_revision().is_some() {
        return Err(AppError::NotFound);
    }
    let revisions = state.store.revisions_of_build(build.id).await?;
    let existing: Vec<String> = revisions.iter().map(Revision::label).collect();
    let labels = chosen_labels(&query);
    if let Some(message) = refuse_choice(&labels, &existing) {
        let page = InvalidPage {
            chrome: reader.chrome(format!("Compare revisions of {}", build.name), &build),
            build,
            message,
            labels: existing.into_iter().rev().collect(),
            chosen: labels,
        };
        return Ok((StatusCode::UNPROCESSABLE_ENTITY, page).into_response());
    }
    let chosen: Vec<&Revision> = labels
        .iter()
        .map(|l| {
            revisions
                .iter()
                .find(|r| &r.label() == l)
                .expect("refuse_choice checked every label")
        })
        .collect();

    // Only the chosen revisions' runs, from their kept digests.
    let runs: Vec<Run> = runs_oldest_first(&state.store, &build)
        .await?
        .into_iter()
        .filter(|run| chosen.iter().any(|r| r.id == run.revision_id))
        .collect();
    let digests = digests_of(&state.store, &build, &runs, &revisions).await?;
    let per_revision = group_by_revision(&chosen, &runs, &digests);

    let steps = chosen
        .windows(2)
        .map(|pair| {
            StepDiff::new(
                &pair[0].label(),
                &pair[0].parts,
                &pair[1].label(),
                &pair[1].parts,
            )
        })
        .collect();

    let supply = CommonSupply::from_query(&query, &chosen);
    let named: Vec<(String, &Parts)> = chosen.iter().map(|r| (r.label(), &r.parts)).collect();
    let model = supply
        .volts
        .map(|v| model_rows(&named, v))
        .unwrap_or_default();

    let mut figures: Vec<Figure> = margin_chart(&build.slug, &per_revision)
        .into_iter()
        .collect();
    let curves = latest_curves(&state.store, &runs, &digests, &chosen).await?;
    figures.extend(latest_temperature_chart(&build.slug, &curves));

    let status = if supply.errors.is_empty() {
        StatusCode::OK
    } else {
        StatusCode::UNPROCESSABLE_ENTITY
    };
    let page = ComparePage {
        chrome: reader.chrome(format!("{} {}", build.name, labels.join(" vs ")), &build),
        reversed: labels.iter().rev().cloned().collect::<Vec<_>>().join(","),
        revs_value: labels.join(","),
        supply_text: supply
            .volts
            .map_or_else(|| "—".into(), |v| eng(v, Unit::Volt).to_string()),
        supply_typed: supply.typed,
        supply_basis: supply.basis.into(),
        errors: supply.errors,
        measured_rows: measured_rows(&per_revision),
        model_rows: model,
        steps,
        figures,
        caveats: MODEL_CAVEATS,
        labels,
        build,
    };
    Ok((status, page).into_response())
}

/// Each chosen revision with its runs' digests (in the order chosen; runs oldest first).
fn group_by_revision<'a>(
    chosen: &[&Revision],
    runs: &[Run],
    digests: &'a [RunDigest],
) -> Vec<RevisionRuns<'a>> {
    chosen
        .iter()
        .map(|revision| {
            let mine = || {
                runs.iter()
                    .zip(digests)
                    .filter(|(run, _)| run.revision_id == revision.id)
            };
            RevisionRuns {
                label: revision.label(),
                digests: mine().map(|(_, d)| d).collect(),
                loaded: mine()
                    .filter(|(run, _)| run.load != "none")
                    .map(|(_, d)| d)
                    .collect(),
                part_failed: mine()
                    .filter(|(run, _)| {
                        run.outcome.as_deref().and_then(Outcome::parse) == Some(Outcome::PartFailed)
                    })
                    .count(),
            }
        })
        .collect()
}

/// The supply the model is evaluated at for every chosen revision.
struct CommonSupply {
    /// `None` when the typed value is refused.
    volts: Option<f64>,
    typed: String,
    basis: &'static str,
    errors: FieldErrors,
}

impl CommonSupply {
    /// The typed `supply_voltage_v`, else the highest nominal supply of the chosen revisions.
    fn from_query(query: &[(String, String)], chosen: &[&Revision]) -> CommonSupply {
        let typed = query
            .iter()
            .find(|(k, _)| k == "supply_voltage_v")
            .map(|(_, v)| v.trim().to_string())
            .unwrap_or_default();
        let mut errors = FieldErrors::default();
        let (default_v, from_nominal) = default_supply_v(chosen.iter().map(|r| &r.parts));
        let (volts, basis) = if !typed.is_empty() {
            (parse_supply(&typed, &mut errors), "as typed below")
        } else if from_nominal {
            (Some(default_v), "the highest nominal supply among them")
        } else {
            (Some(default_v), "none of them has a nominal supply")
        };
        CommonSupply {
            volts,
            typed,
            basis,
            errors,
        }
    }
}

/// The typed common supply, or the field's error.
fn parse_supply(text: &str, errors: &mut FieldErrors) -> Option<f64> {
    let field = "supply_voltage_v";
    let value = match parse_value(text, Unit::Volt) {
        Ok(v) => v,
        Err(e) => {
            errors.add(field, e.to_string());
            return None;
        }
    };
    if value <= 0.0 {
        errors.add(field, "must be greater than 0 V");
        return None;
    }
    let op = OperatingPoint {
        supply_voltage_v: value,
        supply_current_a: None,
        frequency_hz: None,
        ambient_c: None,
        temperatures_c: Default::default(),
    };
    if let Err(e) = validate(&Parts::default(), &op) {
        errors.add(field, e.message);
        return None;
    }
    Some(value)
}

/// For each chosen revision, its latest run that logged a tank capacitor: the hottest unit's
/// curve. One run's readings per revision, never the build's.
async fn latest_curves(
    store: &Store,
    runs: &[Run],
    digests: &[RunDigest],
    chosen: &[&Revision],
) -> Result<Vec<LatestCurve>> {
    let mut curves = Vec::new();
    for revision in chosen {
        let latest = runs
            .iter()
            .zip(digests)
            .rev()
            .filter(|(run, _)| run.revision_id == revision.id)
            .find_map(|(run, d)| {
                let hottest = d
                    .trend
                    .parts
                    .iter()
                    .filter(|p| p.part == Role::TankCapacitor)
                    .max_by(|a, b| a.t_max_c.total_cmp(&b.t_max_c))?;
                Some((run, hottest))
            });
        let Some((run, hottest)) = latest else {
            continue;
        };
        let Ok(channel) = hottest.channel.parse::<Channel>() else {
            continue;
        };
        let readings = analysis_readings(store, run.id).await?;
        curves.push(LatestCurve {
            revision: revision.label(),
            run_id: run.id.0,
            channel_title: channel.title().trim_end_matches(" temperature").to_string(),
            points: samples(&readings, channel),
            limit_c: hottest.limit_c,
        });
    }
    Ok(curves)
}
