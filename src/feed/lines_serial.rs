//! `lines-serial`: a logger (often a small board with thermocouple amplifiers) printing one
//! reading a line on a serial port. A port that goes away is reopened with backoff.

use std::io::Read;

use super::config::{Access, SourceConfig};
use super::link::{LineAssembler, open_serial};
use super::reading::LineNames;
use super::state::{Feed, backoff, value_of_line};

pub fn run(feed: &Feed, index: usize, source: &SourceConfig) {
    let Access::Serial { device, baud } = &source.access else {
        return;
    };
    let names = LineNames(&source.channels);
    let mut attempt = 0;
    while !feed.is_stopping() {
        let mut port = match open_serial(device, *baud) {
            Ok(port) => port,
            Err(e) => {
                let wait = backoff(attempt);
                attempt += 1;
                feed.fault(
                    index,
                    Some(format!("cannot open ({e}); trying again in {wait:.1?}")),
                );
                feed.nap(wait);
                continue;
            }
        };
        feed.fault(index, None);
        attempt = 0;
        let mut lines = LineAssembler::default();
        let mut buffer = [0u8; 1024];
        while !feed.is_stopping() {
            match port.read(&mut buffer) {
                // The port's poll time passed without a byte.
                Ok(0) => {}
                Ok(n) => {
                    let values: Vec<_> = lines
                        .push(&buffer[..n])
                        .iter()
                        .filter_map(|line| value_of_line(feed, index, &names, line))
                        .collect();
                    feed.queue_values(index, &values);
                }
                Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
                Err(e) => {
                    feed.fault(index, Some(format!("stopped reading ({e}); reopening")));
                    break;
                }
            }
        }
    }
}
