//! A whole build read for export in five queries, and recreated from an export document in one
//! transaction. The document itself (`crate::export`) knows nothing of ids: revisions travel by
//! number, runs by position, corrections by the position of the reading they replace.

use std::collections::HashMap;

use serde_json::Value;
use sqlx::{QueryBuilder, Sqlite, Transaction};

use super::builds::slug_from_name;
use super::revisions::{PartRow, part_rows, parts_from_rows};
use super::{Build, BuildId, ReadingId, RevisionId, RunId, Store, StoreError, StoreResult};
use super::{Outcome, now_unix_s};
use crate::analysis::run::Load;
use crate::export::{
    BuildDocument, BuildRecord, DocumentError, EventMarkRecord, FORMAT, ReadingRecord,
    RevisionRecord, RunRecord, VERSION,
};

/// Why an import saved nothing: the document, or the database.
#[derive(Debug, thiserror::Error)]
pub enum ImportError {
    #[error(transparent)]
    Document(#[from] DocumentError),
    #[error(transparent)]
    Store(#[from] StoreError),
}

impl From<sqlx::Error> for ImportError {
    fn from(error: sqlx::Error) -> ImportError {
        ImportError::Store(StoreError::Database(error))
    }
}

#[derive(sqlx::FromRow)]
struct RevisionRow {
    id: RevisionId,
    number: i64,
    parent_number: Option<i64>,
    notes: String,
    created_at: i64,
}

#[derive(sqlx::FromRow)]
struct RunRow {
    id: RunId,
    revision_number: i64,
    started_at: i64,
    operator: String,
    supply_setting_v: Option<f64>,
    supply_current_limit_a: Option<f64>,
    load: String,
    water_mass_kg: Option<f64>,
    vessel_heat_capacity_j_per_k: Option<f64>,
    notes: String,
    channels_json: String,
    finished_at: Option<i64>,
    outcome: Option<String>,
    failed_part: Option<String>,
    outcome_note: String,
}

#[derive(sqlx::FromRow)]
struct MarkRow {
    run_id: RunId,
    t_s: f64,
    text: String,
    made_at: i64,
    voided_at: Option<i64>,
    void_reason: Option<String>,
}

#[derive(sqlx::FromRow)]
struct ReadingRow {
    id: ReadingId,
    run_id: RunId,
    t_s: f64,
    channel: String,
    value: f64,
    corrects_id: Option<ReadingId>,
    entered_at: i64,
}

/// Rows per multi-row INSERT of readings: SQLite allows 32 766 bound parameters, each row binds 7.
const READINGS_PER_STATEMENT: usize = 500;

impl Store {
    /// Everything logged on a build, as the export document (without analyses: see
    /// `BuildDocument::add_analyses`). One read transaction, so a run logged meanwhile is either
    /// wholly in the document or not at all.
    pub async fn export_build(&self, slug: &str) -> StoreResult<BuildDocument> {
        let mut tx = self.pool.begin().await?;
        let build: Build = sqlx::query_as(
            "SELECT id, slug, name, purpose, notes, created_at FROM builds WHERE slug = ?",
        )
        .bind(slug)
        .fetch_optional(&mut *tx)
        .await?
        .ok_or(StoreError::NotFound)?;
        let revisions: Vec<RevisionRow> = sqlx::query_as(
            "SELECT r.id, r.number, p.number AS parent_number, r.notes, r.created_at
             FROM revisions r LEFT JOIN revisions p ON p.id = r.parent_id
             WHERE r.build_id = ? ORDER BY r.number",
        )
        .bind(build.id)
        .fetch_all(&mut *tx)
        .await?;
        let parts: Vec<PartRow> = sqlx::query_as(
            "SELECT p.revision_id, p.role, p.params_json FROM parts p
             JOIN revisions r ON r.id = p.revision_id
             WHERE r.build_id = ? ORDER BY p.revision_id, p.position",
        )
        .bind(build.id)
        .fetch_all(&mut *tx)
        .await?;
        let runs: Vec<RunRow> = sqlx::query_as(
            "SELECT u.id, r.number AS revision_number, u.started_at, u.operator,
                    u.supply_setting_v, u.supply_current_limit_a, u.load, u.water_mass_kg,
                    u.vessel_heat_capacity_j_per_k, u.notes, u.channels_json, u.finished_at,
                    u.outcome, u.failed_part, u.outcome_note
             FROM runs u JOIN revisions r ON r.id = u.revision_id
             WHERE u.build_id = ? ORDER BY u.started_at, u.id",
        )
        .bind(build.id)
        .fetch_all(&mut *tx)
        .await?;
        // Entry order: a correction is always entered after the reading it replaces.
        let readings: Vec<ReadingRow> = sqlx::query_as(
            "SELECT g.id, g.run_id, g.t_s, g.channel, g.value, g.corrects_id, g.entered_at
             FROM readings g JOIN runs u ON u.id = g.run_id
             WHERE u.build_id = ? ORDER BY g.run_id, g.id",
        )
        .bind(build.id)
        .fetch_all(&mut *tx)
        .await?;
        let marks: Vec<MarkRow> = sqlx::query_as(
            "SELECT m.run_id, m.t_s, m.text, m.made_at, m.voided_at, m.void_reason
             FROM event_marks m JOIN runs u ON u.id = m.run_id
             WHERE u.build_id = ? ORDER BY m.run_id, m.t_s, m.id",
        )
        .bind(build.id)
        .fetch_all(&mut *tx)
        .await?;
        tx.commit().await?;

        let mut parts_of: HashMap<RevisionId, Vec<&PartRow>> = HashMap::new();
        for part in &parts {
            parts_of.entry(part.revision_id).or_default().push(part);
        }
        let revisions = revisions
            .into_iter()
            .map(|row| {
                Ok(RevisionRecord {
                    parts: parts_from_rows(parts_of.get(&row.id).map_or(&[], Vec::as_slice))?,
                    number: row.number,
                    parent: row.parent_number,
                    notes: row.notes,
                    created_at: row.created_at,
                })
            })
            .collect::<StoreResult<Vec<_>>>()?;
        let mut readings_of: HashMap<RunId, Vec<ReadingRow>> = HashMap::new();
        for reading in readings {
            readings_of.entry(reading.run_id).or_default().push(reading);
        }
        let mut marks_of: HashMap<RunId, Vec<EventMarkRecord>> = HashMap::new();
        for mark in marks {
            marks_of
                .entry(mark.run_id)
                .or_default()
                .push(EventMarkRecord {
                    t_s: mark.t_s,
                    text: mark.text,
                    made_at: mark.made_at,
                    voided_at: mark.voided_at,
                    void_reason: mark.void_reason,
                });
        }
        let runs = runs
            .into_iter()
            .map(|row| {
                let readings = readings_of.remove(&row.id).unwrap_or_default();
                let marks = marks_of.remove(&row.id).unwrap_or_default();
                run_record(row, readings).map(|run| RunRecord {
                    event_marks: marks,
                    ..run
                })
            })
            .collect::<StoreResult<Vec<_>>>()?;
        Ok(BuildDocument {
            format: FORMAT.into(),
            version: VERSION,
            exported_at: now_unix_s(),
            build: BuildRecord {
                slug: build.slug,
                name: build.name,
                purpose: build.purpose,
                notes: build.notes,
                created_at: build.created_at,
            },
            revisions,
            runs,
        })
    }

    /// Recreates an exported build, all or nothing, and returns its slug: the exported one, or
    /// `slug-2`, `slug-3`, … when that is taken here. Times are kept; accounts are not
    /// exported, so `created_by` and `entered_by` stay empty (the run's `operator` is kept).
    pub async fn import_build(&self, document: &BuildDocument) -> Result<String, ImportError> {
        document.validate()?;
        let mut tx = self.begin_write().await?;
        let slug = free_slug(&mut tx, &slug_from_name(&document.build.slug)).await?;
        let build = &document.build;
        let build_id: BuildId = sqlx::query_scalar(
            "INSERT INTO builds (slug, name, purpose, notes, created_by, created_at)
             VALUES (?, ?, ?, ?, NULL, ?) RETURNING id",
        )
        .bind(&slug)
        .bind(&build.name)
        .bind(&build.purpose)
        .bind(&build.notes)
        .bind(build.created_at)
        .fetch_one(&mut *tx)
        .await?;

        // By number, so that each parent is in before its child (validate checked parent < child).
        let mut revisions: Vec<&RevisionRecord> = document.revisions.iter().collect();
        revisions.sort_by_key(|r| r.number);
        let mut revision_ids: HashMap<i64, RevisionId> = HashMap::new();
        for revision in revisions {
            let id = insert_revision(&mut tx, build_id, revision, &revision_ids).await?;
            revision_ids.insert(revision.number, id);
        }

        let mut run_ids = Vec::with_capacity(document.runs.len());
        for run in &document.runs {
            let revision_id = revision_ids[&run.revision];
            run_ids.push(insert_run(&mut tx, build_id, revision_id, run).await?);
        }
        insert_readings(&mut tx, &document.runs, &run_ids).await?;
        insert_marks(&mut tx, &document.runs, &run_ids).await?;
        tx.commit().await?;
        Ok(slug)
    }
}

fn run_record(row: RunRow, readings: Vec<ReadingRow>) -> StoreResult<RunRecord> {
    let position: HashMap<ReadingId, usize> = readings
        .iter()
        .enumerate()
        .map(|(i, r)| (r.id, i))
        .collect();
    let readings = readings
        .into_iter()
        .map(|r| {
            let corrects = match r.corrects_id {
                Some(old) => Some(*position.get(&old).ok_or_else(|| {
                    StoreError::Corrupt(format!(
                        "reading {} corrects a reading of another run",
                        r.id
                    ))
                })?),
                None => None,
            };
            Ok(ReadingRecord {
                t_s: r.t_s,
                channel: r.channel,
                value: r.value,
                corrects,
                entered_at: r.entered_at,
            })
        })
        .collect::<StoreResult<Vec<_>>>()?;
    let load: Load = serde_json::from_value(Value::String(row.load.clone()))
        .map_err(|_| StoreError::Corrupt(format!("run {} load {}", row.id, row.load)))?;
    let outcome = match row.outcome.as_deref() {
        Some(text) => Some(
            Outcome::parse(text)
                .ok_or_else(|| StoreError::Corrupt(format!("run {} outcome {text}", row.id)))?,
        ),
        None => None,
    };
    let channels: Vec<String> = serde_json::from_str(&row.channels_json)
        .map_err(|e| StoreError::Corrupt(format!("run {} channels: {e}", row.id)))?;
    Ok(RunRecord {
        revision: row.revision_number,
        started_at: row.started_at,
        operator: row.operator,
        supply_setting_v: row.supply_setting_v,
        supply_current_limit_a: row.supply_current_limit_a,
        load,
        water_mass_kg: row.water_mass_kg,
        vessel_heat_capacity_j_per_k: row.vessel_heat_capacity_j_per_k,
        notes: row.notes,
        channels,
        finished_at: row.finished_at,
        outcome,
        failed_part: row.failed_part,
        outcome_note: row.outcome_note,
        readings,
        event_marks: Vec::new(),
        analysis: None,
    })
}

/// Every run's event marks, as exported (who made them is not exported).
async fn insert_marks(
    tx: &mut Transaction<'static, Sqlite>,
    runs: &[RunRecord],
    run_ids: &[RunId],
) -> StoreResult<()> {
    for (run, run_id) in runs.iter().zip(run_ids) {
        for mark in &run.event_marks {
            sqlx::query(
                "INSERT INTO event_marks (run_id, t_s, text, made_at, voided_at, void_reason)
                 VALUES (?, ?, ?, ?, ?, ?)",
            )
            .bind(*run_id)
            .bind(mark.t_s)
            .bind(&mark.text)
            .bind(mark.made_at)
            .bind(mark.voided_at)
            .bind(&mark.void_reason)
            .execute(&mut **tx)
            .await?;
        }
    }
    Ok(())
}

/// The slug itself when free, else the first free of `slug-2`, `slug-3`, … (as `create_build`).
async fn free_slug(tx: &mut Transaction<'static, Sqlite>, base: &str) -> StoreResult<String> {
    let taken: Vec<String> =
        sqlx::query_scalar("SELECT slug FROM builds WHERE slug = ? OR slug LIKE ? || '-%'")
            .bind(base)
            .bind(base)
            .fetch_all(&mut **tx)
            .await?;
    Ok((1..)
        .map(|n| {
            if n == 1 {
                base.to_string()
            } else {
                format!("{base}-{n}")
            }
        })
        .find(|candidate| !taken.contains(candidate))
        .expect("an unbounded range always yields a free slug"))
}

async fn insert_revision(
    tx: &mut Transaction<'static, Sqlite>,
    build_id: BuildId,
    revision: &RevisionRecord,
    earlier: &HashMap<i64, RevisionId>,
) -> StoreResult<RevisionId> {
    let parent = revision.parent.map(|number| earlier[&number]);
    let id: RevisionId = sqlx::query_scalar(
        "INSERT INTO revisions (build_id, number, parent_id, notes, created_by, created_at)
         VALUES (?, ?, ?, ?, NULL, ?) RETURNING id",
    )
    .bind(build_id)
    .bind(revision.number)
    .bind(parent)
    .bind(&revision.notes)
    .bind(revision.created_at)
    .fetch_one(&mut **tx)
    .await?;
    let rows = part_rows(&revision.parts)?;
    if rows.is_empty() {
        return Ok(id);
    }
    let mut builder = QueryBuilder::<Sqlite>::new(
        "INSERT INTO parts (revision_id, position, role, label, quantity, params_json) ",
    );
    builder.push_values(rows.iter().enumerate(), |mut row, (position, part)| {
        let (role, label, quantity, params) = part;
        row.push_bind(id)
            .push_bind(position as i64)
            .push_bind(role.key())
            .push_bind(label)
            .push_bind(i64::from(*quantity))
            .push_bind(params);
    });
    builder.build().execute(&mut **tx).await?;
    Ok(id)
}

async fn insert_run(
    tx: &mut Transaction<'static, Sqlite>,
    build_id: BuildId,
    revision_id: RevisionId,
    run: &RunRecord,
) -> StoreResult<RunId> {
    let load = serde_json::to_value(run.load).expect("a load serialises");
    let channels = serde_json::to_string(&run.channels).expect("strings serialise");
    Ok(sqlx::query_scalar(
        "INSERT INTO runs (build_id, revision_id, started_at, operator, created_by,
            supply_setting_v, supply_current_limit_a, load, water_mass_kg,
            vessel_heat_capacity_j_per_k, notes, channels_json, finished_at, outcome,
            failed_part, outcome_note)
         VALUES (?, ?, ?, ?, NULL, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?) RETURNING id",
    )
    .bind(build_id)
    .bind(revision_id)
    .bind(run.started_at)
    .bind(&run.operator)
    .bind(run.supply_setting_v)
    .bind(run.supply_current_limit_a)
    .bind(load.as_str())
    .bind(run.water_mass_kg)
    .bind(run.vessel_heat_capacity_j_per_k)
    .bind(&run.notes)
    .bind(channels)
    .bind(run.finished_at)
    .bind(run.outcome.map(Outcome::as_str))
    .bind(&run.failed_part)
    .bind(&run.outcome_note)
    .fetch_one(&mut **tx)
    .await?)
}

/// Every run's readings in multi-row INSERTs with ids chosen here, so that a correction's
/// `corrects_id` is known before its row is written: the transaction holds the write lock, so
/// the ids after the current largest are free. Ids follow the document's order, which keeps a
/// correction after the reading it replaces.
async fn insert_readings(
    tx: &mut Transaction<'static, Sqlite>,
    runs: &[RunRecord],
    run_ids: &[RunId],
) -> StoreResult<()> {
    let largest: i64 = sqlx::query_scalar("SELECT COALESCE(MAX(id), 0) FROM readings")
        .fetch_one(&mut **tx)
        .await?;
    let mut rows: Vec<(ReadingId, RunId, &ReadingRecord, Option<ReadingId>)> = Vec::new();
    let mut next = largest + 1;
    for (run, run_id) in runs.iter().zip(run_ids) {
        let first = next;
        for reading in &run.readings {
            let corrects = reading.corrects.map(|k| ReadingId(first + k as i64));
            rows.push((ReadingId(next), *run_id, reading, corrects));
            next += 1;
        }
    }
    for chunk in rows.chunks(READINGS_PER_STATEMENT) {
        let mut builder = QueryBuilder::<Sqlite>::new(
            "INSERT INTO readings (id, run_id, t_s, channel, value, corrects_id, entered_by,
                entered_at) ",
        );
        builder.push_values(chunk, |mut row, (id, run_id, reading, corrects)| {
            row.push_bind(*id)
                .push_bind(*run_id)
                .push_bind(reading.t_s)
                .push_bind(&reading.channel)
                .push_bind(reading.value)
                .push_bind(*corrects)
                .push("NULL")
                .push_bind(reading.entered_at);
        });
        builder.build().execute(&mut **tx).await?;
    }
    for (run, run_id) in runs.iter().zip(run_ids) {
        sqlx::query("UPDATE runs SET reading_count = ? WHERE id = ?")
            .bind(run.readings.len() as i64)
            .bind(*run_id)
            .execute(&mut **tx)
            .await?;
    }
    Ok(())
}
