//! Voltages of the cross-coupled current-fed driver (Baxandall, Proc. IEE Part B, 1959;
//! Kazimierczuk & Czarkowski, *Resonant Power Converters*, 2nd ed., Wiley 2011).

use std::f64::consts::{PI, SQRT_2};

/// V_p = π·V_in: each drain averages V_in and is a half-sine of peak V_p for half the period, whose
/// average is V_p/π. Baxandall, Proc. IEE Part B, 1959 (abstract read; volume and pages unchecked);
/// Kazimierczuk & Czarkowski, *Resonant Power Converters*, 2nd ed., 2011, V_SM = π·V_I (page not
/// rechecked).
pub fn tank_peak_voltage_v(supply_voltage_v: f64) -> f64 {
    PI * supply_voltage_v
}

/// V_rms = π·V_in/√2 of the full sine across the tank (same sources as above).
pub fn tank_rms_voltage_v(supply_voltage_v: f64) -> f64 {
    tank_peak_voltage_v(supply_voltage_v) / SQRT_2
}

/// Drain-source stress of each switch, π·V_in before ringing (same sources as above):
/// the off switch's drain carries the whole half-sine while the other drain sits near 0 V.
pub fn switch_peak_voltage_v(supply_voltage_v: f64) -> f64 {
    tank_peak_voltage_v(supply_voltage_v)
}

/// 1 − V_peak/V_DS,max: the fraction of the rating left unused (negative when exceeded).
pub fn switch_voltage_margin(peak_voltage_v: f64, vds_max_v: f64) -> f64 {
    1.0 - peak_voltage_v / vds_max_v
}
