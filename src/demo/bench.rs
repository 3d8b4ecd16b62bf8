//! The formulas the invented bench obeys, so that the demo data agrees with what the model
//! will compute from it. Each check names its published source or says it is derived.

use std::f64::consts::{PI, SQRT_2};

use crate::parts::{Conductor, WorkCoil};

/// μ0, H/m.
pub const MU0_H_PER_M: f64 = 4e-7 * PI;
/// Annealed copper at 20 °C, IEC 60028.
pub const COPPER_RESISTIVITY_OHM_M: f64 = 1.7241e-8;
/// Water at 25 °C and 101.325 kPa, IAPWS-95; the calorimeter runs stay within 15–80 °C,
/// where c_p varies by less than 0.4 %.
pub const WATER_CP_J_PER_KG_K: f64 = 4181.3;
/// Forward drop of a cross-coupled gate diode (common practice).
pub const GATE_DIODE_FORWARD_V: f64 = 0.7;
/// Inductance the two coil leads add, per metre of lead (both together), for leads run side by
/// side: our own allowance for the invented "measured" coil inductance, not a published formula.
pub const LEAD_INDUCTANCE_H_PER_M: f64 = 0.4e-6;

const METRES_PER_INCH: f64 = 0.0254;

/// Wheeler, Proc. IRE (1928): L[µH] = r²N²/(9r + 10ℓ), r and ℓ in inches.
pub fn wheeler_inductance_h(turns: f64, mean_diameter_m: f64, length_m: f64) -> f64 {
    let r_in = mean_diameter_m / 2.0 / METRES_PER_INCH;
    let l_in = length_m / METRES_PER_INCH;
    r_in * r_in * turns * turns / (9.0 * r_in + 10.0 * l_in) * 1e-6
}

/// Two inductances in parallel (the coil and the choke across the tank) [derived].
pub fn parallel_h(a_h: f64, b_h: f64) -> f64 {
    a_h * b_h / (a_h + b_h)
}

/// f0 = 1/(2π√(LC)), any circuits textbook.
pub fn resonant_frequency_hz(inductance_h: f64, capacitance_f: f64) -> f64 {
    1.0 / (2.0 * PI * (inductance_h * capacitance_f).sqrt())
}

/// Baxandall (1959): the tank sees a sine of amplitude π·Vin.
pub fn tank_vrms_v(supply_v: f64) -> f64 {
    PI * supply_v / SQRT_2
}

/// Skin depth δ = √(ρ/(π·f·μ0)) for copper.
pub fn copper_skin_depth_m(frequency_hz: f64) -> f64 {
    (COPPER_RESISTIVITY_OHM_M / (PI * frequency_hz * MU0_H_PER_M)).sqrt()
}

/// ASTM B258 wire gauge.
pub fn awg_diameter_m(awg: u32) -> f64 {
    0.127e-3 * 92f64.powf((36.0 - f64::from(awg)) / 39.0)
}

/// Conductor length of the coil: the turns plus both leads.
pub fn coil_conductor_length_m(coil: &WorkCoil) -> f64 {
    let turns = coil.turns.unwrap_or(0.0);
    let diameter_m = coil.mean_diameter_m.unwrap_or(0.0);
    turns * PI * diameter_m + coil.lead_length_m.unwrap_or(0.0)
}

/// Isolated-conductor AC resistance (annulus form for round wire, wall ≫ δ for tube),
/// times a proximity factor for the neighbouring turns (1.5–3, common practice).
pub fn coil_ac_resistance_ohm(coil: &WorkCoil, frequency_hz: f64, proximity_factor: f64) -> f64 {
    let length_m = coil_conductor_length_m(coil);
    let delta_m = copper_skin_depth_m(frequency_hz);
    let rho = COPPER_RESISTIVITY_OHM_M;
    let isolated_ohm = match coil.conductor {
        Some(Conductor::Tube {
            outer_diameter_m, ..
        }) => rho * length_m / (PI * outer_diameter_m * delta_m),
        Some(Conductor::Round { diameter_m, awg }) => {
            let d = diameter_m.or(awg.map(awg_diameter_m)).unwrap_or(0.0);
            let r = d / 2.0;
            let dc_ohm = rho * length_m / (PI * r * r);
            let x = r / delta_m;
            dc_ohm * (x * x / (2.0 * x - 1.0)).max(1.0)
        }
        None => 0.0,
    };
    isolated_ohm * proximity_factor
}

