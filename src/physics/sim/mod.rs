//! A time-domain simulation of the whole cross-coupled driver, from switch-on to steady state.
//!
//! One file per device ([`mosfet`], [`diode`]), one for the circuit's equations ([`circuit`]) and
//! one for the integration and what is read off it ([`integrate`]). The equations are stiff
//! (nanosecond gate and drain edges against a period of microseconds, exponential junctions), so
//! they are integrated with the variable-order BDF method of the `diffsol` crate (after
//! Shampine & Reichelt, "The MATLAB ODE suite", SIAM J. Sci. Comput. 18(1), 1997), given the
//! circuit's exact Jacobian. Pure: no I/O, no clock.

pub mod circuit;
pub mod diode;
pub mod integrate;
pub mod mosfet;

pub use circuit::DriverCircuit;
pub use integrate::{SimulationError, simulate};
pub use mosfet::{SwitchFigures, transconductance_parameter_a_per_v2};

/// What switch-on does.
#[derive(Debug, Clone, PartialEq)]
pub struct Startup {
    /// Highest drain voltage from switch-on to steady state.
    pub drain_peak_v: f64,
    /// Highest supply current (both chokes and both gate resistors).
    pub supply_peak_a: f64,
    /// Highest current in either choke.
    pub choke_peak_a: f64,
    /// From switch-on until each later cycle's mean supply current stays within 5 % of the
    /// steady value.
    pub settle_s: f64,
}

/// Mean power of each loss over the steady window, W.
#[derive(Debug, Clone, PartialEq)]
pub struct LossSplit {
    pub input_w: f64,
    /// Both switches together, all of their dissipation.
    pub switches_w: f64,
    pub chokes_w: f64,
    /// Coil resistance and capacitor ESR.
    pub coil_and_capacitor_w: f64,
    pub workpiece_w: f64,
    pub gate_resistors_w: f64,
    /// Cross-coupled diodes and zener clamps.
    pub diodes_w: f64,
}

impl LossSplit {
    pub fn sum_of_losses_w(&self) -> f64 {
        self.switches_w
            + self.chokes_w
            + self.coil_and_capacitor_w
            + self.workpiece_w
            + self.gate_resistors_w
            + self.diodes_w
    }
}

/// One sample of the start-up trace (an interval's highest values, for a chart).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TracePoint {
    pub t_s: f64,
    pub supply_current_a: f64,
    pub drain_v: f64,
}

/// What the simulation answers: the steady state and the start-up.
#[derive(Debug, Clone, PartialEq)]
pub struct Simulation {
    pub frequency_hz: f64,
    /// Peak of the voltage across the tank (drain to drain).
    pub tank_peak_voltage_v: f64,
    /// Per switch, all of it: channel, R_DS(on) and body diode, hand-overs included.
    pub switch_loss_w: f64,
    /// Per switch, the I²·R_DS(on) part alone.
    pub switch_conduction_loss_w: f64,
    /// Highest gate voltage in steady state.
    pub gate_high_v: f64,
    /// Mean supply current in steady state.
    pub supply_current_a: f64,
    pub supply_ripple_a_pp: f64,
    pub choke_ripple_a_pp: f64,
    /// Highest steady choke current and drain voltage (without the start-up).
    pub steady_choke_peak_a: f64,
    pub steady_drain_peak_v: f64,
    pub losses: LossSplit,
    pub startup: Startup,
    /// Start-up, decimated for a chart.
    pub startup_trace: Vec<TracePoint>,
}
