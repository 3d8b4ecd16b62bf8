//! The model against worked examples, each check naming its published source, and the
//! closed-form approximations against independent references computed here (elliptic integrals
//! for Nagaoka's coefficient, Kelvin-function series for the round wire).

mod common;

use std::f64::consts::PI;

use common::{assert_close, at, at_current, choke, gate_resistor, reference_tank};
use eddybench::analysis::evaluate;
use eddybench::parts::{GateClamp, Parts, Switch, TankCapacitor};
use eddybench::physics::{
    VACUUM_PERMEABILITY_H_PER_M, capacitor, choke as chokes, coil, copper, resonance, switch,
    thermal, water, wire_gauge,
};

#[test]
fn s1_resonance_and_characteristic_impedance() {
    // Any circuits textbook: 159 154.9 Hz and 1.000 Ω for 1 µH, 1 µF.
    assert_close(
        resonance::resonant_frequency_hz(1e-6, 1e-6),
        159_154.9,
        1e-6,
        "f0",
    );
    assert_close(
        resonance::characteristic_impedance_ohm(1e-6, 1e-6),
        1.000,
        1e-9,
        "Z0",
    );
    let report = evaluate(&reference_tank(), &at(24.0));
    assert_close(
        report.resonant_frequency_hz.unwrap(),
        159_154.9,
        1e-6,
        "f0 in the report",
    );
    assert_eq!(report.frequency_with_chokes_hz, None, "no choke given");
}

#[test]
fn s1_frequency_with_chokes() {
    // Derived: L‖47 µH with 1 µF gives 160 839 Hz.
    let parts = Parts {
        choke: Some(choke(47e-6)),
        ..reference_tank()
    };
    let report = evaluate(&parts, &at(24.0));
    assert_close(
        report.frequency_with_chokes_hz.unwrap(),
        160_839.0,
        3e-6,
        "f with chokes",
    );
    assert_eq!(
        report.operating_frequency_hz,
        report.frequency_with_chokes_hz
    );
}

#[test]
fn s2_driver_waveforms_and_circulating_power() {
    // Vin 24 V, L 1 µH, C 1 µF, Iin 10 A. Vp = π·Vin after Baxandall, Proc. IEE Part B, 1959,
    // and Kazimierczuk & Czarkowski, *Resonant Power Converters*, 2011; the rest derived.
    let report = evaluate(&reference_tank(), &at_current(24.0, 10.0));
    assert_close(report.tank_peak_voltage_v.unwrap(), 75.398, 1e-5, "Vp");
    assert_close(report.tank_rms_voltage_v.unwrap(), 53.315, 1e-5, "Vrms");
    assert_close(
        report.tank_rms_current_a.unwrap(),
        53.315,
        1e-5,
        "I_rms (derived)",
    );
    let f = report.operating_frequency_hz.unwrap();
    let peak_current_a = report.tank_peak_voltage_v.unwrap() / report.coil_reactance_ohm.unwrap();
    assert_close(peak_current_a, 75.398, 1e-5, "I_pk (derived)");
    assert_close(
        resonance::capacitor_current_a(report.tank_rms_voltage_v.unwrap(), f, 1e-6),
        53.315,
        1e-5,
        "I_C equals the coil current at resonance (derived)",
    );
    assert_close(
        report.reactive_power_var.unwrap(),
        2842.4,
        2e-5,
        "Q (derived)",
    );
    assert_close(
        report.input_power_w.unwrap(),
        240.0,
        1e-12,
        "P_in (derived)",
    );
    // Quoted to 5 figures: within half a unit of the last.
    assert!(
        (report.loaded_q.unwrap() - 11.844).abs() <= 5e-4,
        "Q_L (derived)"
    );
    let energy_j = resonance::stored_energy_j(1e-6, report.tank_peak_voltage_v.unwrap());
    assert_close(energy_j, 2.842e-3, 2e-4, "stored energy (derived)");
}

