//! The export document of a build: its revisions with their parts, its runs, and every reading
//! (replaced values included), as one JSON file that another instance imports without loss.
//!
//! Pure: the store reads and writes the document (`Store::export_build`, `Store::import_build`);
//! this module defines it, checks a file before anything is saved, adds each run's analysis for
//! the reader, and writes the same data as CSV tables for a spreadsheet (`tables`).
//!
//! Database ids do not travel. A revision is known by its number, a run by its place in `runs`,
//! and a correction names the reading it replaces by that reading's place in the run's
//! `readings`. Accounts do not travel either: the run's free-text `operator` does.

pub mod tables;

use std::collections::HashSet;

use serde::{Deserialize, Serialize};
use serde_json::Value;

use crate::analysis::operating_point::operating_point;
use crate::analysis::reading::Reading;
use crate::analysis::run::{IdleReference, Load, RunInput, analyse_run};
use crate::channel::Channel;
use crate::parts::Parts;
use crate::store::Outcome;

/// The `format` marker of every export document.
pub const FORMAT: &str = "eddybench-build";
/// The document version this code writes and reads.
pub const VERSION: u32 = 1;

/// One build and everything logged on it. Times are Unix seconds (UTC); values are SI.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BuildDocument {
    /// Always `"eddybench-build"`.
    pub format: String,
    /// Always 1 for this layout.
    pub version: u32,
    pub exported_at: i64,
    pub build: BuildRecord,
    /// Oldest first.
    pub revisions: Vec<RevisionRecord>,
    /// Oldest first.
    pub runs: Vec<RunRecord>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BuildRecord {
    /// The slug on the exporting instance; an import keeps it when it is free.
    pub slug: String,
    pub name: String,
    pub purpose: String,
    pub notes: String,
    pub created_at: i64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RevisionRecord {
    /// 1 for r1, 2 for r2, …
    pub number: i64,
    /// The number of the revision this one was copied from.
    pub parent: Option<i64>,
    pub notes: String,
    pub created_at: i64,
    /// The parts contract of [`Parts`]: one object per role, SI units, snake_case.
    pub parts: Parts,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RunRecord {
    /// The number of the revision the run was made on.
    pub revision: i64,
    pub started_at: i64,
    /// Who stood at the bench (free text).
    pub operator: String,
    pub supply_setting_v: Option<f64>,
    pub supply_current_limit_a: Option<f64>,
    pub load: Load,
    pub water_mass_kg: Option<f64>,
    pub vessel_heat_capacity_j_per_k: Option<f64>,
    pub notes: String,
    /// The channel names the operator chose to log.
    pub channels: Vec<String>,
    /// `None` while the run is open.
    pub finished_at: Option<i64>,
    pub outcome: Option<Outcome>,
    /// The part that failed (`tank_capacitor`, `switch.2`, …) when the outcome is `part_failed`.
    pub failed_part: Option<String>,
    pub outcome_note: String,
    /// Every row, in the order they were entered; corrections follow what they replace.
    pub readings: Vec<ReadingRecord>,
    /// Event marks on the run's timeline ("fan on"), voided ones with their reason.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub event_marks: Vec<EventMarkRecord>,
    /// The run's analysis (`analysis::run::analyse_run`) for whoever reads the file. It is
    /// derived data: an import ignores it and the receiving instance computes its own.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub analysis: Option<Value>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ReadingRecord {
    /// Seconds from the start of the run.
    pub t_s: f64,
    pub channel: String,
    pub value: f64,
    /// For a correction: the index, in this run's `readings`, of the reading it replaces.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub corrects: Option<usize>,
    pub entered_at: i64,
    /// Set when the reading was voided: it stays in the record and leaves every analysis.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub voided: Option<Voided>,
}

/// When a reading was voided and why.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Voided {
    pub at: i64,
    pub reason: String,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct EventMarkRecord {
    /// Seconds from the start of the run.
    pub t_s: f64,
    pub text: String,
    pub made_at: i64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub voided_at: Option<i64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub void_reason: Option<String>,
}

/// Why a file cannot be imported. Each message says what to fix.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum DocumentError {
    #[error("the file is not valid JSON: {0}")]
    NotJson(String),
    #[error("the file is not a build export: its `format` is {found}, expected \"{FORMAT}\"")]
    WrongFormat { found: String },
    #[error(
        "the file is build export version {found}; this version of the program reads version {VERSION}"
    )]
    UnsupportedVersion { found: String },
    #[error("the build export is malformed: {0}")]
    Malformed(String),
    #[error("the build export is inconsistent: {0}")]
    Inconsistent(String),
}

