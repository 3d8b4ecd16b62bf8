//! Revisions: immutable snapshots of a build's parts, stored one row per role.

use serde::Serialize;
use serde_json::{Map, Value};

use sqlx::AssertSqlSafe;

use super::{BuildId, RevisionId, Store, StoreError, StoreResult, UserId, now_unix_s};
use crate::parts::{Parts, Role};

#[derive(Debug, Clone, Serialize)]
pub struct Revision {
    pub id: RevisionId,
    pub build_id: BuildId,
    pub number: i64,
    pub parent_number: Option<i64>,
    pub notes: String,
    pub created_at: i64,
    pub parts: Parts,
}

impl Revision {
    /// The label users see and type: r1, r2, ...
    pub fn label(&self) -> String {
        format!("r{}", self.number)
    }
}

/// Parses a revision label (`r3`) into its number.
pub fn revision_number(label: &str) -> Option<i64> {
    label.strip_prefix('r')?.parse().ok().filter(|n| *n >= 1)
}

#[derive(sqlx::FromRow)]
struct RevisionRow {
    id: RevisionId,
    build_id: BuildId,
    number: i64,
    parent_number: Option<i64>,
    notes: String,
    created_at: i64,
}

#[derive(sqlx::FromRow)]
pub(super) struct PartRow {
    pub(super) revision_id: RevisionId,
    pub(super) role: String,
    pub(super) params_json: String,
}

/// One row per role present, in the order of `Role::ALL`; each `other` part a row of its own.
pub(super) fn part_rows(parts: &Parts) -> StoreResult<Vec<(Role, String, u32, String)>> {
    let value = serde_json::to_value(parts).map_err(|e| StoreError::Corrupt(e.to_string()))?;
    let mut rows = Vec::new();
    for role in Role::ALL {
        let Some(params) = value.get(role.key()) else {
            continue;
        };
        if role == Role::Other {
            for other in parts.other.iter() {
                let json = serde_json::to_string(other).expect("a part always serialises");
                rows.push((role, other.label.clone(), other.quantity, json));
            }
            continue;
        }
        let label = parts.label(role).unwrap_or_default().to_string();
        rows.push((role, label, parts.quantity(role), params.to_string()));
    }
    Ok(rows)
}

pub(super) fn parts_from_rows(rows: &[&PartRow]) -> StoreResult<Parts> {
    let mut object = Map::new();
    let mut others = Vec::new();
    for row in rows {
        let params: Value = serde_json::from_str(&row.params_json)
            .map_err(|e| StoreError::Corrupt(format!("part params: {e}")))?;
        if row.role == Role::Other.key() {
            others.push(params);
        } else {
            object.insert(row.role.clone(), params);
        }
    }
    if !others.is_empty() {
        object.insert(Role::Other.key().into(), Value::Array(others));
    }
    serde_json::from_value(Value::Object(object))
        .map_err(|e| StoreError::Corrupt(format!("parts: {e}")))
}

const REVISION_COLUMNS: &str = "r.id, r.build_id, r.number, p.number AS parent_number, r.notes,
     r.created_at FROM revisions r LEFT JOIN revisions p ON p.id = r.parent_id";

impl Store {
    /// Adds the next revision of a build (numbered after the highest so far) with its parts.
    pub async fn create_revision(
        &self,
        build_id: BuildId,
        parent: Option<RevisionId>,
        parts: &Parts,
        notes: &str,
        created_by: Option<UserId>,
    ) -> StoreResult<Revision> {
        self.create_revision_at(build_id, parent, parts, notes, created_by, now_unix_s())
            .await
    }

