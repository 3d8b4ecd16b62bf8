//! Share links and the audit trail.

use serde::Serialize;

use super::{BuildId, Store, StoreError, StoreResult, UserId, now_unix_s};

#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, sqlx::Type, Serialize)]
#[sqlx(transparent)]
#[serde(transparent)]
pub struct ShareId(pub i64);

impl std::fmt::Display for ShareId {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        self.0.fmt(f)
    }
}

#[derive(Debug, Clone, Serialize, sqlx::FromRow)]
pub struct Share {
    pub id: ShareId,
    pub build_id: BuildId,
    pub revision_number: Option<i64>,
    pub label: String,
    pub created_by_name: Option<String>,
    pub created_at: i64,
    pub expires_at: Option<i64>,
    pub revoked_at: Option<i64>,
}

impl Share {
    /// Usable now: neither revoked nor past its expiry.
    pub fn is_live(&self, now: i64) -> bool {
        self.revoked_at.is_none() && self.expires_at.is_none_or(|t| t > now)
    }
}

pub struct NewShare<'a> {
    pub build_id: BuildId,
    pub revision_number: Option<i64>,
    pub label: &'a str,
    pub token_hash: &'a str,
    pub created_by: Option<UserId>,
    pub expires_at: Option<i64>,
}

const SHARE_SELECT: &str = "SELECT s.id, s.build_id, s.revision_number, s.label,
        u.display_name AS created_by_name, s.created_at, s.expires_at, s.revoked_at
     FROM shares s LEFT JOIN users u ON u.id = s.created_by";

/// One line of the audit trail.
#[derive(Debug, Clone, Serialize, sqlx::FromRow)]
pub struct AuditEvent {
    pub at: i64,
    pub actor_name: String,
    pub action: String,
    pub subject: String,
    pub detail: String,
}

/// Appends to the audit trail inside a write transaction, naming the actor by display name.
pub(super) async fn record(
    tx: &mut sqlx::SqliteConnection,
    actor: Option<UserId>,
    build_id: Option<BuildId>,
    action: &str,
    subject: &str,
    detail: &str,
) -> StoreResult<()> {
    sqlx::query(
        "INSERT INTO audit_events (at, actor_id, actor_name, build_id, action, subject, detail)
         VALUES (?, ?, COALESCE((SELECT display_name FROM users WHERE id = ?), 'command line'), ?, ?, ?, ?)",
    )
    .bind(now_unix_s())
    .bind(actor)
    .bind(actor)
    .bind(build_id)
    .bind(action)
    .bind(subject)
    .bind(detail)
    .execute(&mut *tx)
    .await?;
    Ok(())
}

impl Store {
    pub async fn create_share(&self, new: &NewShare<'_>) -> StoreResult<ShareId> {
        let mut tx = self.begin_write().await?;
        let id = sqlx::query_scalar(
            "INSERT INTO shares (build_id, revision_number, label, token_hash, created_by,
                created_at, expires_at) VALUES (?, ?, ?, ?, ?, ?, ?) RETURNING id",
        )
        .bind(new.build_id)
        .bind(new.revision_number)
        .bind(new.label)
        .bind(new.token_hash)
        .bind(new.created_by)
        .bind(now_unix_s())
        .bind(new.expires_at)
        .fetch_one(&mut *tx)
        .await?;
        tx.commit().await?;
        Ok(id)
    }

    /// The live share behind a token hash; revoked and expired links are not found.
    pub async fn live_share(&self, token_hash: &str) -> StoreResult<Option<Share>> {
        Ok(self
            .share_by_token_hash(token_hash)
            .await?
            .filter(|s| s.is_live(now_unix_s())))
    }

    /// The share behind a token hash, live or not, so a dead link can say why it is dead.
    pub async fn share_by_token_hash(&self, token_hash: &str) -> StoreResult<Option<Share>> {
        Ok(sqlx::query_as(sqlx::AssertSqlSafe(format!(
            "{SHARE_SELECT} WHERE s.token_hash = ?"
        )))
        .bind(token_hash)
        .fetch_optional(&self.pool)
        .await?)
    }

    pub async fn shares_of_build(&self, build_id: BuildId) -> StoreResult<Vec<Share>> {
        Ok(sqlx::query_as(sqlx::AssertSqlSafe(format!(
            "{SHARE_SELECT} WHERE s.build_id = ? ORDER BY s.created_at DESC, s.id DESC"
        )))
        .bind(build_id)
        .fetch_all(&self.pool)
        .await?)
    }

    pub async fn share_by_id(&self, id: ShareId) -> StoreResult<Share> {
        sqlx::query_as(sqlx::AssertSqlSafe(format!(
            "{SHARE_SELECT} WHERE s.id = ?"
        )))
        .bind(id)
        .fetch_optional(&self.pool)
        .await?
        .ok_or(StoreError::NotFound)
    }

    /// Revokes a link; revoking twice is harmless.
    pub async fn revoke_share(&self, id: ShareId) -> StoreResult<()> {
        let mut tx = self.begin_write().await?;
        sqlx::query("UPDATE shares SET revoked_at = COALESCE(revoked_at, ?) WHERE id = ?")
            .bind(now_unix_s())
            .bind(id)
            .execute(&mut *tx)
            .await?;
        tx.commit().await
    }

    /// Appends to the audit trail.
    pub async fn audit(
        &self,
        actor: Option<(UserId, &str)>,
        build_id: Option<BuildId>,
        action: &str,
        subject: &str,
        detail: &str,
    ) -> StoreResult<()> {
        let mut tx = self.begin_write().await?;
        sqlx::query(
            "INSERT INTO audit_events (at, actor_id, actor_name, build_id, action, subject, detail)
             VALUES (?, ?, ?, ?, ?, ?, ?)",
        )
        .bind(now_unix_s())
        .bind(actor.map(|a| a.0))
        .bind(actor.map_or("system", |a| a.1))
        .bind(build_id)
        .bind(action)
        .bind(subject)
        .bind(detail)
        .execute(&mut *tx)
        .await?;
        tx.commit().await
    }

    /// The audit trail of a build, newest first.
    pub async fn audit_of_build(
        &self,
        build_id: BuildId,
        limit: i64,
    ) -> StoreResult<Vec<AuditEvent>> {
        Ok(sqlx::query_as(
            "SELECT at, actor_name, action, subject, detail FROM audit_events
             WHERE build_id = ? ORDER BY at DESC, id DESC LIMIT ?",
        )
        .bind(build_id)
        .bind(limit)
        .fetch_all(&self.pool)
        .await?)
    }
}
