//! Integrates [`DriverCircuit`] from switch-on to steady state and reads the answers off the
//! waveforms.
//!
//! The solver's dense output is sampled on a grid of [`SAMPLES_PER_PERIOD`] points per estimated
//! period. Cycles are cut at the tank voltage's rising zero crossings; the losses are exact
//! integrals of instantaneous power carried along with the states (the solver's output
//! quadrature), differenced between crossings. Steady state: once the supply has finished
//! rising, [`STEADY_CYCLES`] consecutive cycles whose period, tank peak and input power each
//! change by less than [`STEADY_CHANGE`]; the answers are then measured over
//! [`MEASURED_CYCLES`] more cycles.

// Matrix and state-vector arithmetic reads best by index.
#![allow(clippy::needless_range_loop)]

use diffsol::{NalgebraLU, NalgebraMat, OdeBuilder, OdeSolverMethod};

use super::circuit::{self, DriverCircuit, POWERS, STATES};
use super::{LossSplit, Simulation, Startup, TracePoint};

pub const SAMPLES_PER_PERIOD: f64 = 64.0;
pub const STEADY_CYCLES: usize = 6;
pub const STEADY_CHANGE: f64 = 2e-3;
pub const MEASURED_CYCLES: usize = 12;
/// Settled: each later cycle's mean supply current within this share of the steady value.
pub const SETTLE_BAND: f64 = 0.05;
/// The loop current the simulation starts from: a real driver starts from its mismatches; a
/// perfectly symmetric model needs a seed (the same one the ngspice checks use).
pub const SEED_LOOP_CURRENT_A: f64 = 0.01;
/// Give up after the supply's rise plus this many estimated periods.
const MAX_CYCLES_AFTER_RISE: f64 = 3000.0;
/// Points of the start-up trace kept for a chart.
const TRACE_POINTS: usize = 240;

/// Why a simulation has no answer.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SimulationError {
    #[error("the circuit values are not all positive and finite")]
    InvalidCircuit,
    #[error("the driver did not settle into steady oscillation within the simulated time")]
    NoSteadyOscillation,
    #[error("the integration failed: {0}")]
    Solver(String),
}

/// One cycle between rising zero crossings of the tank voltage.
#[derive(Debug, Clone)]
struct Cycle {
    start_s: f64,
    end_s: f64,
    start_energy_j: [f64; POWERS],
    end_energy_j: [f64; POWERS],
    tank_peak_v: f64,
}

impl Cycle {
    fn period_s(&self) -> f64 {
        self.end_s - self.start_s
    }
    fn mean_power_w(&self, term: usize) -> f64 {
        (self.end_energy_j[term] - self.start_energy_j[term]) / self.period_s()
    }
}

/// One grid sample.
#[derive(Debug, Clone, Copy)]
struct Sample {
    t_s: f64,
    y: [f64; STATES],
    energy_j: [f64; POWERS],
    supply_a: f64,
}

