//! Runs: one bench session on one revision.

use serde::{Deserialize, Serialize};

use sqlx::AssertSqlSafe;

use super::{BuildId, RevisionId, RunId, Store, StoreError, StoreResult, UserId, now_unix_s};

/// How a run ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Outcome {
    Completed,
    Stopped,
    PartFailed,
}

impl Outcome {
    pub fn as_str(self) -> &'static str {
        match self {
            Outcome::Completed => "completed",
            Outcome::Stopped => "stopped",
            Outcome::PartFailed => "part_failed",
        }
    }

    pub fn parse(text: &str) -> Option<Outcome> {
        match text {
            "completed" => Some(Outcome::Completed),
            "stopped" => Some(Outcome::Stopped),
            "part_failed" => Some(Outcome::PartFailed),
            _ => None,
        }
    }

    pub fn title(self) -> &'static str {
        match self {
            Outcome::Completed => "Completed",
            Outcome::Stopped => "Stopped early",
            Outcome::PartFailed => "Part failed",
        }
    }
}

#[derive(Debug, Clone, Serialize, sqlx::FromRow)]
pub struct Run {
    pub id: RunId,
    pub build_id: BuildId,
    pub revision_id: RevisionId,
    pub revision_number: i64,
    pub started_at: i64,
    pub operator: String,
    pub supply_setting_v: Option<f64>,
    pub supply_current_limit_a: Option<f64>,
    pub load: String,
    pub water_mass_kg: Option<f64>,
    pub vessel_heat_capacity_j_per_k: Option<f64>,
    pub notes: String,
    pub channels_json: String,
    pub finished_at: Option<i64>,
    pub outcome: Option<String>,
    pub failed_part: Option<String>,
    pub outcome_note: String,
    pub reading_count: i64,
}

impl Run {
    /// The channel names the operator chose to log.
    pub fn channels(&self) -> Vec<String> {
        serde_json::from_str(&self.channels_json).unwrap_or_default()
    }

    pub fn is_open(&self) -> bool {
        self.finished_at.is_none()
    }

    pub fn revision_label(&self) -> String {
        format!("r{}", self.revision_number)
    }
}

pub struct NewRun<'a> {
    pub build_id: BuildId,
    pub revision_id: RevisionId,
    pub operator: &'a str,
    pub created_by: Option<UserId>,
    pub started_at: Option<i64>,
    pub supply_setting_v: Option<f64>,
    pub supply_current_limit_a: Option<f64>,
    pub load: &'a str,
    pub water_mass_kg: Option<f64>,
    pub vessel_heat_capacity_j_per_k: Option<f64>,
    pub notes: &'a str,
    pub channels: &'a [String],
}

pub struct RunFinish<'a> {
    /// Who finished it (for the audit trail).
    pub by: Option<UserId>,
    pub outcome: Outcome,
    pub failed_part: Option<&'a str>,
    pub note: &'a str,
    pub finished_at: Option<i64>,
}

const RUN_SELECT: &str = "SELECT u.id, u.build_id, u.revision_id, r.number AS revision_number,
        u.started_at, u.operator, u.supply_setting_v, u.supply_current_limit_a,
        u.load, u.water_mass_kg, u.vessel_heat_capacity_j_per_k, u.notes, u.channels_json,
        u.finished_at, u.outcome, u.failed_part, u.outcome_note, u.reading_count
     FROM runs u JOIN revisions r ON r.id = u.revision_id";

