//! Bulk readings: the checks every imported row passes, a JSON array of rows, and CSV read
//! incrementally from a streamed body so a logger's file of a million rows never sits in memory.
//!
//! A row is `t_s` (seconds since the run started, finite, not negative), `channel` (a known
//! channel of the run's revision: a part temperature only for a role the revision has, and a unit
//! index no higher than its quantity) and `value` (finite, within the channel's plausible range).
//! The first bad row stops the import and is reported by its 1-based data row number (and for
//! CSV, its line), so nothing of a bad file is kept.

use std::fmt;

use axum::body::Bytes;
use futures_util::{Stream, StreamExt};
use serde::de::{DeserializeSeed, IgnoredAny, SeqAccess, Visitor};
use serde::{Deserializer, Serialize};
use serde_json::Value;

use crate::analysis::sent_entry::{check_elapsed_s, check_sender_id};
use crate::channel::Channel;
use crate::parts::Parts;
use crate::store::{NewReading, ReadingsImport, StoreError};
use crate::web::AppError;

/// Rows collected before they are written: the size of one multi-row INSERT.
const BATCH_ROWS: usize = 500;
/// A CSV record longer than this is not a reading; refusing it bounds the parser's memory.
const MAX_RECORD_BYTES: usize = 64 * 1024;
const MAX_FIELDS: usize = 64;
pub const COLUMNS: [&str; 3] = ["t_s", "channel", "value"];
/// A JSON row may also carry the id its sender made (see `analysis::sent_entry`).
const ID_COLUMN: &str = "id";
/// Input longer than this is not quoted back in an error.
const MAX_ECHO_CHARS: usize = 64;

/// The first bad row of an import.
#[derive(Debug, Clone, Serialize)]
pub struct RowError {
    pub error: String,
    /// 1-based data row (the CSV header is not a row).
    pub row: u64,
    /// The column at fault, when one is.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub column: Option<String>,
    /// The CSV line the row ends on.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub line: Option<u64>,
}

impl RowError {
    fn new(row: u64, line: Option<u64>, column: Option<&str>, message: &str) -> RowError {
        let at = match line {
            Some(line) => format!("row {row} (line {line})"),
            None => format!("row {row}"),
        };
        let error = match column {
            Some(column) => format!("{at}, column {column}: {message}"),
            None => format!("{at}: {message}"),
        };
        RowError {
            error,
            row,
            column: column.map(str::to_string),
            line,
        }
    }
}

/// Why an import stopped.
#[derive(Debug)]
pub enum ImportError {
    Row(RowError),
    /// The body went over its limit (bytes).
    TooLarge(u64),
    App(AppError),
}

impl From<AppError> for ImportError {
    fn from(error: AppError) -> ImportError {
        ImportError::App(error)
    }
}

impl From<StoreError> for ImportError {
    fn from(error: StoreError) -> ImportError {
        ImportError::App(error.into())
    }
}

/// The checks of one run: its revision's parts decide which part temperatures exist.
pub struct RowCheck<'a> {
    parts: &'a Parts,
}