#[test]
fn s3_capacitor_loss_from_dissipation_factor() {
    // Textbook P = Q·tanδ: the tank above, tanδ 5·10⁻⁴ → 1.421 W.
    let mut parts = reference_tank();
    parts.tank_capacitor = Some(TankCapacitor {
        dissipation_factor: Some(5e-4),
        ..common::capacitor(1e-6, 1)
    });
    let report = evaluate(&parts, &at(24.0));
    assert_close(report.capacitor_loss_w.unwrap(), 1.421, 3e-4, "bank loss");
}

#[test]
fn s3_ten_units_share_the_current_and_the_loss() {
    // Ten equal units carry 5.331 A rms and 0.1421 W each (textbook).
    let mut parts = reference_tank();
    parts.tank_capacitor = Some(TankCapacitor {
        dissipation_factor: Some(5e-4),
        ..common::capacitor(0.1e-6, 10)
    });
    let report = evaluate(&parts, &at(24.0));
    assert_close(
        report.capacitor_rms_current_per_unit_a.unwrap(),
        5.331,
        1e-4,
        "per unit",
    );
    assert_close(
        report.capacitor_loss_w.unwrap() / 10.0,
        0.1421,
        3e-4,
        "loss per unit",
    );
}

#[test]
fn s3_the_same_loss_from_esr() {
    // Textbook: ESR = tanδ/(ω·C) gives the same 1.421 W as P = Q·tanδ.
    let f0 = 159_154.94;
    let esr = capacitor::esr_from_dissipation_factor_ohm(5e-4, f0, 0.1e-6);
    let mut parts = reference_tank();
    parts.tank_capacitor = Some(TankCapacitor {
        esr_ohm: Some(esr),
        ..common::capacitor(0.1e-6, 10)
    });
    let report = evaluate(&parts, &at(24.0));
    assert_close(
        report.capacitor_loss_w.unwrap(),
        1.421,
        3e-4,
        "bank loss from ESR",
    );
}

#[test]
fn s4_resistivity_at_20_c() {
    // IEC 60028 (published): 1/58 Ω·mm²/m.
    assert_close(
        copper::resistivity_ohm_m(20.0),
        1.0 / 58.0 * 1e-6,
        1e-4,
        "ρ20",
    );
}

#[test]
fn s4_skin_depth_of_copper() {
    // δ = √(ρ/(π·f·μ0)) at ρ20 of IEC 60028 (published).
    let rho = copper::resistivity_ohm_m(20.0);
    for (frequency_hz, expected_m) in [
        (50.0, 9.346e-3),
        (10e3, 0.6608e-3),
        (100e3, 0.2090e-3),
        (200e3, 0.1478e-3),
    ] {
        let delta = copper::skin_depth_m(rho, frequency_hz, 1.0);
        assert_close(delta, expected_m, 3e-4, &format!("δ at {frequency_hz} Hz"));
    }
    // With the CRC Handbook's 1.678·10⁻⁸ Ω·m, 0.2062 mm at 100 kHz.
    assert_close(
        copper::skin_depth_m(1.678e-8, 100e3, 1.0),
        0.2062e-3,
        3e-4,
        "δ CRC",
    );
}

/// ber, bei and their derivatives by their power series (Abramowitz & Stegun 9.9.10), summed
/// term by term with each term from the previous one.
fn kelvin(x: f64) -> (f64, f64, f64, f64) {
    let q = (x / 2.0).powi(2);
    let (mut ber, mut bei, mut dber, mut dbei) = (0.0, 0.0, 0.0, 0.0);
    let mut term = 1.0;
    for k in 0..100 {
        let k = f64::from(k);
        ber += term;
        dber += term * 4.0 * k / x;
        let odd = term * q / (2.0 * k + 1.0).powi(2);
        bei += odd;
        dbei += odd * (4.0 * k + 2.0) / x;
        term = -odd * q / (2.0 * k + 2.0).powi(2);
    }
    (ber, bei, dber, dbei)
}

