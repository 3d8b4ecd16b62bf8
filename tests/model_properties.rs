//! Invariants of the model over random inputs.

mod common;

use common::{at, choke, coil_of, reference_tank};
use eddybench::analysis::{ModelReport, OperatingPoint, evaluate, validate};
use eddybench::parts::{Choke, GateClamp, GateResistor, Parts, Switch, TankCapacitor};
use proptest::prelude::*;

fn relative_error(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs().max(f64::MIN_POSITIVE)
}

/// The terms `predicted_loss_w` documents: bank, two switches, two gate resistors, chokes, coil.
fn loss_terms(report: &ModelReport) -> Vec<f64> {
    [
        report.capacitor_loss_w,
        report.switch_conduction_loss_w.map(|p| 2.0 * p),
        report.gate_resistor_power_w.map(|p| 2.0 * p),
        report.choke_dc_loss_w,
        report.coil_copper_loss_w,
    ]
    .into_iter()
    .flatten()
    .collect()
}

/// Every optional quantity of the report, by name (serde_json would print NaN as null).
fn quantities(r: &ModelReport) -> Vec<(&'static str, Option<f64>)> {
    vec![
        ("tank_capacitance_f", r.tank_capacitance_f),
        ("coil_inductance_h", r.coil_inductance_h),
        ("resonant_frequency_hz", r.resonant_frequency_hz),
        ("frequency_with_chokes_hz", r.frequency_with_chokes_hz),
        ("operating_frequency_hz", r.operating_frequency_hz),
        ("tank_peak_voltage_v", r.tank_peak_voltage_v),
        ("tank_rms_voltage_v", r.tank_rms_voltage_v),
        ("coil_reactance_ohm", r.coil_reactance_ohm),
        ("tank_rms_current_a", r.tank_rms_current_a),
        (
            "capacitor_rms_current_per_unit_a",
            r.capacitor_rms_current_per_unit_a,
        ),
        ("reactive_power_var", r.reactive_power_var),
        ("capacitor_loss_w", r.capacitor_loss_w),
        ("switch_peak_voltage_v", r.switch_peak_voltage_v),
        ("switch_voltage_margin", r.switch_voltage_margin),
        ("switch_conduction_loss_w", r.switch_conduction_loss_w),
        ("switch_junction_temp_c", r.switch_junction_temp_c),
        ("gate_resistor_power_w", r.gate_resistor_power_w),
        ("choke_reactance_ohm", r.choke_reactance_ohm),
        ("choke_reactance_ratio", r.choke_reactance_ratio),
        ("choke_ripple_a_pp", r.choke_ripple_a_pp),
        ("choke_peak_current_a", r.choke_peak_current_a),
        ("choke_dc_loss_w", r.choke_dc_loss_w),
        ("skin_depth_m", r.skin_depth_m),
        ("coil_ac_resistance_ohm", r.coil_ac_resistance_ohm),
        ("coil_copper_loss_w", r.coil_copper_loss_w),
        ("input_power_w", r.input_power_w),
        ("loaded_q", r.loaded_q),
        ("predicted_loss_w", r.predicted_loss_w),
        ("workpiece_power_w", r.workpiece_power_w),
        ("model_efficiency", r.model_efficiency),
        ("inferred_tank_capacitance_f", r.inferred_tank_capacitance_f),
        ("capacitance_drift", r.capacitance_drift),
    ]
}

prop_compose! {
    fn any_revision()(
        unit_f in 10e-9..5e-6f64,
        count in 1u32..40,
        df in proptest::option::of(1e-4..2e-2f64),
        coil_h in 0.1e-6..20e-6f64,
        choke_h in proptest::option::of(5e-6..1e-3f64),
        dcr in proptest::option::of(1e-3..0.5f64),
        rds in proptest::option::of(1e-3..0.2f64),
        rth in proptest::option::of(0.1..3.0f64),
        gate_ohm in proptest::option::of(100.0..10e3f64),
        zener in proptest::option::of(8.0..18.0f64),
    ) -> Parts {
        Parts {
            tank_capacitor: Some(TankCapacitor {
                dissipation_factor: df,
                ..common::capacitor(unit_f, count)
            }),
            work_coil: Some(coil_of(coil_h)),
            choke: choke_h.map(|l| Choke { dcr_ohm: dcr, ..choke(l) }),
            switch: Some(Switch {
                rds_on_ohm: rds,
                rds_tempco_pct_per_k: Some(0.6),
                rth_jc_k_per_w: rth,
                ..Switch::default()
            }),
            gate_resistor: gate_ohm.map(common::gate_resistor),
            gate_clamp: zener.map(|zener_voltage_v| GateClamp { label: None, zener_voltage_v }),
            ..Parts::default()
        }
    }
}

prop_compose! {
    fn any_operating_point()(
        vin in 0.0..60.0f64,
        iin in proptest::option::of(0.0..50.0f64),
        f in proptest::option::of(10e3..1e6f64),
        case_c in proptest::option::of(0.0..140.0f64),
    ) -> OperatingPoint {
        let mut op = at(vin);
        op.supply_current_a = iin;
        op.frequency_hz = f;
        op.temperatures_c.switch = case_c;
        op
    }
}

