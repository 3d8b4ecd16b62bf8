//! Efficiency three ways, each a fraction of the input power and named by its method:
//! calorimetric, from the model's losses, and against an idle reference.

use serde::{Deserialize, Serialize};

use crate::analysis::series::least_squares_line;
use crate::physics::water::{calorimetric_power_w, water_specific_heat_j_per_kg_k};

/// Efficiency by method; `None` where the run lacks what a method needs.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize)]
pub struct Efficiency {
    /// Heat into a water load over input power (calorimetry, IAPWS-95 c_p).
    pub calorimetric: Option<f64>,
    /// Input power above an idle run's, scaled by V², over input power.
    pub differential: Option<f64>,
    /// The model's loss budget.
    pub model: Option<f64>,
}

/// The supply operating point of an idle run (no workpiece) of the same revision.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct IdleReference {
    pub supply_voltage_v: f64,
    pub supply_current_a: f64,
}

/// An idle run counts as a reference within this fraction of the loaded run's supply voltage
/// [practice]: the V² scaling is a model of the idle loss, best kept to small corrections.
pub const IDLE_SUPPLY_TOLERANCE: f64 = 0.10;

/// DC input power P = V·I.
pub fn input_power_w(supply_voltage_v: f64, supply_current_a: f64) -> f64 {
    supply_voltage_v * supply_current_a
}

/// Power absorbed by a water load from its temperature readings (time s, °C): the slope of the
/// least-squares line of temperature against time, with c_p at the mean reading temperature
/// (IAPWS-95; Wagner & Pruss 2002). `None` for fewer than two readings or a mass that is not
/// positive.
pub fn water_load_power_w(
    water_mass_kg: f64,
    vessel_heat_capacity_j_per_k: f64,
    water_temp: &[(f64, f64)],
) -> Option<f64> {
    if water_mass_kg.is_nan() || water_mass_kg <= 0.0 {
        return None;
    }
    let heating_rate_k_per_s = least_squares_line(water_temp)?.slope;
    let mean_c = water_temp.iter().map(|s| s.1).sum::<f64>() / water_temp.len() as f64;
    let p_w = calorimetric_power_w(
        water_mass_kg,
        water_specific_heat_j_per_kg_k(mean_c),
        vessel_heat_capacity_j_per_k.max(0.0),
        heating_rate_k_per_s,
    );
    p_w.is_finite().then_some(p_w)
}

/// Calorimetric efficiency: water-load power over input power. `None` unless both are positive
/// (water that did not warm measured nothing).
pub fn calorimetric_efficiency(load_power_w: f64, input_power_w: f64) -> Option<f64> {
    (load_power_w > 0.0 && input_power_w > 0.0).then(|| load_power_w / input_power_w)
}

/// Idle loss at the loaded run's supply: P_idle·(V/V_idle)². With no workpiece the input power
/// goes into the tank and switches, which scale with the tank voltage squared, and the tank
/// voltage is proportional to the supply (V_p = π·V_in) [derived].
pub fn idle_loss_at_supply_w(idle: &IdleReference, supply_voltage_v: f64) -> f64 {
    let ratio = supply_voltage_v / idle.supply_voltage_v;
    input_power_w(idle.supply_voltage_v, idle.supply_current_a) * ratio * ratio
}