/// Exact R_ac/R_dc of an isolated round wire: with x = √2·r/δ,
/// (x/2)·(ber·bei′ − bei·ber′)/(ber′² + bei′²) (Terman, *Radio Engineers' Handbook*, 1943).
fn bessel_ratio(radius_over_depth: f64) -> f64 {
    let x = std::f64::consts::SQRT_2 * radius_over_depth;
    let (ber, bei, dber, dbei) = kelvin(x);
    x / 2.0 * (ber * dbei - bei * dber) / (dber * dber + dbei * dbei)
}

fn annulus_ratio(radius_m: f64, depth_m: f64) -> f64 {
    let rho = copper::RESISTIVITY_20C_OHM_M;
    copper::round_wire_ac_resistance_ohm(rho, 1.0, radius_m, depth_m)
        / copper::round_wire_dc_resistance_ohm(rho, 1.0, radius_m)
}

#[test]
fn s4_awg_10_at_100_khz() {
    // AWG 10 at 100 kHz: Bessel 3.361 (Terman, not rechecked), annulus 3.368.
    let radius_m = wire_gauge::awg_diameter_m(10) / 2.0;
    let depth_m = copper::skin_depth_m(copper::resistivity_ohm_m(20.0), 100e3, 1.0);
    assert_close(
        annulus_ratio(radius_m, depth_m),
        3.368,
        3e-4,
        "annulus ratio",
    );
    assert_close(
        bessel_ratio(radius_m / depth_m),
        3.361,
        3e-4,
        "the test's Bessel series",
    );
    assert_close(
        annulus_ratio(radius_m, depth_m),
        3.361,
        3e-3,
        "annulus vs Bessel",
    );
}

#[test]
fn s4_annulus_within_a_few_percent_of_the_bessel_ratio() {
    // Common practice: the annulus form is within a few percent for r/δ ≥ 2; the
    // worst case, at r/δ = 2, is 5.4 %.
    let depth_m = 0.2e-3;
    for step in 0..=60 {
        let radius_over_depth = 2.0 + 0.1 * f64::from(step);
        let ratio = annulus_ratio(radius_over_depth * depth_m, depth_m);
        let exact = bessel_ratio(radius_over_depth);
        assert_close(ratio, exact, 0.06, &format!("r/δ = {radius_over_depth}"));
    }
}

#[test]
fn s5_wire_gauge_table() {
    // ASTM B258 (published), printed table rounded to 0.0001 in: within 0.0013 mm.
    for (gauge, diameter_mm) in [
        (8, 3.264),
        (10, 2.588),
        (12, 2.053),
        (14, 1.628),
        (16, 1.291),
        (18, 1.024),
        (20, 0.812),
        (22, 0.644),
        (24, 0.511),
    ] {
        let d_mm = wire_gauge::awg_diameter_m(gauge) * 1e3;
        assert!(
            (d_mm - diameter_mm).abs() <= 0.0013,
            "AWG {gauge}: {d_mm} mm"
        );
    }
}

#[test]
fn s6_wheeler_example() {
    // Wheeler, Proc. IRE 1928 (published): N 6, r 20 mm, ℓ 50 mm → 0.8337 µH.
    let l = coil::wheeler_inductance_h(6.0, 0.040, 0.050);
    assert_close(l, 0.8337e-6, 1e-4, "Wheeler");
}

/// Complete elliptic integrals K(k) and E(k) by the arithmetic-geometric mean
/// (Abramowitz & Stegun 17.6).
fn elliptic_k_e(k: f64) -> (f64, f64) {
    let (mut a, mut b) = (1.0f64, (1.0 - k * k).sqrt());
    let (mut weighted_sum, mut power) = (k * k / 2.0, 1.0);
    for _ in 0..64 {
        if (a - b).abs() <= 1e-16 * a {
            break;
        }
        let c = (a - b) / 2.0;
        (a, b) = ((a + b) / 2.0, (a * b).sqrt());
        power *= 2.0;
        weighted_sum += power * c * c / 2.0;
    }
    let k_integral = PI / (2.0 * a);
    (k_integral, k_integral * (1.0 - weighted_sum))
}

