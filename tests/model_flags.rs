//! One test per flag code at its threshold edges, just below and just above.

mod common;

use common::{at, at_current, choke, gate_resistor, reference_tank};
use eddybench::analysis::{Flag, OperatingPoint, Severity, evaluate};
use eddybench::parts::{GateClamp, GateResistor, Parts, Role, Switch, TankCapacitor};

/// The severity of the flag with `code`, if raised (at most once per code here).
fn severity_of(parts: &Parts, op: &OperatingPoint, code: &str) -> Option<Severity> {
    let report = evaluate(parts, op);
    let found: Vec<&Flag> = report.flags.iter().filter(|f| f.code == code).collect();
    assert!(found.len() <= 1, "{code} raised twice: {found:?}");
    found.first().map(|f| f.severity)
}

fn message_of(parts: &Parts, op: &OperatingPoint, code: &str) -> String {
    let report = evaluate(parts, op);
    report
        .flags
        .into_iter()
        .find(|f| f.code == code)
        .expect(code)
        .message
}

fn with_capacitor(cap: TankCapacitor) -> Parts {
    Parts {
        tank_capacitor: Some(cap),
        ..reference_tank()
    }
}

fn cap_at(temp_c: f64) -> OperatingPoint {
    let mut op = at(24.0);
    op.temperatures_c.tank_capacitor = Some(temp_c);
    op
}

#[test]
fn cap_overtemp_with_own_rating() {
    // The part's own 85 °C rating; warning band 10 K (common practice, no source).
    let parts = with_capacitor(TankCapacitor {
        max_temp_c: Some(85.0),
        ..common::capacitor(1e-6, 1)
    });
    assert_eq!(severity_of(&parts, &cap_at(74.9), "cap-overtemp"), None);
    assert_eq!(
        severity_of(&parts, &cap_at(75.1), "cap-overtemp"),
        Some(Severity::Warning)
    );
    assert_eq!(
        severity_of(&parts, &cap_at(84.9), "cap-overtemp"),
        Some(Severity::Warning)
    );
    assert_eq!(
        severity_of(&parts, &cap_at(85.0), "cap-overtemp"),
        Some(Severity::Failure)
    );
    let message = message_of(&parts, &cap_at(83.0), "cap-overtemp");
    assert_eq!(
        message,
        "Tank capacitor at 83.0 °C is within 10 K of its 85 °C rating"
    );
}

#[test]
fn cap_overtemp_default_rating_says_so() {
    // Film capacitor datasheet practice: usually rated 85 °C, when the part gives none.
    let parts = reference_tank();
    assert_eq!(severity_of(&parts, &cap_at(74.9), "cap-overtemp"), None);
    assert_eq!(
        severity_of(&parts, &cap_at(85.1), "cap-overtemp"),
        Some(Severity::Failure)
    );
    let report = evaluate(&parts, &cap_at(80.0));
    let flag = report
        .flags
        .iter()
        .find(|f| f.code == "cap-overtemp")
        .unwrap();
    assert!(flag.message.contains("usual rating"), "{}", flag.message);
    assert!(
        flag.source.contains("usually rated 85 °C"),
        "{}",
        flag.source
    );
    assert_eq!(flag.part, Some(Role::TankCapacitor));
}

#[test]
fn cap_self_heating() {
    // One maker's published notes keep polyester within about 10 K; ambient 25 °C.
    let parts = reference_tank();
    assert_eq!(severity_of(&parts, &cap_at(34.9), "cap-self-heating"), None);
    assert_eq!(
        severity_of(&parts, &cap_at(35.1), "cap-self-heating"),
        Some(Severity::Warning)
    );
    let own = with_capacitor(TankCapacitor {
        self_heating_limit_k: Some(5.0),
        ..common::capacitor(1e-6, 1)
    });
    let mut op = cap_at(35.1);
    op.ambient_c = Some(30.0);
    assert_eq!(
        severity_of(&own, &op, "cap-self-heating"),
        Some(Severity::Warning)
    );
    op.ambient_c = Some(30.2);
    assert_eq!(severity_of(&own, &op, "cap-self-heating"), None);
}

