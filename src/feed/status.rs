//! One status line per source while feeding (sent, waiting, last value, what was refused, its
//! fault), a line for the server and one for the stop switch. Redrawn in place on a terminal,
//! printed every half minute into a log otherwise.

use std::io::{IsTerminal, Write};
use std::time::Duration;

use super::reading::Refusal;
use super::state::{Feed, SourceStatus};
use crate::channel::Channel;
use crate::units::three_significant;

const LOG_EVERY: Duration = Duration::from_secs(30);
const REDRAW_EVERY: Duration = Duration::from_secs(1);

/// A source's line: `scpi-tcp 192.0.2.10:5025: sent 120, waiting 3, last supply_current 2.31 A;
/// refused 2 (overflow 1, garbage 1)`.
pub fn source_line(label: &str, status: &SourceStatus, waiting: usize) -> String {
    let mut line = format!("{label}: sent {}, waiting {waiting}", status.sent);
    if let Some((channel, value)) = status.last {
        line.push_str(&format!(", last {}", value_text(channel, value)));
    }
    let refused: Vec<String> = Refusal::ALL
        .iter()
        .zip(status.refused)
        .filter(|(_, n)| *n > 0)
        .map(|(why, n)| format!("{} {n}", why.words()))
        .chain(
            (status.refused_by_server > 0)
                .then(|| format!("by the server {}", status.refused_by_server)),
        )
        .collect();
    if !refused.is_empty() {
        let total: u64 = status.refused.iter().sum::<u64>() + status.refused_by_server;
        line.push_str(&format!("; refused {total} ({})", refused.join(", ")));
    }
    if status.faults > 0 {
        line.push_str(&format!("; faults {}", status.faults));
    }
    if let Some(fault) = &status.fault {
        line.push_str(&format!("; {fault}"));
    }
    line
}

fn value_text(channel: Channel, value: f64) -> String {
    format!(
        "{channel} {} {}",
        three_significant(value),
        channel.quantity().unit()
    )
}

/// Every line of the status, sources first.
pub fn lines(feed: &Feed, server: &str) -> Vec<String> {
    let queue = feed.queue.lock().unwrap_or_else(|p| p.into_inner());
    let mut lines: Vec<String> = feed
        .labels
        .iter()
        .enumerate()
        .map(|(i, label)| {
            let status = feed.with_status(i, |s| s.clone());
            source_line(label, &status, queue.waiting_of(i))
        })
        .collect();
    drop(queue);
    let note = feed
        .server
        .lock()
        .unwrap_or_else(|p| p.into_inner())
        .clone();
    lines.push(match note {
        Some(note) => format!("server {server}: {note}"),
        None => format!("server {server}: storing"),
    });
    if let Some(note) = feed
        .stop_switch
        .lock()
        .unwrap_or_else(|p| p.into_inner())
        .clone()
    {
        lines.push(format!("stop switch: {note}"));
    }
    lines
}

/// Shows the status on standard error until the feeder stops.
pub async fn show(feed: std::sync::Arc<Feed>, server: String) {
    let terminal = std::io::stderr().is_terminal();
    let every = if terminal { REDRAW_EVERY } else { LOG_EVERY };
    let mut drawn = 0;
    loop {
        let lines = lines(&feed, &server);
        {
            let mut err = std::io::stderr().lock();
            if terminal && drawn > 0 {
                // Up over the last drawing and clear to the end of the screen.
                let _ = write!(err, "\x1b[{drawn}A\x1b[J");
            }
            for line in &lines {
                let _ = writeln!(err, "{line}");
            }
        }
        drawn = lines.len();
        if feed.is_stopping() {
            return;
        }
        let until = tokio::time::Instant::now() + every;
        while !feed.is_stopping() && tokio::time::Instant::now() < until {
            tokio::time::sleep(Duration::from_millis(100)).await;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_quiet_source() {
        let line = source_line("stdin", &SourceStatus::default(), 0);
        assert_eq!(line, "stdin: sent 0, waiting 0");
    }

    #[test]
    fn a_busy_source_with_refusals_and_a_fault() {
        let mut status = SourceStatus {
            sent: 120,
            last: Some((Channel::SupplyCurrent, 2.314)),
            refused_by_server: 1,
            faults: 2,
            fault: Some("not answering (connection refused); trying again in 4.0s".into()),
            ..SourceStatus::default()
        };
        status.refused[1] = 1; // garbage
        status.refused[2] = 2; // overflow
        let line = source_line("scpi-tcp 192.0.2.10:5025", &status, 3);
        assert_eq!(
            line,
            "scpi-tcp 192.0.2.10:5025: sent 120, waiting 3, last supply_current 2.31 A; \
             refused 4 (garbage 1, overflow 2, by the server 1); faults 2; \
             not answering (connection refused); trying again in 4.0s"
        );
    }
}