/// Nagaoka's coefficient of a current sheet of radius a and length ℓ:
/// K = 4/(3π·k′)·[(k′²/k²)·(K(k) − E(k)) + E(k) − k], k² = 4a²/(4a² + ℓ²).
fn nagaoka_inductance_h(turns: f64, radius_m: f64, length_m: f64) -> f64 {
    let k = 2.0 * radius_m / (4.0 * radius_m * radius_m + length_m * length_m).sqrt();
    let k_prime = (1.0 - k * k).sqrt();
    let (big_k, big_e) = elliptic_k_e(k);
    let coefficient =
        4.0 / (3.0 * PI * k_prime) * ((k_prime * k_prime / (k * k)) * (big_k - big_e) + big_e - k);
    VACUUM_PERMEABILITY_H_PER_M * PI * radius_m * radius_m * turns * turns * coefficient / length_m
}

#[test]
fn s6_nagaoka_reference_matches_the_sheet() {
    // Nagaoka's exact coefficient gives 0.8358 µH for the example coil.
    assert_close(
        nagaoka_inductance_h(6.0, 0.020, 0.050),
        0.8358e-6,
        1e-4,
        "Nagaoka",
    );
}

#[test]
fn s6_wheeler_within_one_percent_of_nagaoka_for_long_coils() {
    // Wheeler 1928 (published): about 1 % for ℓ > 0.8·r.
    for radius_m in [0.005, 0.02, 0.1] {
        for turns in [3.0, 10.0, 40.0] {
            for step in 0..=40 {
                let length_m = radius_m * (0.81 + 0.5 * f64::from(step));
                let wheeler = coil::wheeler_inductance_h(turns, 2.0 * radius_m, length_m);
                let exact = nagaoka_inductance_h(turns, radius_m, length_m);
                assert_close(wheeler, exact, 0.01, &format!("r {radius_m}, ℓ {length_m}"));
            }
        }
    }
}

#[test]
fn s7_water_specific_heat_table() {
    // IAPWS-95, Wagner & Pruss 2002 (published), at 101.325 kPa.
    for (temp_c, cp) in [
        (20.0, 4184.1),
        (25.0, 4181.3),
        (30.0, 4179.8),
        (40.0, 4179.4),
        (60.0, 4185.0),
        (80.0, 4196.8),
    ] {
        assert_close(
            water::water_specific_heat_j_per_kg_k(temp_c),
            cp,
            1e-9,
            "c_p",
        );
    }
}

#[test]
fn s7_calorimetry_example() {
    // Calorimetry, IAPWS-95 c_p: 1.000 kg from 20.0 to 30.0 °C in 120.0 s → 348.4 W;
    // from 24 V × 20 A, 72.6 %.
    // c_p at the mean water temperature, 25 °C.
    let cp = water::water_specific_heat_j_per_kg_k(25.0);
    let power_w = water::calorimetric_power_w(1.0, cp, 0.0, (30.0 - 20.0) / 120.0);
    assert_close(power_w, 348.4, 2e-4, "calorimetric power");
    let efficiency = power_w / (24.0 * 20.0);
    assert!((efficiency - 0.726).abs() < 5e-4, "{efficiency}");
}

#[test]
fn s8_first_order_thermal_example() {
    // Incropera & DeWitt (published): T_a 25 °C, ΔT_ss 50 K, τ 300 s.
    for (time_s, temp_c) in [(60.0, 34.0635), (120.0, 41.4840), (180.0, 47.5594)] {
        let t = thermal::first_order_temperature_c(25.0, 50.0, 300.0, time_s);
        assert!((t - temp_c).abs() < 5e-4, "at {time_s} s: {t}");
    }
    let to_65 = thermal::time_to_limit_s(25.0, 50.0, 300.0, 65.0).unwrap();
    assert!((to_65 - 482.83).abs() < 5e-3, "{to_65}");
    assert_eq!(
        thermal::time_to_limit_s(25.0, 50.0, 300.0, 80.0),
        None,
        "80 °C never"
    );
}

