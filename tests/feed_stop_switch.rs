//! The stop switch: a SCPI supply on a pseudo-terminal with `stop_supply = true` is switched
//! off within one poll once a capacitor's temperature, climbing in a logger's file, reaches
//! the capacitor's rated 85 °C; not before.

#[path = "common/feed_bench.rs"]
mod feed_bench;
#[path = "common/instruments.rs"]
mod instruments;

use std::io::Write;
use std::time::{Duration, Instant};

use feed_bench::{BenchServer, Feeder, config_file, values_of};
use instruments::Supply;

const POLL_S: f64 = 0.5;

#[tokio::test(flavor = "multi_thread")]
async fn the_supply_goes_off_within_one_poll_of_a_part_reaching_its_limit() {
    let server = BenchServer::start().await;
    let run = server.open_run().await;
    let work = tempfile::tempdir().unwrap();
    let supply = Supply::default();
    let device = supply.on_pty();
    let file = work.path().join("bank.log");
    std::fs::write(&file, "").unwrap();
    let config = config_file(
        work.path(),
        &format!(
            "[[source]]\nkind = \"scpi-serial\"\ndevice = \"{}\"\nevery_s = {POLL_S}\nstop_supply = true\noff_command = \"OUTP:STAT OFF\"\nstop_within_s = 0\n[source.channels]\nsupply_voltage = \"MEAS:VOLT?\"\nsupply_current = \"MEAS:CURR?\"\n\n[[source]]\nkind = \"lines-file\"\npath = \"bank.log\"\n",
            device.display()
        ),
    );
    let mut feeder = Feeder::start(&server, run, &config, &work.path().join("queue"));
    server
        .readings_until(run, Duration::from_secs(20), |rows| !rows.is_empty())
        .await;

    // The capacitor climbs toward its limit; the supply stays on.
    let mut out = std::fs::OpenOptions::new()
        .append(true)
        .open(&file)
        .unwrap();
    for t in [40.0, 55.0, 66.0, 74.0, 79.0, 82.0, 84.0] {
        writeln!(out, "temp.tank_capacitor={t}").unwrap();
        tokio::time::sleep(Duration::from_millis(300)).await;
    }
    server
        .readings_until(run, Duration::from_secs(10), |rows| {
            values_of(rows, "temp.tank_capacitor").len() == 7
        })
        .await;
    tokio::time::sleep(Duration::from_secs_f64(2.0 * POLL_S)).await;
    assert!(
        supply.log.lock().unwrap().output_off.is_empty(),
        "switched off with 1 K of margin left: {}",
        feeder.stderr.lock().unwrap()
    );

    // It reaches 85.5 °C.
    writeln!(out, "temp.tank_capacitor=85.5").unwrap();
    let written = Instant::now();
    let until = written + Duration::from_secs(10);
    let off = loop {
        if let Some((at, command)) = supply.log.lock().unwrap().output_off.first().cloned() {
            break (at, command);
        }
        assert!(Instant::now() < until, "the supply was never switched off");
        tokio::time::sleep(Duration::from_millis(20)).await;
    };
    assert_eq!(off.1, "OUTP:STAT OFF", "the configured command");
    // Within one poll of the reading reaching the server: the file is looked at every 0.25 s
    // and a batch takes a few ms; a second of slack for a loaded machine.
    let took = off.0.duration_since(written).as_secs_f64();
    assert!(took <= POLL_S + 0.25 + 1.0, "took {took:.2} s");

    server.finish(run).await;
    let (success, printed) = feeder.wait(Duration::from_secs(20));
    assert!(success, "{printed}");
    assert!(
        printed.contains(
            "stop switch: supply switched off by the feeder: Tank capacitor temperature at 85.5 °C reached its limit of 85.0 °C"
        ),
        "{printed}"
    );
    assert!(printed.contains("not a safety system"), "{printed}");
}

#[tokio::test(flavor = "multi_thread")]
async fn a_predicted_crossing_inside_the_window_switches_off_before_the_limit() {
    let server = BenchServer::start().await;
    let run = server.open_run().await;
    let work = tempfile::tempdir().unwrap();
    let supply = Supply::default();
    let address = supply.on_tcp();
    let file = work.path().join("bank.log");
    std::fs::write(&file, "").unwrap();
    let config = config_file(
        work.path(),
        &format!(
            "[[source]]\nkind = \"scpi-tcp\"\naddress = \"{address}\"\nevery_s = {POLL_S}\nstop_supply = true\nstop_within_s = 600\n[source.channels]\nsupply_voltage = \"MEAS:VOLT?\"\n\n[[source]]\nkind = \"lines-file\"\npath = \"bank.log\"\n"
        ),
    );
    let mut feeder = Feeder::start(&server, run, &config, &work.path().join("queue"));
    server
        .readings_until(run, Duration::from_secs(20), |rows| !rows.is_empty())
        .await;
    // A logger's own times: a first-order rise 25 → 105 °C with τ = 100 s (the step response
    // of a first-order system, T = T∞ − (T∞ − T₀)·e^(−t/τ)), read every 10 s to 120 s. It
    // reaches 85 °C at 100·ln 4 = 138.6 s, well inside a 600 s window, while at most 80.9 °C.
    let mut out = std::fs::OpenOptions::new()
        .append(true)
        .open(&file)
        .unwrap();
    for k in 0..=12 {
        let t_s = 10.0 * k as f64;
        let temp_c = 105.0 - 80.0 * (-t_s / 100.0f64).exp();
        writeln!(out, "{t_s},temp.tank_capacitor,{temp_c:.3}").unwrap();
    }
    drop(out);
    let until = Instant::now() + Duration::from_secs(10);
    while supply.log.lock().unwrap().output_off.is_empty() {
        assert!(Instant::now() < until, "the supply was never switched off");
        tokio::time::sleep(Duration::from_millis(20)).await;
    }
    assert_eq!(supply.log.lock().unwrap().output_off[0].1, "OUTP OFF");
    server.finish(run).await;
    let (success, printed) = feeder.wait(Duration::from_secs(20));
    assert!(success, "{printed}");
    assert!(
        printed.contains(
            "Tank capacitor temperature at 80.9 °C is predicted to reach its limit of 85.0 °C in"
        ),
        "{printed}"
    );
}
