//! Kept run digests (see migrations/0004_run_digests.sql).

use super::{BuildId, RunId, Store, StoreResult, now_unix_s};

impl Store {
    /// The stored digests of a build's runs at `version`: (run id, JSON).
    pub async fn run_digests_of_build(
        &self,
        build_id: BuildId,
        version: i64,
    ) -> StoreResult<Vec<(RunId, String)>> {
        Ok(sqlx::query_as(
            "SELECT d.run_id, d.digest_json FROM run_digests d JOIN runs u ON u.id = d.run_id
             WHERE u.build_id = ? AND d.version = ?",
        )
        .bind(build_id)
        .bind(version)
        .fetch_all(&self.pool)
        .await?)
    }

    pub async fn save_run_digest(
        &self,
        run_id: RunId,
        version: i64,
        json: &str,
    ) -> StoreResult<()> {
        let mut tx = self.begin_write().await?;
        sqlx::query(
            "INSERT INTO run_digests (run_id, version, digest_json, computed_at) VALUES (?, ?, ?, ?)
             ON CONFLICT (run_id) DO UPDATE SET version = excluded.version,
                 digest_json = excluded.digest_json, computed_at = excluded.computed_at",
        )
        .bind(run_id)
        .bind(version)
        .bind(json)
        .bind(now_unix_s())
        .execute(&mut *tx)
        .await?;
        tx.commit().await
    }
}

/// Drops a run's digest inside a write that changes its data.
pub(super) async fn forget_digest(
    tx: &mut sqlx::SqliteConnection,
    run_id: RunId,
) -> StoreResult<()> {
    sqlx::query("DELETE FROM run_digests WHERE run_id = ?")
        .bind(run_id)
        .execute(&mut *tx)
        .await?;
    Ok(())
}
