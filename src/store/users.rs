//! Accounts.

use serde::Serialize;

use sqlx::AssertSqlSafe;

use super::{Store, StoreError, StoreResult, UserId, conflict_on_unique, now_unix_s};

/// What an account may do; ordered so that `role >= Role::Editor` reads as "may write".
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Role {
    Viewer,
    Editor,
    Admin,
}

impl Role {
    pub fn as_str(self) -> &'static str {
        match self {
            Role::Viewer => "viewer",
            Role::Editor => "editor",
            Role::Admin => "admin",
        }
    }

    pub fn parse(text: &str) -> Option<Role> {
        match text {
            "viewer" => Some(Role::Viewer),
            "editor" => Some(Role::Editor),
            "admin" => Some(Role::Admin),
            _ => None,
        }
    }
}

#[derive(Debug, Clone)]
pub struct User {
    pub id: UserId,
    pub name: String,
    pub display_name: String,
    pub role: Role,
    pub password_hash: String,
    pub created_at: i64,
}

#[derive(sqlx::FromRow)]
struct UserRow {
    id: UserId,
    name: String,
    display_name: String,
    role: String,
    password_hash: String,
    created_at: i64,
}

impl TryFrom<UserRow> for User {
    type Error = StoreError;
    fn try_from(row: UserRow) -> StoreResult<User> {
        Ok(User {
            id: row.id,
            role: Role::parse(&row.role)
                .ok_or_else(|| StoreError::Corrupt(format!("role {}", row.role)))?,
            name: row.name,
            display_name: row.display_name,
            password_hash: row.password_hash,
            created_at: row.created_at,
        })
    }
}

const USER_COLUMNS: &str = "id, name, display_name, role, password_hash, created_at";

impl Store {
    pub async fn create_user(
        &self,
        name: &str,
        display_name: &str,
        role: Role,
        password_hash: &str,
    ) -> StoreResult<UserId> {
        let mut tx = self.begin_write().await?;
        let id = sqlx::query_scalar(
            "INSERT INTO users (name, display_name, role, password_hash, created_at)
             VALUES (?, ?, ?, ?, ?) RETURNING id",
        )
        .bind(name)
        .bind(display_name)
        .bind(role.as_str())
        .bind(password_hash)
        .bind(now_unix_s())
        .fetch_one(&mut *tx)
        .await
        .map_err(|e| conflict_on_unique(e, "a user of that name already exists"))?;
        super::shares::record(&mut tx, None, None, "user added", name, role.as_str()).await?;
        tx.commit().await?;
        Ok(id)
    }

    pub async fn user_by_name(&self, name: &str) -> StoreResult<Option<User>> {
        let row: Option<UserRow> = sqlx::query_as(AssertSqlSafe(format!(
            "SELECT {USER_COLUMNS} FROM users WHERE name = ?"
        )))
        .bind(name)
        .fetch_optional(&self.pool)
        .await?;
        row.map(User::try_from).transpose()
    }

    pub async fn list_users(&self) -> StoreResult<Vec<User>> {
        let rows: Vec<UserRow> = sqlx::query_as(AssertSqlSafe(format!(
            "SELECT {USER_COLUMNS} FROM users ORDER BY name"
        )))
        .fetch_all(&self.pool)
        .await?;
        rows.into_iter().map(User::try_from).collect()
    }

    /// Sets a new password hash and ends every session of the account but `keep_session_hash`.
    pub async fn change_password(
        &self,
        id: UserId,
        password_hash: &str,
        keep_session_hash: &str,
    ) -> StoreResult<()> {
        let mut tx = self.begin_write().await?;
        sqlx::query("UPDATE users SET password_hash = ? WHERE id = ?")
            .bind(password_hash)
            .bind(id)
            .execute(&mut *tx)
            .await?;
        sqlx::query("DELETE FROM sessions WHERE user_id = ? AND id_hash <> ?")
            .bind(id)
            .bind(keep_session_hash)
            .execute(&mut *tx)
            .await?;
        super::shares::record(
            &mut tx,
            Some(id),
            None,
            "password changed",
            "own account",
            "other sessions ended",
        )
        .await?;
        tx.commit().await?;
        Ok(())
    }

