//! Event marks: short texts at a time of a run ("workpiece in", "fan on"). A wrong mark is
//! voided with a reason, never deleted.

use serde::Serialize;

use super::{RunId, Store, StoreError, StoreResult, UserId, now_unix_s};

/// A mark to store, already checked (text trimmed and short, time within bounds).
#[derive(Debug, Clone)]
pub struct NewEventMark {
    pub t_s: f64,
    pub text: String,
    /// The id its sender made; a resend of the same id with the same time and text is stored once.
    pub client_id: Option<String>,
}

#[derive(Debug, Clone, Serialize, sqlx::FromRow)]
pub struct EventMark {
    pub id: i64,
    pub t_s: f64,
    pub text: String,
    pub made_at: i64,
    pub voided_at: Option<i64>,
    pub void_reason: Option<String>,
}

impl EventMark {
    pub fn is_voided(&self) -> bool {
        self.voided_at.is_some()
    }
}

/// Whether a mark was stored now or had been stored before under the same sender id.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum MarkStored {
    New(i64),
    AlreadyStored(i64),
}

impl Store {
    /// Stores a mark on an open run (checked under the write lock, so a run finished meanwhile
    /// refuses it).
    pub async fn add_event_mark(
        &self,
        run_id: RunId,
        mark: &NewEventMark,
        made_by: Option<UserId>,
    ) -> StoreResult<MarkStored> {
        let mut tx = self.begin_write().await?;
        let finished_at: Option<Option<i64>> =
            sqlx::query_scalar("SELECT finished_at FROM runs WHERE id = ?")
                .bind(run_id)
                .fetch_optional(&mut *tx)
                .await?;
        match finished_at {
            None => return Err(StoreError::NotFound),
            Some(Some(_)) => {
                return Err(StoreError::Conflict(
                    "this run is finished; marks can no longer be added".into(),
                ));
            }
            Some(None) => {}
        }
        if let Some(client_id) = &mark.client_id {
            let earlier: Option<(i64, f64, String)> = sqlx::query_as(
                "SELECT id, t_s, text FROM event_marks WHERE run_id = ? AND client_id = ?",
            )
            .bind(run_id)
            .bind(client_id)
            .fetch_optional(&mut *tx)
            .await?;
            match earlier {
                Some((id, t_s, text)) if t_s == mark.t_s && text == mark.text => {
                    return Ok(MarkStored::AlreadyStored(id));
                }
                Some((_, t_s, text)) => {
                    return Err(StoreError::Conflict(format!(
                        "the mark id {client_id:?} was already used for \"{text}\" at {t_s} s; \
                         a new mark needs a new id"
                    )));
                }
                None => {}
            }
        }
        let id = sqlx::query_scalar(
            "INSERT INTO event_marks (run_id, t_s, text, client_id, made_by, made_at)
             VALUES (?, ?, ?, ?, ?, ?) RETURNING id",
        )
        .bind(run_id)
        .bind(mark.t_s)
        .bind(&mark.text)
        .bind(&mark.client_id)
        .bind(made_by)
        .bind(now_unix_s())
        .fetch_one(&mut *tx)
        .await?;
        tx.commit().await?;
        Ok(MarkStored::New(id))
    }

    /// Voids a mark with a reason; it stays in the history.
    pub async fn void_event_mark(
        &self,
        run_id: RunId,
        mark_id: i64,
        reason: &str,
        voided_by: Option<UserId>,
    ) -> StoreResult<()> {
        let done = sqlx::query(
            "UPDATE event_marks SET voided_at = ?, voided_by = ?, void_reason = ?
             WHERE id = ? AND run_id = ? AND voided_at IS NULL",
        )
        .bind(now_unix_s())
        .bind(voided_by)
        .bind(reason)
        .bind(mark_id)
        .bind(run_id)
        .execute(&self.pool)
        .await?;
        if done.rows_affected() == 0 {
            return Err(StoreError::NotFound);
        }
        Ok(())
    }

    /// Every mark of a run, voided ones included, in time order.
    pub async fn event_marks(&self, run_id: RunId) -> StoreResult<Vec<EventMark>> {
        Ok(sqlx::query_as(
            "SELECT id, t_s, text, made_at, voided_at, void_reason
             FROM event_marks WHERE run_id = ? ORDER BY t_s, id",
        )
        .bind(run_id)
        .fetch_all(&self.pool)
        .await?)
    }
}