impl Store {
    pub async fn create_run(&self, new: &NewRun<'_>) -> StoreResult<RunId> {
        let channels = serde_json::to_string(new.channels).expect("strings always serialise");
        let mut tx = self.begin_write().await?;
        let belongs: Option<i64> =
            sqlx::query_scalar("SELECT 1 FROM revisions WHERE id = ? AND build_id = ?")
                .bind(new.revision_id)
                .bind(new.build_id)
                .fetch_optional(&mut *tx)
                .await?;
        if belongs.is_none() {
            return Err(StoreError::NotFound);
        }
        let id = sqlx::query_scalar(
            "INSERT INTO runs (build_id, revision_id, started_at, operator, created_by,
                supply_setting_v, supply_current_limit_a, load, water_mass_kg,
                vessel_heat_capacity_j_per_k, notes, channels_json)
             VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?) RETURNING id",
        )
        .bind(new.build_id)
        .bind(new.revision_id)
        .bind(new.started_at.unwrap_or_else(now_unix_s))
        .bind(new.operator)
        .bind(new.created_by)
        .bind(new.supply_setting_v)
        .bind(new.supply_current_limit_a)
        .bind(new.load)
        .bind(new.water_mass_kg)
        .bind(new.vessel_heat_capacity_j_per_k)
        .bind(new.notes)
        .bind(channels)
        .fetch_one(&mut *tx)
        .await?;
        super::shares::record(
            &mut tx,
            new.created_by,
            Some(new.build_id),
            "run started",
            &format!("run {id}"),
            new.load,
        )
        .await?;
        tx.commit().await?;
        Ok(id)
    }

    pub async fn run_by_id(&self, id: RunId) -> StoreResult<Run> {
        sqlx::query_as(AssertSqlSafe(format!("{RUN_SELECT} WHERE u.id = ?")))
            .bind(id)
            .fetch_optional(&self.pool)
            .await?
            .ok_or(StoreError::NotFound)
    }

    /// The most recent runs of a build, newest first.
    pub async fn runs_of_build(&self, build_id: BuildId, limit: i64) -> StoreResult<Vec<Run>> {
        Ok(sqlx::query_as(AssertSqlSafe(format!(
            "{RUN_SELECT} WHERE u.build_id = ? ORDER BY u.started_at DESC, u.id DESC LIMIT ?"
        )))
        .bind(build_id)
        .bind(limit)
        .fetch_all(&self.pool)
        .await?)
    }

    /// One page of a build's runs, newest first: `limit` runs after skipping `skip`, of one
    /// revision when `revision_number` is given. Also returns how many runs there are in all.
    pub async fn runs_of_build_page(
        &self,
        build_id: BuildId,
        revision_number: Option<i64>,
        limit: i64,
        skip: i64,
    ) -> StoreResult<(Vec<Run>, i64)> {
        let runs = sqlx::query_as(AssertSqlSafe(format!(
            "{RUN_SELECT} WHERE u.build_id = ?1 AND (?2 IS NULL OR r.number = ?2)
             ORDER BY u.started_at DESC, u.id DESC LIMIT ?3 OFFSET ?4"
        )))
        .bind(build_id)
        .bind(revision_number)
        .bind(limit)
        .bind(skip)
        .fetch_all(&self.pool)
        .await?;
        let total = sqlx::query_scalar(
            "SELECT COUNT(*) FROM runs u JOIN revisions r ON r.id = u.revision_id
             WHERE u.build_id = ?1 AND (?2 IS NULL OR r.number = ?2)",
        )
        .bind(build_id)
        .bind(revision_number)
        .fetch_one(&self.pool)
        .await?;
        Ok((runs, total))
    }

    /// The latest run made on a revision, to pre-fill the next one.
    pub async fn latest_run_of_revision(
        &self,
        revision_id: RevisionId,
    ) -> StoreResult<Option<Run>> {
        Ok(sqlx::query_as(AssertSqlSafe(format!(
            "{RUN_SELECT} WHERE u.revision_id = ? ORDER BY u.started_at DESC, u.id DESC LIMIT 1"
        )))
        .bind(revision_id)
        .fetch_optional(&self.pool)
        .await?)
    }

    /// Finished idle runs (no load) of a revision other than `except`, newest first: the
    /// references of the differential efficiency.
    pub async fn idle_runs_of_revision(
        &self,
        revision_id: RevisionId,
        except: RunId,
    ) -> StoreResult<Vec<Run>> {
        Ok(sqlx::query_as(AssertSqlSafe(format!(
            "{RUN_SELECT} WHERE u.revision_id = ? AND u.id <> ? AND u.load = 'none'
             AND u.finished_at IS NOT NULL ORDER BY u.started_at DESC LIMIT 20"
        )))
        .bind(revision_id)
        .bind(except)
        .fetch_all(&self.pool)
        .await?)
    }

    /// Records how an open run ended; a finished run cannot be finished again.
    pub async fn finish_run(&self, id: RunId, finish: &RunFinish<'_>) -> StoreResult<()> {
        let mut tx = self.begin_write().await?;
        super::digests::forget_digest(&mut tx, id).await?;
        let done = sqlx::query(
            "UPDATE runs SET finished_at = ?, outcome = ?, failed_part = ?, outcome_note = ?
             WHERE id = ? AND finished_at IS NULL",
        )
        .bind(finish.finished_at.unwrap_or_else(now_unix_s))
        .bind(finish.outcome.as_str())
        .bind(finish.failed_part)
        .bind(finish.note)
        .bind(id)
        .execute(&mut *tx)
        .await?;
        if done.rows_affected() == 0 {
            return Err(StoreError::Conflict("this run is already finished".into()));
        }
        let build_id: BuildId = sqlx::query_scalar("SELECT build_id FROM runs WHERE id = ?")
            .bind(id)
            .fetch_one(&mut *tx)
            .await?;
        let detail = match finish.failed_part {
            Some(part) => format!("{}: {part}", finish.outcome.as_str()),
            None => finish.outcome.as_str().to_string(),
        };
        super::shares::record(
            &mut tx,
            finish.by,
            Some(build_id),
            "run finished",
            &format!("run {id}"),
            &detail,
        )
        .await?;
        tx.commit().await?;
        Ok(())
    }
}
