//! Build 1, the main story: a makerspace tool-room heater for brazing and hardening.
//!
//! r1 a small polyester bank that cooks; r2 polypropylene, more units, cool bank but a hot coil;
//! r3 bigger chokes and a water-cooled tube coil; r4 a 36 V supply with 150 V switches, where the
//! bank now runs above its current rating and one unit slowly loses capacitance.
//!
//! Assumed thermal paths (ΔT_ss = loss × K/W), from the size of each part in still air:
//! PET 0.22 µF box 25 K/W (τ 180 s), PP 0.33 µF box 20 K/W (τ 300 s), the middle of a bank 20–25 %
//! more; switch tab on an extruded sink 2.0 K/W (τ 240 s), on the larger r4 sink 1.4 K/W (τ 300 s);
//! 47 µH toroid 18 K/W (τ 300 s), 100 µH toroid 12 K/W (τ 500 s); 4 mm bare-wire coil 3.5 K/W
//! (τ 150 s), water-cooled tube coil 0.12 K/W (τ 20 s).

use crate::parts::{
    Choke, Conductor, GateClamp, GateResistor, OtherPart, Parts, Supply, Switch, TankCapacitor,
};

use super::plan::{BenchSetup, BuildPlan, RevisionPlan, ThermalPath, measured_coil};
use super::workshop_runs::runs;

/// The 0–30 V bench supply and the 36 V one both limit at 30 A.
pub(super) const BENCH_SUPPLY_LIMIT_A: f64 = 30.0;

fn other(label: &str, quantity: u32) -> OtherPart {
    OtherPart {
        label: label.into(),
        quantity,
        max_temp_c: None,
    }
}

fn r1_parts() -> Parts {
    Parts {
        tank_capacitor: Some(TankCapacitor {
            label: Some("polyester (PET) film, 0.22 µF, 400 V DC, boxed".into()),
            capacitance_f: 0.22e-6,
            count: 4,
            dissipation_factor: Some(1.0e-2),
            esr_ohm: None,
            voltage_rating_vrms: Some(160.0),
            current_rating_arms: Some(3.5),
            max_temp_c: Some(105.0),
            self_heating_limit_k: Some(10.0),
        }),
        work_coil: Some(measured_coil(
            "8-turn coil, 4 mm bare copper wire",
            8.0,
            0.035,
            0.045,
            0.10,
            Conductor::Round {
                diameter_m: Some(0.004),
                awg: None,
            },
            Some(250.0),
        )),
        choke: Some(Choke {
            label: Some("47 µH powdered-iron toroid, 1.5 mm enamelled wire".into()),
            inductance_h: 47e-6,
            count: 2,
            dcr_ohm: Some(0.015),
            saturation_current_a: Some(10.0),
            max_temp_c: Some(125.0),
        }),
        switch: Some(Switch {
            label: Some("100 V N-channel MOSFET, TO-247".into()),
            vds_max_v: Some(100.0),
            rds_on_ohm: Some(0.009),
            rds_tempco_pct_per_k: Some(0.6),
            tj_max_c: Some(175.0),
            rth_jc_k_per_w: Some(0.6),
            vgs_max_v: Some(20.0),
        }),
        gate_resistor: Some(GateResistor {
            label: Some("470 Ω, 2 W metal film".into()),
            resistance_ohm: 470.0,
            power_rating_w: Some(2.0),
            max_temp_c: Some(155.0),
        }),
        gate_clamp: Some(GateClamp {
            label: Some("12 V zener, 1.3 W".into()),
            zener_voltage_v: 12.0,
        }),
        supply: Some(Supply {
            label: Some("bench supply, 0–30 V, 30 A".into()),
            nominal_voltage_v: Some(24.0),
            current_limit_a: Some(BENCH_SUPPLY_LIMIT_A),
        }),
        other: vec![
            other("ultrafast diode, 1 A, 200 V (cross-coupled gate diodes)", 2),
            other("extruded aluminium heat sink, 100 mm, one per switch", 2),
        ],
    }
}

fn r2_parts() -> Parts {
    Parts {
        tank_capacitor: Some(TankCapacitor {
            label: Some("polypropylene film, 0.33 µF, 1000 V DC, boxed".into()),
            capacitance_f: 0.33e-6,
            count: 6,
            dissipation_factor: Some(5e-4),
            esr_ohm: None,
            voltage_rating_vrms: Some(300.0),
            current_rating_arms: Some(12.0),
            max_temp_c: Some(105.0),
            self_heating_limit_k: Some(5.0),
        }),
        ..r1_parts()
    }
}

fn r3_parts() -> Parts {
    let mut parts = Parts {
        work_coil: Some(measured_coil(
            "5-turn coil, 6 mm copper tube, water-cooled",
            5.0,
            0.060,
            0.050,
            0.15,
            Conductor::Tube {
                outer_diameter_m: 0.006,
                wall_m: 0.001,
            },
            Some(100.0),
        )),
        choke: Some(Choke {
            label: Some("100 µH powdered-iron toroid, 2 mm enamelled wire".into()),
            inductance_h: 100e-6,
            count: 2,
            dcr_ohm: Some(0.018),
            saturation_current_a: Some(20.0),
            max_temp_c: Some(125.0),
        }),
        ..r2_parts()
    };
    parts
        .other
        .push(other("12 V pump and small radiator, coil cooling loop", 1));
    parts
}