/// Differential efficiency (P_in − P_idle·(V/V_idle)²)/P_in. `None` when the idle run's supply
/// is more than 10 % away from this run's, or the input power is not positive.
pub fn differential_efficiency(
    supply_voltage_v: f64,
    supply_current_a: f64,
    idle: &IdleReference,
) -> Option<f64> {
    let p_in_w = input_power_w(supply_voltage_v, supply_current_a);
    let close = (idle.supply_voltage_v - supply_voltage_v).abs()
        <= IDLE_SUPPLY_TOLERANCE * supply_voltage_v.abs();
    let usable = close && p_in_w > 0.0 && idle.supply_voltage_v > 0.0;
    if !usable {
        return None;
    }
    let eta = (p_in_w - idle_loss_at_supply_w(idle, supply_voltage_v)) / p_in_w;
    eta.is_finite().then_some(eta)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reference_calorimetry_example() {
        // c_p from IAPWS-95 (Wagner & Pruss 2002) [published]: 1.000 kg from
        // 20.0 to 30.0 °C in 120.0 s → 348.4 W; from 24 V × 20 A, 72.6 %.
        let water = [
            (0.0, 20.0),
            (30.0, 22.5),
            (60.0, 25.0),
            (90.0, 27.5),
            (120.0, 30.0),
        ];
        let p_w = water_load_power_w(1.0, 0.0, &water).unwrap();
        assert!((p_w - 348.4).abs() < 0.05, "{p_w}");
        let eta = calorimetric_efficiency(p_w, input_power_w(24.0, 20.0)).unwrap();
        assert!((eta - 0.726).abs() < 0.0005, "{eta}");
    }

    #[test]
    fn vessel_heat_capacity_adds_to_the_water() {
        // Derived: a 200 J/K vessel adds 200·(10/120) = 16.67 W to the example's 348.44 W.
        let water = [(0.0, 20.0), (120.0, 30.0)];
        let bare = water_load_power_w(1.0, 0.0, &water).unwrap();
        let with_vessel = water_load_power_w(1.0, 200.0, &water).unwrap();
        assert!((with_vessel - bare - 200.0 / 12.0).abs() < 1e-9);
    }

    #[test]
    fn slope_is_least_squares_not_end_points() {
        // Hand-worked: t 0, 40, 80, 120 s; T 20, 24, 25, 30 °C → mean 24.75 °C, Sxy = 285 + 15
        // + 5 + 315 = 620, Sxx = 8000 → 0.0775 K/s (the end points would say 0.0833 K/s).
        // c_p at 24.75 °C: 4184.1 − 2.8·4.75/5 = 4181.44 J/(kg·K) → 324.0616 W.
        let water = [(0.0, 20.0), (40.0, 24.0), (80.0, 25.0), (120.0, 30.0)];
        let p_w = water_load_power_w(1.0, 0.0, &water).unwrap();
        assert!((p_w - 4181.44 * 0.0775).abs() < 1e-9, "{p_w}");
    }

    #[test]
    fn calorimetry_needs_warming_water_and_power() {
        assert!(water_load_power_w(0.0, 0.0, &[(0.0, 20.0), (60.0, 25.0)]).is_none());
        assert!(water_load_power_w(1.0, 0.0, &[(0.0, 20.0)]).is_none());
        assert_eq!(calorimetric_efficiency(-5.0, 100.0), None);
        assert_eq!(calorimetric_efficiency(50.0, 0.0), None);
    }

    #[test]
    fn differential_by_hand() {
        // Hand-worked [derived]: loaded 24 V × 10 A = 240 W. Idle 23 V × 2.3 A = 52.9 W, scaled
        // by (24/23)² → 52.9·576/529 = 57.6 W. η = (240 − 57.6)/240 = 0.76.
        let idle = IdleReference {
            supply_voltage_v: 23.0,
            supply_current_a: 2.3,
        };
        assert!((idle_loss_at_supply_w(&idle, 24.0) - 57.6).abs() < 1e-9);
        let eta = differential_efficiency(24.0, 10.0, &idle).unwrap();
        assert!((eta - 0.76).abs() < 1e-12, "{eta}");
    }

    #[test]
    fn differential_refuses_a_distant_idle_supply() {
        // 24 V against an idle run at 20 V is 16.7 % away, beyond the 10 % tolerance.
        let idle = IdleReference {
            supply_voltage_v: 20.0,
            supply_current_a: 2.0,
        };
        assert_eq!(differential_efficiency(24.0, 10.0, &idle), None);
        let near = IdleReference {
            supply_voltage_v: 22.0,
            supply_current_a: 2.0,
        };
        assert!(differential_efficiency(24.0, 10.0, &near).is_some());
        assert_eq!(differential_efficiency(24.0, 0.0, &near), None);
    }
}
