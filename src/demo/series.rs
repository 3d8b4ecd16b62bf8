//! Turns a run plan into bench readings: the operating point from the model's formulas at each
//! sample, the part temperatures stepped along first-order curves, and a little noise.

use std::f64::consts::PI;

use crate::channel::Channel;
use crate::parts::{Choke, GateClamp, GateResistor, Parts, Role, Switch, TankCapacitor, WorkCoil};

use super::bench::{
    coil_ac_resistance_ohm, first_order_step_c, gate_resistor_power_w, parallel_h, rds_on_at_ohm,
    resonant_frequency_hz, tank_vrms_v,
};
use super::noise::Xorshift64;
use super::plan::{BenchSetup, RevisionPlan, RunPlan};
use super::{DemoReading, DemoRun};

/// Half-widths of the reading noise, about what a bench meter and thermocouples show.
const TEMP_NOISE_K: f64 = 0.3;
const AMBIENT_NOISE_K: f64 = 0.1;
const WATER_NOISE_K: f64 = 0.05;
const VOLTAGE_NOISE_V: f64 = 0.03;
const CURRENT_NOISE_REL: f64 = 0.006;
const FREQUENCY_NOISE_REL: f64 = 0.0003;
/// The room warms a little while the heater runs.
const AMBIENT_DRIFT_K_PER_S: f64 = 0.001;

/// The driver's parts with the fields the generator needs; the story gives them all.
struct Driver<'a> {
    capacitor: &'a TankCapacitor,
    coil: &'a WorkCoil,
    choke: &'a Choke,
    switch: &'a Switch,
    gate_resistor: &'a GateResistor,
    gate_clamp: &'a GateClamp,
}

impl<'a> Driver<'a> {
    fn of(parts: &'a Parts) -> Self {
        const MSG: &str = "every demo revision lists all driver parts";
        Self {
            capacitor: parts.tank_capacitor.as_ref().expect(MSG),
            coil: parts.work_coil.as_ref().expect(MSG),
            choke: parts.choke.as_ref().expect(MSG),
            switch: parts.switch.as_ref().expect(MSG),
            gate_resistor: parts.gate_resistor.as_ref().expect(MSG),
            gate_clamp: parts.gate_clamp.as_ref().expect(MSG),
        }
    }

    fn coil_inductance_h(&self) -> f64 {
        self.coil
            .inductance_h
            .expect("every demo coil has a measured inductance")
    }
}

/// The bank as it really is on this run: per-unit capacitance and tan δ.
struct Bank {
    unit_capacitance_f: Vec<f64>,
    unit_dissipation_factor: Vec<f64>,
}

impl Bank {
    fn of(capacitor: &TankCapacitor, plan: &RunPlan) -> Self {
        let count = capacitor.count as usize;
        let tan_delta = capacitor.dissipation_factor.unwrap_or(5e-4);
        let mut bank = Self {
            unit_capacitance_f: vec![capacitor.capacitance_f; count],
            unit_dissipation_factor: vec![tan_delta; count],
        };
        if let Some(d) = plan.degradation {
            let i = d.unit as usize - 1;
            bank.unit_capacitance_f[i] *= 1.0 - d.capacitance_lost_fraction_of_unit;
            bank.unit_dissipation_factor[i] *= d.dissipation_factor_multiplier;
        }
        bank
    }

    fn capacitance_f(&self) -> f64 {
        self.unit_capacitance_f.iter().sum()
    }
}

/// Thermal resistance of unit `n` (1-based) of `count`: the end value, rising to
/// `middle_factor` times it in the middle of the bank.
fn capacitor_k_per_w(bench: &BenchSetup, n: usize, count: usize) -> f64 {
    let end = bench.capacitor.k_per_w;
    if count < 2 {
        return end;
    }
    let from_middle = (2.0 * n as f64 - (count as f64 + 1.0)).abs() / (count as f64 - 1.0);
    end * (1.0 + (bench.capacitor_middle_factor - 1.0) * (1.0 - from_middle))
}