/// The column at fault (none when the row as a whole is) and what is wrong with it.
type Refusal = (Option<&'static str>, String);

fn refusal(column: &'static str, message: impl Into<String>) -> Refusal {
    (Some(column), message.into())
}

impl<'a> RowCheck<'a> {
    pub fn new(parts: &'a Parts) -> RowCheck<'a> {
        RowCheck { parts }
    }

    /// A channel of this run's revision.
    pub fn channel(&self, name: &str) -> Result<Channel, String> {
        // Error messages quote the name; a long one is no channel and is not echoed back.
        if name.len() > MAX_ECHO_CHARS {
            return Err("unknown channel (the name is far too long)".into());
        }
        let channel: Channel = name
            .parse()
            .map_err(|e: crate::channel::UnknownChannel| e.to_string())?;
        if let Channel::PartTemp { role, index } = channel {
            let quantity = self.parts.quantity(role);
            let role = role.title().to_lowercase();
            if quantity == 0 {
                return Err(format!("this revision has no {role}"));
            }
            if let Some(n) = index.filter(|n| *n > quantity) {
                return Err(format!(
                    "this revision has {quantity} of {role}; there is no number {n}"
                ));
            }
        }
        Ok(channel)
    }

    /// Checks a row given as text (a CSV record), column by column in order.
    fn text_row(&self, t_s: &str, channel: &str, value: &str) -> Result<NewReading, Refusal> {
        let number = |column: &'static str, text: &str| {
            text.trim()
                .parse::<f64>()
                .map_err(|_| refusal(column, "not a number"))
        };
        let t_s = number("t_s", t_s)?;
        check_t_s(t_s)?;
        let channel = self.channel(channel).map_err(|m| refusal("channel", m))?;
        let value = number("value", value)?;
        reading(t_s, channel, value)
    }

    /// Checks a row given as a JSON object, column by column in order.
    fn json_row(&self, row: &Value) -> Result<NewReading, Refusal> {
        let Some(object) = row.as_object() else {
            return Err((
                None,
                r#"must be an object {"t_s", "channel", "value"}"#.into(),
            ));
        };
        if let Some(unknown) = object
            .keys()
            .find(|k| !COLUMNS.contains(&k.as_str()) && k.as_str() != ID_COLUMN)
        {
            if unknown.len() > MAX_ECHO_CHARS {
                return Err((None, "an unknown column".into()));
            }
            return Err((None, format!("unknown column `{unknown}`")));
        }
        let number = |column: &'static str| match object.get(column) {
            None | Some(Value::Null) => Err(refusal(column, "missing")),
            Some(Value::Number(n)) => n.as_f64().ok_or_else(|| refusal(column, "not a number")),
            Some(Value::String(text)) if text.len() <= MAX_ECHO_CHARS => Err(refusal(
                column,
                format!("not a number (the string {text:?}; send a JSON number)"),
            )),
            Some(_) => Err(refusal(column, "not a number")),
        };
        let t_s = number("t_s")?;
        check_t_s(t_s)?;
        let channel = match object.get("channel") {
            None | Some(Value::Null) => return Err(refusal("channel", "missing")),
            Some(Value::String(name)) => self.channel(name).map_err(|m| refusal("channel", m))?,
            Some(_) => return Err(refusal("channel", "must be a channel name (a string)")),
        };
        let value = number("value")?;
        let client_id = match object.get(ID_COLUMN) {
            None | Some(Value::Null) => None,
            Some(Value::String(id)) => {
                Some(check_sender_id(id).map_err(|m| refusal(ID_COLUMN, m))?)
            }
            Some(_) => return Err(refusal(ID_COLUMN, "must be a string")),
        };
        Ok(NewReading {
            client_id,
            ..reading(t_s, channel, value)?
        })
    }
}

fn check_t_s(t_s: f64) -> Result<(), Refusal> {
    check_elapsed_s(t_s).map_err(|m| refusal("t_s", m))?;
    Ok(())
}

fn reading(t_s: f64, channel: Channel, value: f64) -> Result<NewReading, Refusal> {
    if !value.is_finite() {
        return Err(refusal("value", "must be a finite number"));
    }
    let (low, high) = channel.plausible_range();
    if !(low..=high).contains(&value) {
        let unit = channel.quantity().unit();
        return Err(refusal(
            "value",
            format!("{value} {unit} is outside the plausible range {low} to {high} {unit}"),
        ));
    }
    Ok(NewReading {
        t_s,
        channel: channel.to_string(),
        value,
        client_id: None,
    })
}

/// Checks a JSON array of rows, one element at a time (no tree of the whole body is built).
pub fn json_rows(body: &[u8], check: &RowCheck) -> Result<Vec<NewReading>, ImportError> {
    let mut deserializer = serde_json::Deserializer::from_slice(body);
    let rows = JsonRows { check }
        .deserialize(&mut deserializer)
        .and_then(|rows| deserializer.end().map(|()| rows))
        .map_err(|e| {
            AppError::invalid(
                "body",
                format!(
                    "send a JSON array of {{\"t_s\", \"channel\", \"value\"}} rows \
                     (each with an optional \"id\"): {e}"
                ),
            )
        })?;
    rows.map_err(ImportError::Row)
}

struct JsonRows<'c, 'p> {
    check: &'c RowCheck<'p>,
}

impl<'de> DeserializeSeed<'de> for JsonRows<'_, '_> {
    type Value = Result<Vec<NewReading>, RowError>;
    fn deserialize<D: Deserializer<'de>>(self, deserializer: D) -> Result<Self::Value, D::Error> {
        deserializer.deserialize_seq(self)
    }
}