/// Derived: power in one gate resistor, pulled low half the time and clamped the other half.
pub fn gate_resistor_power_w(supply_v: f64, resistance_ohm: f64, zener_v: f64) -> f64 {
    let low = supply_v - GATE_DIODE_FORWARD_V;
    let clamped = (supply_v - zener_v).max(0.0);
    (low * low + clamped * clamped) / (2.0 * resistance_ohm)
}

/// Common practice: R_DS(on)(T) = R25·(1 + a/100)^(T − 25).
pub fn rds_on_at_ohm(rds_25_ohm: f64, tempco_pct_per_k: f64, junction_c: f64) -> f64 {
    rds_25_ohm * (1.0 + tempco_pct_per_k / 100.0).powf(junction_c - 25.0)
}

/// One step of the first-order thermal model (Incropera & DeWitt) with the loss held over the
/// step. For a constant loss, repeated steps land exactly on T_a + ΔT_ss·(1 − e^(−t/τ)).
pub fn first_order_step_c(
    temp_c: f64,
    ambient_c: f64,
    rise_ss_k: f64,
    step_s: f64,
    tau_s: f64,
) -> f64 {
    let target_c = ambient_c + rise_ss_k;
    target_c + (temp_c - target_c) * (-step_s / tau_s).exp()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64, rel: f64) -> bool {
        ((a - b) / b).abs() < rel
    }

    #[test]
    fn matches_reference_examples() {
        // Wheeler, Proc. IRE 1928: N 6, r 20 mm, ℓ 50 mm → 0.8337 µH.
        assert!(close(
            wheeler_inductance_h(6.0, 0.040, 0.050),
            0.8337e-6,
            1e-3
        ));
        // 1 µH ‖ 47 µH with 1 µF → 160 839 Hz [derived].
        let f = resonant_frequency_hz(parallel_h(1e-6, 47e-6), 1e-6);
        assert!(close(f, 160_839.0, 1e-5));
        // Vin 24 V → Vrms 53.315 V [derived].
        assert!(close(tank_vrms_v(24.0), 53.315, 1e-4));
        // Copper at 100 kHz → 0.2090 mm (IEC 60028 resistivity).
        assert!(close(copper_skin_depth_m(100e3), 0.2090e-3, 1e-3));
        // ASTM B258: AWG 12 → 2.053 mm.
        assert!((awg_diameter_m(12) - 2.053e-3).abs() < 1.3e-6);
        // 24 V, 470 Ω, V_Z 12 V → 0.7307 W [derived].
        assert!(close(
            gate_resistor_power_w(24.0, 470.0, 12.0),
            0.7307,
            1e-3
        ));
        // 40 mΩ at 82.25 °C with 0.6 %/K → 2.817 W at 10 A [common practice].
        let p = 10.0f64.powi(2) * rds_on_at_ohm(0.040, 0.6, 82.25) / 2.0;
        assert!(close(p, 2.817, 1e-3));
    }

    #[test]
    fn stepping_follows_the_first_order_curve() {
        // Incropera & DeWitt: T_a 25 °C, ΔT_ss 50 K, τ 300 s → 41.4840 °C at 120 s [published].
        let mut t = 25.0;
        for _ in 0..12 {
            t = first_order_step_c(t, 25.0, 50.0, 10.0, 300.0);
        }
        assert!((t - 41.4840).abs() < 1e-4);
    }
}
