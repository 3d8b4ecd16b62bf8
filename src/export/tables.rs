//! The export document as CSV tables for a spreadsheet: `build.csv`, `revisions.csv`,
//! `parts.csv`, `runs.csv`, `readings.csv` and `marks.csv`, joined by their `revision` (r1, r2, …) and `run`
//! (1, 2, … in start order) columns. Readings are numbered from 1 within their run, and
//! `corrects` gives the number of the reading a correction replaces.
//!
//! Times are UTC, written `2026-03-01 14:05:00` so that spreadsheets read them as dates; values
//! are SI as in the JSON. Files start with a UTF-8 byte-order mark, without which a popular
//! spreadsheet reads UTF-8 (`°C`, names with accents) as a legacy code page.
//!
//! Formula injection (OWASP, "CSV Injection"): a spreadsheet evaluates a cell that begins with
//! `=`, `+`, `-`, `@`, a tab or a carriage return, so a build named `=HYPERLINK(…)` would become
//! a live link on the reader's screen. Such text cells get a leading single quote, which
//! spreadsheets show as text. That would also turn a negative number written as text into
//! text, so numeric columns are written as numbers by the csv crate's own serialiser
//! (`Cell::Number`) and only text cells are escaped.

use std::borrow::Cow;

use serde::{Serialize, Serializer};
use serde_json::{Map, Value};
use time::OffsetDateTime;
use time::macros::format_description;

use super::{BuildDocument, RunRecord};
use crate::channel::Channel;
use crate::parts::{Parts, Role};

/// One CSV file of the export.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Table {
    Build,
    Revisions,
    Parts,
    Runs,
    Readings,
    Marks,
}

impl Table {
    pub const ALL: [Table; 6] = [
        Table::Build,
        Table::Revisions,
        Table::Parts,
        Table::Runs,
        Table::Readings,
        Table::Marks,
    ];

    pub fn name(self) -> &'static str {
        match self {
            Table::Build => "build",
            Table::Revisions => "revisions",
            Table::Parts => "parts",
            Table::Runs => "runs",
            Table::Readings => "readings",
            Table::Marks => "marks",
        }
    }

    /// `readings.csv`, …
    pub fn file_name(self) -> String {
        format!("{}.csv", self.name())
    }

    pub fn from_name(name: &str) -> Option<Table> {
        Table::ALL.into_iter().find(|t| t.name() == name)
    }
}

/// A text cell as written: with a leading `'` when a spreadsheet would take it for a formula.
pub fn escape_text(text: &str) -> Cow<'_, str> {
    if text.starts_with(['=', '+', '-', '@', '\t', '\r']) {
        Cow::Owned(format!("'{text}"))
    } else {
        Cow::Borrowed(text)
    }
}

/// One cell: numbers stay numbers, only text is escaped.
#[derive(Debug, Clone, PartialEq)]
enum Cell {
    Text(String),
    Number(f64),
    Integer(i64),
    Empty,
}

impl Serialize for Cell {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        match self {
            Cell::Text(text) => serializer.serialize_str(&escape_text(text)),
            Cell::Number(value) => serializer.serialize_f64(*value),
            Cell::Integer(value) => serializer.serialize_i64(*value),
            Cell::Empty => serializer.serialize_str(""),
        }
    }
}

fn text(value: impl Into<String>) -> Cell {
    Cell::Text(value.into())
}

fn number(value: Option<f64>) -> Cell {
    value.map_or(Cell::Empty, Cell::Number)
}

fn integer(value: Option<i64>) -> Cell {
    value.map_or(Cell::Empty, Cell::Integer)
}

fn time_utc(unix_s: Option<i64>) -> Cell {
    let format = format_description!("[year]-[month]-[day] [hour]:[minute]:[second]");
    unix_s
        .and_then(|s| OffsetDateTime::from_unix_timestamp(s).ok())
        .and_then(|t| t.format(format).ok())
        .map_or(Cell::Empty, Cell::Text)
}

fn label(number: i64) -> Cell {
    Cell::Text(format!("r{number}"))
}

const UTF8_BOM: &[u8] = b"\xEF\xBB\xBF";

/// One table of the document as the bytes of a CSV file.
pub fn write_table(document: &BuildDocument, table: Table) -> Vec<u8> {
    let (header, rows) = match table {
        Table::Build => build_table(document),
        Table::Revisions => revisions_table(document),
        Table::Parts => parts_table(document),
        Table::Runs => runs_table(document),
        Table::Readings => readings_table(document),
        Table::Marks => marks_table(document),
    };
    let mut out = UTF8_BOM.to_vec();
    {
        let mut writer = csv::Writer::from_writer(&mut out);
        let header: Vec<Cell> = header.into_iter().map(text).collect();
        // Every row has the header's length, and writing to memory does not fail.
        writer.serialize(&header).expect("a CSV header writes");
        for row in rows {
            writer.serialize(&row).expect("a CSV row writes");
        }
        writer.flush().expect("writing to memory does not fail");
    }
    out
}

type Rows = (Vec<String>, Vec<Vec<Cell>>);

