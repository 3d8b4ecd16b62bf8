//! `eddybench feed --check`: connects to each source once, prints what it read, and sends
//! nothing.

use std::fmt::Write as _;
use std::io::{Read, Seek, SeekFrom};
use std::time::{Duration, Instant};

use super::config::{Access, FeedConfig, SourceConfig, SourceKind};
use super::link::{LineAssembler, open_serial};
use super::reading::{LineNames, parse_line, scpi_value};
use super::scpi;

/// How long a line source is listened to for one line.
const LISTEN_FOR: Duration = Duration::from_secs(5);

/// The report of each source, and whether all of them gave a reading.
pub fn check(config: &FeedConfig) -> (String, bool) {
    let mut report = String::new();
    let mut all_good = true;
    for source in &config.sources {
        let (text, good) = check_source(source);
        all_good &= good;
        let _ = writeln!(report, "{} (line {}):", source.label(), source.line);
        for line in text.lines() {
            let _ = writeln!(report, "  {line}");
        }
    }
    (report, all_good)
}

fn check_source(source: &SourceConfig) -> (String, bool) {
    match source.kind {
        SourceKind::ScpiTcp | SourceKind::ScpiSerial => check_scpi(source),
        SourceKind::LinesSerial => check_lines_serial(source),
        SourceKind::LinesFile => check_file(source),
        SourceKind::Stdin => ("reads standard input; nothing to check".into(), true),
    }
}

fn check_scpi(source: &SourceConfig) -> (String, bool) {
    let mut link = match scpi::connect(&source.access) {
        Ok(link) => link,
        Err(e) => return (format!("cannot connect: {e}"), false),
    };
    let mut text = String::new();
    let mut good = true;
    match link.query("*IDN?") {
        Ok(id) => {
            let _ = writeln!(text, "*IDN? {}", id.trim());
        }
        Err(e) => {
            return (format!("no answer to *IDN?: {e}"), false);
        }
    }
    for (channel, query) in &source.channels {
        let outcome = match link.query(query) {
            Ok(answer) => match scpi_value(*channel, &answer) {
                Ok(value) => format!("{value} {}", channel.quantity().unit()),
                Err(why) => {
                    good = false;
                    format!("{:?} would not be sent ({})", answer.trim(), why.words())
                }
            },
            Err(e) => {
                good = false;
                format!("no answer ({e})")
            }
        };
        let _ = writeln!(text, "{channel} ({query}): {outcome}");
    }
    if let Some(stop) = &source.stop {
        let _ = writeln!(
            text,
            "stop switch on: sends {:?} when a part is within {} s of its limit (not sent now)",
            stop.off_command, stop.within_s
        );
    }
    (text, good)
}

fn describe_line(source: &SourceConfig, line: &str) -> (String, bool) {
    match parse_line(line, &LineNames(&source.channels)) {
        Ok(reading) => (
            format!(
                "{line:?}: {} = {} {}",
                reading.channel,
                reading.value,
                reading.channel.quantity().unit()
            ),
            true,
        ),
        Err(why) => (
            format!("{line:?} would not be sent ({})", why.words()),
            false,
        ),
    }
}

fn check_lines_serial(source: &SourceConfig) -> (String, bool) {
    let Access::Serial { device, baud } = &source.access else {
        return (String::new(), false);
    };
    let mut port = match open_serial(device, *baud) {
        Ok(port) => port,
        Err(e) => return (format!("cannot open: {e}"), false),
    };
    let mut lines = LineAssembler::default();
    let mut buffer = [0u8; 256];
    // The first line may be the tail of one already under way; take the next, whole one.
    let mut seen = 0;
    let until = Instant::now() + LISTEN_FOR;
    while Instant::now() < until {
        match port.read(&mut buffer) {
            Ok(n) => {
                for line in lines.push(&buffer[..n]) {
                    seen += 1;
                    if seen > 1 {
                        return describe_line(source, &line);
                    }
                }
            }
            Err(e) => return (format!("cannot read: {e}"), false),
        }
    }
    (format!("no line in {LISTEN_FOR:?}"), false)
}

fn check_file(source: &SourceConfig) -> (String, bool) {
    let Access::File { path } = &source.access else {
        return (String::new(), false);
    };
    let mut file = match std::fs::File::open(path) {
        Ok(file) => file,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => {
            return (
                "not there yet; it will be followed once it appears".into(),
                true,
            );
        }
        Err(e) => return (format!("cannot open: {e}"), false),
    };
    // The last line is enough; read the file's tail only.
    let length = file.metadata().map(|m| m.len()).unwrap_or(0);
    let _ = file.seek(SeekFrom::Start(length.saturating_sub(4096)));
    let mut tail = Vec::new();
    let _ = file.read_to_end(&mut tail);
    let lines = LineAssembler::default().push(&tail);
    match lines.iter().rev().find(|l| !l.trim().is_empty()) {
        Some(line) => {
            let (text, good) = describe_line(source, line);
            (format!("last line {text}"), good)
        }
        None => ("empty; it will be followed as lines are added".into(), true),
    }
}