/// Reads an export file: the marker and version first, so that another file is refused with a
/// plain message before its fields are looked at, then the fields, then their consistency.
pub fn parse_document(text: &str) -> Result<BuildDocument, DocumentError> {
    let value: Value =
        serde_json::from_str(text).map_err(|e| DocumentError::NotJson(e.to_string()))?;
    let found = |key: &str| {
        value
            .get(key)
            .map_or_else(|| "missing".to_string(), Value::to_string)
    };
    if value.get("format").and_then(Value::as_str) != Some(FORMAT) {
        return Err(DocumentError::WrongFormat {
            found: found("format"),
        });
    }
    if value.get("version").and_then(Value::as_u64) != Some(u64::from(VERSION)) {
        return Err(DocumentError::UnsupportedVersion {
            found: found("version"),
        });
    }
    // From the text again rather than from `value`: serde_json then reports line and column.
    let document: BuildDocument =
        serde_json::from_str(text).map_err(|e| DocumentError::Malformed(e.to_string()))?;
    document.validate()?;
    Ok(document)
}

impl BuildDocument {
    /// The document as the file is written.
    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("a document always serialises")
    }

    /// Checks what the store relies on to recreate the build: the marker and version, revision
    /// numbers and parents, each run's revision, channel names and correction links.
    pub fn validate(&self) -> Result<(), DocumentError> {
        if self.format != FORMAT {
            return Err(DocumentError::WrongFormat {
                found: format!("\"{}\"", self.format),
            });
        }
        if self.version != VERSION {
            return Err(DocumentError::UnsupportedVersion {
                found: self.version.to_string(),
            });
        }
        let fail = |message: String| Err(DocumentError::Inconsistent(message));
        if self.build.name.trim().is_empty() {
            return fail("build.name is empty".into());
        }
        let mut numbers = HashSet::new();
        for (i, revision) in self.revisions.iter().enumerate() {
            if revision.number < 1 {
                return fail(format!("revisions[{i}].number must be 1 or more"));
            }
            if !numbers.insert(revision.number) {
                return fail(format!("revision r{} appears twice", revision.number));
            }
        }
        for (i, revision) in self.revisions.iter().enumerate() {
            match revision.parent {
                Some(parent) if !numbers.contains(&parent) => {
                    return fail(format!(
                        "revisions[{i}] (r{}) names r{parent} as its parent, which is not in the file",
                        revision.number
                    ));
                }
                // A revision is copied from one that already exists, so its parent is older.
                Some(parent) if parent >= revision.number => {
                    return fail(format!(
                        "revisions[{i}] (r{}) names r{parent} as its parent; a parent comes before its child",
                        revision.number
                    ));
                }
                _ => {}
            }
        }
        for (i, run) in self.runs.iter().enumerate() {
            validate_run(run, &format!("runs[{i}]"), &numbers)?;
        }
        Ok(())
    }

    /// Fills in each run's analysis, as the run's page would compute it.
    pub fn add_analyses(&mut self) {
        let inputs: Vec<(Option<&Parts>, Vec<Reading>)> = self
            .runs
            .iter()
            .map(|run| {
                let parts = self
                    .revisions
                    .iter()
                    .find(|r| r.number == run.revision)
                    .map(|r| &r.parts);
                (parts, current_readings(run))
            })
            .collect();
        let idle = idle_points(&self.runs, &inputs);
        let analyses: Vec<Option<Value>> = self
            .runs
            .iter()
            .zip(&inputs)
            .map(|(run, (parts, readings))| {
                let input = RunInput {
                    parts: (*parts)?,
                    readings,
                    supply_setting_v: run.supply_setting_v,
                    supply_current_limit_a: run.supply_current_limit_a,
                    load: run.load,
                    water_mass_kg: run.water_mass_kg,
                    vessel_heat_capacity_j_per_k: run.vessel_heat_capacity_j_per_k,
                    idle_reference: idle_reference_for(run, &idle),
                };
                serde_json::to_value(analyse_run(&input)).ok()
            })
            .collect();
        for (run, analysis) in self.runs.iter_mut().zip(analyses) {
            run.analysis = analysis;
        }
    }
}

