//! Readings: the time series of a run. Corrections add rows; nothing is overwritten.

use std::collections::HashMap;

use serde::Serialize;
use sqlx::{Sqlite, Transaction};

use super::{ReadingId, RunId, Store, StoreError, StoreResult, UserId, now_unix_s};

/// A reading to store, already validated (channel name known, value finite, SI units).
#[derive(Debug, Clone)]
pub struct NewReading {
    pub t_s: f64,
    pub channel: String,
    pub value: f64,
    /// The id its sender made for it (a phone's queue, an instrument script): a reading sent
    /// again with the same id and the same time and value is stored once.
    pub client_id: Option<String>,
}

#[derive(Debug, Clone, Serialize, sqlx::FromRow)]
pub struct ReadingRow {
    pub id: ReadingId,
    pub t_s: f64,
    pub channel: String,
    pub value: f64,
    /// The reading this one corrects, if it is a correction.
    pub corrects_id: Option<ReadingId>,
    /// Whether a later correction replaced this value.
    pub superseded: bool,
    pub entered_at: i64,
}

/// Rows per INSERT statement: SQLite allows 32 766 bound parameters, and each row binds 7.
const ROWS_PER_STATEMENT: usize = 500;

impl Store {
    /// Stores readings in one transaction: all of them or none. Returns how many of them were
    /// stored before (sent again under the same id) and so were not stored twice.
    pub async fn add_readings(
        &self,
        run_id: RunId,
        readings: &[NewReading],
        entered_by: Option<UserId>,
    ) -> StoreResult<u64> {
        let mut tx = self.begin_write().await?;
        let already_stored = insert_readings(&mut tx, run_id, readings, entered_by).await?;
        tx.commit().await?;
        Ok(already_stored)
    }

    /// Replaces the current value of a reading by a new row that names it; the old one stays in
    /// the history. A reading already corrected cannot be corrected again (correct the newer one).
    pub async fn correct_reading(
        &self,
        run_id: RunId,
        reading_id: ReadingId,
        value: f64,
        entered_by: Option<UserId>,
    ) -> StoreResult<ReadingId> {
        let mut tx = self.begin_write().await?;
        let old: Option<(f64, String, f64, i64)> = sqlx::query_as(
            "SELECT t_s, channel, value,
                    EXISTS (SELECT 1 FROM readings c WHERE c.corrects_id = r.id)
             FROM readings r WHERE r.id = ? AND r.run_id = ?",
        )
        .bind(reading_id)
        .bind(run_id)
        .fetch_optional(&mut *tx)
        .await?;
        let (t_s, channel, old_value, superseded) = old.ok_or(StoreError::NotFound)?;
        if superseded != 0 {
            return Err(StoreError::Conflict(
                "this reading was already corrected; correct the newer value".into(),
            ));
        }
        let id = sqlx::query_scalar(
            "INSERT INTO readings (run_id, t_s, channel, value, corrects_id, entered_by, entered_at)
             VALUES (?, ?, ?, ?, ?, ?, ?) RETURNING id",
        )
        .bind(run_id)
        .bind(t_s)
        .bind(&channel)
        .bind(value)
        .bind(reading_id)
        .bind(entered_by)
        .bind(now_unix_s())
        .fetch_one(&mut *tx)
        .await?;
        super::digests::forget_digest(&mut tx, run_id).await?;
        let build_id: super::BuildId = sqlx::query_scalar("SELECT build_id FROM runs WHERE id = ?")
            .bind(run_id)
            .fetch_one(&mut *tx)
            .await?;
        let detail = format!("{channel} at {t_s} s: was {old_value}, now {value}");
        super::shares::record(
            &mut tx,
            entered_by,
            Some(build_id),
            "reading corrected",
            &format!("run {run_id}"),
            &detail,
        )
        .await?;
        sqlx::query("UPDATE runs SET reading_count = reading_count + 1 WHERE id = ?")
            .bind(run_id)
            .execute(&mut *tx)
            .await?;
        tx.commit().await?;
        Ok(id)
    }