impl<'de> Visitor<'de> for JsonRows<'_, '_> {
    type Value = Result<Vec<NewReading>, RowError>;

    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("an array of readings")
    }

    fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<Self::Value, A::Error> {
        let mut rows = Vec::with_capacity(seq.size_hint().unwrap_or(0).min(1 << 16));
        let mut row = 0;
        while let Some(element) = seq.next_element::<Value>()? {
            row += 1;
            match self.check.json_row(&element) {
                Ok(reading) => rows.push(reading),
                Err((column, message)) => {
                    // Read to the end so that a bad row is reported as such, not as bad JSON.
                    while seq.next_element::<IgnoredAny>()?.is_some() {}
                    return Ok(Err(RowError::new(row, None, column, &message)));
                }
            }
        }
        Ok(Ok(rows))
    }
}

/// Streams a CSV body with the header `t_s,channel,value` (any column order) into an import:
/// rows are checked as they arrive and written in batches. Returns the rows written; the caller
/// commits. Stops at `limit_bytes`.
pub async fn import_csv<S, E>(
    mut body: S,
    limit_bytes: u64,
    check: &RowCheck<'_>,
    import: &mut ReadingsImport,
) -> Result<(), ImportError>
where
    S: Stream<Item = Result<Bytes, E>> + Unpin,
    E: fmt::Display,
{
    let mut csv = CsvRows::new();
    let mut rows = Vec::with_capacity(2 * BATCH_ROWS);
    let mut seen = 0u64;
    while let Some(chunk) = body.next().await {
        let chunk =
            chunk.map_err(|e| AppError::BadRequest(format!("the upload broke off: {e}")))?;
        seen += chunk.len() as u64;
        if seen > limit_bytes {
            return Err(ImportError::TooLarge(limit_bytes));
        }
        csv.feed(&chunk, check, &mut rows)?;
        if rows.len() >= BATCH_ROWS {
            import.push(&rows).await?;
            rows.clear();
        }
    }
    csv.feed(&[], check, &mut rows)?;
    if !csv.saw_header() {
        return Err(AppError::invalid("header", header_message()).into());
    }
    import.push(&rows).await?;
    Ok(())
}

fn header_message() -> String {
    "the first line must be the header t_s,channel,value".into()
}

/// An incremental CSV reader (RFC 4180 quoting, CRLF or LF, a UTF-8 BOM skipped, blank lines
/// ignored) that turns records into checked readings.
struct CsvRows {
    reader: csv_core::Reader,
    /// The record being read: its field bytes and field end offsets so far.
    record: Vec<u8>,
    record_len: usize,
    ends: Vec<usize>,
    ends_len: usize,
    /// Where `t_s`, `channel` and `value` are, once the header is read.
    order: Option<[usize; 3]>,
    width: usize,
    row: u64,
    /// The first bytes of the body, until there are enough to tell a byte-order mark.
    head: Option<Vec<u8>>,
}

const UTF8_BOM: &[u8] = b"\xef\xbb\xbf";

impl CsvRows {
    fn new() -> CsvRows {
        CsvRows {
            reader: csv_core::Reader::new(),
            record: vec![0; 1024],
            record_len: 0,
            ends: vec![0; 8],
            ends_len: 0,
            order: None,
            width: 0,
            row: 0,
            head: Some(Vec::new()),
        }
    }

    fn saw_header(&self) -> bool {
        self.order.is_some()
    }

    /// Reads the records completed by `input`; an empty `input` means the body has ended.
    fn feed(
        &mut self,
        input: &[u8],
        check: &RowCheck,
        out: &mut Vec<NewReading>,
    ) -> Result<(), ImportError> {
        // The reader skips a byte-order mark only when it sees all of it in its first input.
        let Some(mut head) = self.head.take() else {
            return self.read(input, check, out);
        };
        head.extend_from_slice(input);
        if head.len() < UTF8_BOM.len() && !input.is_empty() {
            self.head = Some(head);
            return Ok(());
        }
        let text = head.strip_prefix(UTF8_BOM).unwrap_or(&head);
        if !text.is_empty() {
            self.read(text, check, out)?;
        }
        if input.is_empty() {
            self.read(&[], check, out)?;
        }
        Ok(())
    }

