//! What the sources, the sender, the stop switch and the status line share while feeding.

use std::sync::Mutex;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, SystemTime, UNIX_EPOCH};

use super::queue::Queue;
use super::reading::{FilePos, LineNames, ReadAt, Refusal, parse_line};
use crate::channel::Channel;

/// One source's counts, as its status line shows them.
#[derive(Debug, Default, Clone)]
pub struct SourceStatus {
    /// Readings the server has stored.
    pub sent: u64,
    /// Values not queued, by reason (in `Refusal::ALL` order).
    pub refused: [u64; 5],
    /// Readings the server refused (a part this revision does not have, ...).
    pub refused_by_server: u64,
    pub last: Option<(Channel, f64)>,
    /// What the instrument answers to `*IDN?`.
    pub instrument: Option<String>,
    /// The fault it is in now (not answering, cannot open), with when it is tried again.
    pub fault: Option<String>,
    /// How many times it has stopped answering or failed to open.
    pub faults: u64,
    /// When the stop switch last had the supply's output switched off.
    pub supply_off_at: Option<SystemTime>,
}

pub struct Feed {
    pub queue: Mutex<Queue>,
    pub labels: Vec<String>,
    pub status: Vec<Mutex<SourceStatus>>,
    stopping: AtomicBool,
    /// Wakes the sender when readings are queued.
    pub queued: tokio::sync::Notify,
    /// Set when the feeder cannot go on (the queue cannot be written).
    pub fatal: Mutex<Option<String>>,
    /// What is wrong with reaching the server, while something is.
    pub server: Mutex<Option<String>>,
    /// What the stop switch last did or cannot do, for the status line.
    pub stop_switch: Mutex<Option<String>>,
}

impl Feed {
    pub fn new(queue: Queue, labels: Vec<String>) -> Feed {
        Feed {
            queue: Mutex::new(queue),
            status: labels.iter().map(|_| Mutex::default()).collect(),
            labels,
            stopping: AtomicBool::new(false),
            queued: tokio::sync::Notify::new(),
            fatal: Mutex::new(None),
            server: Mutex::new(None),
            stop_switch: Mutex::new(None),
        }
    }

    pub fn stop(&self) {
        self.stopping.store(true, Ordering::SeqCst);
        self.queued.notify_one();
    }

    pub fn is_stopping(&self) -> bool {
        self.stopping.load(Ordering::SeqCst)
    }

    /// Sleeps up to `duration`, waking early when the feeder stops.
    pub fn nap(&self, duration: Duration) {
        let until = std::time::Instant::now() + duration;
        while !self.is_stopping() {
            let left = until.saturating_duration_since(std::time::Instant::now());
            if left.is_zero() {
                break;
            }
            std::thread::sleep(left.min(Duration::from_millis(100)));
        }
    }

    pub fn server_note(&self, note: Option<String>) {
        *self.server.lock().unwrap_or_else(|p| p.into_inner()) = note;
    }

    pub fn stop_switch_note(&self, note: Option<String>) {
        *self.stop_switch.lock().unwrap_or_else(|p| p.into_inner()) = note;
    }

    pub fn with_status<T>(&self, source: usize, f: impl FnOnce(&mut SourceStatus) -> T) -> T {
        f(&mut self.status[source]
            .lock()
            .unwrap_or_else(|p| p.into_inner()))
    }

    pub fn refused(&self, source: usize, why: Refusal) {
        let slot = Refusal::ALL.iter().position(|r| *r == why).unwrap_or(0);
        self.with_status(source, |s| s.refused[slot] += 1);
    }

    pub fn fault(&self, source: usize, fault: Option<String>) {
        self.with_status(source, |s| {
            if fault.is_some() && s.fault.is_none() {
                s.faults += 1;
            }
            s.fault = fault;
        });
    }

    /// Queues a source's values (flushed to disk on return) and wakes the sender.
    pub fn queue_values(&self, source: usize, values: &[(Channel, f64, ReadAt)]) {
        self.queue_values_from(source, values, None);
    }

    /// Queues a followed file's values with where its lines ended.
    pub fn queue_values_from(
        &self,
        source: usize,
        values: &[(Channel, f64, ReadAt)],
        file_pos: Option<FilePos>,
    ) {
        if values.is_empty() {
            return;
        }
        let rows: Vec<(String, f64, ReadAt)> = values
            .iter()
            .map(|(c, v, t)| (c.to_string(), *v, *t))
            .collect();
        let pushed = self
            .queue
            .lock()
            .unwrap_or_else(|p| p.into_inner())
            .push(source, &rows, file_pos);
        match pushed {
            Ok(_) => {
                let (channel, value, _) = values[values.len() - 1];
                self.with_status(source, |s| s.last = Some((channel, value)));
                self.queued.notify_one();
            }
            Err(e) => {
                *self.fatal.lock().unwrap_or_else(|p| p.into_inner()) =
                    Some(format!("cannot write the queue on disk: {e}"));
                self.stop();
            }
        }
    }
}

/// A logger's line as a value to queue, stamped now unless the line says its time; a line that
/// is no reading is counted.
pub fn value_of_line(
    feed: &Feed,
    source: usize,
    names: &LineNames,
    line: &str,
) -> Option<(Channel, f64, ReadAt)> {
    match parse_line(line, names) {
        Ok(reading) => Some((
            reading.channel,
            reading.value,
            reading
                .t_s
                .map_or_else(|| ReadAt::Clock(now_unix_s()), ReadAt::Elapsed),
        )),
        Err(why) => {
            feed.refused(source, why);
            None
        }
    }
}

/// This computer's clock in Unix seconds, the time a reading is stamped with.
pub fn now_unix_s() -> f64 {
    SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .map_or(0.0, |d| d.as_secs_f64())
}

/// The wait before the n-th retry: 0.5 s doubling to 30 s.
pub fn backoff(attempt: u32) -> Duration {
    Duration::from_millis(500u64.saturating_mul(1 << attempt.min(6)).min(30_000))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn backoff_doubles_to_half_a_minute() {
        let waits: Vec<u64> = (0..9).map(|n| backoff(n).as_millis() as u64).collect();
        assert_eq!(
            waits,
            [500, 1000, 2000, 4000, 8000, 16000, 30000, 30000, 30000]
        );
    }
}
