//! The driver simulation against ngspice, an independent circuit simulator (ngspice manual,
//! "Power MOSFET model (VDMOS)"; Debian package `ngspice`), on cases spanning 12–48 V,
//! 0.3–3 µH, 0.3–4 µF, chokes 5–200 µH, gate resistors 220–1,000 Ω, idle and loaded.
//!
//! The netlist generator lives here: the same circuit is written for ngspice with its VDMOS model
//! given the same datasheet figures (Cgs = C_iss − C_rss, Cgd = C_rss held constant through
//! Cgdmin = Cgdmax, Vto = V_GS(th), Kp = g_fs²/(2·I_D), R_DS(on) as Rd), the body diode's I_S and
//! n, Shockley diodes for the gate diodes, and each zener as a diode pair (a forward diode, and a
//! diode in series with a source at the breakdown knee). The capacitor's ESR sits in series with
//! the capacitor here, where it physically is. ngspice's waveforms are measured in this file; the
//! simulator's answers are never stored as numbers.
//!
//! Without ngspice the tests say so loudly and pass; CI installs it (`.ci/run`).

use std::path::Path;
use std::process::Command;

use eddybench::physics::sim::circuit::DriverCircuit;
use eddybench::physics::sim::diode::{
    BODY_DIODE, GATE_DIODE, Junction, ZENER_FORWARD, zener_breakdown_offset_v,
};
use eddybench::physics::sim::integrate::SEED_LOOP_CURRENT_A;
use eddybench::physics::sim::{
    Simulation, SwitchFigures, simulate, transconductance_parameter_a_per_v2,
};

const NGSPICE: &str = "/usr/bin/ngspice";

/// A 200 V-class switch's datasheet figures (invented, typical of the class).
fn switch_200v() -> SwitchFigures {
    SwitchFigures {
        gate_source_capacitance_f: 2.0e-9 - 0.2e-9,
        gate_drain_capacitance_f: 0.2e-9,
        threshold_v: 4.0,
        transconductance_parameter_a_per_v2: transconductance_parameter_a_per_v2(20.0, 18.0),
        drain_resistance_ohm: 0.085,
    }
}

/// A 100 V-class switch (invented, typical of the class).
fn switch_100v() -> SwitchFigures {
    SwitchFigures {
        gate_source_capacitance_f: 3.0e-9 - 0.15e-9,
        gate_drain_capacitance_f: 0.15e-9,
        threshold_v: 3.0,
        transconductance_parameter_a_per_v2: transconductance_parameter_a_per_v2(35.0, 30.0),
        drain_resistance_ohm: 0.025,
    }
}

struct Case {
    name: &'static str,
    circuit: DriverCircuit,
}

#[allow(clippy::too_many_arguments)]
fn circuit(
    vin: f64,
    rise_s: f64,
    l: f64,
    c: f64,
    lch: f64,
    rg: f64,
    workpiece_ohm: f64,
    switch: SwitchFigures,
) -> DriverCircuit {
    DriverCircuit {
        supply_voltage_v: vin,
        supply_rise_time_s: rise_s,
        tank_capacitance_f: c,
        coil_inductance_h: l,
        coil_resistance_ohm: 0.008,
        capacitor_esr_ohm: 0.004,
        workpiece_resistance_ohm: workpiece_ohm,
        choke_inductance_h: lch,
        choke_resistance_ohm: 0.02,
        gate_resistance_ohm: rg,
        zener_voltage_v: Some(12.0),
        switch,
    }
}

