//! Calorimetry with a water load (IAPWS-95 c_p).

/// Isobaric specific heat of liquid water at 101.325 kPa, J/(kg·K), by temperature in °C.
/// IAPWS-95 (Wagner & Pruss, J. Phys. Chem. Ref. Data 31(2), 2002).
const WATER_CP_TABLE: [(f64, f64); 6] = [
    (20.0, 4184.1),
    (25.0, 4181.3),
    (30.0, 4179.8),
    (40.0, 4179.4),
    (60.0, 4185.0),
    (80.0, 4196.8),
];

/// c_p of water at `t_c`, linearly interpolated in the IAPWS-95 table above.
/// Outside 20–80 °C the end value is held: c_p changes by under 1 % down to 0 °C and up to
/// 100 °C, far less than a bench calorimeter's other errors.
pub fn water_specific_heat_j_per_kg_k(t_c: f64) -> f64 {
    let first = WATER_CP_TABLE[0];
    let last = WATER_CP_TABLE[WATER_CP_TABLE.len() - 1];
    if t_c.is_nan() || t_c <= first.0 {
        return first.1;
    }
    if t_c >= last.0 {
        return last.1;
    }
    WATER_CP_TABLE
        .windows(2)
        .find(|w| t_c <= w[1].0)
        .map(|w| {
            let (t0, c0) = w[0];
            let (t1, c1) = w[1];
            c0 + (c1 - c0) * (t_c - t0) / (t1 - t0)
        })
        .unwrap_or(last.1)
}

/// Heating power absorbed by a water load: P = (m_w·c_w + C_vessel)·dT/dt (calorimetry).
pub fn calorimetric_power_w(
    water_mass_kg: f64,
    water_specific_heat_j_per_kg_k: f64,
    vessel_heat_capacity_j_per_k: f64,
    heating_rate_k_per_s: f64,
) -> f64 {
    (water_mass_kg * water_specific_heat_j_per_kg_k + vessel_heat_capacity_j_per_k)
        * heating_rate_k_per_s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn table_points_and_interpolation() {
        // IAPWS-95 values [published].
        assert_eq!(water_specific_heat_j_per_kg_k(25.0), 4181.3);
        assert_eq!(water_specific_heat_j_per_kg_k(60.0), 4185.0);
        // Halfway between 40 °C (4179.4) and 60 °C (4185.0) [derived: linear interpolation].
        assert!((water_specific_heat_j_per_kg_k(50.0) - 4182.2).abs() < 1e-9);
        assert_eq!(water_specific_heat_j_per_kg_k(5.0), 4184.1);
        assert_eq!(water_specific_heat_j_per_kg_k(95.0), 4196.8);
        assert_eq!(water_specific_heat_j_per_kg_k(f64::NAN), 4184.1);
    }

    #[test]
    fn reference_example_power() {
        // IAPWS-95 c_p [published]: 1.000 kg, 20.0 → 30.0 °C in 120.0 s → 348.4 W,
        // with c_p at the mean 25 °C.
        let p_w =
            calorimetric_power_w(1.0, water_specific_heat_j_per_kg_k(25.0), 0.0, 10.0 / 120.0);
        assert!((p_w - 348.4).abs() < 0.05, "{p_w}");
    }
}
