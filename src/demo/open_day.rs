//! Build 2: a small 12 V heater, run from a lead-acid battery, to show induction heating at the
//! makerspace's open day. r1's thin enamelled coil runs hot; r2 rewinds it in 4 mm wire and adds
//! two capacitor units.
//!
//! Assumed thermal paths: PP 0.33 µF 630 V box 28 K/W (τ 180 s), the middle of the bank 15 % more;
//! switch tab on a clip-on sink 6 K/W (τ 150 s); 22 µH rod choke 15 K/W (τ 240 s); 2 mm
//! enamelled coil 5 K/W (τ 90 s), 4 mm bare-wire coil 3.5 K/W (τ 150 s).

use crate::parts::{
    Choke, Conductor, GateClamp, GateResistor, OtherPart, Parts, Supply, Switch, TankCapacitor,
};

use super::plan::{
    BenchSetup, BuildPlan, RevisionPlan, RunPlan, ThermalPath, Workpiece, measured_coil,
};

const BATTERY_V: f64 = 12.6;

fn r1_parts() -> Parts {
    Parts {
        tank_capacitor: Some(TankCapacitor {
            label: Some("polypropylene film, 0.33 µF, 630 V DC, boxed".into()),
            capacitance_f: 0.33e-6,
            count: 4,
            dissipation_factor: Some(6e-4),
            esr_ohm: None,
            voltage_rating_vrms: Some(250.0),
            current_rating_arms: Some(10.0),
            max_temp_c: Some(105.0),
            self_heating_limit_k: Some(5.0),
        }),
        work_coil: Some(measured_coil(
            "6-turn coil, 2 mm enamelled copper wire (AWG 12)",
            6.0,
            0.022,
            0.020,
            0.06,
            Conductor::Round {
                diameter_m: None,
                awg: Some(12),
            },
            Some(155.0),
        )),
        choke: Some(Choke {
            label: Some("22 µH ferrite-rod choke, 1.5 mm enamelled wire".into()),
            inductance_h: 22e-6,
            count: 2,
            dcr_ohm: Some(0.02),
            saturation_current_a: Some(8.0),
            max_temp_c: Some(125.0),
        }),
        switch: Some(Switch {
            label: Some("60 V N-channel MOSFET, TO-220".into()),
            vds_max_v: Some(60.0),
            rds_on_ohm: Some(0.014),
            rds_tempco_pct_per_k: Some(0.6),
            tj_max_c: Some(175.0),
            rth_jc_k_per_w: Some(1.0),
            vgs_max_v: Some(20.0),
        }),
        gate_resistor: Some(GateResistor {
            label: Some("220 Ω, 1 W metal film".into()),
            resistance_ohm: 220.0,
            power_rating_w: Some(1.0),
            max_temp_c: Some(155.0),
        }),
        gate_clamp: Some(GateClamp {
            label: Some("12 V zener, 0.5 W".into()),
            zener_voltage_v: 12.0,
        }),
        supply: Some(Supply {
            label: Some("sealed lead-acid battery, 12 V, 7 Ah".into()),
            nominal_voltage_v: Some(BATTERY_V),
            current_limit_a: None,
        }),
        other: vec![
            OtherPart {
                label: "small-signal fast diode (cross-coupled gate diodes)".into(),
                quantity: 2,
                max_temp_c: None,
            },
            OtherPart {
                label: "15 A blade fuse in the battery lead".into(),
                quantity: 1,
                max_temp_c: None,
            },
        ],
    }
}

fn r2_parts() -> Parts {
    let mut parts = r1_parts();
    parts.work_coil = Some(measured_coil(
        "5-turn coil, 4 mm bare copper wire",
        5.0,
        0.026,
        0.028,
        0.06,
        Conductor::Round {
            diameter_m: Some(0.004),
            awg: None,
        },
        Some(250.0),
    ));
    if let Some(bank) = parts.tank_capacitor.as_mut() {
        bank.count = 6;
    }
    parts
}

fn r1_bench() -> BenchSetup {
    BenchSetup {
        capacitor: ThermalPath {
            k_per_w: 28.0,
            tau_s: 180.0,
        },
        capacitor_middle_factor: 1.15,
        logged_capacitor_units: &[],
        switch_case: ThermalPath {
            k_per_w: 6.0,
            tau_s: 150.0,
        },
        switch_2_factor: 1.05,
        choke: ThermalPath {
            k_per_w: 15.0,
            tau_s: 240.0,
        },
        choke_core_loss_w: 0.2,
        coil: ThermalPath {
            k_per_w: 5.0,
            tau_s: 90.0,
        },
        coil_proximity_factor: 2.0,
        supply_sag_ohm: 0.05,
    }
}

fn r2_bench() -> BenchSetup {
    BenchSetup {
        coil: ThermalPath {
            k_per_w: 3.5,
            tau_s: 150.0,
        },
        ..r1_bench()
    }
}

fn nail(power_w: f64, curie_at_s: f64, power_above_curie_w: f64) -> Option<Workpiece> {
    Some(Workpiece {
        power_w,
        curie_at_s: Some(curie_at_s),
        power_above_curie_w,
        frequency_shift: -0.012,
        frequency_shift_above_curie: -0.004,
    })
}

/// What the open-day sessions share: the battery, no supply limit, three minutes idle.
fn session(revision_label: &'static str, days_ago: f64, operator: &'static str) -> RunPlan {
    RunPlan {
        revision_label,
        days_ago,
        operator,
        supply_setting_v: BATTERY_V,
        supply_current_limit_a: None,
        load: "none",
        workpiece: None,
        water: None,
        ambient_c: 22.0,
        duration_s: 180.0,
        step_s: 10.0,
        degradation: None,
        outcome: "completed",
        notes: String::new(),
    }
}

fn runs() -> Vec<RunPlan> {
    vec![
        RunPlan {
            notes: "Idle on the battery. Coil too hot to touch after three minutes.".into(),
            ..session("r1", 23.3, "Kwame")
        },
        RunPlan {
            load: "ferrous",
            workpiece: nail(110.0, 45.0, 60.0),
            duration_s: 120.0,
            outcome: "stopped",
            notes: "A 4 mm steel nail glowed orange; stopped by hand.".into(),
            ..session("r1", 23.2, "Kwame")
        },
        RunPlan {
            notes: "Idle after the rewind: coil stays warm, not hot.".into(),
            ..session("r2", 17.4, "Lotte")
        },
        RunPlan {
            load: "ferrous",
            workpiece: nail(120.0, 40.0, 70.0),
            duration_s: 120.0,
            notes: "M6 steel washer to red in about 40 s; a good show piece.".into(),
            ..session("r2", 17.3, "Lotte")
        },
    ]
}

pub fn build() -> BuildPlan {
    BuildPlan {
        name: "Open-day heater",
        slug: "open-day-heater",
        purpose: "Small 12 V heater to show induction heating at the makerspace open day: a steel \
                  nail or washer to glowing in under a minute.",
        notes: "Runs from a 12 V lead-acid battery so it can sit on a table away from the mains. \
                One thermocouple finds the hottest capacitor.",
        revisions: vec![
            RevisionPlan {
                label: "r1",
                parts: r1_parts(),
                notes: "Four polypropylene units and a 6-turn coil of 2 mm enamelled wire.",
                bench: r1_bench(),
            },
            RevisionPlan {
                label: "r2",
                parts: r2_parts(),
                notes: "Coil rewound in 4 mm bare wire, two more capacitor units.",
                bench: r2_bench(),
            },
        ],
        runs: runs(),
    }
}
