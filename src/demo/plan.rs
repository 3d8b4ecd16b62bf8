//! What the story says happened, before it becomes readings: each revision's bench setup (the
//! thermal paths and wiring a parts list does not hold) and each run's conditions.

use crate::parts::{Conductor, Parts, WorkCoil};

use super::bench::{LEAD_INDUCTANCE_H_PER_M, wheeler_inductance_h};

pub struct BuildPlan {
    pub name: &'static str,
    pub slug: &'static str,
    pub purpose: &'static str,
    pub notes: &'static str,
    pub revisions: Vec<RevisionPlan>,
    pub runs: Vec<RunPlan>,
}

pub struct RevisionPlan {
    pub label: &'static str,
    pub parts: Parts,
    pub notes: &'static str,
    pub bench: BenchSetup,
}

/// A part's path to ambient: ΔT_ss = loss × `k_per_w`, reached with time constant `tau_s`.
#[derive(Clone, Copy)]
pub struct ThermalPath {
    pub k_per_w: f64,
    pub tau_s: f64,
}

/// How this revision's parts sit on the bench.
#[derive(Clone)]
pub struct BenchSetup {
    /// One capacitor unit at the end of the bank.
    pub capacitor: ThermalPath,
    /// Extra thermal resistance of the unit in the middle of the bank, whose neighbours heat it
    /// from both sides; units in between are interpolated.
    pub capacitor_middle_factor: f64,
    /// Units with their own thermocouple, 1-based; empty logs the role as a whole (the hottest).
    pub logged_capacitor_units: &'static [u32],
    /// Switch tab through its pad and heat sink to ambient.
    pub switch_case: ThermalPath,
    /// Switch 2's sink sits a little worse (closer to the coil, less air).
    pub switch_2_factor: f64,
    pub choke: ThermalPath,
    /// Core loss of one choke from the ripple, roughly constant at a given supply.
    pub choke_core_loss_w: f64,
    pub coil: ThermalPath,
    /// Factor on the isolated-conductor AC resistance for the neighbouring turns (1.5–3,
    /// common practice).
    pub coil_proximity_factor: f64,
    /// Supply droop plus lead resistance: the terminal voltage sags by this times the current.
    pub supply_sag_ohm: f64,
}

/// The part in the coil.
#[derive(Clone, Copy)]
pub struct Workpiece {
    /// Power delivered into the part (or the calorimeter's vessel and water).
    pub power_w: f64,
    /// When a ferrous part passes its Curie point (770 °C) and heating slows.
    pub curie_at_s: Option<f64>,
    pub power_above_curie_w: f64,
    /// Relative shift of the frequency with the part in the coil (small, common practice).
    pub frequency_shift: f64,
    pub frequency_shift_above_curie: f64,
}

/// The water calorimeter: a vessel of water in the coil, stirred.
#[derive(Clone, Copy)]
pub struct WaterCup {
    pub water_mass_kg: f64,
    pub vessel_heat_capacity_j_per_k: f64,
    pub start_temp_c: f64,
}

/// A tank unit that is losing capacitance (self-healing clearings) and running lossier.
#[derive(Clone, Copy)]
pub struct Degradation {
    /// 1-based unit in the bank.
    pub unit: u32,
    pub capacitance_lost_fraction_of_unit: f64,
    pub dissipation_factor_multiplier: f64,
}

pub struct RunPlan {
    pub revision_label: &'static str,
    pub days_ago: f64,
    pub operator: &'static str,
    pub supply_setting_v: f64,
    pub supply_current_limit_a: Option<f64>,
    pub load: &'static str,
    pub workpiece: Option<Workpiece>,
    pub water: Option<WaterCup>,
    pub ambient_c: f64,
    pub duration_s: f64,
    pub step_s: f64,
    pub degradation: Option<Degradation>,
    /// "completed" or "stopped"; the generator turns it into "part_failed" when a tank unit
    /// passes its rated temperature, and stops the run there.
    pub outcome: &'static str,
    pub notes: String,
}

/// A work coil as its maker logs it: the geometry, and an inductance "measured" on an LCR
/// meter, which we invent as Wheeler's value plus the leads, rounded to 10 nH.
pub fn measured_coil(
    label: &str,
    turns: f64,
    mean_diameter_m: f64,
    length_m: f64,
    lead_length_m: f64,
    conductor: Conductor,
    max_temp_c: Option<f64>,
) -> WorkCoil {
    let inductance_h = wheeler_inductance_h(turns, mean_diameter_m, length_m)
        + LEAD_INDUCTANCE_H_PER_M * lead_length_m;
    WorkCoil {
        label: Some(label.into()),
        inductance_h: Some((inductance_h * 1e8).round() / 1e8),
        turns: Some(turns),
        mean_diameter_m: Some(mean_diameter_m),
        length_m: Some(length_m),
        lead_length_m: Some(lead_length_m),
        conductor: Some(conductor),
        max_temp_c,
    }
}
