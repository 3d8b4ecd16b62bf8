use super::*;
use crate::analysis::flags::Severity;
use crate::analysis::run_flags::merge_flags;
use crate::analysis::thermal_fit::first_order_temperature_c;
use crate::parts::{Supply, Switch, TankCapacitor};

fn cap(max_temp_c: Option<f64>) -> TankCapacitor {
    TankCapacitor {
        label: None,
        capacitance_f: 0.33e-6,
        count: 6,
        dissipation_factor: Some(5e-4),
        esr_ohm: None,
        voltage_rating_vrms: None,
        current_rating_arms: None,
        max_temp_c,
        self_heating_limit_k: None,
    }
}

fn parts() -> Parts {
    Parts {
        tank_capacitor: Some(cap(Some(85.0))),
        switch: Some(Switch {
            tj_max_c: Some(150.0),
            rth_jc_k_per_w: Some(0.8),
            ..Switch::default()
        }),
        ..Parts::default()
    }
}

fn input<'a>(parts: &'a Parts, readings: &'a [Reading]) -> RunInput<'a> {
    RunInput {
        parts,
        readings,
        supply_setting_v: Some(24.0),
        supply_current_limit_a: None,
        load: Load::None,
        water_mass_kg: None,
        vessel_heat_capacity_j_per_k: None,
        idle_reference: None,
    }
}

const CAP1: Channel = Channel::PartTemp {
    role: Role::TankCapacitor,
    index: Some(1),
};

/// 200 s of a running driver, a reading every 10 s: 24 V, `current_a`, 150 kHz, ambient 25 °C
/// and capacitor 1 following a first-order rise of `rise_k` with τ 100 s.
fn bench_run(current_a: f64, rise_k: f64) -> Vec<Reading> {
    let mut r = Vec::new();
    for k in 0..=20 {
        let t = 10.0 * k as f64;
        r.push(Reading::new(t, Channel::SupplyVoltage, 24.0));
        r.push(Reading::new(t, Channel::SupplyCurrent, current_a));
        r.push(Reading::new(t, Channel::Frequency, 150e3));
        r.push(Reading::new(t, Channel::AmbientTemp, 25.0));
        r.push(Reading::new(
            t,
            CAP1,
            first_order_temperature_c(25.0, 25.0 + rise_k, 100.0, t),
        ));
    }
    r
}

fn codes(analysis: &RunAnalysis) -> Vec<&'static str> {
    analysis.flags.iter().map(|f| f.code).collect()
}

#[test]
fn supply_limit_raised_at_the_limit() {
    let (p, r) = (parts(), bench_run(9.9, 30.0));
    let mut run = input(&p, &r);
    run.supply_current_limit_a = Some(10.0);
    // 9.9 A is within 2 % of 10 A.
    assert!(codes(&analyse_run(&run)).contains(&"supply-limit"));
}

#[test]
fn supply_limit_not_raised_below_it() {
    let (p, r) = (parts(), bench_run(8.0, 30.0));
    let mut run = input(&p, &r);
    run.supply_current_limit_a = Some(10.0);
    assert!(!codes(&analyse_run(&run)).contains(&"supply-limit"));
    // Without a configured limit there is nothing to compare with.
    run.supply_current_limit_a = None;
    assert!(!codes(&analyse_run(&run)).contains(&"supply-limit"));
}

#[test]
fn supply_limit_falls_back_to_the_revisions_supply() {
    let mut p = parts();
    p.supply = Some(Supply {
        current_limit_a: Some(10.0),
        ..Supply::default()
    });
    let r = bench_run(10.0, 30.0);
    assert!(codes(&analyse_run(&input(&p, &r))).contains(&"supply-limit"));
}

#[test]
fn no_oscillation_raised_without_frequency() {
    let p = parts();
    let r: Vec<Reading> = bench_run(6.0, 30.0)
        .into_iter()
        .filter(|x| x.channel != Channel::Frequency)
        .collect();
    let analysis = analyse_run(&input(&p, &r));
    let flag = analysis
        .flags
        .iter()
        .find(|f| f.code == "no-oscillation")
        .unwrap();
    assert_eq!(flag.severity, Severity::Warning);
    assert_eq!(analysis.flags[0].severity, Severity::Failure, "worst first");
}