/// Losses at one operating point, in watts.
struct Losses {
    capacitor_unit_w: Vec<f64>,
    coil_w: f64,
    switch_each_w: f64,
    choke_each_w: f64,
    gate_resistors_w: f64,
}

impl Losses {
    fn total_w(&self) -> f64 {
        self.capacitor_unit_w.iter().sum::<f64>()
            + self.coil_w
            + 2.0 * self.switch_each_w
            + 2.0 * self.choke_each_w
            + self.gate_resistors_w
    }
}

fn losses(
    driver: &Driver,
    bank: &Bank,
    bench: &BenchSetup,
    supply_v: f64,
    supply_a: f64,
    frequency_hz: f64,
    switch_case_c: f64,
) -> Losses {
    let vrms = tank_vrms_v(supply_v);
    let omega = 2.0 * PI * frequency_hz;
    // Textbook: P = Q·tan δ per unit, Q = Vrms²·ω·C.
    let capacitor_unit_w = bank
        .unit_capacitance_f
        .iter()
        .zip(&bank.unit_dissipation_factor)
        .map(|(c, tan_delta)| vrms * vrms * omega * c * tan_delta)
        .collect();
    let coil_a = vrms / (omega * driver.coil_inductance_h());
    let coil_w = coil_a
        * coil_a
        * coil_ac_resistance_ohm(driver.coil, frequency_hz, bench.coil_proximity_factor);
    // Derived: each switch carries the supply current half the time, at its junction temperature.
    let sw = driver.switch;
    let (r25, tempco, rth_jc) = (
        sw.rds_on_ohm.unwrap_or(0.0),
        sw.rds_tempco_pct_per_k.unwrap_or(0.0),
        sw.rth_jc_k_per_w.unwrap_or(0.0),
    );
    let mut switch_each_w = supply_a * supply_a * r25 / 2.0;
    for _ in 0..4 {
        let junction_c = switch_case_c + switch_each_w * rth_jc;
        switch_each_w = supply_a * supply_a * rds_on_at_ohm(r25, tempco, junction_c) / 2.0;
    }
    let choke_a = supply_a / f64::from(driver.choke.count);
    let choke_each_w =
        choke_a * choke_a * driver.choke.dcr_ohm.unwrap_or(0.0) + bench.choke_core_loss_w;
    let gate_resistors_w = 2.0
        * gate_resistor_power_w(
            supply_v,
            driver.gate_resistor.resistance_ohm,
            driver.gate_clamp.zener_voltage_v,
        );
    Losses {
        capacitor_unit_w,
        coil_w,
        switch_each_w,
        choke_each_w,
        gate_resistors_w,
    }
}

/// The supply sags with current, and the losses follow the terminal voltage: a few fixed-point
/// passes settle both.
fn operating_point(
    driver: &Driver,
    bank: &Bank,
    bench: &BenchSetup,
    supply_setting_v: f64,
    workpiece_w: f64,
    frequency_hz: f64,
    switch_case_c: f64,
) -> (f64, f64, Losses) {
    let (mut supply_v, mut supply_a) = (supply_setting_v, 0.0);
    let mut loss = losses(
        driver,
        bank,
        bench,
        supply_v,
        supply_a,
        frequency_hz,
        switch_case_c,
    );
    for _ in 0..6 {
        supply_a = (loss.total_w() + workpiece_w) / supply_v;
        supply_v = supply_setting_v - bench.supply_sag_ohm * supply_a;
        loss = losses(
            driver,
            bank,
            bench,
            supply_v,
            supply_a,
            frequency_hz,
            switch_case_c,
        );
    }
    (supply_v, supply_a, loss)
}