fn cases() -> Vec<Case> {
    vec![
        Case {
            name: "12 V, 1 µH, 1 µF, 47 µH, 470 Ω, idle (an under-driven gate)",
            circuit: circuit(12.0, 50e-6, 1e-6, 1e-6, 47e-6, 470.0, 0.0, switch_200v()),
        },
        Case {
            name: "24 V, 0.3 µH, 4 µF, 5 µH, 220 Ω, loaded 20 mΩ",
            circuit: circuit(24.0, 50e-6, 0.3e-6, 4e-6, 5e-6, 220.0, 0.02, switch_100v()),
        },
        Case {
            name: "36 V, 3 µH, 0.3 µF, 200 µH, 1000 Ω, loaded 0.2 Ω",
            circuit: circuit(
                36.0,
                50e-6,
                3e-6,
                0.3e-6,
                200e-6,
                1000.0,
                0.2,
                switch_200v(),
            ),
        },
        Case {
            name: "48 V, 2 µH, 0.68 µF, 100 µH, 470 Ω, idle",
            circuit: circuit(
                48.0,
                50e-6,
                2e-6,
                0.68e-6,
                100e-6,
                470.0,
                0.0,
                switch_200v(),
            ),
        },
        Case {
            name: "24 V switched on in 1 µs, 1 µH, 1 µF, 10 µH, 470 Ω, idle",
            circuit: circuit(24.0, 1e-6, 1e-6, 1e-6, 10e-6, 470.0, 0.0, switch_200v()),
        },
        Case {
            name: "30 V, 0.5 µH, 2 µF, 22 µH, 680 Ω, loaded 50 mΩ, 100 µs ramp",
            circuit: circuit(
                30.0,
                100e-6,
                0.5e-6,
                2e-6,
                22e-6,
                680.0,
                0.05,
                switch_100v(),
            ),
        },
    ]
}

fn diode_model(name: &str, j: Junction) -> String {
    format!(
        ".model {name} D(is={:e} n={})\n",
        j.saturation_current_a, j.emission_coefficient
    )
}

/// The ngspice netlist of a case: the same circuit, with ngspice's own device models.
fn netlist(c: &DriverCircuit, data_path: &Path, stop_s: f64, max_step_s: f64) -> String {
    let s = c.switch;
    let kp = s.transconductance_parameter_a_per_v2;
    let knee_v = c.zener_voltage_v.unwrap_or(1e3) - zener_breakdown_offset_v();
    let mut n = String::from("cross-coupled driver\n");
    n += &format!(
        "VS vs 0 PWL(0 0 {:e} {})\n",
        c.supply_rise_time_s, c.supply_voltage_v
    );
    for (side, drain, gate, other_drain) in [("1", "d1", "g1", "d2"), ("2", "d2", "g2", "d1")] {
        n += &format!("L{side} vs n{side} {:e}\n", c.choke_inductance_h);
        n += &format!("RL{side} n{side} {drain} {:e}\n", c.choke_resistance_ohm);
        // Zero-volt sources sense the switch's drain and gate currents for its power.
        n += &format!("VSD{side} {drain} dm{side} 0\n");
        n += &format!("VSG{side} {gate} gm{side} 0\n");
        n += &format!("M{side} dm{side} gm{side} 0 SW\n");
        n += &format!("RG{side} vs {gate} {}\n", c.gate_resistance_ohm);
        n += &format!("DX{side} {gate} {other_drain} DG\n");
        if c.zener_voltage_v.is_some() {
            n += &format!("DZF{side} 0 {gate} DZ\n");
            n += &format!("DZB{side} {gate} z{side} DZ\n");
            n += &format!("VZ{side} z{side} 0 {knee_v}\n");
        }
    }
    n += &format!(
        "LT d1 t1 {:e} IC={SEED_LOOP_CURRENT_A}\n",
        c.coil_inductance_h
    );
    n += &format!(
        "RT t1 d2 {:e}\n",
        c.coil_resistance_ohm + c.workpiece_resistance_ohm
    );
    n += &format!("CT d1 c1 {:e}\n", c.tank_capacitance_f);
    n += &format!("RESR c1 d2 {:e}\n", c.capacitor_esr_ohm.max(1e-6));
    n += &format!(
        ".model SW VDMOS(vto={} kp={kp} rd={} cgs={:e} cgdmin={:e} cgdmax={:e} is={:e} n={})\n",
        s.threshold_v,
        s.drain_resistance_ohm,
        s.gate_source_capacitance_f,
        s.gate_drain_capacitance_f,
        s.gate_drain_capacitance_f,
        BODY_DIODE.saturation_current_a,
        BODY_DIODE.emission_coefficient,
    );
    n += &diode_model("DG", GATE_DIODE);
    n += &diode_model("DZ", ZENER_FORWARD);
    n += &format!(".tran {max_step_s:e} {stop_s:e} 0 {max_step_s:e} uic\n");
    n += ".control\nrun\n";
    n += &format!(
        "wrdata {} v(d1) v(d2) v(g1) v(g2) i(L1) i(L2) i(VS) i(VSD1) i(VSG1) i(VSD2) i(VSG2)\n",
        data_path.display()
    );
    n += ".endc\n.end\n";
    n
}

