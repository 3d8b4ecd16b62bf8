//! The feeder's TOML file: one `[[source]]` table per instrument. A bad file is refused whole,
//! naming the first bad key and its line, so nothing starts half-configured.

use std::collections::BTreeMap;
use std::fmt;
use std::ops::Range;
use std::path::{Path, PathBuf};

use serde::Deserialize;
use toml::Spanned;

use crate::channel::Channel;

/// SCPI's usual output-off command (SCPI 1999, Volume 2, OUTPut subsystem).
pub const DEFAULT_OFF_COMMAND: &str = "OUTP OFF";
/// Switch off when the predicted time to a part's limit falls under this [practice: time to
/// notice and reach the supply, and for the heat already in the part to spread].
pub const DEFAULT_STOP_WITHIN_S: f64 = 60.0;
/// Serial ports speak 9600 baud until told otherwise [practice: the usual factory setting].
pub const DEFAULT_BAUD: u32 = 9600;
const DEFAULT_EVERY_S: f64 = 1.0;
const EVERY_S_RANGE: (f64, f64) = (0.05, 3600.0);

#[derive(Debug, Clone, PartialEq)]
pub struct FeedConfig {
    pub sources: Vec<SourceConfig>,
}

#[derive(Debug, Clone, PartialEq)]
pub struct SourceConfig {
    /// The line of its `[[source]]` header, to name it in messages.
    pub line: usize,
    pub kind: SourceKind,
    /// What it reads from and how often.
    pub access: Access,
    pub every_s: f64,
    /// SCPI kinds: channel and the query that returns it. Line kinds: channel and the name the
    /// logger prints for it (the channel's own name when the table is absent).
    pub channels: Vec<(Channel, String)>,
    pub stop: Option<StopSwitch>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SourceKind {
    ScpiTcp,
    ScpiSerial,
    LinesSerial,
    LinesFile,
    Stdin,
}

#[derive(Debug, Clone, PartialEq)]
pub enum Access {
    Tcp { address: String },
    Serial { device: PathBuf, baud: u32 },
    File { path: PathBuf },
    Stdin,
}

/// The opt-in stop switch of a SCPI supply.
#[derive(Debug, Clone, PartialEq)]
pub struct StopSwitch {
    pub off_command: String,
    pub within_s: f64,
}

impl SourceKind {
    const ALL: [(&'static str, SourceKind); 5] = [
        ("scpi-tcp", SourceKind::ScpiTcp),
        ("scpi-serial", SourceKind::ScpiSerial),
        ("lines-serial", SourceKind::LinesSerial),
        ("lines-file", SourceKind::LinesFile),
        ("stdin", SourceKind::Stdin),
    ];

    pub fn name(self) -> &'static str {
        Self::ALL
            .iter()
            .find(|(_, k)| *k == self)
            .map_or("", |(n, _)| n)
    }

    pub fn is_scpi(self) -> bool {
        matches!(self, SourceKind::ScpiTcp | SourceKind::ScpiSerial)
    }
}

impl SourceConfig {
    /// How the status line and messages name the source: `scpi-tcp 192.0.2.10:5025`.
    pub fn label(&self) -> String {
        let kind = self.kind.name();
        match &self.access {
            Access::Tcp { address } => format!("{kind} {address}"),
            Access::Serial { device, .. } => format!("{kind} {}", device.display()),
            Access::File { path } => format!("{kind} {}", path.display()),
            Access::Stdin => kind.to_string(),
        }
    }
}

/// A refused config: the line of the first bad key and what is wrong with it.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub struct ConfigError {
    pub line: Option<usize>,
    pub message: String,
}

