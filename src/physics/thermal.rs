//! First-order (lumped) thermal response (Incropera & DeWitt, *Fundamentals of Heat and
//! Mass Transfer*).

/// T(t) = T_a + ΔT_ss·(1 − e^(−t/τ)), a part heating from ambient towards a steady rise ΔT_ss with
/// time constant τ. Incropera & DeWitt, *Fundamentals of Heat and Mass Transfer*, lumped
/// capacitance, valid for Biot < 0.1 (published).
pub fn first_order_temperature_c(
    ambient_c: f64,
    steady_rise_k: f64,
    time_constant_s: f64,
    time_s: f64,
) -> f64 {
    ambient_c + steady_rise_k * (1.0 - (-time_s / time_constant_s).exp())
}

/// t = −τ·ln(1 − (T_lim − T_a)/ΔT_ss), the time the first-order response takes to reach a limit;
/// `None` when it never does (T_lim ≥ T_a + ΔT_ss), zero when it starts there
/// (Incropera & DeWitt, lumped capacitance, solved for t).
pub fn time_to_limit_s(
    ambient_c: f64,
    steady_rise_k: f64,
    time_constant_s: f64,
    limit_c: f64,
) -> Option<f64> {
    let needed_k = limit_c - ambient_c;
    if needed_k <= 0.0 {
        return Some(0.0);
    }
    if needed_k >= steady_rise_k {
        return None;
    }
    Some(-time_constant_s * (1.0 - needed_k / steady_rise_k).ln())
}

/// τ = m·c/(h·A), the lumped-capacitance time constant (Incropera & DeWitt).
pub fn lumped_time_constant_s(
    mass_kg: f64,
    specific_heat_j_per_kg_k: f64,
    heat_transfer_coefficient_w_per_m2_k: f64,
    area_m2: f64,
) -> f64 {
    mass_kg * specific_heat_j_per_kg_k / (heat_transfer_coefficient_w_per_m2_k * area_m2)
}
