//! Readings: the time series of a run. Corrections add rows; nothing is overwritten.

use serde::Serialize;

use super::{ReadingId, RunId, Store, StoreError, StoreResult, UserId, now_unix_s};

/// A reading to store, already validated (channel name known, value finite, SI units).
#[derive(Debug, Clone)]
pub struct NewReading {
    pub t_s: f64,
    pub channel: String,
    pub value: f64,
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

/// Rows per INSERT statement: SQLite allows 32 766 bound parameters, and each row binds 6.
const ROWS_PER_STATEMENT: usize = 500;

impl Store {
    /// Stores readings in one transaction: all of them or none.
    pub async fn add_readings(
        &self,
        run_id: RunId,
        readings: &[NewReading],
        entered_by: Option<UserId>,
    ) -> StoreResult<()> {
        let mut tx = self.begin_write().await?;
        insert_readings(&mut tx, run_id, readings, entered_by).await?;
        tx.commit().await?;
        Ok(())
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
        let old: Option<(f64, String, i64)> = sqlx::query_as(
            "SELECT t_s, channel,
                    EXISTS (SELECT 1 FROM readings c WHERE c.corrects_id = r.id)
             FROM readings r WHERE r.id = ? AND r.run_id = ?",
        )
        .bind(reading_id)
        .bind(run_id)
        .fetch_optional(&mut *tx)
        .await?;
        let (t_s, channel, superseded) = old.ok_or(StoreError::NotFound)?;
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
        .bind(channel)
        .bind(value)
        .bind(reading_id)
        .bind(entered_by)
        .bind(now_unix_s())
        .fetch_one(&mut *tx)
        .await?;
        super::digests::forget_digest(&mut tx, run_id).await?;
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
pub(super) async fn insert_readings(
    tx: &mut sqlx::Transaction<'static, sqlx::Sqlite>,
    run_id: RunId,
    readings: &[NewReading],
    entered_by: Option<UserId>,
) -> StoreResult<()> {
    super::digests::forget_digest(tx, run_id).await?;
    sqlx::query("UPDATE runs SET reading_count = reading_count + ? WHERE id = ?")
        .bind(readings.len() as i64)
        .bind(run_id)
        .execute(&mut **tx)
        .await?;
    let now = now_unix_s();
    for chunk in readings.chunks(ROWS_PER_STATEMENT) {
        let mut builder = sqlx::QueryBuilder::<sqlx::Sqlite>::new(
            "INSERT INTO readings (run_id, t_s, channel, value, entered_by, entered_at) ",
        );
        builder.push_values(chunk, |mut row, reading| {
            row.push_bind(run_id)
                .push_bind(reading.t_s)
                .push_bind(&reading.channel)
                .push_bind(reading.value)
                .push_bind(entered_by)
                .push_bind(now);
        });
        builder.build().execute(&mut **tx).await?;
    }
    Ok(())
}
