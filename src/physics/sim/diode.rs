//! Junction diodes of the driver: the switches' body diodes, the cross-coupled gate diodes and
//! the gate zener clamps.
//!
//! Shockley's ideal-diode equation, I = I_S·(e^(V/(n·V_T)) − 1) (W. Shockley, "The theory of p-n
//! junctions in semiconductors and p-n junction transistors", Bell System Technical Journal
//! 28(3), 1949), with V_T = k·T/q at 300.15 K (27 °C, the nominal temperature SPICE simulators
//! use). A zener clamp is a diode pair: its forward junction, and a second Shockley junction
//! offset by the breakdown voltage for the reverse (breakdown) direction.

/// k·T/q at 300.15 K: 1.380649e-23 J/K × 300.15 K / 1.602176634e-19 C (2019 SI exact constants).
pub const THERMAL_VOLTAGE_V: f64 = 1.380_649e-23 * 300.15 / 1.602_176_634e-19;

/// Above this many thermal voltages the exponential continues as its tangent line, so a Newton
/// iteration that overshoots stays finite (the usual junction-limiting practice of circuit
/// simulators). It is far above any current this circuit can carry.
const LIMIT_EXPONENT: f64 = 60.0;

/// A Shockley junction: saturation current and emission coefficient.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Junction {
    pub saturation_current_a: f64,
    pub emission_coefficient: f64,
}

impl Junction {
    /// Current from anode to cathode at `voltage_v` across it, and its conductance dI/dV.
    pub fn current_a(&self, voltage_v: f64) -> (f64, f64) {
        let n_vt = self.emission_coefficient * THERMAL_VOLTAGE_V;
        let x = voltage_v / n_vt;
        let is = self.saturation_current_a;
        if x > LIMIT_EXPONENT {
            let e = LIMIT_EXPONENT.exp();
            (is * (e * (1.0 + x - LIMIT_EXPONENT) - 1.0), is * e / n_vt)
        } else {
            let e = x.exp();
            (is * (e - 1.0), is * e / n_vt)
        }
    }
}

/// Body diode of a power MOSFET: typical SPICE-model figures (common practice: I_S of the order
/// of 10⁻¹⁰ A, n near 1); it conducts only briefly in this circuit.
pub const BODY_DIODE: Junction = Junction {
    saturation_current_a: 1e-10,
    emission_coefficient: 1.0,
};

/// The cross-coupled fast-recovery gate diodes: typical SPICE-model figures of a 1 A ultrafast
/// rectifier (common practice: I_S near 10⁻⁸ A, n of 1.5 to 2).
pub const GATE_DIODE: Junction = Junction {
    saturation_current_a: 1e-8,
    emission_coefficient: 1.7,
};

/// The forward junction of a zener clamp (common practice for small-signal silicon diodes).
pub const ZENER_FORWARD: Junction = Junction {
    saturation_current_a: 1e-12,
    emission_coefficient: 1.0,
};

/// Current at which a zener's nominal voltage is specified (common practice: 5 mA for
/// small zeners).
pub const ZENER_TEST_CURRENT_A: f64 = 5e-3;

/// The zener's breakdown junction: it starts conducting at the rated voltage less this offset so
/// that it carries [`ZENER_TEST_CURRENT_A`] at the rated voltage.
pub fn zener_breakdown_offset_v() -> f64 {
    ZENER_FORWARD.emission_coefficient
        * THERMAL_VOLTAGE_V
        * (ZENER_TEST_CURRENT_A / ZENER_FORWARD.saturation_current_a).ln()
}

/// A zener clamp from a gate (cathode) to ground (anode), as a diode pair: current into the clamp
/// at the cathode voltage `voltage_v`, and its conductance.
pub fn zener_current_a(voltage_v: f64, zener_voltage_v: f64) -> (f64, f64) {
    let (forward_a, forward_s) = ZENER_FORWARD.current_a(-voltage_v);
    let knee_v = zener_voltage_v - zener_breakdown_offset_v();
    let (breakdown_a, breakdown_s) = ZENER_FORWARD.current_a(voltage_v - knee_v);
    (breakdown_a - forward_a, breakdown_s + forward_s)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn thermal_voltage_at_27_c() {
        // k·T/q at 300.15 K = 25.865 mV (exact k and q of the 2019 SI).
        assert!((THERMAL_VOLTAGE_V - 0.025_865).abs() < 1e-6);
    }

    #[test]
    fn forward_drop_grows_by_n_vt_ln10_per_decade() {
        // Shockley: each decade of current needs n·V_T·ln 10 more volts.
        let j = GATE_DIODE;
        let v1 = j.emission_coefficient * THERMAL_VOLTAGE_V * (1.0 / j.saturation_current_a).ln();
        let v10 = v1 + j.emission_coefficient * THERMAL_VOLTAGE_V * 10f64.ln();
        assert!((j.current_a(v1).0 - 1.0).abs() < 1e-6);
        assert!((j.current_a(v10).0 - 10.0).abs() < 1e-5);
    }

    #[test]
    fn zener_carries_its_test_current_at_its_rating() {
        // By construction of the breakdown offset: 5 mA at 12 V, nearly nothing at 11 V, and a
        // forward diode below ground.
        let (at_rating, _) = zener_current_a(12.0, 12.0);
        assert!(
            (at_rating - ZENER_TEST_CURRENT_A).abs() < 1e-9,
            "{at_rating}"
        );
        assert!(zener_current_a(11.0, 12.0).0 < 1e-9);
        assert!(zener_current_a(-0.8, 12.0).0 < -1e-3);
    }

    #[test]
    fn limited_exponential_stays_finite_and_continuous() {
        let j = BODY_DIODE;
        let edge = LIMIT_EXPONENT * THERMAL_VOLTAGE_V;
        let below = j.current_a(edge * (1.0 - 1e-12)).0;
        let above = j.current_a(edge * (1.0 + 1e-12)).0;
        assert!((above / below - 1.0).abs() < 1e-9);
        assert!(j.current_a(1e3).0.is_finite());
    }
}
