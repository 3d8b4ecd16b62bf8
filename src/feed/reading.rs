//! What a source hands the queue, and the checks a value passes before it may be sent: text an
//! instrument or logger printed becomes a value on a channel, or a counted refusal.

use serde::{Deserialize, Serialize};

use crate::channel::Channel;

/// SCPI's "infinity", what an instrument answers for an over-range measurement, and its "not a
/// number" (SCPI 1999, Volume 1: Syntax and Style, 7.2.1: INFinity is 9.9E37, NAN 9.91E37).
pub const SCPI_OVERFLOW: f64 = 9.9e37;

/// One value read off an instrument, as the queue keeps it until the server has stored it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct QueuedReading {
    /// Position in the queue: readings are sent in this order.
    pub seq: u64,
    /// The id the server stores once however often the reading is resent.
    pub id: String,
    /// Which `[[source]]` read it (0-based, in the config's order).
    pub source: usize,
    pub channel: String,
    pub value: f64,
    pub time: ReadAt,
    /// For a followed file: where in it the reading's line ended, to go on from there after a
    /// restart.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub file_pos: Option<FilePos>,
}

/// A place in a followed file: which file (its inode) and the byte after the last line read.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct FilePos {
    pub inode: u64,
    pub offset: u64,
}

/// When a reading was taken.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ReadAt {
    /// This computer's clock when the value came in (Unix seconds).
    Clock(f64),
    /// Seconds since the run started, as the line itself said.
    Elapsed(f64),
}

impl ReadAt {
    /// Seconds since the run started, given the run's start (Unix seconds).
    pub fn elapsed_s(self, run_started_unix_s: f64) -> f64 {
        match self {
            ReadAt::Clock(unix_s) => unix_s - run_started_unix_s,
            ReadAt::Elapsed(t_s) => t_s,
        }
    }
}

/// Why a value was not queued; each is counted per source and shown on its status line.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Refusal {
    /// An empty line or an empty answer.
    Empty,
    /// Text that is not a reading.
    Garbage,
    /// SCPI's over-range answer.
    Overflow,
    /// A number outside what the channel can plausibly read.
    OutOfRange,
    /// A line naming a channel this source was not told about.
    UnknownChannel,
}

impl Refusal {
    pub const ALL: [Refusal; 5] = [
        Refusal::Empty,
        Refusal::Garbage,
        Refusal::Overflow,
        Refusal::OutOfRange,
        Refusal::UnknownChannel,
    ];

    pub fn words(self) -> &'static str {
        match self {
            Refusal::Empty => "empty",
            Refusal::Garbage => "garbage",
            Refusal::Overflow => "overflow",
            Refusal::OutOfRange => "out of range",
            Refusal::UnknownChannel => "unknown channel",
        }
    }
}

/// A value that may be sent: finite, not SCPI's overflow, within the channel's plausible range
/// (the same bounds the server holds readings to).
pub fn check_value(channel: Channel, value: f64) -> Result<f64, Refusal> {
    if value.is_nan() || value.abs() >= SCPI_OVERFLOW || value.is_infinite() {
        return Err(Refusal::Overflow);
    }
    let (low, high) = channel.plausible_range();
    if !(low..=high).contains(&value) {
        return Err(Refusal::OutOfRange);
    }
    Ok(value)
}

/// An instrument's answer to a query: the first of its comma-separated fields as a number.
pub fn scpi_value(channel: Channel, answer: &str) -> Result<f64, Refusal> {
    let field = answer.trim().split(',').next().unwrap_or("").trim();
    if field.is_empty() {
        return Err(Refusal::Empty);
    }
    let value: f64 = field.parse().map_err(|_| Refusal::Garbage)?;
    check_value(channel, value)
}

/// A logger's line read: channel, value and the time since the start when the line gave one.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LineReading {
    pub channel: Channel,
    pub value: f64,
    pub t_s: Option<f64>,
}

/// The names a line source knows: `(channel, printed name)`; empty means channel names as such.
pub struct LineNames<'a>(pub &'a [(Channel, String)]);

impl LineNames<'_> {
    fn channel(&self, name: &str) -> Option<Channel> {
        if self.0.is_empty() {
            return name.parse().ok();
        }
        self.0
            .iter()
            .find(|(_, printed)| printed == name)
            .map(|(channel, _)| *channel)
    }
}

