//! The cross-coupled driver as equations: nodal analysis with the inductor currents as the
//! other states (C. Desoer & E. Kuh, *Basic Circuit Theory*, McGraw-Hill 1969, cited from
//! memory: capacitor voltages and inductor currents as the state of a network).
//!
//! Topology: the supply V_s(t) feeds each drain through a choke (L_ch with its DC resistance)
//! and each gate through a gate resistor; a zener clamps each gate to ground; a fast diode from
//! each gate (anode) to the opposite drain (cathode) turns that switch off while the other one
//! conducts; the tank (work coil with its resistance, the workpiece's reflected resistance, and
//! the capacitor bank) sits between the drains. The capacitor's ESR is placed in the tank loop
//! in series with the coil: the loop current flows through both branches, so its loss is the
//! same to within 1/Q² of the tank.
//!
//! States: node voltages V_D1, V_D2, V_G1, V_G2, choke currents I_A (into D1) and I_B (into D2),
//! and the loop current I_T (from D1 through the coil to D2). The node capacitances (tank,
//! C_GD, C_GS) form a constant matrix C, so C·dV/dt = (currents into the nodes).

// Matrix and state-vector arithmetic reads best by index.
#![allow(clippy::needless_range_loop)]

use super::diode::{self, BODY_DIODE, GATE_DIODE};
use super::mosfet::SwitchFigures;

/// Node voltages first, then inductor currents.
pub const STATES: usize = 7;
pub const D1: usize = 0;
pub const D2: usize = 1;
pub const G1: usize = 2;
pub const G2: usize = 3;
pub const CHOKE_A: usize = 4;
pub const CHOKE_B: usize = 5;
pub const LOOP: usize = 6;

/// Power terms integrated alongside the states, in this order.
pub const POWERS: usize = 10;
pub const P_SUPPLY: usize = 0;
pub const P_SWITCH_1: usize = 1;
pub const P_SWITCH_2: usize = 2;
pub const P_CONDUCTION_1: usize = 3;
pub const P_CONDUCTION_2: usize = 4;
pub const P_CHOKES: usize = 5;
pub const P_COIL_AND_CAPACITOR: usize = 6;
pub const P_WORKPIECE: usize = 7;
pub const P_GATE_RESISTORS: usize = 8;
pub const P_DIODES: usize = 9;

/// Every value the simulation needs, in SI units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DriverCircuit {
    pub supply_voltage_v: f64,
    /// The supply rises linearly from 0 V over this time.
    pub supply_rise_time_s: f64,
    pub tank_capacitance_f: f64,
    pub coil_inductance_h: f64,
    pub coil_resistance_ohm: f64,
    /// The whole bank's equivalent series resistance.
    pub capacitor_esr_ohm: f64,
    pub workpiece_resistance_ohm: f64,
    /// Each of the two chokes.
    pub choke_inductance_h: f64,
    pub choke_resistance_ohm: f64,
    pub gate_resistance_ohm: f64,
    /// `None` without gate clamps.
    pub zener_voltage_v: Option<f64>,
    pub switch: SwitchFigures,
}

impl DriverCircuit {
    pub fn supply_v(&self, t_s: f64) -> f64 {
        if t_s >= self.supply_rise_time_s {
            self.supply_voltage_v
        } else {
            self.supply_voltage_v * (t_s / self.supply_rise_time_s).max(0.0)
        }
    }

    /// Resistance in series with the coil current: coil, ESR and workpiece.
    pub fn loop_resistance_ohm(&self) -> f64 {
        self.coil_resistance_ohm + self.capacitor_esr_ohm + self.workpiece_resistance_ohm
    }

    /// The node capacitance matrix over (D1, D2, G1, G2), inverted once.
    pub fn inverse_node_capacitance(&self) -> [[f64; 4]; 4] {
        let ct = self.tank_capacitance_f;
        let cgd = self.switch.gate_drain_capacitance_f;
        let cgs = self.switch.gate_source_capacitance_f;
        let m = [
            [ct + cgd, -ct, -cgd, 0.0],
            [-ct, ct + cgd, 0.0, -cgd],
            [-cgd, 0.0, cgs + cgd, 0.0],
            [0.0, -cgd, 0.0, cgs + cgd],
        ];
        invert4(m)
    }
}

/// Currents into the nodes and inductor voltages at one instant, with their Jacobian.
pub struct Evaluation {
    /// d(state)/dt.
    pub derivative: [f64; STATES],
    /// ∂(derivative)/∂(state), row-major.
    pub jacobian: [[f64; STATES]; STATES],
    pub powers_w: [f64; POWERS],
}