#[test]
fn s9_conduction_loss_at_25_c() {
    // Derived from V_p = π·V_in: 10 A, 40 mΩ → 2.000 W per switch.
    let r = switch::rds_on_ohm(0.040, 0.6, 25.0);
    assert_close(
        switch::conduction_loss_w(10.0, r),
        2.000,
        1e-9,
        "P at 25 °C",
    );
}

#[test]
fn s9_junction_fixed_point() {
    // Tempco 0.6 %/K (common practice of application notes), T_c 80 °C, R_thJC 0.8 K/W →
    // T_j 82.25 °C, P 2.817 W (derived).
    let parts = Parts {
        switch: Some(Switch {
            rds_on_ohm: Some(0.040),
            rds_tempco_pct_per_k: Some(0.6),
            rth_jc_k_per_w: Some(0.8),
            ..Switch::default()
        }),
        ..Parts::default()
    };
    let mut op = at_current(24.0, 10.0);
    op.temperatures_c.switch = Some(80.0);
    let report = evaluate(&parts, &op);
    assert!((report.switch_junction_temp_c.unwrap() - 82.25).abs() < 5e-3);
    assert_close(
        report.switch_conduction_loss_w.unwrap(),
        2.817,
        2e-4,
        "P at T_j",
    );
    assert!(!report.switch_thermal_runaway);
}

#[test]
fn s10_gate_resistor_with_clamp() {
    // Derived: 24 V, 470 Ω, V_F 0.7 V, V_Z 12 V → 0.7307 W.
    let parts = Parts {
        gate_resistor: Some(gate_resistor(470.0)),
        gate_clamp: Some(GateClamp {
            label: None,
            zener_voltage_v: 12.0,
        }),
        ..Parts::default()
    };
    let report = evaluate(&parts, &at(24.0));
    assert_close(
        report.gate_resistor_power_w.unwrap(),
        0.7307,
        1e-4,
        "gate resistor",
    );
}

#[test]
fn s11_choke_reactance_and_ripple() {
    // Derived: 47 µH at 159.15 kHz → 47.0 Ω; at 24 V, 1.768 A pp.
    assert_close(
        resonance::inductive_reactance_ohm(159.15e3, 47e-6),
        47.0,
        1e-3,
        "X",
    );
    assert_close(
        chokes::ripple_a_pp(24.0, 159.15e3, 47e-6),
        1.768,
        3e-4,
        "ripple",
    );
    let parts = Parts {
        choke: Some(choke(47e-6)),
        ..reference_tank()
    };
    let mut op = at(24.0);
    op.frequency_hz = Some(159.15e3);
    let report = evaluate(&parts, &op);
    assert_close(
        report.choke_reactance_ohm.unwrap(),
        47.0,
        1e-3,
        "X in the report",
    );
    assert_close(
        report.choke_ripple_a_pp.unwrap(),
        1.768,
        3e-4,
        "ripple in the report",
    );
    assert_close(
        report.choke_reactance_ratio.unwrap(),
        47.0,
        1e-9,
        "X_ch/X_L = L_ch/L",
    );
}

#[test]
fn rule_of_thumb_tank_at_about_three_times_supply() {
    // Rule of thumb (common practice, no source): about 3× the supply.
    let report = evaluate(&Parts::default(), &at(12.0));
    let ratio = report.tank_peak_voltage_v.unwrap() / 12.0;
    assert!((3.0..3.3).contains(&ratio), "{ratio}");
}

#[test]
fn a_full_revision_has_every_quantity() {
    let (parts, op) = common::realistic_revision();
    let report = evaluate(&parts, &op);
    assert_eq!(
        report.operating_frequency_hz,
        Some(123.5e3),
        "the measured frequency wins"
    );
    assert!(report.coil_ac_resistance_ohm.is_some() && report.coil_copper_loss_w.is_some());
    assert!(report.predicted_loss_w.is_some() && report.model_efficiency.is_some());
    assert!(report.switch_junction_temp_c.unwrap() > 55.0);
    assert!(report.capacitance_drift.is_some());
    assert_eq!(report.ambient_c, 22.0);
}
