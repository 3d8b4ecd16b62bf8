//! The invented demo scenario that `eddybench demo` seeds: a makerspace's tool-room heater
//! through four revisions, and a small 12 V heater for an open day.
//!
//! Everything is generated, not typed: each run's readings come from the model's formulas
//! applied to its revision's parts (see `series`), so the model's predictions agree with the
//! data it is shown. Deterministic: the same scenario on every start.

mod bench;
mod noise;
mod open_day;
mod plan;
mod series;
mod workshop;
mod workshop_runs;

#[cfg(test)]
mod tests;

use crate::channel::Channel;
use crate::parts::{Parts, Role};

#[derive(Debug, Clone, PartialEq)]
pub struct DemoBuild {
    pub name: String,
    pub slug: String,
    pub purpose: String,
    pub notes: String,
    pub revisions: Vec<DemoRevision>,
    pub runs: Vec<DemoRun>,
}

#[derive(Debug, Clone, PartialEq)]
pub struct DemoRevision {
    /// "r1", "r2", …
    pub label: String,
    pub parts: Parts,
    pub notes: String,
}

#[derive(Debug, Clone, PartialEq)]
pub struct DemoRun {
    pub revision_label: String,
    /// When it started, relative to now (the seeder turns this into a timestamp).
    pub days_ago: f64,
    /// An invented first name.
    pub operator: String,
    pub supply_setting_v: f64,
    pub supply_current_limit_a: Option<f64>,
    /// "none" | "ferrous" | "non_ferrous" | "water"
    pub load: &'static str,
    pub water_mass_kg: Option<f64>,
    pub vessel_heat_capacity_j_per_k: Option<f64>,
    /// "completed" | "stopped" | "part_failed"
    pub outcome: &'static str,
    pub failed_part: Option<Role>,
    pub notes: String,
    pub readings: Vec<DemoReading>,
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DemoReading {
    /// Seconds from the start of the run.
    pub t_s: f64,
    pub channel: Channel,
    /// SI: V, A, Hz, °C.
    pub value: f64,
}

/// The plans the scenario is generated from (tests compare the data with them).
fn plans() -> Vec<plan::BuildPlan> {
    vec![workshop::build(), open_day::build()]
}

/// The demo builds, with their revisions and runs, oldest run first.
pub fn scenario() -> Vec<DemoBuild> {
    plans().iter().map(generate_build).collect()
}

fn generate_build(build: &plan::BuildPlan) -> DemoBuild {
    let runs = build
        .runs
        .iter()
        .enumerate()
        .map(|(i, run)| {
            let revision = build
                .revisions
                .iter()
                .find(|r| r.label == run.revision_label)
                .expect("every demo run names one of its build's revisions");
            series::generate(&format!("{}/{i}", build.slug), revision, run)
        })
        .collect();
    DemoBuild {
        name: build.name.into(),
        slug: build.slug.into(),
        purpose: build.purpose.into(),
        notes: build.notes.into(),
        revisions: build
            .revisions
            .iter()
            .map(|r| DemoRevision {
                label: r.label.into(),
                parts: r.parts.clone(),
                notes: r.notes.into(),
            })
            .collect(),
        runs,
    }
}

mod seed;
pub use seed::{DemoLogin, seed};