fn validate_run(
    run: &RunRecord,
    path: &str,
    revisions: &HashSet<i64>,
) -> Result<(), DocumentError> {
    let fail = |message: String| Err(DocumentError::Inconsistent(message));
    if !revisions.contains(&run.revision) {
        return fail(format!(
            "{path} was made on r{}, which is not in the file",
            run.revision
        ));
    }
    if run.finished_at.is_some() != run.outcome.is_some() {
        return fail(format!(
            "{path}: a finished run has both finished_at and outcome, an open run neither"
        ));
    }
    if run.failed_part.is_some() && run.outcome != Some(Outcome::PartFailed) {
        return fail(format!(
            "{path}: failed_part is given but the outcome is not part_failed"
        ));
    }
    for name in &run.channels {
        if let Err(e) = name.parse::<Channel>() {
            return fail(format!("{path}.channels: {e}"));
        }
    }
    let mut corrected = HashSet::new();
    for (j, reading) in run.readings.iter().enumerate() {
        let here = format!("{path}.readings[{j}]");
        if let Err(e) = reading.channel.parse::<Channel>() {
            return fail(format!("{here}: {e}"));
        }
        if !reading.t_s.is_finite() || !reading.value.is_finite() {
            return fail(format!("{here}: t_s and value must be finite numbers"));
        }
        let Some(k) = reading.corrects else { continue };
        // Corrections are entered after what they replace, and the file keeps that order.
        if k >= j {
            return fail(format!(
                "{here} corrects readings[{k}], which does not come before it"
            ));
        }
        let old = &run.readings[k];
        // A correction may fix the time as well as the value, never the channel.
        if old.channel != reading.channel {
            return fail(format!(
                "{here} corrects readings[{k}], a reading of another channel"
            ));
        }
        if !corrected.insert(k) {
            return fail(format!(
                "{path}.readings[{k}] is corrected twice; a correction replaces the newest value"
            ));
        }
    }
    Ok(())
}

/// A run's current values (replaced and voided rows left out) in time order, as analysis reads them.
fn current_readings(run: &RunRecord) -> Vec<Reading> {
    let replaced: HashSet<usize> = run.readings.iter().filter_map(|r| r.corrects).collect();
    let mut readings: Vec<Reading> = run
        .readings
        .iter()
        .enumerate()
        .filter(|(i, r)| !replaced.contains(i) && r.voided.is_none())
        .filter_map(|(_, r)| Some(Reading::new(r.t_s, r.channel.parse().ok()?, r.value)))
        .collect();
    // Stable: readings at the same time keep their entry order, as the store returns them.
    readings.sort_by(|a, b| a.t_s.total_cmp(&b.t_s));
    readings
}

/// The measured supply operating point of each idle run (no workpiece), by revision.
fn idle_points(
    runs: &[RunRecord],
    inputs: &[(Option<&Parts>, Vec<Reading>)],
) -> Vec<(i64, IdleReference)> {
    runs.iter()
        .zip(inputs)
        .filter(|(run, _)| run.load == Load::None)
        .filter_map(|(run, (_, readings))| {
            let op = operating_point(readings, run.supply_setting_v)?;
            Some((
                run.revision,
                IdleReference {
                    supply_voltage_v: op.supply_voltage_v,
                    supply_current_a: op.supply_current_a?,
                },
            ))
        })
        .collect()
}

