//! The switching MOSFET's channel: the square-law model of H. Shichman & D. A. Hodges,
//! "Modeling and simulation of insulated-gate field-effect transistor switching circuits",
//! IEEE J. Solid-State Circuits SC-3(3), 1968 (not rechecked), with the datasheet's
//! R_DS(on) as a resistance in series with the drain, as ngspice's VDMOS model places it
//! (ngspice manual, "Power MOSFET model (VDMOS)").
//!
//! I_D = K_p·((V_GS − V_th)·V_DS − V_DS²/2) in the triode region (V_DS < V_GS − V_th) and
//! K_p/2·(V_GS − V_th)² in saturation; the channel is symmetric, so with the drain below the
//! source the roles swap. K_p = g_fs²/(2·I_D) at the datasheet's g_fs test current, since
//! g_fs = dI_D/dV_GS = K_p·(V_GS − V_th) = √(2·K_p·I_D) in saturation.

/// The datasheet figures of a switch in the form the circuit needs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SwitchFigures {
    /// C_GS = C_iss − C_rss.
    pub gate_source_capacitance_f: f64,
    /// C_GD = C_rss, held constant.
    pub gate_drain_capacitance_f: f64,
    /// V_GS(th).
    pub threshold_v: f64,
    /// K_p, A/V².
    pub transconductance_parameter_a_per_v2: f64,
    /// R_DS(on), in series with the channel at the drain.
    pub drain_resistance_ohm: f64,
}

/// K_p = g_fs²/(2·I_D) (Shichman–Hodges square law solved at the datasheet's test point).
pub fn transconductance_parameter_a_per_v2(
    transconductance_s: f64,
    at_drain_current_a: f64,
) -> f64 {
    transconductance_s * transconductance_s / (2.0 * at_drain_current_a)
}

/// Drain current at the terminals and its partial derivatives.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ChannelCurrent {
    pub current_a: f64,
    pub d_gate_source_s: f64,
    pub d_drain_source_s: f64,
}

impl SwitchFigures {
    /// The channel current from drain to source at terminal voltages `gate_source_v` and
    /// `drain_source_v`. The voltage across the channel itself (inside R_DS(on)) is found in
    /// closed form for each region of the square law, so no inner iteration is needed.
    pub fn channel(&self, gate_source_v: f64, drain_source_v: f64) -> ChannelCurrent {
        let kp = self.transconductance_parameter_a_per_v2;
        let rd = self.drain_resistance_ohm;
        let a = rd * kp;
        let overdrive_v = gate_source_v - self.threshold_v;
        let vd = drain_source_v;
        // (I, ∂I/∂V_GS and ∂I/∂V_DS of the channel alone at its own voltage).
        let (current_a, f_g, f_d) = if overdrive_v > 0.0 {
            let saturation_a = 0.5 * kp * overdrive_v * overdrive_v;
            if vd - rd * saturation_a >= overdrive_v {
                (saturation_a, kp * overdrive_v, 0.0)
            } else {
                // Triode, either direction: v + R·K_p·(V_ov·v − v²/2) = V_D, the root below V_ov
                // in its cancellation-free form.
                let b = 1.0 + a * overdrive_v;
                let v = 2.0 * vd / (b + (b * b - 2.0 * a * vd).max(0.0).sqrt());
                let i = kp * (overdrive_v * v - 0.5 * v * v);
                (i, kp * v, kp * (overdrive_v - v))
            }
        } else if vd < overdrive_v {
            // Off forward, but with the drain pulled below the source by more than V_th − V_GS the
            // channel conducts backwards in saturation: I = −K_p/2·w², w = V_ov − v > 0.
            let w = if a > 0.0 {
                ((1.0 + 2.0 * a * (overdrive_v - vd)).sqrt() - 1.0) / a
            } else {
                overdrive_v - vd
            };
            (-0.5 * kp * w * w, -kp * w, kp * w)
        } else {
            (0.0, 0.0, 0.0)
        };
        // The terminal voltage is v + R·I(v): implicit differentiation through the resistance.
        let scale = 1.0 / (1.0 + rd * f_d);
        ChannelCurrent {
            current_a,
            d_gate_source_s: f_g * scale,
            d_drain_source_s: f_d * scale,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn switch(rd: f64) -> SwitchFigures {
        SwitchFigures {
            gate_source_capacitance_f: 1e-9,
            gate_drain_capacitance_f: 1e-10,
            threshold_v: 4.0,
            transconductance_parameter_a_per_v2: 10.0,
            drain_resistance_ohm: rd,
        }
    }

    #[test]
    fn kp_from_the_datasheet_transconductance() {
        // g_fs 20 S at 18 A: K_p = 400/36 = 11.11 A/V² (the square law solved for K_p).
        assert!((transconductance_parameter_a_per_v2(20.0, 18.0) - 400.0 / 36.0).abs() < 1e-12);
    }

    #[test]
    fn without_drain_resistance_it_is_the_square_law() {
        // Shichman–Hodges: V_ov 6 V, K_p 10: saturation 180 A; triode at 1 V: 10·(6 − 0.5) = 55 A.
        let s = switch(0.0);
        assert!((s.channel(10.0, 20.0).current_a - 180.0).abs() < 1e-9);
        assert!((s.channel(10.0, 1.0).current_a - 55.0).abs() < 1e-9);
        assert!((s.channel(10.0, -1.0).current_a + 65.0).abs() < 1e-9);
        assert_eq!(s.channel(3.0, 10.0).current_a, 0.0);
    }

    #[test]
    fn series_resistance_carries_the_same_current() {
        // The channel at its inner voltage plus I·R gives back the terminal voltage.
        let s = switch(0.05);
        for vd in [-2.0, -0.3, 0.1, 1.0, 5.9, 30.0] {
            let i = s.channel(10.0, vd).current_a;
            let inner = vd - 0.05 * i;
            let alone = switch(0.0).channel(10.0, inner).current_a;
            assert!(
                (alone - i).abs() < 1e-9 * i.abs().max(1.0),
                "{vd}: {alone} vs {i}"
            );
        }
        // A fully on switch at small current is R_DS(on) plus the channel's 1/(K_p·V_ov).
        let g = s.channel(10.0, 1e-6).current_a / 1e-6;
        assert!((1.0 / g - (0.05 + 1.0 / 60.0)).abs() < 1e-6);
    }

    #[test]
    fn derivatives_match_finite_differences() {
        let s = switch(0.03);
        for (vg, vd) in [
            (10.0, 0.5),
            (10.0, 40.0),
            (5.0, 2.0),
            (2.0, -3.0),
            (8.0, -0.4),
        ] {
            let c = s.channel(vg, vd);
            let h = 1e-6;
            let dg =
                (s.channel(vg + h, vd).current_a - s.channel(vg - h, vd).current_a) / (2.0 * h);
            let dd =
                (s.channel(vg, vd + h).current_a - s.channel(vg, vd - h).current_a) / (2.0 * h);
            assert!(
                (dg - c.d_gate_source_s).abs() < 1e-4 * dg.abs().max(1.0),
                "{vg},{vd}"
            );
            assert!(
                (dd - c.d_drain_source_s).abs() < 1e-4 * dd.abs().max(1.0),
                "{vg},{vd}"
            );
        }
    }
}
