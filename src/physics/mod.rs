//! Pure formulas of the driver, one per function, on `f64` in SI units.
//!
//! Each function names its published source, or says what it is instead: **derived** (follows
//! from the idealised circuit and a published relation) or **common practice** (a rule of the
//! trade with no published source found); a citation not rechecked says so.

/// Tank capacitor losses and voltage derating.
pub mod capacitor;
/// Supply chokes: ripple, peak current, copper loss.
pub mod choke;
/// Single-layer air-core coil: inductance and conductor length.
pub mod coil;
/// Copper resistivity, skin depth and the resistance of round wire and tube.
pub mod copper;
/// Waveforms of the cross-coupled driver: tank and drain voltages.
pub mod driver;
/// Gate resistors fed from the supply, with or without zener clamps.
pub mod gate;
/// Parallel LC resonance, reactances and reactive power.
pub mod resonance;
/// Time-domain simulation of the whole driver, from switch-on to steady state.
pub mod sim;
/// Switching MOSFETs: conduction loss and the junction-temperature fixed point.
pub mod switch;
/// First-order thermal response and the time to reach a limit.
pub mod thermal;
/// Specific heat of water and calorimetric power.
pub mod water;
/// American Wire Gauge diameters.
pub mod wire_gauge;

/// Vacuum permeability μ0 = 4π·10⁻⁷ H/m, exact in the SI before 2019; within 1e-9 of the present
/// measured one.
pub const VACUUM_PERMEABILITY_H_PER_M: f64 = 4.0e-7 * std::f64::consts::PI;

/// Angular frequency ω = 2π·f.
pub fn angular_frequency_rad_per_s(frequency_hz: f64) -> f64 {
    2.0 * std::f64::consts::PI * frequency_hz
}