/// Evaluates the circuit equations at `y` and time `t_s`.
pub fn evaluate(c: &DriverCircuit, inverse_c: &[[f64; 4]; 4], t_s: f64, y: &[f64]) -> Evaluation {
    let vs = c.supply_v(t_s);
    let (vd1, vd2, vg1, vg2) = (y[D1], y[D2], y[G1], y[G2]);
    let (ia, ib, it) = (y[CHOKE_A], y[CHOKE_B], y[LOOP]);
    // Node currents (into D1, D2, G1, G2) and their conductance matrix ∂I/∂(state).
    let mut node = [0.0; 4];
    let mut g = [[0.0; STATES]; 4];

    // Chokes and coil deliver their currents to the nodes.
    node[0] += ia - it;
    node[1] += ib + it;
    g[0][CHOKE_A] += 1.0;
    g[0][LOOP] -= 1.0;
    g[1][CHOKE_B] += 1.0;
    g[1][LOOP] += 1.0;

    let mut powers_w = [0.0; POWERS];
    let switches = [
        (D1, G1, P_SWITCH_1, P_CONDUCTION_1),
        (D2, G2, P_SWITCH_2, P_CONDUCTION_2),
    ];
    for (d, gate, p_switch, p_conduction) in switches {
        let (vd, vg) = (y[d], y[gate]);
        let ch = c.switch.channel(vg, vd);
        // The body diode conducts from source (ground) to drain.
        let (body_a, body_s) = BODY_DIODE.current_a(-vd);
        node[d] += body_a - ch.current_a;
        g[d][d] -= body_s + ch.d_drain_source_s;
        g[d][gate] -= ch.d_gate_source_s;
        powers_w[p_switch] = ch.current_a * vd - body_a * vd;
        powers_w[p_conduction] = ch.current_a * ch.current_a * c.switch.drain_resistance_ohm;
    }

    // Gate resistors from the supply, and the zener clamps.
    let rg = c.gate_resistance_ohm;
    for gate in [G1, G2] {
        let vg = y[gate];
        node[gate] += (vs - vg) / rg;
        g[gate][gate] -= 1.0 / rg;
        powers_w[P_GATE_RESISTORS] += (vs - vg) * (vs - vg) / rg;
        if let Some(vz) = c.zener_voltage_v {
            let (iz, gz) = diode::zener_current_a(vg, vz);
            node[gate] -= iz;
            g[gate][gate] -= gz;
            powers_w[P_DIODES] += iz * vg;
        }
    }

    // Cross-coupled diodes: gate 1 to drain 2, gate 2 to drain 1.
    for (gate, drain) in [(G1, D2), (G2, D1)] {
        let v = y[gate] - y[drain];
        let (i, s) = GATE_DIODE.current_a(v);
        node[gate] -= i;
        node[drain] += i;
        g[gate][gate] -= s;
        g[gate][drain] += s;
        g[drain][gate] += s;
        g[drain][drain] -= s;
        powers_w[P_DIODES] += i * v;
    }

    let mut derivative = [0.0; STATES];
    let mut jacobian = [[0.0; STATES]; STATES];
    for row in 0..4 {
        for k in 0..4 {
            derivative[row] += inverse_c[row][k] * node[k];
            for col in 0..STATES {
                jacobian[row][col] += inverse_c[row][k] * g[k][col];
            }
        }
    }

    let lch = c.choke_inductance_h;
    let rch = c.choke_resistance_ohm;
    derivative[CHOKE_A] = (vs - vd1 - rch * ia) / lch;
    derivative[CHOKE_B] = (vs - vd2 - rch * ib) / lch;
    jacobian[CHOKE_A][D1] = -1.0 / lch;
    jacobian[CHOKE_A][CHOKE_A] = -rch / lch;
    jacobian[CHOKE_B][D2] = -1.0 / lch;
    jacobian[CHOKE_B][CHOKE_B] = -rch / lch;
    let l = c.coil_inductance_h;
    let r_loop = c.loop_resistance_ohm();
    derivative[LOOP] = (vd1 - vd2 - r_loop * it) / l;
    jacobian[LOOP][D1] = 1.0 / l;
    jacobian[LOOP][D2] = -1.0 / l;
    jacobian[LOOP][LOOP] = -r_loop / l;

    let gate_a = (vs - vg1) / rg + (vs - vg2) / rg;
    powers_w[P_SUPPLY] = vs * (ia + ib + gate_a);
    powers_w[P_CHOKES] = rch * (ia * ia + ib * ib);
    powers_w[P_COIL_AND_CAPACITOR] = (c.coil_resistance_ohm + c.capacitor_esr_ohm) * it * it;
    powers_w[P_WORKPIECE] = c.workpiece_resistance_ohm * it * it;

    Evaluation {
        derivative,
        jacobian,
        powers_w,
    }
}

/// The supply current at state `y`: both chokes and both gate resistors.
pub fn supply_current_a(c: &DriverCircuit, t_s: f64, y: &[f64]) -> f64 {
    let vs = c.supply_v(t_s);
    y[CHOKE_A] + y[CHOKE_B] + (2.0 * vs - y[G1] - y[G2]) / c.gate_resistance_ohm
}

/// Inverse of a 4×4 matrix by Gauss–Jordan elimination with partial pivoting (the capacitance
/// matrix is symmetric positive definite, so it always succeeds).
fn invert4(mut m: [[f64; 4]; 4]) -> [[f64; 4]; 4] {
    let mut inv = [[0.0; 4]; 4];
    for (i, row) in inv.iter_mut().enumerate() {
        row[i] = 1.0;
    }
    for col in 0..4 {
        let pivot = (col..4)
            .max_by(|&a, &b| m[a][col].abs().total_cmp(&m[b][col].abs()))
            .unwrap_or(col);
        m.swap(col, pivot);
        inv.swap(col, pivot);
        let p = m[col][col];
        for k in 0..4 {
            m[col][k] /= p;
            inv[col][k] /= p;
        }
        for row in 0..4 {
            if row != col {
                let f = m[row][col];
                for k in 0..4 {
                    m[row][k] -= f * m[col][k];
                    inv[row][k] -= f * inv[col][k];
                }
            }
        }
    }
    inv
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn inverse_times_matrix_is_identity() {
        let m = [
            [2e-6, -1e-6, -1e-10, 0.0],
            [-1e-6, 2e-6, 0.0, -1e-10],
            [-1e-10, 0.0, 2e-9, 0.0],
            [0.0, -1e-10, 0.0, 2e-9],
        ];
        let inv = invert4(m);
        for i in 0..4 {
            for j in 0..4 {
                let p: f64 = (0..4).map(|k| m[i][k] * inv[k][j]).sum();
                let expected = if i == j { 1.0 } else { 0.0 };
                assert!((p - expected).abs() < 1e-9, "{i},{j}: {p}");
            }
        }
    }
}