    /// Every row of a run, corrections and replaced values included, in time order.
    pub async fn reading_history(&self, run_id: RunId) -> StoreResult<Vec<ReadingRow>> {
        Ok(sqlx::query_as(
            "SELECT r.id, r.t_s, r.channel, r.value, r.corrects_id,
                    EXISTS (SELECT 1 FROM readings c WHERE c.corrects_id = r.id) AS superseded,
                    r.entered_at
             FROM readings r WHERE r.run_id = ? ORDER BY r.t_s, r.id",
        )
        .bind(run_id)
        .fetch_all(&self.pool)
        .await?)
    }

    /// How many current values a run has (replaced values not counted).
    pub async fn current_reading_count(&self, run_id: RunId) -> StoreResult<i64> {
        Ok(sqlx::query_scalar(
            "SELECT COUNT(*) FROM readings r
             WHERE r.run_id = ?
               AND NOT EXISTS (SELECT 1 FROM readings c WHERE c.corrects_id = r.id)",
        )
        .bind(run_id)
        .fetch_one(&self.pool)
        .await?)
    }

    /// Current values stored after the reading `after_id` (corrections included, as rows
    /// that name what they replace), oldest first, at most `limit`: what a live page missed.
    pub async fn readings_after(
        &self,
        run_id: RunId,
        after_id: i64,
        limit: i64,
    ) -> StoreResult<Vec<ReadingRow>> {
        Ok(sqlx::query_as(
            "SELECT r.id, r.t_s, r.channel, r.value, r.corrects_id, 0 AS superseded, r.entered_at
             FROM readings r
             WHERE r.run_id = ? AND r.id > ?
               AND NOT EXISTS (SELECT 1 FROM readings c WHERE c.corrects_id = r.id)
             ORDER BY r.id DESC LIMIT ?",
        )
        .bind(run_id)
        .bind(after_id)
        .bind(limit)
        .fetch_all(&self.pool)
        .await?
        .into_iter()
        .rev()
        .collect())
    }

    /// One page of a run's current values, newest first (by time), and the replaced values of
    /// those rows: a page that shows the latest few dozen never reads the whole run.
    pub async fn readings_page(
        &self,
        run_id: RunId,
        offset: i64,
        limit: i64,
    ) -> StoreResult<Vec<ReadingRow>> {
        Ok(sqlx::query_as(
            "SELECT r.id, r.t_s, r.channel, r.value, r.corrects_id, 0 AS superseded, r.entered_at
             FROM readings r
             WHERE r.run_id = ?
               AND NOT EXISTS (SELECT 1 FROM readings c WHERE c.corrects_id = r.id)
             ORDER BY r.t_s DESC, r.id DESC LIMIT ? OFFSET ?",
        )
        .bind(run_id)
        .bind(limit)
        .bind(offset)
        .fetch_all(&self.pool)
        .await?)
    }

    /// The chain of values a reading replaced, newest first.
    pub async fn replaced_values(&self, reading_id: ReadingId) -> StoreResult<Vec<ReadingRow>> {
        Ok(sqlx::query_as(
            "WITH RECURSIVE chain(id) AS (
                 SELECT corrects_id FROM readings WHERE id = ?
                 UNION ALL
                 SELECT r.corrects_id FROM readings r JOIN chain ON r.id = chain.id
                 WHERE r.corrects_id IS NOT NULL)
             SELECT r.id, r.t_s, r.channel, r.value, r.corrects_id, 1 AS superseded, r.entered_at
             FROM readings r JOIN chain ON r.id = chain.id ORDER BY r.id DESC",
        )
        .bind(reading_id)
        .fetch_all(&self.pool)
        .await?)
    }

    /// The newest reading id of a run (0 when it has none): where a live page starts.
    pub async fn last_reading_id(&self, run_id: RunId) -> StoreResult<i64> {
        Ok(
            sqlx::query_scalar("SELECT COALESCE(MAX(id), 0) FROM readings WHERE run_id = ?")
                .bind(run_id)
                .fetch_one(&self.pool)
                .await?,
        )
    }

    /// Starts a bulk import into an open run; see [`ReadingsImport`].
    pub fn readings_import(&self, run_id: RunId, entered_by: Option<UserId>) -> ReadingsImport {
        ReadingsImport {
            store: self.clone(),
            tx: None,
            run_id,
            entered_by,
            inserted: 0,
            already_stored: 0,
        }
    }

    /// The current values of a run (corrections applied), in time order.
    pub async fn current_readings(&self, run_id: RunId) -> StoreResult<Vec<ReadingRow>> {
        Ok(sqlx::query_as(
            "SELECT r.id, r.t_s, r.channel, r.value, r.corrects_id, 0 AS superseded, r.entered_at
             FROM readings r
             WHERE r.run_id = ?
               AND NOT EXISTS (SELECT 1 FROM readings c WHERE c.corrects_id = r.id)
             ORDER BY r.t_s, r.id",
        )
        .bind(run_id)
        .fetch_all(&self.pool)
        .await?)
    }
}

