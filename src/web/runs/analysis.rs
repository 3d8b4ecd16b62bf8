//! A run's analysis from the store: its readings and revision in, `RunAnalysis` out, shared by
//! the run page and `GET /api/v1/runs/{id}/analysis`; and an open run's live margins for
//! scripts (`GET /api/v1/runs/{id}/live`, which the feeder's stop switch follows).

use axum::Json;
use axum::extract::{Path, State};

use serde::Serialize;

use crate::analysis::efficiency::{IDLE_SUPPLY_TOLERANCE, IdleReference};
use crate::analysis::live::{LiveMargin, live_margins};
use crate::analysis::operating_point::operating_point;
use crate::analysis::reading::Reading;
use crate::analysis::run::{Load, RunAnalysis, RunInput, analyse_run};
use crate::channel::Channel;
use crate::store::{Revision, Run, RunId, Store};
use crate::web::accounts::session::CurrentUser;
use crate::web::routes::{Access, Routes};
use crate::web::{AppState, Result};

pub fn router() -> Routes {
    Routes::new()
        .get("/api/v1/runs/{id}/analysis", Access::Viewer, analysis_json)
        .get("/api/v1/runs/{id}/live", Access::Viewer, live_json)
}

/// The current readings of a run as the analysis takes them (unknown channels skipped).
pub async fn analysis_readings(store: &Store, run: RunId) -> Result<Vec<Reading>> {
    Ok(store
        .current_readings(run)
        .await?
        .into_iter()
        .filter_map(|r| {
            let channel: Channel = r.channel.parse().ok()?;
            Some(Reading {
                t_s: r.t_s,
                channel,
                value: r.value,
            })
        })
        .collect())
}

pub fn load_of(run: &Run) -> Load {
    match run.load.as_str() {
        "ferrous" => Load::Ferrous,
        "non_ferrous" => Load::NonFerrous,
        "water" => Load::Water,
        _ => Load::None,
    }
}

/// The idle run of the same revision whose supply is closest to this run's, within 10 %.
async fn idle_reference(
    store: &Store,
    run: &Run,
    supply_v: Option<f64>,
) -> Result<Option<IdleReference>> {
    let Some(supply_v) = supply_v else {
        return Ok(None);
    };
    if run.load == "none" {
        return Ok(None);
    }
    let mut best: Option<IdleReference> = None;
    for idle in store.idle_runs_of_revision(run.revision_id, run.id).await? {
        let readings = analysis_readings(store, idle.id).await?;
        let Some(op) = operating_point(&readings, idle.supply_setting_v) else {
            continue;
        };
        let Some(current_a) = op.supply_current_a else {
            continue;
        };
        let off = (op.supply_voltage_v / supply_v - 1.0).abs();
        let better = best
            .as_ref()
            .is_none_or(|b| off < (b.supply_voltage_v / supply_v - 1.0).abs());
        if off <= IDLE_SUPPLY_TOLERANCE && better {
            best = Some(IdleReference {
                supply_voltage_v: op.supply_voltage_v,
                supply_current_a: current_a,
            });
        }
    }
    Ok(best)
}

/// Analyses a run from the store.
pub async fn analyse_stored_run(
    store: &Store,
    run: &Run,
    revision: &Revision,
    readings: &[Reading],
) -> Result<RunAnalysis> {
    let supply_v = operating_point(readings, run.supply_setting_v).map(|op| op.supply_voltage_v);
    let idle = idle_reference(store, run, supply_v).await?;
    Ok(analyse_run(&RunInput {
        parts: &revision.parts,
        readings,
        supply_setting_v: run.supply_setting_v,
        supply_current_limit_a: run.supply_current_limit_a,
        load: load_of(run),
        water_mass_kg: run.water_mass_kg,
        vessel_heat_capacity_j_per_k: run.vessel_heat_capacity_j_per_k,
        idle_reference: idle,
    }))
}

async fn analysis_json(
    State(state): State<AppState>,
    CurrentUser(_user): CurrentUser,
    Path(id): Path<i64>,
) -> Result<Json<RunAnalysis>> {
    let run = state.store.run_by_id(RunId(id)).await?;
    let revision = state.store.revision_by_id(run.revision_id).await?;
    let readings = analysis_readings(&state.store, run.id).await?;
    Ok(Json(
        analyse_stored_run(&state.store, &run, &revision, &readings).await?,
    ))
}

/// An open run's standing now: the same margins the run page shows, most urgent first.
#[derive(Serialize)]
struct LiveJson {
    open: bool,
    /// Seconds since the run started, by the server's clock.
    elapsed_s: f64,
    margins: Vec<LiveMargin>,
}

async fn live_json(
    State(state): State<AppState>,
    CurrentUser(_user): CurrentUser,
    Path(id): Path<i64>,
) -> Result<Json<LiveJson>> {
    let run = state.store.run_by_id(RunId(id)).await?;
    // To the millisecond: a countdown of seconds needs better than whole seconds.
    let now_unix_s = time::OffsetDateTime::now_utc().unix_timestamp_nanos() as f64 / 1e9;
    let elapsed_s = now_unix_s - run.started_at as f64;
    if !run.is_open() {
        return Ok(Json(LiveJson {
            open: false,
            elapsed_s,
            margins: Vec::new(),
        }));
    }
    let revision = state.store.revision_by_id(run.revision_id).await?;
    let readings = analysis_readings(&state.store, run.id).await?;
    let setting = operating_point(&readings, run.supply_setting_v).map(|op| op.supply_voltage_v);
    Ok(Json(LiveJson {
        open: true,
        elapsed_s,
        margins: live_margins(&revision.parts, &readings, setting, elapsed_s),
    }))
}