#[test]
fn cap_current() {
    // At 24 V the example tank's single unit carries 53.315 A rms (derived); warning above 80 %.
    let rated = |rating_a| {
        with_capacitor(TankCapacitor {
            current_rating_arms: Some(rating_a),
            ..common::capacitor(1e-6, 1)
        })
    };
    let op = at(24.0);
    assert_eq!(
        severity_of(&rated(53.2), &op, "cap-current"),
        Some(Severity::Failure)
    );
    assert_eq!(
        severity_of(&rated(53.4), &op, "cap-current"),
        Some(Severity::Warning)
    );
    assert_eq!(
        severity_of(&rated(66.6), &op, "cap-current"),
        Some(Severity::Warning)
    );
    assert_eq!(severity_of(&rated(66.7), &op, "cap-current"), None);
}

#[test]
fn cap_voltage_with_derating() {
    // Vrms 53.315 V at 24 V (derived); warning above 90 %; rating derated 1.25 %/K above 85 °C
    // (film capacitor datasheet practice).
    let rated = |rating_v| {
        with_capacitor(TankCapacitor {
            voltage_rating_vrms: Some(rating_v),
            max_temp_c: Some(105.0),
            ..common::capacitor(1e-6, 1)
        })
    };
    let op = at(24.0);
    assert_eq!(
        severity_of(&rated(53.3), &op, "cap-voltage"),
        Some(Severity::Failure)
    );
    assert_eq!(
        severity_of(&rated(53.4), &op, "cap-voltage"),
        Some(Severity::Warning)
    );
    assert_eq!(
        severity_of(&rated(59.2), &op, "cap-voltage"),
        Some(Severity::Warning)
    );
    assert_eq!(severity_of(&rated(59.3), &op, "cap-voltage"), None);
    // 70 V rms at 95 °C is derated by 12.5 % to 61.25 V: 87 % of it, no flag; at 99 °C it is
    // 57.75 V: 92 %, a warning.
    assert_eq!(
        severity_of(&rated(70.0), &cap_at(85.0), "cap-voltage"),
        None
    );
    assert_eq!(
        severity_of(&rated(70.0), &cap_at(95.0), "cap-voltage"),
        None
    );
    assert_eq!(
        severity_of(&rated(70.0), &cap_at(99.0), "cap-voltage"),
        Some(Severity::Warning)
    );
    assert_eq!(
        severity_of(&rated(60.0), &cap_at(95.0), "cap-voltage"),
        Some(Severity::Failure)
    );
}

#[test]
fn cap_drift() {
    // Inferred C = C·(f0/f)² for the example tank (derived); 5 % warning, 10 % failure (common
    // practice, no source).
    let f0 = 1.0 / (2.0 * std::f64::consts::PI * 1e-6);
    let measured = |relative_c: f64| {
        let mut op = at(24.0);
        op.frequency_hz = Some(f0 / relative_c.sqrt());
        op
    };
    let parts = reference_tank();
    assert_eq!(severity_of(&parts, &measured(1.049), "cap-drift"), None);
    assert_eq!(
        severity_of(&parts, &measured(1.051), "cap-drift"),
        Some(Severity::Warning)
    );
    assert_eq!(severity_of(&parts, &measured(0.951), "cap-drift"), None);
    assert_eq!(
        severity_of(&parts, &measured(0.949), "cap-drift"),
        Some(Severity::Warning)
    );
    assert_eq!(
        severity_of(&parts, &measured(1.099), "cap-drift"),
        Some(Severity::Warning)
    );
    assert_eq!(
        severity_of(&parts, &measured(1.101), "cap-drift"),
        Some(Severity::Failure)
    );
    assert_eq!(
        severity_of(&parts, &measured(0.899), "cap-drift"),
        Some(Severity::Failure)
    );
    let message = message_of(&parts, &measured(0.88), "cap-drift");
    assert!(
        message.contains("12.0\u{a0}% below the nominal 1\u{a0}µF"),
        "{message}"
    );
}

fn switch_rated(vds_max_v: f64) -> Parts {
    Parts {
        switch: Some(Switch {
            vds_max_v: Some(vds_max_v),
            vgs_max_v: Some(30.0),
            ..Switch::default()
        }),
        ..Parts::default()
    }
}