#[test]
fn no_oscillation_not_raised_with_frequency_or_without_current() {
    let p = parts();
    let r = bench_run(6.0, 30.0);
    assert!(!codes(&analyse_run(&input(&p, &r))).contains(&"no-oscillation"));
    // 0.05 A of gate bias with no frequency is not a stalled driver.
    let idle: Vec<Reading> = bench_run(0.05, 5.0)
        .into_iter()
        .filter(|x| x.channel != Channel::Frequency)
        .collect();
    assert!(!codes(&analyse_run(&input(&p, &idle))).contains(&"no-oscillation"));
}

#[test]
fn time_to_limit_raised_when_the_fit_crosses_soon() {
    // Derived: rise 67 K, τ 100 s → 82.93 °C at 200 s (below 85 °C); 85 °C at
    // −100·ln(1 − 60/67) = 100·ln(67/7) = 225.88 s, within 200 s + 60 s.
    let (p, r) = (parts(), bench_run(8.0, 67.0));
    let analysis = analyse_run(&input(&p, &r));
    let cap = &analysis.thermal[0];
    assert!(cap.fit.as_ref().unwrap().is_trusted());
    assert!(
        (cap.time_to_limit_s.unwrap() - 225.88).abs() < 0.01,
        "{:?}",
        cap.time_to_limit_s
    );
    assert!((cap.predicted_margin_k.unwrap() - (85.0 - 92.0)).abs() < 1e-3);
    let flag = analysis
        .flags
        .iter()
        .find(|f| f.code == "time-to-limit")
        .unwrap();
    assert_eq!(flag.severity, Severity::Warning);
    assert_eq!(flag.part, Some(Role::TankCapacitor));
}

#[test]
fn time_to_limit_not_raised_when_the_steady_state_is_below_the_limit() {
    // Rise 40 K → steady state 65 °C, 20 K under the 85 °C rating: never reaches it.
    let (p, r) = (parts(), bench_run(8.0, 40.0));
    let analysis = analyse_run(&input(&p, &r));
    assert_eq!(analysis.thermal[0].time_to_limit_s, None);
    assert!((analysis.thermal[0].predicted_margin_k.unwrap() - 20.0).abs() < 1e-3);
    assert!(!codes(&analysis).contains(&"time-to-limit"));
    assert!(!codes(&analysis).contains(&"cap-overtemp"));
}

#[test]
fn time_to_limit_far_beyond_the_run_is_only_a_note() {
    // Rise 62 K: 85 °C at −100·ln(1 − 60/62) = 100·ln 31 = 343.4 s, beyond 260 s.
    let (p, r) = (parts(), bench_run(8.0, 62.0));
    let flag = analyse_run(&input(&p, &r))
        .flags
        .into_iter()
        .find(|f| f.code == "time-to-limit")
        .unwrap();
    assert_eq!(flag.severity, Severity::Note);
}

#[test]
fn cap_overtemp_once_per_part_keeping_the_worst() {
    let p = parts();
    let cap2 = Channel::PartTemp {
        role: Role::TankCapacitor,
        index: Some(2),
    };
    let mut r = bench_run(8.0, 30.0);
    // Unit 1 stays at 55 °C (no flag); unit 2 reaches 80 °C (warning) and then 88 °C (failure).
    r.push(Reading::new(100.0, cap2, 80.0));
    r.push(Reading::new(200.0, cap2, 88.0));
    let analysis = analyse_run(&input(&p, &r));
    let caps: Vec<_> = analysis
        .flags
        .iter()
        .filter(|f| f.code == "cap-overtemp")
        .collect();
    assert_eq!(caps.len(), 1);
    assert_eq!(caps[0].severity, Severity::Failure);
    assert!(caps[0].message.contains("Tank capacitor 2"));
}

