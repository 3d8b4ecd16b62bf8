//! Tank capacitor losses and ratings (TDK/EPCOS, *Film Capacitors — General technical
//! information*, 2015; makers' datasheet practice).

/// P = Q·tan δ, the dielectric and ohmic loss of a capacitor carrying reactive power Q
/// (any circuits textbook).
pub fn loss_from_dissipation_factor_w(reactive_power_var: f64, dissipation_factor: f64) -> f64 {
    reactive_power_var * dissipation_factor
}

/// P = I_rms²·ESR for one unit (any circuits textbook).
pub fn loss_from_esr_w(rms_current_a: f64, esr_ohm: f64) -> f64 {
    rms_current_a * rms_current_a * esr_ohm
}

/// ESR = tan δ/(ω·C) (any circuits textbook).
pub fn esr_from_dissipation_factor_ohm(
    dissipation_factor: f64,
    frequency_hz: f64,
    capacitance_f: f64,
) -> f64 {
    dissipation_factor / (super::angular_frequency_rad_per_s(frequency_hz) * capacitance_f)
}

/// Temperature above which film capacitor voltage ratings are derated (film
/// capacitor datasheet practice).
pub const DERATING_START_C: f64 = 85.0;

/// Fraction of the rating lost per kelvin above [`DERATING_START_C`]: 1.25 %/K (film
/// capacitor datasheet practice).
pub const DERATING_PER_K: f64 = 0.0125;

/// The voltage rating at a capacitor temperature: full up to 85 °C, then −1.25 %/K, never below
/// zero (film capacitor datasheet practice).
pub fn derated_voltage_rating_v(rating_v: f64, capacitor_temp_c: f64) -> f64 {
    let excess_k = (capacitor_temp_c - DERATING_START_C).max(0.0);
    rating_v * (1.0 - DERATING_PER_K * excess_k).max(0.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn derating_starts_at_85_c() {
        // Film capacitor datasheet practice: full rating at 85 °C, 1.25 %/K above,
        // so 100 °C keeps 81.25 %.
        assert_eq!(derated_voltage_rating_v(400.0, 25.0), 400.0);
        assert_eq!(derated_voltage_rating_v(400.0, 85.0), 400.0);
        assert!((derated_voltage_rating_v(400.0, 100.0) - 325.0).abs() < 1e-9);
        assert_eq!(derated_voltage_rating_v(400.0, 200.0), 0.0);
    }
}