    fn read(
        &mut self,
        mut input: &[u8],
        check: &RowCheck,
        out: &mut Vec<NewReading>,
    ) -> Result<(), ImportError> {
        let at_end = input.is_empty();
        loop {
            let (result, read, written, ended) = self.reader.read_record(
                input,
                &mut self.record[self.record_len..],
                &mut self.ends[self.ends_len..],
            );
            let last_byte = read.checked_sub(1).map(|i| input[i]);
            input = &input[read..];
            self.record_len += written;
            self.ends_len += ended;
            match result {
                csv_core::ReadRecordResult::InputEmpty => return Ok(()),
                csv_core::ReadRecordResult::End => return Ok(()),
                csv_core::ReadRecordResult::OutputFull => {
                    if self.record.len() >= MAX_RECORD_BYTES {
                        return Err(self.refuse("is too long to be a reading"));
                    }
                    self.record.resize(self.record.len() * 2, 0);
                }
                csv_core::ReadRecordResult::OutputEndsFull => {
                    if self.ends.len() >= MAX_FIELDS {
                        return Err(self.refuse("has too many columns"));
                    }
                    self.ends.resize(self.ends.len() * 2, 0);
                }
                csv_core::ReadRecordResult::Record => {
                    // The line counter has passed the record's newline, when it had one.
                    let line = match last_byte {
                        Some(b'\n') => self.reader.line() - 1,
                        _ => self.reader.line(),
                    };
                    self.record_done(line, check, out)?;
                    // An empty input tells the reader the body has ended: only pass one then.
                    if input.is_empty() && !at_end {
                        return Ok(());
                    }
                }
            }
        }
    }

    fn record_done(
        &mut self,
        line: u64,
        check: &RowCheck,
        out: &mut Vec<NewReading>,
    ) -> Result<(), ImportError> {
        let (record_len, ends_len) = (self.record_len, self.ends_len);
        self.record_len = 0;
        self.ends_len = 0;
        let header = self.order.is_none();
        if !header {
            self.row += 1;
        }
        let mut fields = Vec::with_capacity(ends_len);
        let mut start = 0;
        for &end in &self.ends[..ends_len] {
            let text = std::str::from_utf8(&self.record[start..end.min(record_len)]);
            start = end;
            match text {
                Ok(text) => fields.push(text),
                Err(_) if header => return Err(header_error(line)),
                Err(_) => {
                    let message = "is not UTF-8 text (save the file as UTF-8)";
                    return Err(self.row_error(line, None, message));
                }
            }
        }
        let Some(order) = self.order else {
            self.order = Some(header_order(&fields).ok_or_else(|| header_error(line))?);
            self.width = fields.len();
            return Ok(());
        };
        if fields.len() != self.width {
            let message = format!(
                "has {} columns; the header has {}",
                fields.len(),
                self.width
            );
            return Err(self.row_error(line, None, &message));
        }
        match check.text_row(fields[order[0]], fields[order[1]], fields[order[2]]) {
            Ok(reading) => {
                out.push(reading);
                Ok(())
            }
            Err((column, message)) => Err(self.row_error(line, column, &message)),
        }
    }

    fn row_error(&self, line: u64, column: Option<&str>, message: &str) -> ImportError {
        ImportError::Row(RowError::new(self.row, Some(line), column, message))
    }

    /// A record refused before it was complete (reported at the line the reader has reached).
    fn refuse(&self, message: &str) -> ImportError {
        if self.order.is_none() {
            return header_error(self.reader.line());
        }
        ImportError::Row(RowError::new(
            self.row + 1,
            Some(self.reader.line()),
            None,
            message,
        ))
    }
}

fn header_error(line: u64) -> ImportError {
    ImportError::App(AppError::invalid(
        "header",
        format!("line {line}: {}", header_message()),
    ))
}