#[test]
fn switch_voltage_55_v_part_caps_the_supply_near_16_v() {
    // Rule of thumb (common practice, no source): π·Vin against 55 V fails just
    // above 17.5 V and warns from 14 V (80 %).
    let parts = switch_rated(55.0);
    assert_eq!(severity_of(&parts, &at(13.9), "switch-voltage"), None);
    assert_eq!(
        severity_of(&parts, &at(14.1), "switch-voltage"),
        Some(Severity::Warning)
    );
    assert_eq!(
        severity_of(&parts, &at(16.0), "switch-voltage"),
        Some(Severity::Warning)
    );
    assert_eq!(
        severity_of(&parts, &at(17.4), "switch-voltage"),
        Some(Severity::Warning)
    );
    assert_eq!(
        severity_of(&parts, &at(17.6), "switch-voltage"),
        Some(Severity::Failure)
    );
    assert_eq!(
        severity_of(&parts, &at(18.0), "switch-voltage"),
        Some(Severity::Failure)
    );
}

fn switch_case_at(tj_max_c: Option<f64>, case_c: f64) -> (Parts, OperatingPoint) {
    let parts = Parts {
        switch: Some(Switch {
            tj_max_c,
            ..Switch::default()
        }),
        ..Parts::default()
    };
    let mut op = at(12.0);
    op.temperatures_c.switch = Some(case_c);
    (parts, op)
}

#[test]
fn switch_overtemp_edges() {
    // Without R_thJC the junction is the case; warning within 25 K (common practice, no source).
    for (case_c, expected) in [
        (149.9, None),
        (150.1, Some(Severity::Warning)),
        (175.0, Some(Severity::Warning)),
        (175.1, Some(Severity::Failure)),
    ] {
        let (parts, op) = switch_case_at(Some(175.0), case_c);
        assert_eq!(
            severity_of(&parts, &op, "switch-overtemp"),
            expected,
            "{case_c} °C"
        );
    }
    // 150 °C when the part gives none: a common default, no source, and the message says so.
    let (parts, op) = switch_case_at(None, 124.9);
    assert_eq!(severity_of(&parts, &op, "switch-overtemp"), None);
    let (parts, op) = switch_case_at(None, 125.1);
    assert_eq!(
        severity_of(&parts, &op, "switch-overtemp"),
        Some(Severity::Warning)
    );
    assert!(message_of(&parts, &op, "switch-overtemp").contains("common default"));
}

#[test]
fn switch_overtemp_runaway() {
    // Derived: 40 A through 40 mΩ loses 32 W per switch at 25 °C; into 2 K/W
    // from a 60 °C case, with +1 %/K, T_j = T_c + P(T_j)·R_th has no fixed point at all.
    let parts = Parts {
        switch: Some(Switch {
            rds_on_ohm: Some(0.040),
            rds_tempco_pct_per_k: Some(1.0),
            rth_jc_k_per_w: Some(2.0),
            ..Switch::default()
        }),
        ..Parts::default()
    };
    let mut op = at_current(12.0, 40.0);
    op.temperatures_c.switch = Some(60.0);
    let report = evaluate(&parts, &op);
    assert!(report.switch_thermal_runaway);
    assert_eq!(report.switch_junction_temp_c, None);
    assert_eq!(
        severity_of(&parts, &op, "switch-overtemp"),
        Some(Severity::Failure)
    );
    assert!(message_of(&parts, &op, "switch-overtemp").contains("runaway"));
    // A tenth of the current settles: 0.32 W into 2 K/W over the case.
    let settled = evaluate(&parts, &at_current(12.0, 4.0));
    assert!(!settled.switch_thermal_runaway);
}

fn gate_parts(vgs_max_v: Option<f64>, zener_v: Option<f64>) -> Parts {
    Parts {
        switch: Some(Switch {
            vgs_max_v,
            ..Switch::default()
        }),
        gate_clamp: zener_v.map(|zener_voltage_v| GateClamp {
            label: None,
            zener_voltage_v,
        }),
        ..Parts::default()
    }
}