    /// As `create_revision`, dated `created_at` (the demo's history, imports of old notes).
    pub async fn create_revision_at(
        &self,
        build_id: BuildId,
        parent: Option<RevisionId>,
        parts: &Parts,
        notes: &str,
        created_by: Option<UserId>,
        created_at: i64,
    ) -> StoreResult<Revision> {
        let rows = part_rows(parts)?;
        let mut tx = self.begin_write().await?;
        let number: i64 = sqlx::query_scalar(
            "SELECT COALESCE(MAX(number), 0) + 1 FROM revisions WHERE build_id = ?",
        )
        .bind(build_id)
        .fetch_one(&mut *tx)
        .await?;
        let now = created_at;
        let id: RevisionId = sqlx::query_scalar(
            "INSERT INTO revisions (build_id, number, parent_id, notes, created_by, created_at)
             VALUES (?, ?, ?, ?, ?, ?) RETURNING id",
        )
        .bind(build_id)
        .bind(number)
        .bind(parent)
        .bind(notes)
        .bind(created_by)
        .bind(now)
        .fetch_one(&mut *tx)
        .await?;
        for (position, (role, label, quantity, params)) in rows.iter().enumerate() {
            sqlx::query(
                "INSERT INTO parts (revision_id, position, role, label, quantity, params_json)
                 VALUES (?, ?, ?, ?, ?, ?)",
            )
            .bind(id)
            .bind(position as i64)
            .bind(role.key())
            .bind(label)
            .bind(*quantity as i64)
            .bind(params)
            .execute(&mut *tx)
            .await?;
        }
        let parent_number: Option<i64> = match parent {
            Some(parent) => {
                sqlx::query_scalar("SELECT number FROM revisions WHERE id = ? AND build_id = ?")
                    .bind(parent)
                    .bind(build_id)
                    .fetch_optional(&mut *tx)
                    .await?
            }
            None => None,
        };
        let from = parent_number
            .map(|n| format!("copied from r{n}"))
            .unwrap_or_default();
        super::shares::record(
            &mut tx,
            created_by,
            Some(build_id),
            "revision created",
            &format!("r{number}"),
            &from,
        )
        .await?;
        tx.commit().await?;
        Ok(Revision {
            id,
            build_id,
            number,
            parent_number,
            notes: notes.to_string(),
            created_at: now,
            parts: parts.clone(),
        })
    }

    /// All revisions of a build, oldest first.
    pub async fn revisions_of_build(&self, build_id: BuildId) -> StoreResult<Vec<Revision>> {
        let rows: Vec<RevisionRow> = sqlx::query_as(AssertSqlSafe(format!(
            "SELECT {REVISION_COLUMNS} WHERE r.build_id = ? ORDER BY r.number"
        )))
        .bind(build_id)
        .fetch_all(&self.pool)
        .await?;
        let parts: Vec<PartRow> = sqlx::query_as(
            "SELECT p.revision_id, p.role, p.params_json FROM parts p
             JOIN revisions r ON r.id = p.revision_id
             WHERE r.build_id = ? ORDER BY p.revision_id, p.position",
        )
        .bind(build_id)
        .fetch_all(&self.pool)
        .await?;
        rows.into_iter()
            .map(|row| {
                let own: Vec<&PartRow> = parts.iter().filter(|p| p.revision_id == row.id).collect();
                revision_from(row, &own)
            })
            .collect()
    }

    pub async fn revision_by_number(
        &self,
        build_id: BuildId,
        number: i64,
    ) -> StoreResult<Revision> {
        let row: RevisionRow = sqlx::query_as(AssertSqlSafe(format!(
            "SELECT {REVISION_COLUMNS} WHERE r.build_id = ? AND r.number = ?"
        )))
        .bind(build_id)
        .bind(number)
        .fetch_optional(&self.pool)
        .await?
        .ok_or(StoreError::NotFound)?;
        self.with_parts(row).await
    }

    pub async fn revision_by_id(&self, id: RevisionId) -> StoreResult<Revision> {
        let row: RevisionRow = sqlx::query_as(AssertSqlSafe(format!(
            "SELECT {REVISION_COLUMNS} WHERE r.id = ?"
        )))
        .bind(id)
        .fetch_optional(&self.pool)
        .await?
        .ok_or(StoreError::NotFound)?;
        self.with_parts(row).await
    }

    pub async fn latest_revision(&self, build_id: BuildId) -> StoreResult<Option<Revision>> {
        let number: Option<i64> =
            sqlx::query_scalar("SELECT MAX(number) FROM revisions WHERE build_id = ?")
                .bind(build_id)
                .fetch_one(&self.pool)
                .await?;
        match number {
            Some(number) => Ok(Some(self.revision_by_number(build_id, number).await?)),
            None => Ok(None),
        }
    }

    async fn with_parts(&self, row: RevisionRow) -> StoreResult<Revision> {
        let parts: Vec<PartRow> = sqlx::query_as(
            "SELECT revision_id, role, params_json FROM parts WHERE revision_id = ? ORDER BY position",
        )
        .bind(row.id)
        .fetch_all(&self.pool)
        .await?;
        let own: Vec<&PartRow> = parts.iter().collect();
        revision_from(row, &own)
    }
}

fn revision_from(row: RevisionRow, parts: &[&PartRow]) -> StoreResult<Revision> {
    Ok(Revision {
        id: row.id,
        build_id: row.build_id,
        number: row.number,
        parent_number: row.parent_number,
        notes: row.notes,
        created_at: row.created_at,
        parts: parts_from_rows(parts)?,
    })
}
