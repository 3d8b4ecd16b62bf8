//! Outages during a feed: the server SIGKILLed and started again, the feeder SIGKILLed and
//! started again on the same queue. Every reading the feeder took arrives once, in order,
//! stamped with the time it was read, not the time it could be sent.

#[path = "common/feed_bench.rs"]
mod feed_bench;
#[path = "common/instruments.rs"]
mod instruments;

use std::io::Write;
use std::time::{Duration, SystemTime, UNIX_EPOCH};

use feed_bench::{BenchServer, Feeder, config_file, values_of};
use instruments::Supply;

fn unix_now_s() -> f64 {
    SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .unwrap()
        .as_secs_f64()
}

/// Appends `count` lines of unique capacitor temperatures, one every 50 ms.
async fn append(file: &std::path::Path, written: &mut Vec<f64>, count: usize) {
    let mut out = std::fs::OpenOptions::new().append(true).open(file).unwrap();
    for _ in 0..count {
        let value = 25.0 + written.len() as f64 * 0.01;
        writeln!(out, "temp.tank_capacitor.1={value}").unwrap();
        written.push(value);
        tokio::time::sleep(Duration::from_millis(50)).await;
    }
}

#[tokio::test(flavor = "multi_thread")]
async fn killing_the_server_and_the_feeder_loses_nothing_and_sends_nothing_twice() {
    let mut server = BenchServer::start().await;
    let run = server.open_run().await;
    let started_unix_s = {
        let state = server.api().run(run).await.unwrap();
        state.started_unix_s().unwrap() as f64
    };
    let work = tempfile::tempdir().unwrap();
    let supply = Supply::default();
    let address = supply.on_tcp();
    let file = work.path().join("bank.log");
    std::fs::write(&file, "").unwrap();
    let config = config_file(
        work.path(),
        &format!(
            "[[source]]\nkind = \"scpi-tcp\"\naddress = \"{address}\"\nevery_s = 0.1\n[source.channels]\nsupply_voltage = \"MEAS:VOLT?\"\nsupply_current = \"MEAS:CURR?\"\n\n[[source]]\nkind = \"lines-file\"\npath = \"bank.log\"\n"
        ),
    );
    let queue = work.path().join("queue");
    let mut feeder = Feeder::start(&server, run, &config, &queue);
    server
        .readings_until(run, Duration::from_secs(20), |rows| !rows.is_empty())
        .await;
    let mut written = Vec::new();
    append(&file, &mut written, 10).await;

    // The server goes down for two seconds: readings wait in the queue.
    server.kill();
    let outage_from_s = unix_now_s() - started_unix_s;
    append(&file, &mut written, 40).await;
    let outage_to_s = unix_now_s() - started_unix_s;
    server.serve();
    append(&file, &mut written, 10).await;

    // The feeder is killed mid-feed, three times; lines written meanwhile follow on restart.
    let mut feeder_kills = 0;
    for pause_ms in [130, 370, 610] {
        tokio::time::sleep(Duration::from_millis(pause_ms)).await;
        feeder.sigkill();
        feeder_kills += 1;
        append(&file, &mut written, 5).await;
        feeder = Feeder::start(&server, run, &config, &queue);
        append(&file, &mut written, 5).await;
    }
    // Once more the server, killed with the feeder sending what it queued meanwhile.
    server.kill();
    tokio::time::sleep(Duration::from_millis(700)).await;
    server.serve();
    append(&file, &mut written, 10).await;

    let expected = written.len();
    let rows = server
        .readings_until(run, Duration::from_secs(60), |rows| {
            values_of(rows, "temp.tank_capacitor.1").len() >= expected
        })
        .await;
    server.finish(run).await;
    let (success, printed) = feeder.wait(Duration::from_secs(30));
    assert!(success, "{printed}");
    let rows = server.readings(run).await.into_iter().chain(rows).fold(
        Vec::new(),
        |mut all: Vec<eddybench::store::ReadingRow>, row| {
            if !all.iter().any(|r| r.id == row.id) {
                all.push(row);
            }
            all
        },
    );

    // The file: every line once, in the order written, including those written while the
    // server or the feeder was down.
    assert_eq!(values_of(&rows, "temp.tank_capacitor.1"), written);

    for (query, channel) in [
        ("MEAS:VOLT?", "supply_voltage"),
        ("MEAS:CURR?", "supply_current"),
    ] {
        let answered = supply.answered(query);
        let stored = values_of(&rows, channel);
        let mut unique = stored.clone();
        unique.dedup();
        assert_eq!(
            unique.len(),
            stored.len(),
            "{channel}: a reading stored twice"
        );
        // In the order answered; only a value answered in the instant the feeder was killed,
        // before it reached the queue, may be missing (one per channel per kill).
        let mut next = answered.iter();
        for value in &stored {
            assert!(
                next.any(|a| a == value),
                "{channel}: {value} stored out of order or never answered"
            );
        }
        let stored_until = answered
            .iter()
            .position(|a| a == stored.last().unwrap())
            .unwrap();
        let missing = stored_until + 1 - stored.len();
        assert!(
            missing <= feeder_kills,
            "{channel}: {missing} answered readings never stored"
        );
    }

    // Read during the outage, stamped then: the readings' times fill the outage (1 s slack for
    // the run's start kept in whole seconds).
    let during_outage = rows
        .iter()
        .filter(|r| r.channel == "supply_voltage")
        .filter(|r| r.t_s > outage_from_s - 1.0 && r.t_s < outage_to_s + 1.0)
        .count();
    assert!(
        during_outage >= 10,
        "only {during_outage} readings stamped within the outage"
    );
}

/// The worst moment to die: the server stored a batch, the feeder was killed before it wrote
/// down that it had. The restarted feeder sends the batch again with the same ids and times,
/// and the server keeps one of each.
#[tokio::test(flavor = "multi_thread")]
async fn a_batch_sent_again_after_a_lost_acknowledgement_is_stored_once() {
    let server = BenchServer::start().await;
    let run = server.open_run().await;
    let work = tempfile::tempdir().unwrap();
    let file = work.path().join("bank.log");
    std::fs::write(&file, "").unwrap();
    let config = config_file(
        work.path(),
        "[[source]]\nkind = \"lines-file\"\npath = \"bank.log\"\n",
    );
    let queue = work.path().join("queue");
    let mut feeder = Feeder::start(&server, run, &config, &queue);
    // Lines written before the feeder started are an earlier session's.
    feeder.wait_started();
    let mut written = Vec::new();
    append(&file, &mut written, 20).await;
    server
        .readings_until(run, Duration::from_secs(20), |rows| rows.len() == 20)
        .await;
    feeder.sigkill();
    std::fs::write(queue.join("sent"), "0").unwrap();

    let mut feeder = Feeder::start(&server, run, &config, &queue);
    append(&file, &mut written, 5).await;
    let rows = server
        .readings_until(run, Duration::from_secs(20), |rows| rows.len() >= 25)
        .await;
    server.finish(run).await;
    let (success, printed) = feeder.wait(Duration::from_secs(20));
    assert!(success, "{printed}");
    assert_eq!(values_of(&rows, "temp.tank_capacitor.1"), written);
    assert_eq!(server.readings(run).await.len(), 25);
}