/// Simulates the driver from switch-on until steady oscillation.
pub fn simulate(c: &DriverCircuit) -> Result<Simulation, SimulationError> {
    check(c)?;
    let inverse_c = c.inverse_node_capacitance();
    let period_estimate_s =
        2.0 * std::f64::consts::PI * (c.coil_inductance_h * c.tank_capacitance_f).sqrt();
    let sample_dt_s = period_estimate_s / SAMPLES_PER_PERIOD;
    let t_max_s = c.supply_rise_time_s + MAX_CYCLES_AFTER_RISE * period_estimate_s;

    let rhs_circuit = *c;
    let jac_circuit = *c;
    let out_circuit = *c;
    let fd_circuit = *c;
    let problem = OdeBuilder::<NalgebraMat<f64>>::new()
        .rtol(1e-4)
        .atol(tolerances(c))
        .h0(period_estimate_s * 1e-4)
        .rhs_implicit(
            move |y, _p, t, dy| {
                let e = circuit::evaluate(&rhs_circuit, &inverse_c, t, y);
                dy.copy_from_slice(&e.derivative);
            },
            move |y, _p, t, v, jv| {
                let e = circuit::evaluate(&jac_circuit, &inverse_c, t, y);
                for (row, out) in e.jacobian.iter().zip(jv.iter_mut()) {
                    *out = row.iter().zip(v).map(|(a, b)| a * b).sum();
                }
            },
        )
        .init(
            |_p, _t, y| {
                y.fill(0.0);
                y[circuit::LOOP] = SEED_LOOP_CURRENT_A;
            },
            STATES,
        )
        .out_implicit(
            move |y, _p, t, out| {
                out.copy_from_slice(&circuit::evaluate(&out_circuit, &inverse_c, t, y).powers_w);
            },
            move |y, _p, t, v, jv| {
                // Only sensitivity analysis asks for this; a forward difference is enough.
                let base = circuit::evaluate(&fd_circuit, &inverse_c, t, y).powers_w;
                let h = 1e-7;
                let shifted: Vec<f64> = y.iter().zip(v).map(|(a, b)| a + h * b).collect();
                let moved = circuit::evaluate(&fd_circuit, &inverse_c, t, &shifted).powers_w;
                for k in 0..POWERS {
                    jv[k] = (moved[k] - base[k]) / h;
                }
            },
            POWERS,
        )
        .integrate_out(true)
        .build()
        .map_err(|e| SimulationError::Solver(e.to_string()))?;
    let mut solver = problem
        .bdf::<NalgebraLU<f64>>()
        .map_err(|e| SimulationError::Solver(e.to_string()))?;
    // The time limit below bounds the work, not a step count.
    solver.config_mut().maximum_number_timesteps = usize::MAX;

    let mut record = Recorder::new(c);
    let mut next_sample_s = 0.0;
    loop {
        solver
            .step()
            .map_err(|e| SimulationError::Solver(e.to_string()))?;
        let t_now = solver.state().t;
        while next_sample_s <= t_now {
            let y = solver
                .interpolate(next_sample_s)
                .map_err(|e| SimulationError::Solver(e.to_string()))?;
            let g = solver
                .interpolate_out(next_sample_s)
                .map_err(|e| SimulationError::Solver(e.to_string()))?;
            let mut sample = Sample {
                t_s: next_sample_s,
                y: [0.0; STATES],
                energy_j: [0.0; POWERS],
                supply_a: 0.0,
            };
            for k in 0..STATES {
                sample.y[k] = y[k];
            }
            for k in 0..POWERS {
                sample.energy_j[k] = g[k];
            }
            sample.supply_a = circuit::supply_current_a(c, sample.t_s, &sample.y);
            if let Some(done) = record.push(sample) {
                return Ok(done);
            }
            next_sample_s += sample_dt_s;
        }
        if t_now > t_max_s {
            return Err(SimulationError::NoSteadyOscillation);
        }
    }
}

fn check(c: &DriverCircuit) -> Result<(), SimulationError> {
    let positive = [
        c.supply_voltage_v,
        c.supply_rise_time_s,
        c.tank_capacitance_f,
        c.coil_inductance_h,
        c.choke_inductance_h,
        c.gate_resistance_ohm,
        c.switch.gate_source_capacitance_f,
        c.switch.gate_drain_capacitance_f,
        c.switch.transconductance_parameter_a_per_v2,
    ];
    let non_negative = [
        c.coil_resistance_ohm,
        c.capacitor_esr_ohm,
        c.workpiece_resistance_ohm,
        c.choke_resistance_ohm,
        c.switch.drain_resistance_ohm,
        c.switch.threshold_v,
        c.zener_voltage_v.unwrap_or(1.0),
    ];
    let ok = positive.iter().all(|v| v.is_finite() && *v > 0.0)
        && non_negative.iter().all(|v| v.is_finite() && *v >= 0.0);
    if ok {
        Ok(())
    } else {
        Err(SimulationError::InvalidCircuit)
    }
}

/// Absolute tolerances scaled to the circuit: a thousandth of the supply for voltages, of the
/// tank's circulating current for the loop, of the supply's current scale for the chokes.
fn tolerances(c: &DriverCircuit) -> Vec<f64> {
    let v = 1e-3 * c.supply_voltage_v;
    let z0 = (c.coil_inductance_h / c.tank_capacitance_f).sqrt();
    let loop_a = 1e-3 * std::f64::consts::PI * c.supply_voltage_v / z0;
    let choke_a = 1e-4 * loop_a.max(1e-3);
    vec![v, v, v, v, choke_a, choke_a, loop_a]
}

/// Follows the samples: start-up peaks, cycles, steady state, then the measurement window.
struct Recorder {
    circuit: DriverCircuit,
    previous: Option<Sample>,
    last_crossing: Option<(f64, [f64; POWERS])>,
    cycle_peak_v: f64,
    cycles: Vec<Cycle>,
    drain_peak_v: f64,
    supply_peak_a: f64,
    choke_peak_a: f64,
    trace: Vec<TracePoint>,
    /// Index of the first measured cycle, once steady.
    steady_from: Option<usize>,
    window: Vec<Sample>,
}