#[test]
fn gate_overvoltage() {
    // V_GS,max typically 20 V (common practice) when the part gives none.
    let unclamped = gate_parts(None, None);
    assert_eq!(severity_of(&unclamped, &at(20.0), "gate-overvoltage"), None);
    assert_eq!(
        severity_of(&unclamped, &at(20.1), "gate-overvoltage"),
        Some(Severity::Failure)
    );
    let own = gate_parts(Some(30.0), None);
    assert_eq!(severity_of(&own, &at(24.0), "gate-overvoltage"), None);
    let clamped = gate_parts(None, Some(19.9));
    assert_eq!(severity_of(&clamped, &at(24.0), "gate-overvoltage"), None);
    let clamp_too_high = gate_parts(None, Some(20.0));
    assert_eq!(
        severity_of(&clamp_too_high, &at(24.0), "gate-overvoltage"),
        Some(Severity::Failure)
    );
}

#[test]
fn gate_resistor_power() {
    // Derived, no clamp: (24 − 0.7)²/(2·470) = 0.57755 W; warning above half
    // the rating (common practice, no source).
    let rated = |rating_w| Parts {
        gate_resistor: Some(GateResistor {
            power_rating_w: Some(rating_w),
            ..gate_resistor(470.0)
        }),
        ..Parts::default()
    };
    let op = at(24.0);
    assert_eq!(
        severity_of(&rated(0.577), &op, "gate-resistor-power"),
        Some(Severity::Failure)
    );
    assert_eq!(
        severity_of(&rated(0.578), &op, "gate-resistor-power"),
        Some(Severity::Warning)
    );
    assert_eq!(
        severity_of(&rated(1.155), &op, "gate-resistor-power"),
        Some(Severity::Warning)
    );
    assert_eq!(
        severity_of(&rated(1.1552), &op, "gate-resistor-power"),
        None
    );
}

#[test]
fn choke_saturation() {
    // Derived: 47 µH at 159.15 kHz and 24 V ripples 1.768 A pp, so at 10 A
    // each of two chokes peaks at 5 + 0.884 = 5.884 A; warning above 80 % (common practice).
    let rated = |saturation_a| Parts {
        choke: Some(eddybench::parts::Choke {
            saturation_current_a: Some(saturation_a),
            ..choke(47e-6)
        }),
        ..reference_tank()
    };
    let mut op = at_current(24.0, 10.0);
    op.frequency_hz = Some(159.15e3);
    assert_eq!(
        severity_of(&rated(5.88), &op, "choke-saturation"),
        Some(Severity::Failure)
    );
    assert_eq!(
        severity_of(&rated(5.89), &op, "choke-saturation"),
        Some(Severity::Warning)
    );
    assert_eq!(
        severity_of(&rated(7.35), &op, "choke-saturation"),
        Some(Severity::Warning)
    );
    assert_eq!(severity_of(&rated(7.36), &op, "choke-saturation"), None);
}

#[test]
fn choke_ratio() {
    // Common practice: keep the choke at least 10× the coil's reactance; at
    // one frequency the ratio is L_ch/L (derived).
    let with_choke = |l_h| Parts {
        choke: Some(choke(l_h)),
        ..reference_tank()
    };
    assert_eq!(
        severity_of(&with_choke(9.9e-6), &at(12.0), "choke-ratio"),
        Some(Severity::Warning)
    );
    assert_eq!(
        severity_of(&with_choke(10.1e-6), &at(12.0), "choke-ratio"),
        None
    );
}

#[test]
fn flags_are_sorted_worst_first_and_serialize_by_role_key() {
    let mut parts = switch_rated(55.0);
    parts.tank_capacitor = Some(common::capacitor(1e-6, 1));
    parts.work_coil = Some(common::coil_of(1e-6));
    let mut op = at(18.0);
    op.temperatures_c.tank_capacitor = Some(80.0);
    let report = evaluate(&parts, &op);
    assert!(report.flags.len() >= 2, "{:?}", report.flags);
    assert!(
        report
            .flags
            .windows(2)
            .all(|w| w[0].severity >= w[1].severity)
    );
    let json = serde_json::to_value(&report).unwrap();
    assert_eq!(json["flags"][0]["severity"], "failure");
    assert_eq!(json["flags"][0]["part"], "switch");
    assert!(json["switch_junction_temp_c"].is_number());
    assert!(json["choke_reactance_ohm"].is_null());
}

#[test]
fn every_rule_has_a_practitioners_title() {
    use eddybench::analysis::flags::{RULE_CODES, flag_title};
    for code in RULE_CODES {
        assert_ne!(flag_title(code), "Finding", "{code} has no title");
    }
    assert_eq!(flag_title("no-such-rule"), "Finding");
}