fn names(columns: &[&str]) -> Vec<String> {
    columns.iter().map(|c| c.to_string()).collect()
}

fn build_table(document: &BuildDocument) -> Rows {
    let build = &document.build;
    let readings: usize = document.runs.iter().map(|r| r.readings.len()).sum();
    let header = names(&[
        "slug",
        "name",
        "purpose",
        "notes",
        "created_at_utc",
        "revisions",
        "runs",
        "readings",
        "exported_at_utc",
        "format",
        "version",
    ]);
    let row = vec![
        text(&build.slug),
        text(&build.name),
        text(&build.purpose),
        text(&build.notes),
        time_utc(Some(build.created_at)),
        Cell::Integer(document.revisions.len() as i64),
        Cell::Integer(document.runs.len() as i64),
        Cell::Integer(readings as i64),
        time_utc(Some(document.exported_at)),
        text(&document.format),
        Cell::Integer(i64::from(document.version)),
    ];
    (header, vec![row])
}

fn revisions_table(document: &BuildDocument) -> Rows {
    let header = names(&["revision", "parent", "created_at_utc", "notes"]);
    let rows = document
        .revisions
        .iter()
        .map(|r| {
            vec![
                label(r.number),
                r.parent.map_or(Cell::Empty, label),
                time_utc(Some(r.created_at)),
                text(&r.notes),
            ]
        })
        .collect();
    (header, rows)
}

/// A part of a revision: its role, label, quantity and the rest of its parameters.
struct PartLine {
    revision: i64,
    role: Role,
    label: String,
    quantity: u32,
    params: Map<String, Value>,
}

fn part_lines(revision: i64, parts: &Parts) -> Vec<PartLine> {
    let value = serde_json::to_value(parts).expect("parts always serialise");
    let mut lines = Vec::new();
    for role in Role::ALL {
        let params: Vec<Value> = match value.get(role.key()) {
            Some(Value::Array(others)) => others.clone(),
            Some(one) => vec![one.clone()],
            None => continue,
        };
        for params in params {
            let Value::Object(mut params) = params else {
                continue;
            };
            let label = match params.remove("label") {
                Some(Value::String(label)) => label,
                _ => String::new(),
            };
            let quantity = match (role, params.remove("quantity")) {
                (Role::Other, Some(q)) => q.as_u64().map_or(1, |q| q as u32),
                _ => parts.quantity(role),
            };
            lines.push(PartLine {
                revision,
                role,
                label,
                quantity,
                params: flatten(params),
            });
        }
    }
    lines
}

/// Nested parameters (the coil's conductor) as `conductor.kind`, `conductor.wall_m`, …
fn flatten(params: Map<String, Value>) -> Map<String, Value> {
    let mut flat = Map::new();
    for (key, value) in params {
        match value {
            Value::Object(inner) => {
                for (inner_key, inner_value) in flatten(inner) {
                    flat.insert(format!("{key}.{inner_key}"), inner_value);
                }
            }
            other => {
                flat.insert(key, other);
            }
        }
    }
    flat
}

fn json_cell(value: Option<&Value>) -> Cell {
    match value {
        None | Some(Value::Null) => Cell::Empty,
        Some(Value::Number(n)) => match n.as_i64() {
            Some(i) => Cell::Integer(i),
            None => number(n.as_f64()),
        },
        Some(Value::String(s)) => text(s.as_str()),
        Some(other) => text(other.to_string()),
    }
}

/// One row per role (each `other` part a row of its own), a column per parameter that any part
/// of the build has, in the order they first appear.
fn parts_table(document: &BuildDocument) -> Rows {
    let lines: Vec<PartLine> = document
        .revisions
        .iter()
        .flat_map(|r| part_lines(r.number, &r.parts))
        .collect();
    let mut columns: Vec<String> = Vec::new();
    for line in &lines {
        for key in line.params.keys() {
            if !columns.contains(key) {
                columns.push(key.clone());
            }
        }
    }
    let mut header = names(&["revision", "role", "label", "quantity"]);
    header.extend(columns.iter().cloned());
    let rows = lines
        .iter()
        .map(|line| {
            let mut row = vec![
                label(line.revision),
                text(line.role.key()),
                text(&line.label),
                Cell::Integer(i64::from(line.quantity)),
            ];
            row.extend(columns.iter().map(|c| json_cell(line.params.get(c))));
            row
        })
        .collect();
    (header, rows)
}

fn analysis_number(run: &RunRecord, pointer: &str) -> Cell {
    number(
        run.analysis
            .as_ref()
            .and_then(|a| a.pointer(pointer))
            .and_then(Value::as_f64),
    )
}

/// The run's flags as `code (severity)`, worst first as the analysis orders them.
fn flag_list(run: &RunRecord) -> Cell {
    let Some(flags) = run
        .analysis
        .as_ref()
        .and_then(|a| a.get("flags"))
        .and_then(Value::as_array)
    else {
        return Cell::Empty;
    };
    let list: Vec<String> = flags
        .iter()
        .map(|f| {
            let field = |key: &str| f.get(key).and_then(Value::as_str).unwrap_or_default();
            format!("{} ({})", field("code"), field("severity"))
        })
        .collect();
    text(list.join("; "))
}