/// The positions of `t_s`, `channel` and `value` in a header naming exactly those columns.
fn header_order(fields: &[&str]) -> Option<[usize; 3]> {
    if fields.len() != COLUMNS.len() {
        return None;
    }
    let mut order = [0; 3];
    for (slot, name) in order.iter_mut().zip(COLUMNS) {
        *slot = fields.iter().position(|f| f.trim() == name)?;
    }
    Some(order)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::parts::{TankCapacitor, WorkCoil};

    fn parts() -> Parts {
        Parts {
            tank_capacitor: Some(TankCapacitor {
                label: None,
                capacitance_f: 330e-9,
                count: 6,
                dissipation_factor: None,
                esr_ohm: None,
                voltage_rating_vrms: None,
                current_rating_arms: None,
                max_temp_c: None,
                self_heating_limit_k: None,
            }),
            work_coil: Some(WorkCoil::default()),
            ..Parts::default()
        }
    }

    /// Feeds `text` in pieces of `piece` bytes, as a network would.
    fn read(text: &str, piece: usize) -> Result<Vec<NewReading>, ImportError> {
        let parts = parts();
        let check = RowCheck::new(&parts);
        let mut csv = CsvRows::new();
        let mut out = Vec::new();
        for chunk in text.as_bytes().chunks(piece) {
            csv.feed(chunk, &check, &mut out)?;
        }
        csv.feed(&[], &check, &mut out)?;
        Ok(out)
    }

    fn row_error(result: Result<Vec<NewReading>, ImportError>) -> RowError {
        match result {
            Err(ImportError::Row(e)) => e,
            other => panic!("expected a row error, got {other:?}"),
        }
    }

    #[test]
    fn reads_csv_in_any_piece_size() {
        let text = "\u{feff}t_s,channel,value\r\n0,supply_voltage,24\r\n\r\n1.5,\"temp.tank_capacitor.6\",41.25\n2,frequency,152e3";
        for piece in [1, 2, 3, 7, 1000] {
            let rows = read(text, piece).unwrap();
            assert_eq!(rows.len(), 3, "piece {piece}");
            assert_eq!(rows[1].channel, "temp.tank_capacitor.6");
            assert_eq!(rows[1].value, 41.25);
            assert_eq!(rows[2].value, 152e3);
        }
    }

    #[test]
    fn header_columns_may_come_in_any_order() {
        let rows = read("channel,value,t_s\nambient_temp,21,3\n", 5).unwrap();
        assert_eq!((rows[0].t_s, rows[0].value), (3.0, 21.0));
    }

    #[test]
    fn names_the_row_line_and_column() {
        let text =
            "t_s,channel,value\n0,ambient_temp,20\n\n1,ambient_temp,21\n2,ambient_temp,abc\n";
        for piece in [1, 4, 100] {
            let e = row_error(read(text, piece));
            assert_eq!(
                (e.row, e.line, e.column.as_deref()),
                (3, Some(5), Some("value"))
            );
            assert_eq!(e.error, "row 3 (line 5), column value: not a number");
        }
    }

    #[test]
    fn a_quoted_newline_stays_in_its_field() {
        let e = row_error(read("t_s,channel,value\n0,\"ambient\ntemp\",20\n", 3));
        assert_eq!((e.row, e.column.as_deref()), (1, Some("channel")));
    }

    #[test]
    fn refuses_bad_rows() {
        for (row, column) in [
            ("-1,ambient_temp,20", "t_s"),
            ("NaN,ambient_temp,20", "t_s"),
            ("inf,ambient_temp,20", "t_s"),
            ("1,temp.switch,20", "channel"),
            ("1,temp.tank_capacitor.7,20", "channel"),
            ("1,temp.tank_capacitor.6", "row"),
            ("1,voltage,20", "channel"),
            ("1,ambient_temp,4000", "value"),
            ("1,ambient_temp,NaN", "value"),
            ("1,supply_current,-2", "value"),
        ] {
            let e = row_error(read(&format!("t_s,channel,value\n{row}\n"), 64));
            assert_eq!(
                e.column.as_deref().unwrap_or("row"),
                column,
                "{row}: {}",
                e.error
            );
            assert_eq!(e.row, 1);
        }
    }

    #[test]
    fn a_wrong_header_is_refused() {
        for text in [
            "time,channel,value\n1,ambient_temp,2\n",
            "1,ambient_temp,2\n",
            "t_s,channel\n",
            "t_s,channel,value,unit\n",
            "t_s,t_s,value\n",
        ] {
            assert!(
                matches!(
                    read(text, 8),
                    Err(ImportError::App(AppError::Invalid { .. }))
                ),
                "{text:?}"
            );
        }
    }

    #[test]
    fn json_rows_name_the_first_bad_row() {
        let parts = parts();
        let check = RowCheck::new(&parts);
        let body = br#"[{"t_s": 0, "channel": "ambient_temp", "value": 20},
                        {"t_s": 1, "channel": "ambient_temp", "value": "NaN"},
                        {"t_s": -1, "channel": "ambient_temp", "value": 20}]"#;
        match json_rows(body, &check) {
            Err(ImportError::Row(e)) => {
                assert_eq!((e.row, e.column.as_deref()), (2, Some("value")));
            }
            other => panic!("{other:?}"),
        }
        let good = br#"[{"t_s": 0.5, "channel": "temp.work_coil", "value": 30}]"#;
        assert_eq!(json_rows(good, &check).unwrap().len(), 1);
    }
}