/// Multi-row INSERTs inside the caller's transaction (shared by form entry and bulk import).
/// Readings whose sender id is already stored with the same time and value are left out (a
/// resend); one whose id is stored with another time or value refuses the whole set. Returns how
/// many were left out.
pub(super) async fn insert_readings(
    tx: &mut sqlx::Transaction<'static, sqlx::Sqlite>,
    run_id: RunId,
    readings: &[NewReading],
    entered_by: Option<UserId>,
) -> StoreResult<u64> {
    let fresh = leave_out_resent(tx, run_id, readings).await?;
    let already_stored = (readings.len() - fresh.len()) as u64;
    if fresh.is_empty() {
        return Ok(already_stored);
    }
    super::digests::forget_digest(tx, run_id).await?;
    sqlx::query("UPDATE runs SET reading_count = reading_count + ? WHERE id = ?")
        .bind(fresh.len() as i64)
        .bind(run_id)
        .execute(&mut **tx)
        .await?;
    let now = now_unix_s();
    for chunk in fresh.chunks(ROWS_PER_STATEMENT) {
        let mut builder = sqlx::QueryBuilder::<sqlx::Sqlite>::new(
            "INSERT INTO readings (run_id, t_s, channel, value, client_id, entered_by, entered_at) ",
        );
        builder.push_values(chunk, |mut row, reading| {
            row.push_bind(run_id)
                .push_bind(reading.t_s)
                .push_bind(&reading.channel)
                .push_bind(reading.value)
                .push_bind(&reading.client_id)
                .push_bind(entered_by)
                .push_bind(now);
        });
        builder.build().execute(&mut **tx).await?;
    }
    Ok(already_stored)
}

/// What a stored reading was sent as: compared with a resend of its id.
#[derive(sqlx::FromRow)]
struct SentAs {
    client_id: String,
    t_s: f64,
    channel: String,
    value: f64,
}

impl SentAs {
    fn same_as(&self, reading: &NewReading) -> bool {
        self.t_s == reading.t_s && self.channel == reading.channel && self.value == reading.value
    }
}

