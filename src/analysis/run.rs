//! A finished run's analysis: operating point, model, thermal results, efficiency and flags.

use serde::{Deserialize, Serialize};

pub use crate::analysis::efficiency::{Efficiency, IdleReference};

use crate::analysis::efficiency::{
    calorimetric_efficiency, differential_efficiency, input_power_w, water_load_power_w,
};
use crate::analysis::flags::Flag;
use crate::analysis::model::{ModelReport, OperatingPoint, evaluate};
use crate::analysis::operating_point::operating_point;
use crate::analysis::part_limits::{LimitBasis, part_limit};
use crate::analysis::reading::Reading;
use crate::analysis::run_flags::run_flags;
use crate::analysis::series::{part_channels, samples, time_span};
use crate::analysis::thermal_fit::{ThermalFit, fit_first_order};
use crate::channel::Channel;
use crate::parts::{Parts, Role};

/// What the run heated.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Load {
    #[default]
    None,
    Ferrous,
    NonFerrous,
    Water,
}

/// Everything a run's analysis needs; the store fills it in.
#[derive(Debug, Clone)]
pub struct RunInput<'a> {
    pub parts: &'a Parts,
    pub readings: &'a [Reading],
    pub supply_setting_v: Option<f64>,
    /// The bench supply's current limit for this run; the revision's supply part is used when
    /// absent.
    pub supply_current_limit_a: Option<f64>,
    pub load: Load,
    pub water_mass_kg: Option<f64>,
    pub vessel_heat_capacity_j_per_k: Option<f64>,
    /// An idle run of the same revision, for the differential efficiency.
    pub idle_reference: Option<IdleReference>,
}

/// One temperature channel's readings against its part's limit.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ThermalResult {
    pub channel: String,
    pub part: Role,
    pub t_max_c: f64,
    pub limit_c: Option<f64>,
    /// Where `limit_c` comes from (rated, assumed 85 °C, switch case at this loss, …).
    pub limit_basis: Option<LimitBasis>,
    pub margin_k: Option<f64>,
    pub fit: Option<ThermalFit>,
    /// Limit minus the fitted steady state, when the fit is trustworthy.
    pub predicted_margin_k: Option<f64>,
    /// Seconds from the channel's first reading until the fit reaches the limit, when the fit
    /// is trustworthy and gets there.
    pub time_to_limit_s: Option<f64>,
}

#[derive(Debug, Serialize)]
pub struct RunAnalysis {
    pub operating_point: Option<OperatingPoint>,
    pub model: Option<ModelReport>,
    pub thermal: Vec<ThermalResult>,
    pub efficiency: Efficiency,
    /// Worst first, one per code and part.
    pub flags: Vec<Flag>,
    /// From the first reading to the last.
    pub duration_s: Option<f64>,
}

/// Analyses a run: operating point → model → thermal results, efficiency, flags.
pub fn analyse_run(input: &RunInput) -> RunAnalysis {
    let operating_point = operating_point(input.readings, input.supply_setting_v);
    let model = operating_point.as_ref().map(|op| evaluate(input.parts, op));
    let switch_loss_w = model.as_ref().and_then(|m| m.switch_conduction_loss_w);
    let thermal = thermal_results(input.parts, input.readings, switch_loss_w);
    let duration_s = time_span(input.readings).map(|(first, last)| last - first);
    let model_efficiency = model.as_ref().and_then(|m| m.model_efficiency);
    let efficiency = run_efficiency(input, operating_point.as_ref(), model_efficiency);
    let model_flags = model.as_ref().map_or_else(Vec::new, |m| m.flags.clone());
    let flags = run_flags(
        input,
        operating_point.as_ref(),
        &thermal,
        duration_s,
        model_flags,
    );
    RunAnalysis {
        operating_point,
        model,
        thermal,
        efficiency,
        flags,
        duration_s,
    }
}

/// One result per part-temperature channel with readings, in channel order.
pub fn thermal_results(
    parts: &Parts,
    readings: &[Reading],
    switch_loss_w: Option<f64>,
) -> Vec<ThermalResult> {
    part_channels(readings)
        .into_iter()
        .filter_map(|channel| {
            thermal_result(parts, channel, &samples(readings, channel), switch_loss_w)
        })
        .collect()
}

/// A channel's result from its (time s, °C) samples; `None` for a channel that is not a part
/// temperature or has no samples.
pub fn thermal_result(
    parts: &Parts,
    channel: Channel,
    samples: &[(f64, f64)],
    switch_loss_w: Option<f64>,
) -> Option<ThermalResult> {
    let part = channel.role()?;
    let t_max_c = samples.iter().map(|s| s.1).max_by(f64::total_cmp)?;
    let limit = part_limit(parts, part, switch_loss_w);
    let limit_c = limit.map(|l| l.limit_c);
    let fit = fit_first_order(samples);
    let trusted = fit.as_ref().filter(|f| f.is_trusted());
    Some(ThermalResult {
        channel: channel.to_string(),
        part,
        t_max_c,
        limit_c,
        limit_basis: limit.map(|l| l.basis),
        margin_k: limit_c.map(|l| l - t_max_c),
        predicted_margin_k: limit_c.zip(trusted).map(|(l, f)| l - f.t_final_c),
        time_to_limit_s: limit_c.zip(trusted).and_then(|(l, f)| f.time_to_limit_s(l)),
        fit,
    })
}

/// The run's efficiency by each method that its data allows.
pub fn run_efficiency(
    input: &RunInput,
    op: Option<&OperatingPoint>,
    model_efficiency: Option<f64>,
) -> Efficiency {
    let supply = op.and_then(|op| op.supply_current_a.map(|i| (op.supply_voltage_v, i)));
    let calorimetric = match (input.load, input.water_mass_kg, supply) {
        (Load::Water, Some(mass_kg), Some((v, i))) => {
            let water = samples(input.readings, Channel::WaterTemp);
            let vessel = input.vessel_heat_capacity_j_per_k.unwrap_or(0.0);
            water_load_power_w(mass_kg, vessel, &water)
                .and_then(|p_w| calorimetric_efficiency(p_w, input_power_w(v, i)))
        }
        _ => None,
    };
    // An idle run is its own reference: only a loaded run has a differential efficiency.
    let differential = match (input.load, input.idle_reference, supply) {
        (Load::None, _, _) => None,
        (_, Some(idle), Some((v, i))) => differential_efficiency(v, i, &idle),
        _ => None,
    };
    Efficiency {
        calorimetric,
        differential,
        // With no workpiece every watt is loss: the loss budget's "efficiency" of an idle run
        // measures the model's error, not the heater, and must not sit among loaded runs.
        model: model_efficiency.filter(|_| input.load != Load::None),
    }
}

#[cfg(test)]
#[path = "run_tests.rs"]
mod tests;