#[test]
fn the_overtemp_flag_names_the_unit_that_went_furthest() {
    // Units 2 and 3 both pass the 85 °C rating; unit 3 is the hotter (105.7 against 105.6 °C)
    // and the one the flag must name, whatever order the channels are listed in.
    let p = parts();
    let unit = |index| Channel::PartTemp {
        role: Role::TankCapacitor,
        index: Some(index),
    };
    let mut r = bench_run(8.0, 30.0);
    r.push(Reading::new(200.0, unit(2), 105.6));
    r.push(Reading::new(200.0, unit(3), 105.7));
    let analysis = analyse_run(&input(&p, &r));
    let flag = analysis
        .flags
        .iter()
        .find(|f| f.code == "cap-overtemp")
        .unwrap();
    assert_eq!(flag.severity, Severity::Failure);
    assert!(
        flag.message.contains("Tank capacitor 3"),
        "{}",
        flag.message
    );
    assert!(flag.message.contains("105.7"), "{}", flag.message);
}

#[test]
fn merge_keeps_the_worst_per_code_and_part_and_sorts() {
    let flag = |code, severity, part| Flag {
        code,
        severity,
        part,
        message: String::new(),
        source: "test",
    };
    let merged = merge_flags(vec![
        flag("cap-overtemp", Severity::Warning, Some(Role::TankCapacitor)),
        flag("x", Severity::Note, None),
        flag("cap-overtemp", Severity::Failure, Some(Role::TankCapacitor)),
        flag("cap-overtemp", Severity::Note, Some(Role::TankCapacitor)),
        flag("x", Severity::Note, Some(Role::Switch)),
    ]);
    let got: Vec<_> = merged
        .iter()
        .map(|f| (f.code, f.severity, f.part))
        .collect();
    assert_eq!(
        got,
        vec![
            ("cap-overtemp", Severity::Failure, Some(Role::TankCapacitor)),
            ("x", Severity::Note, None),
            ("x", Severity::Note, Some(Role::Switch)),
        ]
    );
}

#[test]
fn switch_limit_is_the_case_temperature_at_this_loss() {
    // Derived: tj_max 150 °C − 2.817 W·0.8 K/W = 147.746 °C for the case.
    let sw = Channel::PartTemp {
        role: Role::Switch,
        index: None,
    };
    let samples = [(0.0, 30.0), (60.0, 50.0), (120.0, 60.0), (180.0, 65.0)];
    let result = thermal_result(&parts(), sw, &samples, Some(2.817)).unwrap();
    assert!((result.limit_c.unwrap() - 147.7464).abs() < 1e-9);
    assert!((result.margin_k.unwrap() - 82.7464).abs() < 1e-9);
    assert_eq!(result.limit_basis, Some(LimitBasis::SwitchCaseAtLoss));
    // Unknown loss: tj_max itself.
    let unknown = thermal_result(&parts(), sw, &samples, None).unwrap();
    assert_eq!(unknown.limit_c, Some(150.0));
}

#[test]
fn an_unrated_capacitor_is_judged_at_85_c_and_says_so() {
    let p = Parts {
        tank_capacitor: Some(cap(None)),
        ..Parts::default()
    };
    let r = bench_run(8.0, 30.0);
    let analysis = analyse_run(&input(&p, &r));
    assert_eq!(analysis.thermal[0].limit_c, Some(85.0));
    assert!(codes(&analysis).contains(&"cap-limit-assumed"));
}

#[test]
fn untrusted_fit_gives_no_prediction() {
    let samples = [(0.0, 30.0), (60.0, 50.0), (120.0, 60.0)];
    let result = thermal_result(&parts(), CAP1, &samples, None).unwrap();
    assert!(result.fit.is_some());
    assert_eq!(result.predicted_margin_k, None);
    assert_eq!(result.time_to_limit_s, None);
    assert_eq!(result.t_max_c, 60.0);
}

