//! What a build's pages need of each run, kept in the store so that no page re-reads a build's
//! readings: the trend inputs, the operating point, efficiency by method, inferred capacitance
//! and the run's flags. Computed once when a run's data changes.

use serde::{Deserialize, Serialize};

use super::efficiency::IdleReference;
use super::flags::Severity;
use super::reading::Reading;
use super::run::RunAnalysis;
use super::trends::{RunSummary, summarise_run};
use crate::parts::{Parts, Role};

/// Bumped when the summary's meaning changes, so stale stored summaries are recomputed.
pub const SUMMARY_VERSION: i64 = 2;

/// A flag as stored: owned strings, since it outlives the rule that raised it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StoredFlag {
    pub code: String,
    pub severity: Severity,
    pub part: Option<Role>,
    pub message: String,
    pub source: String,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StoredEfficiency {
    pub calorimetric: Option<f64>,
    pub differential: Option<f64>,
    pub model: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RunDigest {
    pub trend: RunSummary,
    pub supply_voltage_v: Option<f64>,
    pub supply_current_a: Option<f64>,
    pub frequency_hz: Option<f64>,
    pub input_power_w: Option<f64>,
    pub inferred_tank_capacitance_f: Option<f64>,
    pub efficiency: StoredEfficiency,
    pub flags: Vec<StoredFlag>,
    /// Set for an idle run, so a loaded run can find its reference without its readings.
    pub idle_reference: Option<IdleReference>,
}

/// Digests a run's analysis.
pub fn digest_run(
    run_id: i64,
    revision_label: &str,
    started_at_unix_s: i64,
    idle: bool,
    parts: &Parts,
    readings: &[Reading],
    analysis: &RunAnalysis,
) -> RunDigest {
    let op = analysis.operating_point.as_ref();
    let model = analysis.model.as_ref();
    RunDigest {
        trend: summarise_run(
            run_id,
            revision_label,
            started_at_unix_s,
            parts,
            readings,
            analysis,
        ),
        supply_voltage_v: op.map(|o| o.supply_voltage_v),
        supply_current_a: op.and_then(|o| o.supply_current_a),
        frequency_hz: op.and_then(|o| o.frequency_hz),
        input_power_w: model.and_then(|m| m.input_power_w),
        inferred_tank_capacitance_f: model.and_then(|m| m.inferred_tank_capacitance_f),
        efficiency: StoredEfficiency {
            calorimetric: analysis.efficiency.calorimetric,
            differential: analysis.efficiency.differential,
            model: analysis.efficiency.model,
        },
        flags: analysis
            .flags
            .iter()
            .map(|f| StoredFlag {
                code: f.code.to_string(),
                severity: f.severity,
                part: f.part,
                message: f.message.clone(),
                source: f.source.to_string(),
            })
            .collect(),
        idle_reference: match (idle, op) {
            (true, Some(op)) => op.supply_current_a.map(|i| IdleReference {
                supply_voltage_v: op.supply_voltage_v,
                supply_current_a: i,
            }),
            _ => None,
        },
    }
}