fn runs_table(document: &BuildDocument) -> Rows {
    let header = names(&[
        "run",
        "revision",
        "started_at_utc",
        "finished_at_utc",
        "operator",
        "load",
        "supply_setting_v",
        "supply_current_limit_a",
        "water_mass_kg",
        "vessel_heat_capacity_j_per_k",
        "channels",
        "outcome",
        "failed_part",
        "outcome_note",
        "notes",
        "readings",
        "duration_s",
        "efficiency_calorimetric",
        "efficiency_differential",
        "efficiency_model",
        "flags",
    ]);
    let rows = document
        .runs
        .iter()
        .enumerate()
        .map(|(i, run)| {
            let load = serde_json::to_value(run.load).expect("a load serialises");
            let outcome = run
                .outcome
                .map_or(Cell::Empty, |o| text(o.as_str().to_string()));
            vec![
                Cell::Integer(i as i64 + 1),
                label(run.revision),
                time_utc(Some(run.started_at)),
                time_utc(run.finished_at),
                text(&run.operator),
                json_cell(Some(&load)),
                number(run.supply_setting_v),
                number(run.supply_current_limit_a),
                number(run.water_mass_kg),
                number(run.vessel_heat_capacity_j_per_k),
                text(run.channels.join(" ")),
                outcome,
                run.failed_part.clone().map_or(Cell::Empty, text),
                text(&run.outcome_note),
                text(&run.notes),
                Cell::Integer(run.readings.len() as i64),
                analysis_number(run, "/duration_s"),
                analysis_number(run, "/efficiency/calorimetric"),
                analysis_number(run, "/efficiency/differential"),
                analysis_number(run, "/efficiency/model"),
                flag_list(run),
            ]
        })
        .collect();
    (header, rows)
}

fn marks_table(document: &BuildDocument) -> Rows {
    let header = names(&[
        "run",
        "t_s",
        "text",
        "made_at_utc",
        "voided_at_utc",
        "void_reason",
    ]);
    let mut rows = Vec::new();
    for (i, run) in document.runs.iter().enumerate() {
        for mark in &run.event_marks {
            rows.push(vec![
                Cell::Integer(i as i64 + 1),
                Cell::Number(mark.t_s),
                text(&mark.text),
                time_utc(Some(mark.made_at)),
                time_utc(mark.voided_at),
                mark.void_reason.as_deref().map_or(Cell::Empty, text),
            ]);
        }
    }
    (header, rows)
}

fn readings_table(document: &BuildDocument) -> Rows {
    let header = names(&[
        "run",
        "reading",
        "t_s",
        "channel",
        "unit",
        "value",
        "corrects",
        "superseded",
        "entered_at_utc",
    ]);
    let mut rows = Vec::new();
    for (i, run) in document.runs.iter().enumerate() {
        let replaced: Vec<usize> = run.readings.iter().filter_map(|r| r.corrects).collect();
        for (j, reading) in run.readings.iter().enumerate() {
            let unit = reading
                .channel
                .parse::<Channel>()
                .map_or("", |c| c.quantity().unit());
            rows.push(vec![
                Cell::Integer(i as i64 + 1),
                Cell::Integer(j as i64 + 1),
                Cell::Number(reading.t_s),
                text(&reading.channel),
                text(unit),
                Cell::Number(reading.value),
                integer(reading.corrects.map(|k| k as i64 + 1)),
                text(if replaced.contains(&j) { "yes" } else { "no" }),
                time_utc(Some(reading.entered_at)),
            ]);
        }
    }
    (header, rows)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn cells(row: &[Cell]) -> String {
        let mut out = Vec::new();
        {
            let mut writer = csv::Writer::from_writer(&mut out);
            writer.serialize(row).unwrap();
        }
        String::from_utf8(out).unwrap()
    }

    #[test]
    fn formula_starts_are_escaped_and_numbers_are_not() {
        for (raw, written) in [
            ("=1+1", "'=1+1"),
            ("+1 cmd", "'+1 cmd"),
            ("-2", "'-2"),
            ("@SUM(A1)", "'@SUM(A1)"),
            ("\tx", "'\tx"),
            ("\rx", "'\rx"),
            ("plain", "plain"),
            ("a=b", "a=b"),
            ("", ""),
        ] {
            assert_eq!(escape_text(raw), written, "{raw:?}");
        }
        assert_eq!(
            cells(&[
                Cell::Number(-5.0),
                text("-5.0"),
                Cell::Integer(-3),
                Cell::Empty
            ]),
            "-5.0,'-5.0,-3,\n"
        );
    }

    #[test]
    fn times_read_as_spreadsheet_dates() {
        assert_eq!(time_utc(Some(1_700_000_000)), text("2023-11-14 22:13:20"));
        assert_eq!(time_utc(None), Cell::Empty);
    }

    #[test]
    fn table_names_round_trip() {
        for table in Table::ALL {
            assert_eq!(Table::from_name(table.name()), Some(table));
        }
        assert_eq!(Table::from_name("users"), None);
    }
}