impl fmt::Display for ConfigError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.line {
            Some(line) => write!(f, "line {line}: {}", self.message),
            None => f.write_str(&self.message),
        }
    }
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawFile {
    #[serde(default)]
    source: Vec<Spanned<RawSource>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSource {
    kind: Spanned<String>,
    address: Option<Spanned<String>>,
    device: Option<Spanned<String>>,
    baud: Option<Spanned<i64>>,
    path: Option<Spanned<String>>,
    every_s: Option<Spanned<f64>>,
    channels: Option<Spanned<BTreeMap<Spanned<String>, Spanned<String>>>>,
    stop_supply: Option<Spanned<bool>>,
    off_command: Option<Spanned<String>>,
    stop_within_s: Option<Spanned<f64>>,
}

/// Reads and checks a config file; relative paths in it are taken from the file's directory.
pub fn read_config(path: &Path) -> Result<FeedConfig, ConfigError> {
    let text = std::fs::read_to_string(path).map_err(|e| ConfigError {
        line: None,
        message: format!("cannot read {}: {e}", path.display()),
    })?;
    let base = path.parent().unwrap_or(Path::new("."));
    parse_config(&text, base)
}

/// Checks the text of a config. Devices must exist; files to follow need not yet.
pub fn parse_config(text: &str, base: &Path) -> Result<FeedConfig, ConfigError> {
    let at = |span: Range<usize>, message: String| ConfigError {
        line: Some(line_of(text, span.start)),
        message,
    };
    let raw: RawFile = toml::from_str(text).map_err(|e| ConfigError {
        line: e.span().map(|s| line_of(text, s.start)),
        message: e.message().trim_end().to_string(),
    })?;
    if raw.source.is_empty() {
        return Err(ConfigError {
            line: None,
            message: "no [[source]] table: name at least one instrument".into(),
        });
    }
    let mut sources = Vec::new();
    let mut read_where: BTreeMap<Channel, usize> = BTreeMap::new();
    for table in raw.source {
        let line = line_of(text, table.span().start);
        let source = check_source(table.into_inner(), line, base, &at)?;
        for (channel, _) in &source.channels {
            if let Some(other) = read_where.insert(*channel, source.line) {
                return Err(ConfigError {
                    line: Some(source.line),
                    message: format!(
                        "{channel} is read by the source on line {other} already; give each channel one source"
                    ),
                });
            }
        }
        sources.push(source);
    }
    Ok(FeedConfig { sources })
}

fn check_source(
    raw: RawSource,
    line: usize,
    base: &Path,
    at: &impl Fn(Range<usize>, String) -> ConfigError,
) -> Result<SourceConfig, ConfigError> {
    let kind = SourceKind::ALL
        .iter()
        .find(|(name, _)| *name == raw.kind.get_ref().as_str())
        .map(|(_, kind)| *kind)
        .ok_or_else(|| {
            at(
                raw.kind.span(),
                format!(
                    "unknown kind `{}`: use scpi-tcp, scpi-serial, lines-serial, lines-file or stdin",
                    raw.kind.get_ref()
                ),
            )
        })?;
    let not_for = |key: &str, span: Range<usize>| {
        at(
            span,
            format!("`{key}` does not apply to a {} source", kind.name()),
        )
    };
    let needs = |key: &str| {
        at(
            raw.kind.span(),
            format!("a {} source needs `{key}`", kind.name()),
        )
    };
    // Keys of other kinds, in the order they are written, so the first one is named.
    let mut foreign: Vec<(&str, Range<usize>)> = Vec::new();
    let uses_device = matches!(kind, SourceKind::ScpiSerial | SourceKind::LinesSerial);
    if let Some(v) = raw.address.as_ref().filter(|_| kind != SourceKind::ScpiTcp) {
        foreign.push(("address", v.span()));
    }
    if let Some(v) = raw.device.as_ref().filter(|_| !uses_device) {
        foreign.push(("device", v.span()));
    }
    if let Some(v) = raw.baud.as_ref().filter(|_| !uses_device) {
        foreign.push(("baud", v.span()));
    }
    if let Some(v) = raw.path.as_ref().filter(|_| kind != SourceKind::LinesFile) {
        foreign.push(("path", v.span()));
    }
    if let Some(v) = raw.every_s.as_ref().filter(|_| !kind.is_scpi()) {
        foreign.push(("every_s", v.span()));
    }
    for (key, value) in [
        ("stop_supply", raw.stop_supply.as_ref().map(Spanned::span)),
        ("off_command", raw.off_command.as_ref().map(Spanned::span)),
        (
            "stop_within_s",
            raw.stop_within_s.as_ref().map(Spanned::span),
        ),
    ] {
        if let Some(span) = value.filter(|_| !kind.is_scpi()) {
            foreign.push((key, span));
        }
    }
    if let Some((key, span)) = foreign.into_iter().min_by_key(|(_, s)| s.start) {
        return Err(not_for(key, span));
    }
    let access = match kind {
        SourceKind::ScpiTcp => {
            let address = raw.address.as_ref().ok_or_else(|| needs("address"))?;
            let text = address.get_ref().trim();
            match text.rsplit_once(':') {
                Some((host, port)) if !host.is_empty() && port.parse::<u16>().is_ok() => {}
                _ => {
                    return Err(at(
                        address.span(),
                        format!("address `{text}` is not host:port (e.g. 192.0.2.10:5025)"),
                    ));
                }
            }
            Access::Tcp {
                address: text.to_string(),
            }
        }
        SourceKind::ScpiSerial | SourceKind::LinesSerial => {
            let device = raw.device.as_ref().ok_or_else(|| needs("device"))?;
            let path = PathBuf::from(device.get_ref().trim());
            if !path.exists() {
                return Err(at(
                    device.span(),
                    format!("device {} does not exist", path.display()),
                ));
            }
            let baud = match &raw.baud {
                None => DEFAULT_BAUD,
                Some(b) => u32::try_from(*b.get_ref())
                    .ok()
                    .filter(|b| (50..=4_000_000).contains(b))
                    .ok_or_else(|| {
                        at(
                            b.span(),
                            format!("baud {} is not a serial speed", b.get_ref()),
                        )
                    })?,
            };
            Access::Serial { device: path, baud }
        }
        SourceKind::LinesFile => {
            let path = raw.path.as_ref().ok_or_else(|| needs("path"))?;
            if path.get_ref().trim().is_empty() {
                return Err(at(path.span(), "path is empty".into()));
            }
            Access::File {
                path: base.join(path.get_ref().trim()),
            }
        }
        SourceKind::Stdin => Access::Stdin,
    };
    let every_s = match &raw.every_s {
        None => DEFAULT_EVERY_S,
        Some(v) => {
            let (low, high) = EVERY_S_RANGE;
            let every_s = *v.get_ref();
            if !(low..=high).contains(&every_s) {
                return Err(at(
                    v.span(),
                    format!("every_s must be from {low} to {high} seconds, got {every_s}"),
                ));
            }
            every_s
        }
    };
    let channels = check_channels(&raw, kind, at)?;
    let stop = check_stop(&raw, at)?;
    Ok(SourceConfig {
        line,
        kind,
        access,
        every_s,
        channels,
        stop,
    })
}

fn check_channels(
    raw: &RawSource,
    kind: SourceKind,
    at: &impl Fn(Range<usize>, String) -> ConfigError,
) -> Result<Vec<(Channel, String)>, ConfigError> {
    let Some(table) = &raw.channels else {
        if kind.is_scpi() {
            return Err(at(
                raw.kind.span(),
                format!(
                    "a {} source needs a [source.channels] table: channel = \"query\"",
                    kind.name()
                ),
            ));
        }
        return Ok(Vec::new());
    };
    if table.get_ref().is_empty() {
        return Err(at(
            table.span(),
            "[source.channels] names no channel".into(),
        ));
    }
    // In the order written, so the first bad one is reported.
    let mut entries: Vec<_> = table.get_ref().iter().collect();
    entries.sort_by_key(|(key, _)| key.span().start);
    let mut channels = Vec::new();
    for (key, value) in entries {
        let channel: Channel = key
            .get_ref()
            .parse()
            .map_err(|e: crate::channel::UnknownChannel| at(key.span(), e.to_string()))?;
        let text = value.get_ref().trim();
        if text.is_empty() || text.contains(['\n', '\r']) {
            let what = if kind.is_scpi() {
                "a query (e.g. \"MEAS:VOLT?\")"
            } else {
                "the name the logger prints"
            };
            return Err(at(value.span(), format!("{channel} needs {what}")));
        }
        channels.push((channel, text.to_string()));
    }
    Ok(channels)
}

fn check_stop(
    raw: &RawSource,
    at: &impl Fn(Range<usize>, String) -> ConfigError,
) -> Result<Option<StopSwitch>, ConfigError> {
    let on = raw.stop_supply.as_ref().is_some_and(|v| *v.get_ref());
    if !on {
        let stray = [
            raw.off_command.as_ref().map(|v| ("off_command", v.span())),
            raw.stop_within_s
                .as_ref()
                .map(|v| ("stop_within_s", v.span())),
        ];
        if let Some((key, span)) = stray.into_iter().flatten().min_by_key(|(_, s)| s.start) {
            return Err(at(
                span,
                format!("`{key}` needs `stop_supply = true` in the same source"),
            ));
        }
        return Ok(None);
    }
    let off_command = match &raw.off_command {
        None => DEFAULT_OFF_COMMAND.to_string(),
        Some(v) => {
            let text = v.get_ref().trim();
            if text.is_empty() || text.contains(['\n', '\r']) {
                return Err(at(v.span(), "off_command must be one command line".into()));
            }
            text.to_string()
        }
    };
    let within_s = match &raw.stop_within_s {
        None => DEFAULT_STOP_WITHIN_S,
        Some(v) if v.get_ref().is_finite() && *v.get_ref() >= 0.0 => *v.get_ref(),
        Some(v) => {
            return Err(at(
                v.span(),
                format!(
                    "stop_within_s must be 0 or more seconds, got {}",
                    v.get_ref()
                ),
            ));
        }
    };
    Ok(Some(StopSwitch {
        off_command,
        within_s,
    }))
}

/// 1-based line of a byte offset.
fn line_of(text: &str, offset: usize) -> usize {
    text.as_bytes()[..offset.min(text.len())]
        .iter()
        .filter(|b| **b == b'\n')
        .count()
        + 1
}

#[cfg(test)]
#[path = "config_tests.rs"]
mod tests;