proptest! {
    #[test]
    fn tank_peak_is_pi_times_supply(vin in 0.0..10e3f64) {
        // V_p = π·V_in exactly (Baxandall 1959; Kazimierczuk & Czarkowski 2011).
        let report = evaluate(&Parts::default(), &at(vin));
        let peak = report.tank_peak_voltage_v.unwrap();
        prop_assert!((peak - std::f64::consts::PI * vin).abs() <= 1e-9 * vin.max(1e-300));
    }

    #[test]
    fn more_capacitors_lower_frequency_and_per_unit_current(
        unit_f in 10e-9..5e-6f64, count in 1u32..50, more in 1u32..50, vin in 1.0..100.0f64,
    ) {
        let bank = |n| Parts {
            tank_capacitor: Some(common::capacitor(unit_f, n)),
            ..reference_tank()
        };
        let fewer = evaluate(&bank(count), &at(vin));
        let extra = evaluate(&bank(count + more), &at(vin));
        prop_assert!(extra.resonant_frequency_hz.unwrap() < fewer.resonant_frequency_hz.unwrap());
        prop_assert!(
            extra.capacitor_rms_current_per_unit_a.unwrap()
                < fewer.capacitor_rms_current_per_unit_a.unwrap()
        );
    }

    #[test]
    fn choke_ripple_falls_as_one_over_inductance(
        l_h in 1e-6..1e-2f64, factor in 1.01..100.0f64, f in 10e3..1e6f64, vin in 1.0..100.0f64,
    ) {
        // Derived: ΔI ∝ 1/L at a given frequency.
        let mut op = at(vin);
        op.frequency_hz = Some(f);
        let ripple = |l| {
            let parts = Parts { choke: Some(choke(l)), ..reference_tank() };
            evaluate(&parts, &op).choke_ripple_a_pp.unwrap()
        };
        prop_assert!(relative_error(ripple(l_h) / ripple(l_h * factor), factor) < 1e-9);
    }

    #[test]
    fn predicted_loss_is_the_sum_of_its_parts(parts in any_revision(), op in any_operating_point()) {
        prop_assume!(validate(&parts, &op).is_ok());
        let report = evaluate(&parts, &op);
        let terms = loss_terms(&report);
        match (op.supply_current_a, terms.is_empty()) {
            (Some(_), false) => {
                let sum: f64 = terms.iter().sum();
                let predicted = report.predicted_loss_w.unwrap();
                prop_assert!((predicted - sum).abs() <= 1e-12 * sum.abs().max(1e-300));
                let workpiece = report.workpiece_power_w.unwrap();
                prop_assert!((workpiece - (report.input_power_w.unwrap() - predicted)).abs() <= 1e-9 * predicted.max(1.0));
            }
            _ => prop_assert_eq!(report.predicted_loss_w, None),
        }
    }

    #[test]
    fn every_quantity_is_finite_and_flags_are_sorted(parts in any_revision(), op in any_operating_point()) {
        prop_assume!(validate(&parts, &op).is_ok());
        let report = evaluate(&parts, &op);
        for (name, value) in quantities(&report) {
            prop_assert!(value.is_none_or(f64::is_finite), "{name}: {value:?}");
        }
        prop_assert!(report.flags.windows(2).all(|w| w[0].severity >= w[1].severity));
    }

    #[test]
    fn a_settled_junction_is_a_fixed_point(
        iin in 0.0..60.0f64, rds in 1e-3..0.1f64, tempco in 0.0..1.5f64,
        case_c in -20.0..140.0f64, rth in 0.05..5.0f64,
    ) {
        // Derived: T_j = T_c + P(T_j)·R_thJC.
        let parts = Parts {
            switch: Some(Switch {
                rds_on_ohm: Some(rds),
                rds_tempco_pct_per_k: Some(tempco),
                rth_jc_k_per_w: Some(rth),
                ..Switch::default()
            }),
            gate_resistor: Some(GateResistor { power_rating_w: None, ..common::gate_resistor(1e3) }),
            ..Parts::default()
        };
        let mut op = common::at_current(12.0, iin);
        op.temperatures_c.switch = Some(case_c);
        let report = evaluate(&parts, &op);
        if let Some(tj) = report.switch_junction_temp_c {
            let p = report.switch_conduction_loss_w.unwrap();
            prop_assert!((tj - (case_c + p * rth)).abs() < 1e-6, "{tj} vs {}", case_c + p * rth);
            prop_assert!(tj < 150.0);
        } else {
            prop_assert!(report.switch_thermal_runaway);
        }
    }
}

#[test]
fn no_input_power_leaves_the_ratios_to_it_absent() {
    let report = evaluate(&reference_tank(), &common::at_current(24.0, 0.0));
    assert_eq!(report.input_power_w, Some(0.0));
    assert_eq!(report.loaded_q, None);
    assert_eq!(report.model_efficiency, None);
    let report = evaluate(&reference_tank(), &common::at_current(0.0, 5.0));
    assert_eq!(report.loaded_q, None);
}

#[test]
fn missing_inputs_are_absent_not_guessed() {
    let report = evaluate(&Parts::default(), &at(24.0));
    assert_eq!(report.ambient_c, 25.0);
    assert_eq!(report.operating_frequency_hz, None);
    assert_eq!(report.coil_inductance_h, None);
    assert_eq!(report.capacitor_loss_w, None);
    assert_eq!(report.switch_voltage_margin, None);
    assert_eq!(report.predicted_loss_w, None);
    assert!(report.flags.is_empty(), "{:?}", report.flags);
}