fn r4_parts() -> Parts {
    let mut parts = Parts {
        switch: Some(Switch {
            label: Some("150 V N-channel MOSFET, TO-247".into()),
            vds_max_v: Some(150.0),
            rds_on_ohm: Some(0.011),
            rds_tempco_pct_per_k: Some(0.6),
            tj_max_c: Some(175.0),
            rth_jc_k_per_w: Some(0.45),
            vgs_max_v: Some(20.0),
        }),
        gate_resistor: Some(GateResistor {
            label: Some("680 Ω, 5 W wirewound".into()),
            resistance_ohm: 680.0,
            power_rating_w: Some(5.0),
            max_temp_c: Some(200.0),
        }),
        gate_clamp: Some(GateClamp {
            label: Some("15 V zener, 1.3 W".into()),
            zener_voltage_v: 15.0,
        }),
        supply: Some(Supply {
            label: Some("switch-mode supply, 36 V, 30 A".into()),
            nominal_voltage_v: Some(36.0),
            current_limit_a: Some(BENCH_SUPPLY_LIMIT_A),
        }),
        ..r3_parts()
    };
    parts.other[1] = other("extruded aluminium heat sink, 150 mm, one per switch", 2);
    parts
}

fn r1_bench() -> BenchSetup {
    BenchSetup {
        capacitor: ThermalPath {
            k_per_w: 25.0,
            tau_s: 180.0,
        },
        capacitor_middle_factor: 1.2,
        logged_capacitor_units: &[1, 2, 3, 4],
        switch_case: ThermalPath {
            k_per_w: 2.0,
            tau_s: 240.0,
        },
        switch_2_factor: 1.08,
        choke: ThermalPath {
            k_per_w: 18.0,
            tau_s: 300.0,
        },
        choke_core_loss_w: 0.4,
        coil: ThermalPath {
            k_per_w: 3.5,
            tau_s: 150.0,
        },
        coil_proximity_factor: 2.0,
        supply_sag_ohm: 0.03,
    }
}

fn r2_bench() -> BenchSetup {
    BenchSetup {
        capacitor: ThermalPath {
            k_per_w: 20.0,
            tau_s: 300.0,
        },
        capacitor_middle_factor: 1.25,
        logged_capacitor_units: &[1, 3, 4, 6],
        ..r1_bench()
    }
}

fn r3_bench() -> BenchSetup {
    BenchSetup {
        choke: ThermalPath {
            k_per_w: 12.0,
            tau_s: 500.0,
        },
        choke_core_loss_w: 0.6,
        coil: ThermalPath {
            k_per_w: 0.12,
            tau_s: 20.0,
        },
        // The tube turns are spaced by about a tube diameter.
        coil_proximity_factor: 1.5,
        ..r2_bench()
    }
}

fn r4_bench() -> BenchSetup {
    BenchSetup {
        switch_case: ThermalPath {
            k_per_w: 1.4,
            tau_s: 300.0,
        },
        supply_sag_ohm: 0.04,
        ..r3_bench()
    }
}

fn revisions() -> Vec<RevisionPlan> {
    vec![
        RevisionPlan {
            label: "r1",
            parts: r1_parts(),
            notes: "First build from the parts bin: four boxed polyester caps, an 8-turn coil of \
                    4 mm wire, 47 µH chokes.",
            bench: r1_bench(),
        },
        RevisionPlan {
            label: "r2",
            parts: r2_parts(),
            notes: "Bank rebuilt with six polypropylene units on a copper bus bar; same coil and \
                    chokes.",
            bench: r2_bench(),
        },
        RevisionPlan {
            label: "r3",
            parts: r3_parts(),
            notes: "100 µH chokes (the 47 µH ones ran near saturation loaded) and a water-cooled \
                    5-turn tube coil, 60 mm across, wide enough for the calorimeter cup.",
            bench: r3_bench(),
        },
        RevisionPlan {
            label: "r4",
            parts: r4_parts(),
            notes: "36 V supply for faster heats: 150 V switches, bigger heat sinks, 680 Ω 5 W gate \
                    resistors and 15 V clamps. Bank unchanged, so it now runs above its 12 A \
                    rating per unit.",
            bench: r4_bench(),
        },
    ]
}

pub fn build() -> BuildPlan {
    BuildPlan {
        name: "Tool-room heater",
        slug: "tool-room-heater",
        purpose: "Bench induction heater for brazing small fittings and hardening small \
                  tool-steel parts (punches, scribers).",
        notes: "Kiln Yard makerspace, tool room. Thermocouples taped to each logged capacitor \
                case, both switch tabs, a coil lead and one choke. 0–30 V 30 A bench supply for \
                r1–r3, a 36 V 30 A supply from r4.",
        revisions: revisions(),
        runs: runs(),
    }
}
