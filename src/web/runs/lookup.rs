//! What the run pages and the logging handlers share: the channels a revision can log, the loads,
//! and finding a run under its build.

use crate::channel::Channel;
use crate::parts::{Parts, Role};
use crate::store::{Build, Run, RunId};
use crate::web::reader::Reader;
use crate::web::{AppError, AppState, Result};

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

pub(crate) async fn build_and_run(state: &AppState, slug: &str, id: i64) -> Result<(Build, Run)> {
    let build = state.store.build_by_slug(slug).await?;
    let run = state.store.run_by_id(RunId(id)).await?;
    if run.build_id != build.id {
        return Err(AppError::NotFound);
    }
    Ok((build, run))
}

/// The build and run of a read page, for a user or a share (limited to its revision).
pub(crate) async fn reader_build_and_run(
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