impl Recorder {
    fn new(c: &DriverCircuit) -> Self {
        Recorder {
            circuit: *c,
            previous: None,
            last_crossing: None,
            cycle_peak_v: 0.0,
            cycles: Vec::new(),
            drain_peak_v: 0.0,
            supply_peak_a: 0.0,
            choke_peak_a: 0.0,
            trace: Vec::new(),
            steady_from: None,
            window: Vec::new(),
        }
    }

    fn push(&mut self, s: Sample) -> Option<Simulation> {
        let y = &s.y;
        if self.steady_from.is_none() {
            self.drain_peak_v = self.drain_peak_v.max(y[circuit::D1]).max(y[circuit::D2]);
            self.supply_peak_a = self.supply_peak_a.max(s.supply_a);
            self.choke_peak_a = self
                .choke_peak_a
                .max(y[circuit::CHOKE_A])
                .max(y[circuit::CHOKE_B]);
            self.trace.push(TracePoint {
                t_s: s.t_s,
                supply_current_a: s.supply_a,
                drain_v: y[circuit::D1],
            });
        } else {
            self.window.push(s);
        }
        let tank_v = y[circuit::D1] - y[circuit::D2];
        self.cycle_peak_v = self.cycle_peak_v.max(tank_v.abs());
        if let Some(p) = self.previous {
            let before_v = p.y[circuit::D1] - p.y[circuit::D2];
            if before_v < 0.0 && tank_v >= 0.0 {
                let share = before_v / (before_v - tank_v);
                let t = p.t_s + share * (s.t_s - p.t_s);
                let mut energy = [0.0; POWERS];
                for (k, e) in energy.iter_mut().enumerate() {
                    *e = p.energy_j[k] + share * (s.energy_j[k] - p.energy_j[k]);
                }
                if let Some((start_s, start_energy_j)) = self.last_crossing {
                    self.cycles.push(Cycle {
                        start_s,
                        end_s: t,
                        start_energy_j,
                        end_energy_j: energy,
                        tank_peak_v: self.cycle_peak_v,
                    });
                    self.cycle_peak_v = 0.0;
                    if let Some(done) = self.after_cycle() {
                        return Some(done);
                    }
                }
                self.last_crossing = Some((t, energy));
            }
        }
        self.previous = Some(s);
        None
    }

    fn after_cycle(&mut self) -> Option<Simulation> {
        let n = self.cycles.len();
        match self.steady_from {
            None => {
                if n < STEADY_CYCLES + 1
                    || self.cycles[n - STEADY_CYCLES - 1].start_s < self.circuit.supply_rise_time_s
                {
                    return None;
                }
                let recent = &self.cycles[n - STEADY_CYCLES - 1..];
                let change = |f: &dyn Fn(&Cycle) -> f64| {
                    recent
                        .windows(2)
                        .map(|w| (f(&w[1]) / f(&w[0]) - 1.0).abs())
                        .fold(0.0, f64::max)
                };
                let steady = change(&|c: &Cycle| c.period_s()) < STEADY_CHANGE
                    && change(&|c: &Cycle| c.tank_peak_v) < STEADY_CHANGE
                    && change(&|c: &Cycle| c.mean_power_w(circuit::P_SUPPLY)) < STEADY_CHANGE;
                if steady {
                    self.steady_from = Some(n);
                }
                None
            }
            Some(first) if n >= first + MEASURED_CYCLES => Some(self.finish(first)),
            Some(_) => None,
        }
    }