/// Rounds to the instrument's resolution; divides by the inverse for fine resolutions so that
/// 0.1 °C steps print as 43.9, not 43.900000000000006.
fn round_to(value: f64, resolution: f64) -> f64 {
    if resolution < 1.0 {
        let per_unit = (1.0 / resolution).round();
        (value * per_unit).round() / per_unit
    } else {
        (value / resolution).round() * resolution
    }
}

fn part(role: Role, index: Option<u32>) -> Channel {
    Channel::PartTemp { role, index }
}

/// Generates one run; `seed` names it for the noise.
pub fn generate(seed: &str, revision: &RevisionPlan, plan: &RunPlan) -> DemoRun {
    let driver = Driver::of(&revision.parts);
    let bench = &revision.bench;
    let bank = Bank::of(driver.capacitor, plan);
    let count = bank.unit_capacitance_f.len();
    // Derived: the idle choke sits across the tank.
    let tank_inductance_h = parallel_h(driver.coil_inductance_h(), driver.choke.inductance_h);
    let unloaded_hz = resonant_frequency_hz(tank_inductance_h, bank.capacitance_f());
    let capacitor_limit_c = driver.capacitor.max_temp_c.unwrap_or(f64::INFINITY);
    let mut noise = Xorshift64::seeded(seed);

    let ambient_c = plan.ambient_c;
    let mut capacitor_c = vec![ambient_c; count];
    let mut switch_case_c = ambient_c;
    let (mut switch_1_c, mut switch_2_c) = (ambient_c, ambient_c);
    let mut coil_c = ambient_c;
    let mut choke_c = ambient_c;
    let mut water_c = plan.water.map(|w| w.start_temp_c);

    let mut readings = Vec::new();
    let mut failure: Option<(usize, f64)> = None;
    let steps = (plan.duration_s / plan.step_s).round() as usize;
    for k in 0..=steps {
        let t_s = k as f64 * plan.step_s;
        let (workpiece_w, shift) = match plan.workpiece {
            None => (0.0, 0.0),
            Some(w) if w.curie_at_s.is_some_and(|at| t_s >= at) => {
                (w.power_above_curie_w, w.frequency_shift_above_curie)
            }
            Some(w) => (w.power_w, w.frequency_shift),
        };
        let frequency_hz = unloaded_hz * (1.0 + shift);

        let (supply_v, supply_a, loss) = operating_point(
            &driver,
            &bank,
            bench,
            plan.supply_setting_v,
            workpiece_w,
            frequency_hz,
            switch_case_c,
        );

        let mut push = |channel: Channel, value: f64| {
            readings.push(DemoReading {
                t_s,
                channel,
                value,
            })
        };
        let v = supply_v + VOLTAGE_NOISE_V * noise.symmetric();
        push(Channel::SupplyVoltage, round_to(v, 0.01));
        let a = supply_a * (1.0 + CURRENT_NOISE_REL * noise.symmetric());
        push(Channel::SupplyCurrent, round_to(a, 0.01));
        let f = frequency_hz * (1.0 + FREQUENCY_NOISE_REL * noise.symmetric());
        push(Channel::Frequency, round_to(f, 10.0));
        let room_c = ambient_c + AMBIENT_DRIFT_K_PER_S * t_s + AMBIENT_NOISE_K * noise.symmetric();
        push(Channel::AmbientTemp, round_to(room_c, 0.1));
        if let Some(w) = water_c {
            let w = w + WATER_NOISE_K * noise.symmetric();
            push(Channel::WaterTemp, round_to(w, 0.1));
        }
        // One thermocouple per logged unit, or one on the hottest when none are named.
        let logged_capacitors: Vec<(Option<u32>, f64)> = if bench.logged_capacitor_units.is_empty()
        {
            let hottest_c = capacitor_c
                .iter()
                .copied()
                .fold(f64::NEG_INFINITY, f64::max);
            vec![(None, hottest_c)]
        } else {
            let units = bench.logged_capacitor_units.iter();
            units
                .map(|&n| (Some(n), capacitor_c[n as usize - 1]))
                .collect()
        };
        let mut hottest_logged_c = f64::NEG_INFINITY;
        for (index, true_c) in logged_capacitors {
            let c = round_to(true_c + TEMP_NOISE_K * noise.symmetric(), 0.1);
            hottest_logged_c = hottest_logged_c.max(c);
            push(part(Role::TankCapacitor, index), c);
        }
        let temps = [
            (part(Role::Switch, Some(1)), switch_1_c),
            (part(Role::Switch, Some(2)), switch_2_c),
            (part(Role::WorkCoil, None), coil_c),
            (part(Role::Choke, Some(1)), choke_c),
        ];
        for (channel, c) in temps {
            push(channel, round_to(c + TEMP_NOISE_K * noise.symmetric(), 0.1));
        }

        // The operator stops the moment a unit reads past its rating.
        if hottest_logged_c > capacitor_limit_c {
            let hottest_unit = (0..count)
                .max_by(|&i, &j| capacitor_c[i].total_cmp(&capacitor_c[j]))
                .unwrap_or(0);
            failure = Some((hottest_unit + 1, t_s));
            break;
        }

        let dt = plan.step_s;
        for (i, c) in capacitor_c.iter_mut().enumerate() {
            let rise_k = loss.capacitor_unit_w[i] * capacitor_k_per_w(bench, i + 1, count);
            *c = first_order_step_c(*c, ambient_c, rise_k, dt, bench.capacitor.tau_s);
        }
        let sw = bench.switch_case;
        let switch_rise_k = loss.switch_each_w * sw.k_per_w;
        switch_1_c = first_order_step_c(switch_1_c, ambient_c, switch_rise_k, dt, sw.tau_s);
        let switch_2_rise_k = switch_rise_k * bench.switch_2_factor;
        switch_2_c = first_order_step_c(switch_2_c, ambient_c, switch_2_rise_k, dt, sw.tau_s);
        switch_case_c = switch_1_c.max(switch_2_c);
        let coil_rise_k = loss.coil_w * bench.coil.k_per_w;
        coil_c = first_order_step_c(coil_c, ambient_c, coil_rise_k, dt, bench.coil.tau_s);
        let choke_rise_k = loss.choke_each_w * bench.choke.k_per_w;
        choke_c = first_order_step_c(choke_c, ambient_c, choke_rise_k, dt, bench.choke.tau_s);
        if let (Some(w), Some(cup)) = (water_c.as_mut(), plan.water) {
            // Calorimetry: all of the workpiece power goes into the water and its vessel.
            *w += workpiece_w * dt / calorimeter_heat_capacity_j_per_k(&cup);
        }
    }

    let (outcome, failed_part, notes) = match failure {
        Some((unit, at_s)) => {
            let stop = format!(
                "{}:{:02}",
                (at_s / 60.0) as u32,
                (at_s % 60.0).round() as u32
            );
            let notes = plan
                .notes
                .replace("{unit}", &unit.to_string())
                .replace("{stop}", &stop);
            ("part_failed", Some(Role::TankCapacitor), notes)
        }
        None => (plan.outcome, None, plan.notes.clone()),
    };
    DemoRun {
        revision_label: plan.revision_label.into(),
        days_ago: plan.days_ago,
        operator: plan.operator.into(),
        supply_setting_v: plan.supply_setting_v,
        supply_current_limit_a: plan.supply_current_limit_a,
        load: plan.load,
        water_mass_kg: plan.water.map(|w| w.water_mass_kg),
        vessel_heat_capacity_j_per_k: plan.water.map(|w| w.vessel_heat_capacity_j_per_k),
        outcome,
        failed_part,
        notes,
        readings,
    }
}

/// Calorimetry: m_w·c_w + C_vessel.
pub fn calorimeter_heat_capacity_j_per_k(cup: &super::plan::WaterCup) -> f64 {
    cup.water_mass_kg * super::bench::WATER_CP_J_PER_KG_K + cup.vessel_heat_capacity_j_per_k
}
