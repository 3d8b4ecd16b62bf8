//! SCPI instruments over a LAN socket (`scpi-tcp`) or a serial port (`scpi-serial`): every
//! `every_s` each channel's query is sent and its answer queued; an instrument that stops
//! answering is reconnected with backoff while the other sources go on.

use std::io;
use std::sync::mpsc::{Receiver, RecvTimeoutError};
use std::time::{Duration, Instant, SystemTime};

use super::config::{Access, SourceConfig};
use super::link::Link;
use super::reading::{ReadAt, scpi_value};
use super::state::{Feed, backoff, now_unix_s};

/// Connects to the instrument of a SCPI source.
pub fn connect(access: &Access) -> io::Result<Link> {
    match access {
        Access::Tcp { address } => Link::tcp(address),
        Access::Serial { device, baud } => Link::serial(device, *baud),
        _ => Err(io::Error::other("not a SCPI source")),
    }
}

/// Runs a SCPI source until the feeder stops. `off` carries the stop switch's requests to
/// switch the supply's output off.
pub fn run(feed: &Feed, index: usize, source: &SourceConfig, off: Option<Receiver<String>>) {
    let every = Duration::from_secs_f64(source.every_s);
    let mut attempt = 0;
    // An off request that could not be sent yet goes first once the instrument answers.
    let mut off_waiting = false;
    while !feed.is_stopping() {
        let mut link = match connect(&source.access).and_then(|mut link| {
            let id = link.query("*IDN?")?;
            feed.with_status(index, |s| s.instrument = Some(id.trim().to_string()));
            Ok(link)
        }) {
            Ok(link) => link,
            Err(e) => {
                let wait = backoff(attempt);
                attempt += 1;
                feed.fault(
                    index,
                    Some(format!("not answering ({e}); trying again in {wait:.1?}")),
                );
                off_waiting |= wait_for_off(feed, off.as_ref(), wait);
                continue;
            }
        };
        feed.fault(index, None);
        attempt = 0;
        let mut next_poll = Instant::now();
        let result: io::Result<()> = (|| loop {
            if feed.is_stopping() {
                return Ok(());
            }
            if off_waiting {
                switch_off(feed, index, source, &mut link)?;
                off_waiting = false;
            }
            if Instant::now() >= next_poll {
                next_poll += every;
                poll(feed, index, source, &mut link)?;
            }
            let left = next_poll.saturating_duration_since(Instant::now());
            off_waiting = wait_for_off(feed, off.as_ref(), left);
        })();
        if let Err(e) = result {
            feed.fault(
                index,
                Some(format!("stopped answering ({e}); reconnecting")),
            );
        }
    }
}

/// Reads every channel once and queues the good values together (one flush to disk).
fn poll(feed: &Feed, index: usize, source: &SourceConfig, link: &mut Link) -> io::Result<()> {
    let mut values = Vec::new();
    for (channel, query) in &source.channels {
        let answer = link.query(query)?;
        let read_at = now_unix_s();
        match scpi_value(*channel, &answer) {
            Ok(value) => values.push((*channel, value, ReadAt::Clock(read_at))),
            Err(why) => feed.refused(index, why),
        }
    }
    feed.queue_values(index, &values);
    Ok(())
}

fn switch_off(feed: &Feed, index: usize, source: &SourceConfig, link: &mut Link) -> io::Result<()> {
    let command = source
        .stop
        .as_ref()
        .map_or(super::config::DEFAULT_OFF_COMMAND, |s| &s.off_command);
    link.send(command)?;
    feed.with_status(index, |s| s.supply_off_at = Some(SystemTime::now()));
    Ok(())
}

/// Waits up to `wait` (less when the feeder stops); true when the stop switch asked for the
/// output to go off meanwhile.
fn wait_for_off(feed: &Feed, off: Option<&Receiver<String>>, wait: Duration) -> bool {
    let Some(off) = off else {
        feed.nap(wait);
        return false;
    };
    let until = Instant::now() + wait;
    while !feed.is_stopping() {
        let left = until.saturating_duration_since(Instant::now());
        if left.is_zero() {
            return false;
        }
        match off.recv_timeout(left.min(Duration::from_millis(100))) {
            Ok(_) => return true,
            Err(RecvTimeoutError::Timeout) => {}
            Err(RecvTimeoutError::Disconnected) => {
                feed.nap(left);
                return false;
            }
        }
    }
    false
}
