//! Copper: resistivity, skin depth, and the resistance of round wire and tube.

use super::VACUUM_PERMEABILITY_H_PER_M;
use std::f64::consts::PI;

/// ρ20 = 1/58 Ω·mm²/m, the annealed copper standard, IEC 60028 (published).
pub const RESISTIVITY_20C_OHM_M: f64 = 1.7241e-8;

/// α20 = 0.00393 K⁻¹, NBS Handbook 100, *Copper Wire Tables*, 1966
/// (not rechecked).
pub const TEMPERATURE_COEFFICIENT_PER_K: f64 = 0.00393;

/// ρ(T) = ρ20·(1 + α20·(T − 20)) (IEC 60028; NBS Handbook 100).
pub fn resistivity_ohm_m(temp_c: f64) -> f64 {
    RESISTIVITY_20C_OHM_M * (1.0 + TEMPERATURE_COEFFICIENT_PER_K * (temp_c - 20.0))
}

/// δ = √(ρ/(π·f·μ0·μr)) (any electromagnetics textbook).
pub fn skin_depth_m(resistivity_ohm_m: f64, frequency_hz: f64, relative_permeability: f64) -> f64 {
    (resistivity_ohm_m / (PI * frequency_hz * VACUUM_PERMEABILITY_H_PER_M * relative_permeability))
        .sqrt()
}

/// R = ρ·ℓ/A over a uniform cross-section (textbook).
pub fn dc_resistance_ohm(resistivity_ohm_m: f64, length_m: f64, area_m2: f64) -> f64 {
    resistivity_ohm_m * length_m / area_m2
}

/// Area π·(r_o² − r_i²) of an annulus between two radii.
fn annulus_area_m2(outer_radius_m: f64, inner_radius_m: f64) -> f64 {
    PI * (outer_radius_m * outer_radius_m - inner_radius_m * inner_radius_m)
}

/// AC resistance of an isolated round wire: the current flows in an annulus one skin depth deep,
/// R = ρ·ℓ/(π·δ·(2r − δ)), so R_ac/R_dc = (r/δ)²/(2r/δ − 1), within a few percent of the exact
/// Bessel ratio for r/δ ≥ 2 (Terman, *Radio Engineers' Handbook*, 1943).
/// A wire no thicker than δ keeps its DC resistance. Proximity in a tight coil adds a factor of
/// about 1.5–3 that this isolated-conductor form leaves out (common practice;
/// no published source found).
pub fn round_wire_ac_resistance_ohm(
    resistivity_ohm_m: f64,
    length_m: f64,
    radius_m: f64,
    skin_depth_m: f64,
) -> f64 {
    let inner_radius_m = (radius_m - skin_depth_m).max(0.0);
    dc_resistance_ohm(
        resistivity_ohm_m,
        length_m,
        annulus_area_m2(radius_m, inner_radius_m),
    )
}

/// AC resistance of a tube: the annulus one skin depth deep at the outer surface,
/// R = ρ·ℓ/(π·δ·(2r_o − δ)); a wall no thicker than δ keeps the tube's DC resistance
/// (derived as for round wire; with wall ≫ δ this is ρ·ℓ/(π·D·δ)). Same proximity caveat as
/// [`round_wire_ac_resistance_ohm`].
pub fn tube_ac_resistance_ohm(
    resistivity_ohm_m: f64,
    length_m: f64,
    outer_radius_m: f64,
    wall_m: f64,
    skin_depth_m: f64,
) -> f64 {
    let inner_radius_m = (outer_radius_m - wall_m.min(skin_depth_m)).max(0.0);
    dc_resistance_ohm(
        resistivity_ohm_m,
        length_m,
        annulus_area_m2(outer_radius_m, inner_radius_m),
    )
}

/// DC resistance of a round wire, ρ·ℓ/(π·r²).
pub fn round_wire_dc_resistance_ohm(resistivity_ohm_m: f64, length_m: f64, radius_m: f64) -> f64 {
    dc_resistance_ohm(resistivity_ohm_m, length_m, PI * radius_m * radius_m)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn resistivity_rises_with_temperature() {
        // IEC 60028 (published) at 20 °C; at 100 °C ρ20·(1 + 0.00393·80) = 2.2661e-8 Ω·m
        // (α20 from NBS Handbook 100, not rechecked).
        assert!((resistivity_ohm_m(20.0) - 1.7241e-8).abs() < 1e-15);
        assert!((resistivity_ohm_m(100.0) - 2.266_16e-8).abs() < 1e-13);
    }

    #[test]
    fn thin_conductors_keep_their_dc_resistance() {
        // Below one skin depth the whole section conducts.
        let dc = round_wire_dc_resistance_ohm(1.7e-8, 1.0, 0.1e-3);
        assert_eq!(
            round_wire_ac_resistance_ohm(1.7e-8, 1.0, 0.1e-3, 0.2e-3),
            dc
        );
        let tube_dc = dc_resistance_ohm(1.7e-8, 1.0, PI * (0.003f64.powi(2) - 0.0029f64.powi(2)));
        let tube = tube_ac_resistance_ohm(1.7e-8, 1.0, 0.003, 0.1e-3, 0.2e-3);
        assert!((tube / tube_dc - 1.0).abs() < 1e-12);
    }

    #[test]
    fn thick_tube_approaches_the_surface_sheet() {
        // Derived: wall ≫ δ gives R ≈ ρ·ℓ/(π·D·δ), here within δ/D = 1.7 %.
        let (rho, d, delta) = (1.7241e-8, 6e-3, 0.1e-3);
        let sheet = rho / (PI * d * delta);
        let tube = tube_ac_resistance_ohm(rho, 1.0, d / 2.0, 1e-3, delta);
        assert!((tube / sheet - 1.0).abs() < 0.02, "{tube} vs {sheet}");
    }
}
