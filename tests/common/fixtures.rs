//! Fixtures shared by the model's integration tests.

use eddybench::analysis::OperatingPoint;
use eddybench::parts::{
    Choke, Conductor, GateClamp, GateResistor, Parts, Switch, TankCapacitor, WorkCoil,
};

/// Relative closeness, with a message that shows both numbers.
pub fn assert_close(actual: f64, expected: f64, relative: f64, what: &str) {
    let error = (actual - expected).abs() / expected.abs().max(f64::MIN_POSITIVE);
    assert!(
        error <= relative,
        "{what}: got {actual}, expected {expected} (relative error {error:.2e} > {relative:.0e})"
    );
}

/// A tank capacitor bank of `count` units of `unit_f`, nothing else known.
pub fn capacitor(unit_f: f64, count: u32) -> TankCapacitor {
    TankCapacitor {
        label: None,
        capacitance_f: unit_f,
        count,
        dissipation_factor: None,
        esr_ohm: None,
        voltage_rating_vrms: None,
        current_rating_arms: None,
        max_temp_c: None,
        self_heating_limit_k: None,
    }
}

pub fn coil_of(inductance_h: f64) -> WorkCoil {
    WorkCoil {
        inductance_h: Some(inductance_h),
        ..WorkCoil::default()
    }
}

pub fn choke(inductance_h: f64) -> Choke {
    Choke {
        label: None,
        inductance_h,
        count: 2,
        dcr_ohm: None,
        saturation_current_a: None,
        max_temp_c: None,
    }
}

pub fn gate_resistor(resistance_ohm: f64) -> GateResistor {
    GateResistor {
        label: None,
        resistance_ohm,
        power_rating_w: None,
        max_temp_c: None,
    }
}

/// The worked-example tank: L = 1 µH, C = 1 µF, no chokes.
pub fn reference_tank() -> Parts {
    Parts {
        tank_capacitor: Some(capacitor(1e-6, 1)),
        work_coil: Some(coil_of(1e-6)),
        ..Parts::default()
    }
}

pub fn at(supply_voltage_v: f64) -> OperatingPoint {
    OperatingPoint {
        supply_voltage_v,
        supply_current_a: None,
        frequency_hz: None,
        ambient_c: None,
        temperatures_c: Default::default(),
    }
}

pub fn at_current(supply_voltage_v: f64, supply_current_a: f64) -> OperatingPoint {
    OperatingPoint {
        supply_current_a: Some(supply_current_a),
        ..at(supply_voltage_v)
    }
}

/// A plausible bench revision with every part given (invented, not a real build).
pub fn realistic_revision() -> (Parts, OperatingPoint) {
    let parts = Parts {
        tank_capacitor: Some(TankCapacitor {
            dissipation_factor: Some(5e-4),
            voltage_rating_vrms: Some(300.0),
            current_rating_arms: Some(15.0),
            max_temp_c: Some(85.0),
            ..capacitor(0.33e-6, 6)
        }),
        work_coil: Some(WorkCoil {
            turns: Some(6.0),
            mean_diameter_m: Some(0.040),
            length_m: Some(0.050),
            lead_length_m: Some(0.2),
            conductor: Some(Conductor::Tube {
                outer_diameter_m: 6e-3,
                wall_m: 1e-3,
            }),
            ..WorkCoil::default()
        }),
        choke: Some(Choke {
            dcr_ohm: Some(0.02),
            saturation_current_a: Some(20.0),
            ..choke(100e-6)
        }),
        switch: Some(Switch {
            vds_max_v: Some(100.0),
            rds_on_ohm: Some(0.008),
            rds_tempco_pct_per_k: Some(0.6),
            tj_max_c: Some(175.0),
            rth_jc_k_per_w: Some(0.5),
            vgs_max_v: Some(20.0),
            ..Switch::default()
        }),
        gate_resistor: Some(GateResistor {
            power_rating_w: Some(1.0),
            ..gate_resistor(470.0)
        }),
        gate_clamp: Some(GateClamp {
            label: None,
            zener_voltage_v: 12.0,
        }),
        ..Parts::default()
    };
    let mut op = at_current(24.0, 8.0);
    op.frequency_hz = Some(123.5e3);
    op.ambient_c = Some(22.0);
    op.temperatures_c.tank_capacitor = Some(45.0);
    op.temperatures_c.switch = Some(55.0);
    op.temperatures_c.work_coil = Some(60.0);
    (parts, op)
}
