//! API tokens: bearer credentials for scripts. The table holds only each token's hash.

use super::users::Role;
use super::{Store, StoreError, StoreResult, TokenId, UserId, now_unix_s};
use crate::secrets::{random_token, token_hash};

/// A token just made: the secret is shown to its owner once and never stored.
#[derive(Debug, Clone)]
pub struct NewToken {
    pub id: TokenId,
    pub token: String,
}

/// The user a live token acts for, with that user's role.
#[derive(Debug, Clone)]
pub struct TokenUser {
    pub token_id: TokenId,
    pub user_id: UserId,
    pub name: String,
    pub display_name: String,
    pub role: Role,
}

/// A line of `eddybench token list`.
#[derive(Debug, Clone, sqlx::FromRow)]
pub struct ApiToken {
    pub id: TokenId,
    pub user_name: String,
    pub label: String,
    pub created_at: i64,
    pub last_used_at: Option<i64>,
    pub revoked_at: Option<i64>,
}

#[derive(sqlx::FromRow)]
struct TokenUserRow {
    token_id: TokenId,
    user_id: UserId,
    name: String,
    display_name: String,
    role: String,
    last_used_at: Option<i64>,
}

/// A token is used at most this often before its last-used time is written again.
const TOUCH_INTERVAL_S: i64 = 60;

impl Store {
    /// Makes a token for a user and returns it with its id; only its hash is kept.
    pub async fn create_token(&self, user_id: UserId, label: &str) -> StoreResult<NewToken> {
        let token = random_token();
        let mut tx = self.begin_write().await?;
        let id = sqlx::query_scalar(
            "INSERT INTO api_tokens (user_id, label, token_hash, created_at)
             VALUES (?, ?, ?, ?) RETURNING id",
        )
        .bind(user_id)
        .bind(label)
        .bind(token_hash(&token))
        .bind(now_unix_s())
        .fetch_one(&mut *tx)
        .await?;
        tx.commit().await?;
        Ok(NewToken { id, token })
    }

    /// Stops a token working. Revoking twice is a conflict, an unknown id is not found.
    pub async fn revoke_token(&self, id: TokenId) -> StoreResult<()> {
        let mut tx = self.begin_write().await?;
        let done =
            sqlx::query("UPDATE api_tokens SET revoked_at = ? WHERE id = ? AND revoked_at IS NULL")
                .bind(now_unix_s())
                .bind(id)
                .execute(&mut *tx)
                .await?;
        if done.rows_affected() == 1 {
            return tx.commit().await;
        }
        let exists: Option<i64> = sqlx::query_scalar("SELECT 1 FROM api_tokens WHERE id = ?")
            .bind(id)
            .fetch_optional(&mut *tx)
            .await?;
        match exists {
            Some(_) => Err(StoreError::Conflict(format!(
                "token {id} is already revoked"
            ))),
            None => Err(StoreError::NotFound),
        }
    }

    /// The user behind a token hash, or `None` when no live token has it. Touches the token's
    /// last-used time at most once a minute.
    pub async fn token_user(&self, hash: &str) -> StoreResult<Option<TokenUser>> {
        let row: Option<TokenUserRow> = sqlx::query_as(
            "SELECT t.id AS token_id, t.user_id, u.name, u.display_name, u.role, t.last_used_at
             FROM api_tokens t JOIN users u ON u.id = t.user_id
             WHERE t.token_hash = ? AND t.revoked_at IS NULL",
        )
        .bind(hash)
        .fetch_optional(&self.pool)
        .await?;
        let Some(row) = row else { return Ok(None) };
        let now = now_unix_s();
        if row
            .last_used_at
            .is_none_or(|used| now - used >= TOUCH_INTERVAL_S)
        {
            // Best effort: a failed touch must not make a token fail.
            let touched = self.touch_token(row.token_id, now).await;
            if let Err(error) = touched {
                tracing::warn!(?error, token = %row.token_id, "could not record token use");
            }
        }
        Ok(Some(TokenUser {
            token_id: row.token_id,
            user_id: row.user_id,
            role: Role::parse(&row.role)
                .ok_or_else(|| StoreError::Corrupt(format!("role {}", row.role)))?,
            name: row.name,
            display_name: row.display_name,
        }))
    }

    async fn touch_token(&self, id: TokenId, now: i64) -> StoreResult<()> {
        let mut tx = self.begin_write().await?;
        sqlx::query("UPDATE api_tokens SET last_used_at = ? WHERE id = ?")
            .bind(now)
            .bind(id)
            .execute(&mut *tx)
            .await?;
        tx.commit().await
    }

    /// Every token, revoked ones included, oldest first.
    pub async fn list_tokens(&self) -> StoreResult<Vec<ApiToken>> {
        Ok(sqlx::query_as(
            "SELECT t.id, u.name AS user_name, t.label, t.created_at, t.last_used_at, t.revoked_at
             FROM api_tokens t JOIN users u ON u.id = t.user_id
             ORDER BY t.id",
        )
        .fetch_all(&self.pool)
        .await?)
    }
}
