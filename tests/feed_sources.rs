//! The feeder against simulated instruments: a SCPI supply on a loopback TCP port, a SCPI
//! meter on a pseudo-terminal, a thermocouple logger on a pseudo-terminal and a growing file.
//! What they answer arrives in the run once each; garbage, empty lines and SCPI's overflow
//! (9.9E37, SCPI 1999 Volume 1, 7.2.1) are counted and not sent; a finished run stops it.

#[path = "common/feed_bench.rs"]
mod feed_bench;
#[path = "common/instruments.rs"]
mod instruments;

use std::collections::BTreeSet;
use std::io::Write;
use std::process::Command;
use std::time::Duration;

use feed_bench::{BIN, BenchServer, Feeder, config_file, values_of};
use instruments::{LineLogger, Supply};

#[tokio::test(flavor = "multi_thread")]
async fn every_source_kind_fills_the_run_and_bad_answers_are_counted_not_sent() {
    let server = BenchServer::start().await;
    let run = server.open_run().await;
    let work = tempfile::tempdir().unwrap();

    let supply = Supply::default();
    supply.log.lock().unwrap().overflow_next = 2;
    supply.log.lock().unwrap().garbage_next = 1;
    let supply_address = supply.on_tcp();
    let meter = Supply::default();
    let meter_device = meter.on_pty();
    let mut logger = LineLogger::open();
    let file = work.path().join("coil.log");
    std::fs::write(&file, "temp.work_coil=19.0\n").unwrap();

    let config = config_file(
        work.path(),
        &format!(
            r#"
[[source]]
kind = "scpi-tcp"
address = "{supply_address}"
every_s = 0.2
[source.channels]
supply_voltage = "MEAS:VOLT?"
supply_current = "MEAS:CURR?"

[[source]]
kind = "scpi-serial"
device = "{}"
baud = 115200
every_s = 0.3
[source.channels]
frequency = "MEAS:FREQ?"

[[source]]
kind = "lines-serial"
device = "{}"
[source.channels]
"temp.tank_capacitor.1" = "T1"
"temp.tank_capacitor.2" = "T2"

[[source]]
kind = "lines-file"
path = "coil.log"
"#,
            meter_device.display(),
            logger.device().display()
        ),
    );
    let mut feeder = Feeder::start(&server, run, &config, &work.path().join("queue"));
    // Lines written before the feeder started are an earlier session's.
    feeder.wait_started();

    // The logger prints good lines and bad ones; the file grows, and is rotated once.
    let mut appended = std::fs::OpenOptions::new()
        .append(true)
        .open(&file)
        .unwrap();
    for n in 0..20 {
        logger.print(&format!("T1={}", 30.0 + n as f64 * 0.5));
        logger.print(&format!("T2,{}", 31.0 + n as f64 * 0.5));
        if n == 5 {
            logger.print("");
            logger.print("TC FAULT: OPEN");
            logger.print("T1=9.9E37");
            logger.print("T1=4000");
            logger.print("T3=20");
        }
        writeln!(appended, "temp.work_coil={}", 20.0 + n as f64).unwrap();
        if n == 10 {
            std::fs::rename(&file, work.path().join("coil.log.1")).unwrap();
            appended = std::fs::File::create(&file).unwrap();
        }
        tokio::time::sleep(Duration::from_millis(50)).await;
    }
    let rows = server
        .readings_until(run, Duration::from_secs(30), |rows| {
            values_of(rows, "temp.tank_capacitor.2").len() >= 20
                && values_of(rows, "temp.work_coil").len() >= 20
                && values_of(rows, "frequency").len() >= 5
                && values_of(rows, "supply_current").len() >= 10
        })
        .await;
    server.finish(run).await;
    let (success, printed) = feeder.wait(Duration::from_secs(20));
    assert!(success, "{printed}");
    assert!(
        printed.contains(&format!("Run {run} was finished")),
        "{printed}"
    );

    let rows = server
        .readings(run)
        .await
        .into_iter()
        .chain(rows)
        .collect::<Vec<_>>();
    let rows: Vec<_> = {
        let mut seen = BTreeSet::new();
        rows.into_iter().filter(|r| seen.insert(r.id)).collect()
    };
    // Lines: each once, in order; the line written before the feeder started is not sent.
    let t1 = values_of(&rows, "temp.tank_capacitor.1");
    assert_eq!(
        t1,
        (0..20).map(|n| 30.0 + n as f64 * 0.5).collect::<Vec<_>>()
    );
    let t2 = values_of(&rows, "temp.tank_capacitor.2");
    assert_eq!(
        t2,
        (0..20).map(|n| 31.0 + n as f64 * 0.5).collect::<Vec<_>>()
    );
    let coil = values_of(&rows, "temp.work_coil");
    assert_eq!(coil, (0..20).map(|n| 20.0 + n as f64).collect::<Vec<_>>());

    // SCPI: exactly what the instruments answered (numbers), each once, in order; the
    // overflow and garbage answers are not among them.
    for (instrument, query, channel) in [
        (&supply, "MEAS:VOLT?", "supply_voltage"),
        (&supply, "MEAS:CURR?", "supply_current"),
        (&meter, "MEAS:FREQ?", "frequency"),
    ] {
        let answered = instrument.answered(query);
        let stored = values_of(&rows, channel);
        assert!(!stored.is_empty(), "{channel}");
        assert_eq!(
            stored[..],
            answered[..stored.len()],
            "{channel}: stored in the order answered, none twice"
        );
        assert!(stored.iter().all(|v| *v < 1e30), "{channel}");
    }

    // The status lines count what was not sent.
    let logger_line = printed
        .lines()
        .rev()
        .find(|l| l.starts_with("lines-serial"))
        .unwrap();
    assert!(
        logger_line.contains(
            "refused 5 (empty 1, garbage 1, overflow 1, out of range 1, unknown channel 1)"
        ),
        "{logger_line}"
    );
    let supply_line = printed
        .lines()
        .rev()
        .find(|l| l.starts_with("scpi-tcp"))
        .unwrap();
    assert!(
        supply_line.contains("refused 3 (garbage 1, overflow 2)"),
        "{supply_line}"
    );
}

