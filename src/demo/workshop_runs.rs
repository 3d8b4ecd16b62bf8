//! The tool-room heater's bench sessions, oldest first.

use super::plan::{Degradation, RunPlan, WaterCup, Workpiece};
use super::workshop::BENCH_SUPPLY_LIMIT_A;

/// Mild steel, J/(kg·K), for the calorimeter cup.
const MILD_STEEL_CP_J_PER_KG_K: f64 = 470.0;

/// What most sessions share; each run below overrides what it changes.
fn session(supply_setting_v: f64) -> RunPlan {
    RunPlan {
        revision_label: "",
        days_ago: 0.0,
        operator: "",
        supply_setting_v,
        supply_current_limit_a: Some(BENCH_SUPPLY_LIMIT_A),
        load: "none",
        workpiece: None,
        water: None,
        ambient_c: 21.0,
        duration_s: 240.0,
        step_s: 10.0,
        degradation: None,
        outcome: "completed",
        notes: String::new(),
    }
}

/// The calorimeter: 0.25 kg of water in a thin 0.12 kg mild-steel cup, stirred, lid on.
fn steel_cup(start_temp_c: f64) -> Option<WaterCup> {
    Some(WaterCup {
        water_mass_kg: 0.25,
        vessel_heat_capacity_j_per_k: 0.12 * MILD_STEEL_CP_J_PER_KG_K,
        start_temp_c,
    })
}

/// A steel part: strong heating until its Curie point, then slower.
fn steel(power_w: f64, curie_at_s: f64, power_above_curie_w: f64) -> Option<Workpiece> {
    Some(Workpiece {
        power_w,
        curie_at_s: Some(curie_at_s),
        power_above_curie_w,
        frequency_shift: -0.010,
        frequency_shift_above_curie: -0.003,
    })
}

fn steady(power_w: f64, frequency_shift: f64) -> Option<Workpiece> {
    Some(Workpiece {
        power_w,
        curie_at_s: None,
        power_above_curie_w: power_w,
        frequency_shift,
        frequency_shift_above_curie: frequency_shift,
    })
}

/// Unit 3, in the middle of the bank, clearing and losing capacitance under the r4 current.
fn unit_3_wearing(
    capacitance_lost: f64,
    dissipation_factor_multiplier: f64,
) -> Option<Degradation> {
    Some(Degradation {
        unit: 3,
        capacitance_lost_fraction_of_unit: capacitance_lost,
        dissipation_factor_multiplier,
    })
}

pub fn runs() -> Vec<RunPlan> {
    vec![
        RunPlan {
            revision_label: "r1",
            days_ago: 41.3,
            operator: "Ines",
            ambient_c: 19.5,
            duration_s: 180.0,
            notes: "First light at half supply, no load. Caps warm to the touch after three \
                    minutes."
                .into(),
            ..session(12.0)
        },
        RunPlan {
            revision_label: "r1",
            days_ago: 41.2,
            operator: "Ines",
            ambient_c: 20.0,
            duration_s: 300.0,
            step_s: 5.0,
            notes: "Full 24 V, no load. Unit {unit} bulged, smell of hot plastic; stopped at \
                    {stop}. Polyester is out."
                .into(),
            ..session(24.0)
        },
        RunPlan {
            revision_label: "r2",
            days_ago: 34.4,
            operator: "Tomasz",
            notes: "Bank barely warm now. The coil is the hot part: too hot to touch by the end."
                .into(),
            ..session(24.0)
        },
        RunPlan {
            revision_label: "r2",
            days_ago: 34.3,
            operator: "Tomasz",
            load: "ferrous",
            workpiece: steel(350.0, 70.0, 200.0),
            duration_s: 150.0,
            notes: "10 mm mild-steel bolt to dull red in about a minute. Chokes buzzing at full \
                    current, close to their 10 A rating."
                .into(),
            ..session(24.0)
        },
        RunPlan {
            revision_label: "r3",
            days_ago: 26.4,
            operator: "Ines",
            notes: "Idle baseline with the pump on. Coil stays near room temperature.".into(),
            ..session(24.0)
        },
        RunPlan {
            revision_label: "r3",
            days_ago: 26.3,
            operator: "Ines",
            load: "ferrous",
            workpiece: steel(420.0, 80.0, 240.0),
            duration_s: 180.0,
            notes: "Hardening a 6 mm drill-rod punch blank: cherry red at 1:30, quenched in oil."
                .into(),
            ..session(24.0)
        },
        RunPlan {
            revision_label: "r3",
            days_ago: 20.5,
            operator: "Priya",
            load: "water",
            workpiece: steady(260.0, -0.008),
            water: steel_cup(18.0),
            notes: "Calorimeter: 0.25 kg of water in a 0.12 kg mild-steel cup, stirred, lid on."
                .into(),
            ..session(24.0)
        },
        RunPlan {
            revision_label: "r3",
            days_ago: 19.4,
            operator: "Priya",
            load: "non_ferrous",
            workpiece: steady(180.0, 0.012),
            duration_s: 120.0,
            outcome: "stopped",
            notes: "Brazing a brass tee fitting: the rod flowed, stopped by hand.".into(),
            ..session(24.0)
        },
        RunPlan {
            revision_label: "r4",
            days_ago: 11.3,
            operator: "Ines",
            degradation: unit_3_wearing(0.0, 1.0),
            notes: "First run at 36 V, idle baseline. Bank warmer than at 24 V, as expected."
                .into(),
            ..session(36.0)
        },
        RunPlan {
            revision_label: "r4",
            days_ago: 8.2,
            operator: "Tomasz",
            load: "ferrous",
            workpiece: steel(650.0, 60.0, 380.0),
            duration_s: 180.0,
            degradation: unit_3_wearing(0.07, 1.5),
            notes: "Same punch blank size as on r3: red in half the time.".into(),
            ..session(36.0)
        },
        RunPlan {
            revision_label: "r4",
            days_ago: 5.4,
            operator: "Priya",
            load: "water",
            workpiece: steady(470.0, -0.008),
            water: steel_cup(16.5),
            duration_s: 150.0,
            degradation: unit_3_wearing(0.14, 2.2),
            notes: "Calorimeter at 36 V, same cup and water mass as on r3. Stopped short of \
                    boiling."
                .into(),
            ..session(36.0)
        },
        RunPlan {
            revision_label: "r4",
            days_ago: 1.2,
            operator: "Ines",
            degradation: unit_3_wearing(0.22, 3.0),
            notes: "Idle check: frequency a little higher than on the first r4 run, and unit 3 \
                    much warmer than its neighbours. Replacement units ordered."
                .into(),
            ..session(36.0)
        },
    ]
}