/// For a loaded run, the idle run of the same revision nearest its supply setting; the
/// differential efficiency itself refuses a reference too far from the loaded run's voltage.
fn idle_reference_for(run: &RunRecord, idle: &[(i64, IdleReference)]) -> Option<IdleReference> {
    if run.load == Load::None {
        return None;
    }
    let target_v = run.supply_setting_v?;
    idle.iter()
        .filter(|(revision, _)| *revision == run.revision)
        .map(|(_, point)| *point)
        .min_by(|a, b| {
            (a.supply_voltage_v - target_v)
                .abs()
                .total_cmp(&(b.supply_voltage_v - target_v).abs())
        })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn reading(t_s: f64, channel: &str, value: f64, corrects: Option<usize>) -> ReadingRecord {
        ReadingRecord {
            t_s,
            channel: channel.into(),
            value,
            corrects,
            entered_at: 1_700_000_000,
            voided: None,
        }
    }

    fn document() -> BuildDocument {
        BuildDocument {
            format: FORMAT.into(),
            version: VERSION,
            exported_at: 1_700_000_100,
            build: BuildRecord {
                slug: "rig".into(),
                name: "Rig".into(),
                purpose: String::new(),
                notes: String::new(),
                created_at: 1_700_000_000,
            },
            revisions: vec![
                RevisionRecord {
                    number: 1,
                    parent: None,
                    notes: String::new(),
                    created_at: 1_700_000_000,
                    parts: Parts::default(),
                },
                RevisionRecord {
                    number: 2,
                    parent: Some(1),
                    notes: String::new(),
                    created_at: 1_700_000_010,
                    parts: Parts::default(),
                },
            ],
            runs: vec![RunRecord {
                revision: 2,
                started_at: 1_700_000_020,
                operator: "Ana".into(),
                supply_setting_v: Some(24.0),
                supply_current_limit_a: None,
                load: Load::None,
                water_mass_kg: None,
                vessel_heat_capacity_j_per_k: None,
                notes: String::new(),
                channels: vec!["ambient_temp".into()],
                finished_at: None,
                outcome: None,
                failed_part: None,
                outcome_note: String::new(),
                readings: vec![
                    reading(0.0, "ambient_temp", 21.0, None),
                    reading(0.0, "ambient_temp", 12.0, Some(0)),
                ],
                event_marks: Vec::new(),
                analysis: None,
            }],
        }
    }

    fn inconsistent(document: &BuildDocument) -> String {
        match document.validate() {
            Err(DocumentError::Inconsistent(message)) => message,
            other => panic!("expected an inconsistency, got {other:?}"),
        }
    }

    #[test]
    fn a_document_survives_its_own_json() {
        let document = document();
        assert_eq!(parse_document(&document.to_json()), Ok(document));
    }

    #[test]
    fn every_float_survives_the_json_exactly() {
        // Bit patterns spread over the whole exponent range; serde_json's default parser can be
        // one unit in the last place off, which the `float_roundtrip` feature rules out.
        let mut document = document();
        let mut state = 0x9E37_79B9_7F4A_7C15_u64;
        document.runs[0].readings = (0..2_000)
            .map(|_| {
                state ^= state << 13;
                state ^= state >> 7;
                state ^= state << 17;
                let value = f64::from_bits(state);
                let value = if value.is_finite() { value } else { 1.5 };
                reading(0.0, "ambient_temp", value, None)
            })
            .collect();
        let back = parse_document(&document.to_json()).unwrap();
        for (a, b) in document.runs[0].readings.iter().zip(&back.runs[0].readings) {
            assert_eq!(a.value.to_bits(), b.value.to_bits(), "{:e}", a.value);
        }
    }

    #[test]
    fn another_file_is_refused_by_its_marker_and_version() {
        assert!(matches!(
            parse_document("{not json"),
            Err(DocumentError::NotJson(_))
        ));
        let error = parse_document(r#"{"format": "spreadsheet", "version": 1}"#).unwrap_err();
        assert_eq!(
            error.to_string(),
            "the file is not a build export: its `format` is \"spreadsheet\", expected \"eddybench-build\""
        );
        let error = parse_document(r#"{"format": "eddybench-build", "version": 7}"#).unwrap_err();
        assert!(matches!(error, DocumentError::UnsupportedVersion { ref found } if found == "7"));
        let error = parse_document(r#"{"format": "eddybench-build", "version": 1}"#).unwrap_err();
        assert!(matches!(error, DocumentError::Malformed(_)), "{error}");
    }

    #[test]
    fn broken_links_are_refused() {
        let mut orphan = document();
        orphan.revisions[1].parent = Some(5);
        assert!(inconsistent(&orphan).contains("r5"));
        let mut younger_parent = document();
        younger_parent.revisions[0].parent = Some(2);
        assert!(inconsistent(&younger_parent).contains("before its child"));
        let mut unknown_revision = document();
        unknown_revision.runs[0].revision = 9;
        assert!(inconsistent(&unknown_revision).contains("r9"));
        let mut forward = document();
        forward.runs[0].readings[0].corrects = Some(1);
        assert!(inconsistent(&forward).contains("does not come before it"));
        let mut twice = document();
        twice.runs[0]
            .readings
            .push(reading(0.0, "ambient_temp", 13.0, Some(0)));
        assert!(inconsistent(&twice).contains("corrected twice"));
        let mut other_channel = document();
        other_channel.runs[0].readings[1].channel = "water_temp".into();
        assert!(inconsistent(&other_channel).contains("another channel"));
        let mut bad_channel = document();
        bad_channel.runs[0].readings[0].channel = "temp.flux".into();
        assert!(inconsistent(&bad_channel).contains("unknown channel"));
        let mut half_finished = document();
        half_finished.runs[0].finished_at = Some(1_700_000_900);
        assert!(inconsistent(&half_finished).contains("finished_at and outcome"));
    }

    #[test]
    fn analysis_reads_the_corrected_values() {
        let mut document = document();
        document.add_analyses();
        let analysis = document.runs[0].analysis.as_ref().unwrap();
        assert_eq!(analysis["operating_point"]["ambient_c"], 12.0);
        assert_eq!(current_readings(&document.runs[0]).len(), 1);
    }
}