/// Reads `channel=value`, `channel,value` or `t_s,channel,value` (values in SI units).
pub fn parse_line(line: &str, names: &LineNames) -> Result<LineReading, Refusal> {
    let line = line.trim();
    if line.is_empty() {
        return Err(Refusal::Empty);
    }
    let fields: Vec<&str> = match line.split_once('=') {
        Some((name, value)) => vec![name, value],
        None => line.split(',').collect(),
    };
    let (t_s, name, value) = match fields.as_slice() {
        [name, value] => (None, *name, *value),
        [t_s, name, value] => {
            let t_s: f64 = t_s.trim().parse().map_err(|_| Refusal::Garbage)?;
            if !t_s.is_finite() || t_s < 0.0 {
                return Err(Refusal::Garbage);
            }
            (Some(t_s), *name, *value)
        }
        _ => return Err(Refusal::Garbage),
    };
    let value: f64 = value.trim().parse().map_err(|_| Refusal::Garbage)?;
    let name = name.trim();
    let channel = names.channel(name).ok_or(if name.parse::<f64>().is_ok() {
        Refusal::Garbage
    } else {
        Refusal::UnknownChannel
    })?;
    Ok(LineReading {
        channel,
        value: check_value(channel, value)?,
        t_s,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    const ANY: LineNames = LineNames(&[]);

    #[test]
    fn reads_the_three_line_shapes() {
        let at = |line| parse_line(line, &ANY);
        assert_eq!(
            at("supply_voltage=24.1"),
            Ok(LineReading {
                channel: Channel::SupplyVoltage,
                value: 24.1,
                t_s: None
            })
        );
        assert_eq!(at(" frequency , 101500 \r").unwrap().value, 101_500.0);
        let timed = at("12.5,temp.switch.2,61.5").unwrap();
        assert_eq!(timed.t_s, Some(12.5));
        assert_eq!(timed.channel.to_string(), "temp.switch.2");
    }

    #[test]
    fn a_logger_may_print_its_own_names() {
        let names = [(
            "temp.tank_capacitor.1".parse::<Channel>().unwrap(),
            "T1".to_string(),
        )];
        let names = LineNames(&names);
        assert_eq!(parse_line("T1=45.25", &names).unwrap().value, 45.25);
        assert_eq!(parse_line("T2=45.25", &names), Err(Refusal::UnknownChannel));
        assert_eq!(
            parse_line("temp.tank_capacitor.1=45", &names),
            Err(Refusal::UnknownChannel)
        );
    }

    #[test]
    fn bad_lines_are_refusals_not_errors() {
        for (line, why) in [
            ("", Refusal::Empty),
            ("   \r", Refusal::Empty),
            ("hello world", Refusal::Garbage),
            ("supply_voltage=", Refusal::Garbage),
            ("supply_voltage=twelve", Refusal::Garbage),
            ("1,2", Refusal::Garbage),
            ("a,b,c,d", Refusal::Garbage),
            ("-3,frequency,1000", Refusal::Garbage),
            ("voltage=12", Refusal::UnknownChannel),
            ("supply_voltage=-12", Refusal::OutOfRange),
            ("temp.work_coil=4000", Refusal::OutOfRange),
            ("supply_current=9.9E37", Refusal::Overflow),
            ("supply_current=NaN", Refusal::Overflow),
            ("supply_current=inf", Refusal::Overflow),
        ] {
            assert_eq!(parse_line(line, &ANY), Err(why), "{line:?}");
        }
    }

    #[test]
    fn scpi_answers() {
        let v = |answer| scpi_value(Channel::SupplyVoltage, answer);
        assert_eq!(v("+2.40000E+01\n"), Ok(24.0));
        assert_eq!(v("12.5,0,1"), Ok(12.5));
        // SCPI 1999, Volume 1, 7.2.1: over range is +9.9E37, not a number 9.91E37.
        assert_eq!(v("+9.90000E+37"), Err(Refusal::Overflow));
        assert_eq!(v("9.91E37"), Err(Refusal::Overflow));
        assert_eq!(v("-9.9E37"), Err(Refusal::Overflow));
        assert_eq!(v(""), Err(Refusal::Empty));
        assert_eq!(v("-113,\"Undefined header\""), Err(Refusal::OutOfRange));
        assert_eq!(v("\u{0}\u{ff}junk"), Err(Refusal::Garbage));
    }

    #[test]
    fn elapsed_time_from_the_clock_or_the_line() {
        assert_eq!(ReadAt::Clock(1_000.5).elapsed_s(900.0), 100.5);
        assert_eq!(ReadAt::Elapsed(12.0).elapsed_s(900.0), 12.0);
    }
}