    /// Takes one sign-in attempt for the account `name` from the address `source`, or refuses
    /// it with the seconds still to wait. Two counters: the source's failures (on any name) and
    /// the account's failures (from any source). A source waits out its own failures; it waits
    /// out the account's only once it has failed itself, so an attacker elsewhere slows the
    /// account for failing sources but never locks out its owner signing in from a clean one.
    /// A taken attempt counts as a failure at once on both counters and
    /// `clear_login_failures` forgets it when the password matches; reading and counting in
    /// one write makes attempts sent at the same moment take their turns.
    pub async fn claim_login_attempt(
        &self,
        name: &str,
        source: &str,
        wait_s: impl Fn(i64) -> i64,
    ) -> StoreResult<Option<i64>> {
        let (account, source) = (account_key(name), source_key(source));
        let mut tx = self.begin_write().await?;
        let now = now_unix_s();
        sqlx::query("DELETE FROM login_failures WHERE last_failed_at < ?")
            .bind(now - FAILURES_KEPT_S)
            .execute(&mut *tx)
            .await?;
        let mut counted = Vec::new();
        for key in [&source, &account] {
            let so_far: Option<(i64, i64)> = sqlx::query_as(
                "SELECT failures, last_failed_at FROM login_failures WHERE name = ?",
            )
            .bind(key)
            .fetch_optional(&mut *tx)
            .await?;
            counted.push(so_far);
        }
        let source_failing = counted[0].is_some();
        let wait = counted
            .iter()
            .enumerate()
            .filter(|(i, _)| *i == 0 || source_failing)
            .filter_map(|(_, c)| c.map(|(failures, last)| last + wait_s(failures) - now))
            .max()
            .unwrap_or(0);
        if wait > 0 {
            return Ok(Some(wait));
        }
        for key in [&source, &account] {
            sqlx::query(
                "INSERT INTO login_failures (name, failures, last_failed_at) VALUES (?, 1, ?)
                 ON CONFLICT (name) DO UPDATE
                 SET failures = failures + 1, last_failed_at = excluded.last_failed_at",
            )
            .bind(key)
            .bind(now)
            .execute(&mut *tx)
            .await?;
        }
        tx.commit().await?;
        Ok(None)
    }

    /// Failures so far on an account (from every source) and the time of the last one.
    pub async fn login_failures(&self, name: &str) -> StoreResult<Option<(i64, i64)>> {
        Ok(
            sqlx::query_as("SELECT failures, last_failed_at FROM login_failures WHERE name = ?")
                .bind(account_key(name))
                .fetch_optional(&self.pool)
                .await?,
        )
    }

    /// Forgets the failures of an account and of the source it was just signed in from.
    pub async fn clear_login_failures(&self, name: &str, source: &str) -> StoreResult<()> {
        let mut tx = self.begin_write().await?;
        sqlx::query("DELETE FROM login_failures WHERE name IN (?, ?)")
            .bind(account_key(name))
            .bind(source_key(source))
            .execute(&mut *tx)
            .await?;
        tx.commit().await
    }
}

/// Failures older than this are forgotten (the longest wait is far shorter).
const FAILURES_KEPT_S: i64 = 24 * 3600;

/// The counter of an account: a hash, so any name typed costs one short row.
fn account_key(name: &str) -> String {
    use sha2::Digest;
    format!(
        "account:{}",
        hex::encode(sha2::Sha256::digest(name.as_bytes()))
    )
}

/// The counter of a source address, at most a few dozen characters.
fn source_key(source: &str) -> String {
    format!("source:{}", source.chars().take(64).collect::<String>())
}
