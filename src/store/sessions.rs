//! Server-side sessions: the cookie holds a random id, the table holds its hash.

use super::users::Role;
use super::{Store, StoreError, StoreResult, UserId, now_unix_s};

/// The signed-in user behind a session.
#[derive(Debug, Clone)]
pub struct SessionUser {
    pub user_id: UserId,
    pub name: String,
    pub display_name: String,
    pub role: Role,
    pub csrf_token: String,
}

#[derive(sqlx::FromRow)]
struct SessionRow {
    user_id: UserId,
    name: String,
    display_name: String,
    role: String,
    csrf_token: String,
    last_seen_at: i64,
}

impl Store {
    pub async fn create_session(
        &self,
        id_hash: &str,
        user_id: UserId,
        csrf_token: &str,
    ) -> StoreResult<()> {
        let now = now_unix_s();
        let mut tx = self.begin_write().await?;
        sqlx::query(
            "INSERT INTO sessions (id_hash, user_id, csrf_token, created_at, last_seen_at)
             VALUES (?, ?, ?, ?, ?)",
        )
        .bind(id_hash)
        .bind(user_id)
        .bind(csrf_token)
        .bind(now)
        .bind(now)
        .execute(&mut *tx)
        .await?;
        tx.commit().await
    }

    /// The user of a live session, touching its last-seen time. Sessions idle longer than
    /// `idle_s` or older than `absolute_s` are gone.
    pub async fn session_user(
        &self,
        id_hash: &str,
        idle_s: i64,
        absolute_s: i64,
    ) -> StoreResult<Option<SessionUser>> {
        let now = now_unix_s();
        let row: Option<SessionRow> = sqlx::query_as(
            "SELECT s.user_id, u.name, u.display_name, u.role, s.csrf_token, s.last_seen_at
             FROM sessions s JOIN users u ON u.id = s.user_id
             WHERE s.id_hash = ? AND s.last_seen_at > ? AND s.created_at > ?",
        )
        .bind(id_hash)
        .bind(now - idle_s)
        .bind(now - absolute_s)
        .fetch_optional(&self.pool)
        .await?;
        let Some(row) = row else { return Ok(None) };
        // Touch at most once a minute: a page view should not always be a write.
        if now - row.last_seen_at > 60 {
            let mut tx = self.begin_write().await?;
            sqlx::query("UPDATE sessions SET last_seen_at = ? WHERE id_hash = ?")
                .bind(now)
                .bind(id_hash)
                .execute(&mut *tx)
                .await?;
            tx.commit().await?;
        }
        Ok(Some(SessionUser {
            user_id: row.user_id,
            role: Role::parse(&row.role)
                .ok_or_else(|| StoreError::Corrupt(format!("role {}", row.role)))?,
            name: row.name,
            display_name: row.display_name,
            csrf_token: row.csrf_token,
        }))
    }

    pub async fn delete_session(&self, id_hash: &str) -> StoreResult<()> {
        let mut tx = self.begin_write().await?;
        sqlx::query("DELETE FROM sessions WHERE id_hash = ?")
            .bind(id_hash)
            .execute(&mut *tx)
            .await?;
        tx.commit().await
    }
}