    fn finish(&mut self, first: usize) -> Simulation {
        let measured = &self.cycles[first..first + MEASURED_CYCLES];
        let start = &measured[0];
        let end = &measured[MEASURED_CYCLES - 1];
        let span_s = end.end_s - start.start_s;
        let mean_w = |term: usize| (end.end_energy_j[term] - start.start_energy_j[term]) / span_s;
        let vin = self.circuit.supply_voltage_v;
        let window: Vec<&Sample> = self
            .window
            .iter()
            .filter(|s| s.t_s >= start.start_s && s.t_s <= end.end_s)
            .collect();
        let range = |f: &dyn Fn(&Sample) -> f64| {
            window
                .iter()
                .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), s| {
                    (lo.min(f(s)), hi.max(f(s)))
                })
        };
        // The swing about the cycle means: a supply current still drifting slowly (the chokes'
        // long time constant) is not ripple.
        let vin_mid = self.circuit.supply_voltage_v;
        let first_mean_a = start.mean_power_w(circuit::P_SUPPLY) / vin_mid;
        let last_mean_a = end.mean_power_w(circuit::P_SUPPLY) / vin_mid;
        let first_mid_s = 0.5 * (start.start_s + start.end_s);
        let drift_a_per_s =
            (last_mean_a - first_mean_a) / (0.5 * (end.start_s + end.end_s) - first_mid_s);
        let trend_a = |t: f64| drift_a_per_s * (t - first_mid_s);
        let (supply_lo, supply_hi) = range(&|s| s.supply_a - trend_a(s.t_s));
        let (_, supply_max) = range(&|s| s.supply_a);
        let (choke_lo, choke_hi) = range(&|s| s.y[circuit::CHOKE_A]);
        let (_, choke_b_hi) = range(&|s| s.y[circuit::CHOKE_B]);
        let (_, gate_hi) = range(&|s| s.y[circuit::G1].max(s.y[circuit::G2]));
        let (_, drain_hi) = range(&|s| s.y[circuit::D1].max(s.y[circuit::D2]));
        let tank_peak_voltage_v = measured.iter().map(|c| c.tank_peak_v).fold(0.0, f64::max);
        let input_w = mean_w(circuit::P_SUPPLY);
        let supply_current_a = input_w / vin;

        // Settled: from the first cycle after which every cycle's mean supply current is within
        // the band of the steady value.
        let band_a = SETTLE_BAND * supply_current_a.abs();
        let settle_s = self
            .cycles
            .iter()
            .rposition(|c| {
                (c.mean_power_w(circuit::P_SUPPLY) / vin - supply_current_a).abs() > band_a
            })
            .map_or(0.0, |k| self.cycles[k].end_s);

        let losses = LossSplit {
            input_w,
            switches_w: mean_w(circuit::P_SWITCH_1) + mean_w(circuit::P_SWITCH_2),
            chokes_w: mean_w(circuit::P_CHOKES),
            coil_and_capacitor_w: mean_w(circuit::P_COIL_AND_CAPACITOR),
            workpiece_w: mean_w(circuit::P_WORKPIECE),
            gate_resistors_w: mean_w(circuit::P_GATE_RESISTORS),
            diodes_w: mean_w(circuit::P_DIODES),
        };
        Simulation {
            frequency_hz: MEASURED_CYCLES as f64 / span_s,
            tank_peak_voltage_v,
            switch_loss_w: losses.switches_w / 2.0,
            switch_conduction_loss_w: (mean_w(circuit::P_CONDUCTION_1)
                + mean_w(circuit::P_CONDUCTION_2))
                / 2.0,
            gate_high_v: gate_hi,
            supply_current_a,
            supply_ripple_a_pp: supply_hi - supply_lo,
            choke_ripple_a_pp: choke_hi - choke_lo,
            steady_choke_peak_a: choke_hi.max(choke_b_hi),
            steady_drain_peak_v: drain_hi,
            losses,
            startup: Startup {
                drain_peak_v: self.drain_peak_v.max(drain_hi),
                supply_peak_a: self.supply_peak_a.max(supply_max),
                choke_peak_a: self.choke_peak_a.max(choke_hi).max(choke_b_hi),
                settle_s,
            },
            startup_trace: decimate(&self.trace, settle_s),
        }
    }
}

/// The start-up trace up to a little past settling, as at most [`TRACE_POINTS`] points each
/// holding its interval's highest supply current and drain voltage.
fn decimate(trace: &[TracePoint], settle_s: f64) -> Vec<TracePoint> {
    let end_s = (settle_s * 1.2).max(trace.last().map_or(0.0, |p| p.t_s).min(settle_s * 1.2));
    let kept: Vec<&TracePoint> = trace.iter().filter(|p| p.t_s <= end_s).collect();
    if kept.is_empty() {
        return Vec::new();
    }
    let per_bucket = kept.len().div_ceil(TRACE_POINTS);
    kept.chunks(per_bucket)
        .map(|chunk| TracePoint {
            t_s: chunk[0].t_s,
            supply_current_a: chunk
                .iter()
                .map(|p| p.supply_current_a)
                .fold(f64::MIN, f64::max),
            drain_v: chunk.iter().map(|p| p.drain_v).fold(f64::MIN, f64::max),
        })
        .collect()
}