/// ngspice's waveforms: one row per time point.
struct Waveforms {
    t: Vec<f64>,
    rows: Vec<Row>,
}

#[derive(Clone, Copy)]
struct Row {
    vd1: f64,
    vd2: f64,
    vg1: f64,
    supply_a: f64,
    choke_a: f64,
    choke_b: f64,
    /// Power into each switch at its drain and gate.
    switch_w: [f64; 2],
}

fn run_ngspice(c: &DriverCircuit, stop_s: f64) -> Waveforms {
    let dir = tempfile::tempdir().expect("temp dir");
    let data = dir.path().join("out.data");
    let period_s = 2.0 * std::f64::consts::PI * (c.coil_inductance_h * c.tank_capacitance_f).sqrt();
    let cir = dir.path().join("case.cir");
    std::fs::write(&cir, netlist(c, &data, stop_s, period_s / 300.0)).expect("write netlist");
    let out = Command::new(NGSPICE)
        .arg("-b")
        .arg(&cir)
        .output()
        .expect("run ngspice");
    let text = std::fs::read_to_string(&data).unwrap_or_else(|_| {
        panic!(
            "ngspice wrote no data: {}",
            String::from_utf8_lossy(&out.stderr)
        )
    });
    let mut w = Waveforms {
        t: Vec::new(),
        rows: Vec::new(),
    };
    for line in text.lines() {
        let v: Vec<f64> = line
            .split_whitespace()
            .filter_map(|x| x.parse().ok())
            .collect();
        if v.len() < 22 {
            continue;
        }
        // wrdata writes a time column before each vector.
        let x = |k: usize| v[2 * k + 1];
        let (vd1, vd2, vg1, vg2) = (x(0), x(1), x(2), x(3));
        w.t.push(v[0]);
        w.rows.push(Row {
            vd1,
            vd2,
            vg1,
            choke_a: x(4),
            choke_b: x(5),
            supply_a: -x(6),
            switch_w: [vd1 * x(7) + vg1 * x(8), vd2 * x(9) + vg2 * x(10)],
        });
    }
    w
}

/// What the checks compare, measured on ngspice's waveforms over its last [`CYCLES`] whole cycles
/// (between rising zero crossings of the tank voltage), with start-up peaks over the whole run.
struct Measured {
    frequency_hz: f64,
    tank_peak_v: f64,
    switch_loss_w: f64,
    supply_ripple_a_pp: f64,
    drain_peak_v: f64,
    supply_peak_a: f64,
    gate_high_v: f64,
}

const CYCLES: usize = 12;