#[tokio::test(flavor = "multi_thread")]
async fn check_reads_each_source_once_and_sends_nothing() {
    let work = tempfile::tempdir().unwrap();
    let supply = Supply::default();
    let address = supply.on_tcp();
    std::fs::write(work.path().join("log.csv"), "12.5,temp.switch,41.5\n").unwrap();
    let config = config_file(
        work.path(),
        &format!(
            "[[source]]\nkind = \"scpi-tcp\"\naddress = \"{address}\"\n[source.channels]\nsupply_voltage = \"MEAS:VOLT?\"\nfrequency = \"MEAS:FREQ?\"\n\n[[source]]\nkind = \"lines-file\"\npath = \"log.csv\"\n"
        ),
    );
    let output = Command::new(BIN)
        .args(["feed", "--check", "--config"])
        .arg(&config)
        .output()
        .unwrap();
    let printed = String::from_utf8_lossy(&output.stdout);
    assert!(
        output.status.success(),
        "{printed}{}",
        String::from_utf8_lossy(&output.stderr)
    );
    assert!(
        printed.contains("*IDN? Test bench supply,SIM-1,0001,1.0"),
        "{printed}"
    );
    assert!(
        printed.contains("supply_voltage (MEAS:VOLT?): 24.0001 V"),
        "{printed}"
    );
    assert!(
        printed.contains("frequency (MEAS:FREQ?): 100002 Hz"),
        "{printed}"
    );
    assert!(
        printed.contains("last line \"12.5,temp.switch,41.5\": temp.switch = 41.5 °C"),
        "{printed}"
    );

    // An instrument that is not there fails the check.
    let config = config_file(
        work.path(),
        "[[source]]\nkind = \"scpi-tcp\"\naddress = \"127.0.0.1:9\"\n[source.channels]\nsupply_voltage = \"MEAS:VOLT?\"\n",
    );
    let output = Command::new(BIN)
        .args(["feed", "--check", "--config"])
        .arg(&config)
        .output()
        .unwrap();
    assert!(!output.status.success());
    assert!(String::from_utf8_lossy(&output.stdout).contains("cannot connect"));
}

#[test]
fn a_bad_config_names_its_line_and_starts_nothing() {
    let work = tempfile::tempdir().unwrap();
    let config = config_file(
        work.path(),
        "[[source]]\nkind = \"scpi-tcp\"\naddress = \"127.0.0.1:5025\"\n[source.channels]\nsupply_voltage = \"MEAS:VOLT?\"\ntemp.capacitor = \"MEAS:TEMP?\"\n",
    );
    let queue = work.path().join("queue");
    let output = Command::new(BIN)
        .args([
            "feed",
            "--server",
            "http://127.0.0.1:9",
            "--run",
            "1",
            "--config",
        ])
        .arg(&config)
        .arg("--queue")
        .arg(&queue)
        .env("EDDYBENCH_TOKEN", "x")
        .output()
        .unwrap();
    assert!(!output.status.success());
    let printed = String::from_utf8_lossy(&output.stderr);
    assert!(printed.contains("line 6"), "{printed}");
    assert!(printed.contains("nothing started"), "{printed}");
    assert!(!queue.exists(), "no queue was made");
}

#[test]
fn the_help_says_the_stop_switch_is_no_safety_system() {
    let output = Command::new(BIN).args(["feed", "--help"]).output().unwrap();
    let help = String::from_utf8_lossy(&output.stdout);
    assert!(help.contains("CONVENIENCE, NOT A SAFETY SYSTEM"), "{help}");
    assert!(
        help.contains("Keep a hand on the supply's own switch"),
        "{help}"
    );
}
