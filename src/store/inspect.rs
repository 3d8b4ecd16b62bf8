//! What tests ask of the store beyond the logbook's own use: a fingerprint of every table, to
//! show that a refused request saved nothing, and a stored time moved into the past, so that a
//! test need not sleep out a wait. The server never calls these.

use sha2::{Digest, Sha256};
use sqlx::AssertSqlSafe;

use super::{Store, StoreResult};

/// One table: how many rows it has and a hash of every value in them.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct TableFingerprint {
    pub table: String,
    pub rows: i64,
    pub content_sha256: String,
}

/// An identifier as SQL quotes it (the names come from the schema itself).
fn quoted(identifier: &str) -> String {
    format!("\"{}\"", identifier.replace('"', "\"\""))
}

impl Store {
    /// Every table of the database (a new one included the day it is added), its row count and
    /// a SHA-256 of its rows in rowid order, leaving out the columns named `table.column` in
    /// `ignored` (the last-use times that any signed-in request may touch, say).
    pub async fn table_fingerprints(&self, ignored: &[&str]) -> StoreResult<Vec<TableFingerprint>> {
        let tables: Vec<String> = sqlx::query_scalar(
            "SELECT name FROM sqlite_master
             WHERE type = 'table' AND name NOT LIKE 'sqlite\\_%' ESCAPE '\\' ORDER BY name",
        )
        .fetch_all(&self.pool)
        .await?;
        let mut fingerprints = Vec::with_capacity(tables.len());
        for table in tables {
            let columns: Vec<String> =
                sqlx::query_scalar("SELECT name FROM pragma_table_info(?) ORDER BY cid")
                    .bind(&table)
                    .fetch_all(&self.pool)
                    .await?;
            let values: Vec<String> = columns
                .iter()
                .filter(|column| !ignored.contains(&format!("{table}.{column}").as_str()))
                .map(|column| format!("quote({})", quoted(column)))
                .collect();
            let row = match values.is_empty() {
                true => "''".to_string(),
                false => values.join(" || ',' || "),
            };
            // One string per table (rows in rowid order, a line each): far fewer round trips
            // than a row at a time.
            let sql = format!(
                "SELECT COUNT(*), COALESCE(group_concat({row}, char(10) ORDER BY rowid), '')
                 FROM {}",
                quoted(&table)
            );
            let (rows, content): (i64, String) = sqlx::query_as(AssertSqlSafe(sql))
                .fetch_one(&self.pool)
                .await?;
            fingerprints.push(TableFingerprint {
                table,
                rows,
                content_sha256: hex::encode(Sha256::digest(content.as_bytes())),
            });
        }
        Ok(fingerprints)
    }

    /// Moves the last failed sign-in under `name` `seconds` into the past, as if that much
    /// time had gone by since (the wait is computed from this stored time).
    pub async fn backdate_login_failure(&self, name: &str, seconds: i64) -> StoreResult<()> {
        sqlx::query("UPDATE login_failures SET last_failed_at = last_failed_at - ? WHERE name = ?")
            .bind(seconds)
            .bind(name)
            .execute(&self.pool)
            .await?;
        Ok(())
    }

    /// Moves a run's start `seconds` into the past, as if it had been running that long (the
    /// time since the start of each reading is counted from this stored time).
    pub async fn backdate_run_start(&self, run_id: super::RunId, seconds: i64) -> StoreResult<()> {
        sqlx::query("UPDATE runs SET started_at = started_at - ? WHERE id = ?")
            .bind(seconds)
            .bind(run_id)
            .execute(&self.pool)
            .await?;
        Ok(())
    }
}