#[test]
fn water_run_has_a_calorimetric_efficiency() {
    // IAPWS-95 c_p [published]: 1.000 kg, 20 → 30 °C in 120 s at 24 V × 20 A
    // → 348.4 W, 72.6 %.
    let p = parts();
    let mut r = Vec::new();
    for k in 0..=4 {
        let t = 30.0 * k as f64;
        r.push(Reading::new(t, Channel::SupplyVoltage, 24.0));
        r.push(Reading::new(t, Channel::SupplyCurrent, 20.0));
        r.push(Reading::new(t, Channel::WaterTemp, 20.0 + t / 12.0));
    }
    let mut run = input(&p, &r);
    run.load = Load::Water;
    run.water_mass_kg = Some(1.0);
    let eff = analyse_run(&run).efficiency;
    assert!((eff.calorimetric.unwrap() - 0.726).abs() < 0.0005);
    assert_eq!(eff.differential, None);
    // Without the mass there is no calorimetry.
    run.water_mass_kg = None;
    assert_eq!(analyse_run(&run).efficiency.calorimetric, None);
}

#[test]
fn loaded_run_has_a_differential_efficiency() {
    // Hand-worked, as in efficiency.rs: 24 V × 10 A against idle 23 V × 2.3 A → 0.76.
    let p = parts();
    let r = bench_run(10.0, 30.0);
    let mut run = input(&p, &r);
    run.load = Load::Ferrous;
    run.idle_reference = Some(IdleReference {
        supply_voltage_v: 23.0,
        supply_current_a: 2.3,
    });
    assert!((analyse_run(&run).efficiency.differential.unwrap() - 0.76).abs() < 1e-9);
    run.load = Load::None;
    assert_eq!(analyse_run(&run).efficiency.differential, None);
}

#[test]
fn json_shape() {
    let (p, r) = (parts(), bench_run(8.0, 67.0));
    let json = serde_json::to_value(analyse_run(&input(&p, &r))).unwrap();
    let thermal = &json["thermal"][0];
    assert_eq!(thermal["channel"], "temp.tank_capacitor.1");
    assert_eq!(thermal["part"], "tank_capacitor");
    for key in [
        "t_max_c",
        "limit_c",
        "margin_k",
        "predicted_margin_k",
        "time_to_limit_s",
    ] {
        assert!(thermal[key].is_number(), "{key}");
    }
    assert_eq!(thermal["fit"]["trustworthy"], true);
    for key in ["calorimetric", "differential", "model"] {
        assert!(json["efficiency"].get(key).is_some(), "{key}");
    }
    assert_eq!(json["duration_s"], 200.0);
    let severities: Vec<&str> = json["flags"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f["severity"].as_str().unwrap())
        .collect();
    let rank = |s: &str| {
        ["note", "warning", "failure"]
            .iter()
            .position(|k| *k == s)
            .unwrap()
    };
    assert!(!severities.is_empty());
    assert!(
        severities.windows(2).all(|w| rank(w[0]) >= rank(w[1])),
        "worst first: {severities:?}"
    );
    assert_eq!(
        serde_json::to_value(Load::NonFerrous).unwrap(),
        "non_ferrous"
    );
}

#[test]
fn empty_run_is_analysed_without_panicking() {
    let p = parts();
    let mut run = input(&p, &[]);
    run.supply_setting_v = None;
    let analysis = analyse_run(&run);
    assert!(analysis.operating_point.is_none() && analysis.model.is_none());
    assert!(analysis.thermal.is_empty() && analysis.flags.is_empty());
    assert_eq!(analysis.duration_s, None);
}

#[test]
fn an_idle_run_has_no_efficiency_by_any_method() {
    // The model's loss budget of an idle run (about 30 % in the demo) is no efficiency: with
    // nothing to heat, every watt is loss. It must not sit among loaded runs in charts.
    let p = parts();
    let r = bench_run(2.0, 10.0);
    let mut run = input(&p, &r);
    assert_eq!(run.load, Load::None);
    assert_eq!(run_efficiency(&run, None, Some(0.3)).model, None);
    run.load = Load::Ferrous;
    assert_eq!(run_efficiency(&run, None, Some(0.3)).model, Some(0.3));
}
