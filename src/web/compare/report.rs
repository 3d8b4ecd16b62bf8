//! The build report: one printable page for a team lead. The build's purpose and notes, the
//! parts of one revision (the latest, or `?rev=r3`), a table of the runs, the health of the parts
//! and the charts of the build page, the model's caveats and the safety cautions.

use askama::Template;
use askama_web::WebTemplate;
use axum::extract::{Path, Query, State};
use serde::Deserialize;

use super::charts::Figure;
use super::measured::METHODS;
use super::runs_oldest_first;
use crate::analysis::model_table::MODEL_CAVEATS;
use crate::analysis::run_summary::RunDigest;
use crate::parts::Role;
use crate::store::{Build, Revision, Run, now_unix_s};
use crate::units::{Unit, eng};
use crate::web::builds::view::{BuildHealth, build_charts, build_health};
use crate::web::chrome::Chrome;
use crate::web::reader::Reader;
use crate::web::revisions::{PartView, part_views};
use crate::web::runs::digests::digests_of;
use crate::web::view::{RunLine, date_time};
use crate::web::{AppError, AppState, Result};

/// What the report says about working on these heaters, always (the README's Safety section).
pub const SAFETY_CAUTIONS: &[(&str, &str)] = &[
    (
        "Hot metal",
        "The workpiece, the coil, the tank capacitors and the heat sinks get hot enough to burn; steel below about 500 °C does not glow, so hot looks like cold.",
    ),
    (
        "Rings and watches",
        "Metal on your hands heats up in the field: take rings, watches and bracelets off before reaching near the coil.",
    ),
    (
        "Tank voltage",
        "The tank swings to about π × the supply voltage, and the switches see at least that; at a few tens of volts of supply this is enough for RF burns on contact.",
    ),
    (
        "Capacitor rupture",
        "An overheated tank capacitor can bulge, crack or burst: stop when it runs hot, wear eye protection and keep your face away from the bank.",
    ),
    (
        "Fields",
        "Stay out of the near field of a running coil. ICNIRP (2010) limits the magnetic flux density between 3 kHz and 10 MHz to 100 µT for occupational exposure and 27 µT for the general public.",
    ),
    (
        "Pacemakers and active implants",
        "People with pacemakers or other active implants keep well away from a running heater.",
    ),
    (
        "Supply",
        "Use an isolated, certified bench supply with a fuse on its output; never run a driver from rectified mains.",
    ),
    (
        "Codes and practice",
        "Follow your local electrical codes and licensed practice; where they and this report differ, they win.",
    ),
];

#[derive(Deserialize)]
pub struct ReportQuery {
    rev: Option<String>,
}

/// One line of the runs table.
pub struct RunRow {
    pub line: RunLine,
    pub tank_max: String,
    pub tank_margin: String,
    pub efficiency: String,
}

impl RunRow {
    fn new(run: &Run, digest: &RunDigest) -> RunRow {
        let tank: Vec<_> = digest
            .trend
            .parts
            .iter()
            .filter(|p| p.part == Role::TankCapacitor)
            .collect();
        let mut line = RunLine::from_run(run);
        if let Some(v) = digest.supply_voltage_v {
            line.supply = match digest.supply_current_a {
                Some(i) => format!("{}, {}", eng(v, Unit::Volt), eng(i, Unit::Ampere)),
                None => eng(v, Unit::Volt).to_string(),
            };
        }
        RunRow {
            line,
            tank_max: tank
                .iter()
                .map(|p| p.t_max_c)
                .reduce(f64::max)
                .map_or_else(|| "—".into(), |t| format!("{t:.1} °C")),
            tank_margin: tank
                .iter()
                .filter_map(|p| p.margin_k)
                .reduce(f64::min)
                .map_or_else(|| "—".into(), |m| format!("{m:.1} K")),
            efficiency: if run.load == "none" {
                "— (idle)".into()
            } else {
                METHODS
                    .iter()
                    .find_map(|(method, of)| {
                        of(&digest.efficiency).map(|e| format!("{:.1} % ({method})", e * 100.0))
                    })
                    .unwrap_or_else(|| "—".into())
            },
        }
    }
}

#[derive(Template, WebTemplate)]
#[template(path = "compare/report.html")]
pub struct ReportPage {
    chrome: Chrome,
    build: Build,
    generated: String,
    /// The revision whose parts are shown; empty when the build has none.
    revision: String,
    revision_notes: String,
    /// Whether the report covers one revision only (`?rev=`).
    one_revision: bool,
    labels: Vec<String>,
    parts: Vec<PartView>,
    runs: Vec<RunRow>,
    health: Option<BuildHealth>,
    charts: Vec<Figure>,
    caveats: &'static [&'static str],
    cautions: &'static [(&'static str, &'static str)],
}

#[tracing::instrument(skip_all, err)]
pub async fn report(
    State(state): State<AppState>,
    reader: Reader,
    Path(slug): Path<String>,
    Query(mut query): Query<ReportQuery>,
) -> Result<ReportPage> {
    let build = reader.build(&state, &slug).await?;
    let mut revisions = state.store.revisions_of_build(build.id).await?;
    if let Some(only) = reader.only_revision() {
        revisions.retain(|r| r.number == only);
        query.rev = Some(format!("r{only}"));
    }
    let chosen: Option<&Revision> = match query.rev.as_deref().map(str::trim) {
        Some(label) if !label.is_empty() => Some(
            revisions
                .iter()
                .find(|r| r.label() == label)
                .ok_or(AppError::NotFound)?,
        ),
        _ => None,
    };
    let shown = chosen.or(revisions.last());
    let runs: Vec<Run> = runs_oldest_first(&state.store, &build)
        .await?
        .into_iter()
        .filter(|run| chosen.is_none_or(|r| r.id == run.revision_id))
        .collect();
    let digests = digests_of(&state.store, &build, &runs, &revisions).await?;
    let health = shown.map(|revision| {
        let label = revision.label();
        let of_revision: Vec<&RunDigest> = digests
            .iter()
            .filter(|d| d.trend.revision_label == label)
            .collect();
        build_health(&label, &of_revision)
    });
    Ok(ReportPage {
        chrome: reader.chrome(format!("Report: {}", build.name), &build),
        generated: date_time(now_unix_s()),
        revision: shown.map(Revision::label).unwrap_or_default(),
        revision_notes: shown.map(|r| r.notes.clone()).unwrap_or_default(),
        one_revision: chosen.is_some(),
        labels: revisions.iter().rev().map(Revision::label).collect(),
        parts: shown.map(|r| part_views(&r.parts)).unwrap_or_default(),
        runs: runs
            .iter()
            .zip(&digests)
            .map(|(run, digest)| RunRow::new(run, digest))
            .collect(),
        health,
        charts: build_charts(&build.slug, &digests)
            .into_iter()
            .map(|chart| Figure::new(chart, "Run"))
            .collect(),
        caveats: MODEL_CAVEATS,
        cautions: SAFETY_CAUTIONS,
        build,
    })
}