fn measure(w: &Waveforms) -> Measured {
    let tank = |k: usize| w.rows[k].vd1 - w.rows[k].vd2;
    let crossings: Vec<f64> = (1..w.t.len())
        .filter(|&k| tank(k - 1) < 0.0 && tank(k) >= 0.0)
        .map(|k| {
            let share = tank(k - 1) / (tank(k - 1) - tank(k));
            w.t[k - 1] + share * (w.t[k] - w.t[k - 1])
        })
        .collect();
    assert!(
        crossings.len() > CYCLES + 1,
        "ngspice run did not oscillate"
    );
    let start_s = crossings[crossings.len() - 1 - CYCLES];
    let end_s = crossings[crossings.len() - 1];
    let inside: Vec<usize> = (0..w.t.len())
        .filter(|&k| w.t[k] >= start_s && w.t[k] <= end_s)
        .collect();
    // Trapezoidal integral of both switches' power over the window.
    let mut energy_j = 0.0;
    for pair in inside.windows(2) {
        let (a, b) = (pair[0], pair[1]);
        let p = |k: usize| w.rows[k].switch_w[0] + w.rows[k].switch_w[1];
        energy_j += 0.5 * (p(a) + p(b)) * (w.t[b] - w.t[a]);
    }
    let fold = |it: &mut dyn Iterator<Item = f64>| {
        it.fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
            (lo.min(v), hi.max(v))
        })
    };
    let (supply_lo, supply_hi) = fold(&mut inside.iter().map(|&k| w.rows[k].supply_a));
    let (_, tank_hi) = fold(&mut inside.iter().map(|&k| tank(k).abs()));
    let (_, gate_hi) = fold(&mut inside.iter().map(|&k| w.rows[k].vg1));
    let (_, drain_peak_v) = fold(&mut w.rows.iter().map(|r| r.vd1.max(r.vd2)));
    let (_, supply_peak_a) = fold(&mut w.rows.iter().map(|r| r.supply_a));
    let _ = w.rows.iter().map(|r| r.choke_a.max(r.choke_b));
    Measured {
        frequency_hz: CYCLES as f64 / (end_s - start_s),
        tank_peak_v: tank_hi,
        switch_loss_w: energy_j / (end_s - start_s) / 2.0,
        supply_ripple_a_pp: supply_hi - supply_lo,
        drain_peak_v,
        supply_peak_a,
        gate_high_v: gate_hi,
    }
}

fn within(case: &str, what: &str, ours: f64, reference: f64, tolerance: f64) -> Option<String> {
    let off = ours / reference - 1.0;
    let line = format!(
        "{case}: {what} {ours:.4} against ngspice {reference:.4} ({:+.1} %, allowed ±{:.1} %)",
        100.0 * off,
        100.0 * tolerance
    );
    println!("{line}");
    (off.abs() > tolerance).then_some(line)
}

fn ngspice_present() -> bool {
    if Path::new(NGSPICE).exists() {
        return true;
    }
    eprintln!(
        "\n!!!!!!!! ngspice is not installed at {NGSPICE}: the simulation was NOT checked against \
         it. Install Debian's `ngspice` package (CI does). !!!!!!!!\n"
    );
    false
}

fn check_case(case: &Case) -> Vec<String> {
    let ours: Simulation = simulate(&case.circuit).expect("our simulation settles");
    // ngspice runs past our settling time by a margin, so it is steady too.
    let stop_s = (ours.startup.settle_s * 1.5).max(case.circuit.supply_rise_time_s)
        + 40.0 / ours.frequency_hz;
    let reference = measure(&run_ngspice(&case.circuit, stop_s));
    let name = case.name;
    println!(
        "{name}: gate high {:.2} V (ngspice {:.2} V)",
        ours.gate_high_v, reference.gate_high_v
    );
    [
        // Tolerances named per check (the acceptance figures).
        within(
            name,
            "frequency",
            ours.frequency_hz,
            reference.frequency_hz,
            0.015,
        ),
        within(
            name,
            "tank peak",
            ours.tank_peak_voltage_v,
            reference.tank_peak_v,
            0.03,
        ),
        within(
            name,
            "switch loss",
            ours.switch_loss_w,
            reference.switch_loss_w,
            0.35,
        ),
        within(
            name,
            "start-up drain peak",
            ours.startup.drain_peak_v,
            reference.drain_peak_v,
            0.15,
        ),
        within(
            name,
            "start-up supply peak",
            ours.startup.supply_peak_a,
            reference.supply_peak_a,
            0.25,
        ),
        within(
            name,
            "supply ripple",
            ours.supply_ripple_a_pp,
            reference.supply_ripple_a_pp,
            0.15,
        ),
    ]
    .into_iter()
    .flatten()
    .collect()
}

#[test]
fn six_cases_agree_with_ngspice() {
    if !ngspice_present() {
        return;
    }
    let failures: Vec<String> = cases().iter().flat_map(check_case).collect();
    assert!(
        failures.is_empty(),
        "outside tolerance:\n{}",
        failures.join("\n")
    );
}
