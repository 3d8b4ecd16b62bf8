//! `stdin`: lines piped in by another program, each queued as it arrives, until the pipe ends.

use std::io::BufRead;

use super::config::SourceConfig;
use super::reading::LineNames;
use super::state::{Feed, value_of_line};

pub fn run(feed: &Feed, index: usize, source: &SourceConfig) {
    let names = LineNames(&source.channels);
    let stdin = std::io::stdin();
    for line in stdin.lock().lines() {
        if feed.is_stopping() {
            return;
        }
        match line {
            Ok(line) => {
                if let Some(value) = value_of_line(feed, index, &names, &line) {
                    feed.queue_values(index, &[value]);
                }
            }
            Err(e) => {
                feed.fault(index, Some(format!("cannot read standard input: {e}")));
                return;
            }
        }
    }
    feed.fault(index, Some("standard input ended".into()));
}