/// The readings not stored yet: a resend (the same id, time, channel and value, in the database
/// or earlier in the same set) is left out; the same id with anything else is a conflict.
async fn leave_out_resent<'r>(
    tx: &mut sqlx::Transaction<'static, sqlx::Sqlite>,
    run_id: RunId,
    readings: &'r [NewReading],
) -> StoreResult<Vec<&'r NewReading>> {
    let ids: Vec<&str> = readings
        .iter()
        .filter_map(|r| r.client_id.as_deref())
        .collect();
    if ids.is_empty() {
        return Ok(readings.iter().collect());
    }
    let mut sent: HashMap<String, SentAs> = HashMap::new();
    for chunk in ids.chunks(ROWS_PER_STATEMENT) {
        let mut builder = sqlx::QueryBuilder::<sqlx::Sqlite>::new(
            "SELECT client_id, t_s, channel, value FROM readings WHERE run_id = ",
        );
        builder.push_bind(run_id).push(" AND client_id IN (");
        let mut list = builder.separated(", ");
        for id in chunk {
            list.push_bind(*id);
        }
        builder.push(")");
        let rows: Vec<SentAs> = builder.build_query_as().fetch_all(&mut **tx).await?;
        sent.extend(rows.into_iter().map(|row| (row.client_id.clone(), row)));
    }
    let mut fresh = Vec::with_capacity(readings.len());
    for reading in readings {
        let Some(id) = &reading.client_id else {
            fresh.push(reading);
            continue;
        };
        match sent.get(id) {
            Some(earlier) if earlier.same_as(reading) => {}
            Some(earlier) => {
                return Err(StoreError::Conflict(format!(
                    "the reading id {id:?} was already used for {} = {} at {} s; \
                     a new reading needs a new id",
                    earlier.channel, earlier.value, earlier.t_s
                )));
            }
            None => {
                sent.insert(
                    id.clone(),
                    SentAs {
                        client_id: id.clone(),
                        t_s: reading.t_s,
                        channel: reading.channel.clone(),
                        value: reading.value,
                    },
                );
                fresh.push(reading);
            }
        }
    }
    Ok(fresh)
}

/// A bulk import into one run, written as it is read, in one write transaction: all rows or
/// none. Dropping it without `commit` rolls everything back.
///
/// The transaction (and with it the database's write lock) begins with the first rows pushed,
/// so the time spent reading and checking a body before its first rows costs other writers
/// nothing; it then lasts until `commit`.
pub struct ReadingsImport {
    store: Store,
    tx: Option<Transaction<'static, Sqlite>>,
    run_id: RunId,
    entered_by: Option<UserId>,
    inserted: u64,
    already_stored: u64,
}

impl ReadingsImport {
    /// Writes checked rows inside the import's transaction.
    pub async fn push(&mut self, readings: &[NewReading]) -> StoreResult<()> {
        if readings.is_empty() {
            return Ok(());
        }
        let tx = match self.tx.take() {
            Some(tx) => tx,
            None => begin_import(&self.store, self.run_id).await?,
        };
        let tx = self.tx.insert(tx);
        let already_stored = insert_readings(tx, self.run_id, readings, self.entered_by).await?;
        self.already_stored += already_stored;
        self.inserted += readings.len() as u64 - already_stored;
        Ok(())
    }

    /// Rows pushed that were stored before under the same sender id, so not stored again.
    pub fn already_stored(&self) -> u64 {
        self.already_stored
    }

    /// Makes every pushed row permanent and returns how many there were.
    pub async fn commit(self) -> StoreResult<u64> {
        if let Some(mut tx) = self.tx {
            if self.inserted == 0 {
                // Every row was a resend: nothing changed, nothing to record.
                return Ok(0);
            }
            let build_id: super::BuildId =
                sqlx::query_scalar("SELECT build_id FROM runs WHERE id = ?")
                    .bind(self.run_id)
                    .fetch_one(&mut *tx)
                    .await?;
            let detail = format!("{} rows", self.inserted);
            super::shares::record(
                &mut tx,
                self.entered_by,
                Some(build_id),
                "readings imported",
                &format!("run {}", self.run_id),
                &detail,
            )
            .await?;
            tx.commit().await?;
        }
        Ok(self.inserted)
    }
}

/// The write transaction of an import, once the run is known to be still open (checked under
/// the write lock, so a run finished meanwhile refuses the rows).
async fn begin_import(store: &Store, run_id: RunId) -> StoreResult<Transaction<'static, Sqlite>> {
    let mut tx = store.begin_write().await?;
    let finished_at: Option<Option<i64>> =
        sqlx::query_scalar("SELECT finished_at FROM runs WHERE id = ?")
            .bind(run_id)
            .fetch_optional(&mut *tx)
            .await?;
    match finished_at {
        None => Err(StoreError::NotFound),
        Some(Some(_)) => Err(StoreError::Conflict(
            "this run is finished; readings can no longer be added".into(),
        )),
        Some(None) => Ok(tx),
    }
}
