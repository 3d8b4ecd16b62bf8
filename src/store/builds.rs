//! Builds: one heater project each.

use serde::Serialize;

use super::{BuildId, Store, StoreError, StoreResult, UserId, now_unix_s};

#[derive(Debug, Clone, Serialize, sqlx::FromRow)]
pub struct Build {
    pub id: BuildId,
    pub slug: String,
    pub name: String,
    pub purpose: String,
    pub notes: String,
    pub created_at: i64,
}

/// A line of the builds list.
#[derive(Debug, Clone, Serialize, sqlx::FromRow)]
pub struct BuildSummary {
    pub slug: String,
    pub name: String,
    pub purpose: String,
    pub latest_revision: Option<i64>,
    pub last_run_at: Option<i64>,
    pub run_count: i64,
}

pub struct NewBuild<'a> {
    pub name: &'a str,
    pub purpose: &'a str,
    pub notes: &'a str,
    pub created_by: Option<UserId>,
}

/// A URL-safe slug from a build's name: lower-case ASCII letters, digits and single dashes.
pub fn slug_from_name(name: &str) -> String {
    let mut slug = String::new();
    for c in name.chars() {
        if c.is_ascii_alphanumeric() {
            slug.push(c.to_ascii_lowercase());
        } else if !slug.ends_with('-') && !slug.is_empty() {
            slug.push('-');
        }
    }
    let slug = slug.trim_end_matches('-');
    let slug: String = slug.chars().take(48).collect();
    if slug.is_empty() {
        "build".into()
    } else {
        slug.trim_end_matches('-').to_string()
    }
}

impl Store {
    /// Creates a build under a slug made from its name, numbered (`-2`, `-3`) when taken.
    pub async fn create_build(&self, new: &NewBuild<'_>) -> StoreResult<Build> {
        let base = slug_from_name(new.name);
        let mut tx = self.begin_write().await?;
        let taken: Vec<String> =
            sqlx::query_scalar("SELECT slug FROM builds WHERE slug = ? OR slug LIKE ? || '-%'")
                .bind(&base)
                .bind(&base)
                .fetch_all(&mut *tx)
                .await?;
        let slug = (1..)
            .map(|n| {
                if n == 1 {
                    base.clone()
                } else {
                    format!("{base}-{n}")
                }
            })
            .find(|candidate| !taken.contains(candidate))
            .expect("an unbounded range always yields a free slug");
        let build: Build = sqlx::query_as(
            "INSERT INTO builds (slug, name, purpose, notes, created_by, created_at)
             VALUES (?, ?, ?, ?, ?, ?)
             RETURNING id, slug, name, purpose, notes, created_at",
        )
        .bind(&slug)
        .bind(new.name)
        .bind(new.purpose)
        .bind(new.notes)
        .bind(new.created_by)
        .bind(now_unix_s())
        .fetch_one(&mut *tx)
        .await?;
        super::shares::record(
            &mut tx,
            new.created_by,
            Some(build.id),
            "build created",
            &build.name,
            "",
        )
        .await?;
        tx.commit().await?;
        Ok(build)
    }

    pub async fn build_by_slug(&self, slug: &str) -> StoreResult<Build> {
        sqlx::query_as(
            "SELECT id, slug, name, purpose, notes, created_at FROM builds WHERE slug = ?",
        )
        .bind(slug)
        .fetch_optional(&self.pool)
        .await?
        .ok_or(StoreError::NotFound)
    }

    pub async fn build_by_id(&self, id: BuildId) -> StoreResult<Build> {
        sqlx::query_as("SELECT id, slug, name, purpose, notes, created_at FROM builds WHERE id = ?")
            .bind(id)
            .fetch_optional(&self.pool)
            .await?
            .ok_or(StoreError::NotFound)
    }

    /// The builds list: each build with its latest revision and its last run, newest work first.
    pub async fn list_builds(&self) -> StoreResult<Vec<BuildSummary>> {
        Ok(sqlx::query_as(
            "SELECT b.slug, b.name, b.purpose,
                    (SELECT MAX(number) FROM revisions r WHERE r.build_id = b.id) AS latest_revision,
                    (SELECT MAX(started_at) FROM runs u WHERE u.build_id = b.id) AS last_run_at,
                    (SELECT COUNT(*) FROM runs u WHERE u.build_id = b.id) AS run_count
             FROM builds b
             ORDER BY COALESCE(last_run_at, b.created_at) DESC, b.name",
        )
        .fetch_all(&self.pool)
        .await?)
    }
}

impl Store {
    /// A short summary that changes whenever anything a build page shows changes: its runs
    /// (count, readings, finishes), revisions, shares and audit trail, and its own fields. Read
    /// in one indexed query, so a kept page is checked for freshness at every request.
    pub async fn build_validator(&self, build_id: BuildId) -> StoreResult<String> {
        Ok(sqlx::query_scalar(
            "SELECT
               (SELECT COUNT(*) || ':' || COALESCE(SUM(reading_count), 0) || ':'
                       || COALESCE(MAX(id), 0) || ':' || COUNT(finished_at) || ':'
                       -- an open run's page shows how long it has been running: a minute's
                       -- tick is a change
                       || CASE WHEN COUNT(*) > COUNT(finished_at) THEN unixepoch() / 60 ELSE 0 END
                  FROM runs WHERE build_id = ?1)
               || '|' || (SELECT COUNT(*) || ':' || COALESCE(MAX(id), 0)
                  FROM revisions WHERE build_id = ?1)
               || '|' || (SELECT COALESCE(MAX(id), 0) FROM audit_events WHERE build_id = ?1)
               || '|' || (SELECT COUNT(*) || ':' || COUNT(revoked_at) || ':' || COALESCE(MAX(id), 0)
                  FROM shares WHERE build_id = ?1)
               || '|' || (SELECT length(name) || ':' || length(purpose) || ':' || length(notes)
                          || ':' || name || purpose || notes
                  FROM builds WHERE id = ?1)",
        )
        .bind(build_id)
        .fetch_one(&self.pool)
        .await?)
    }
}

#[cfg(test)]
mod tests {
    use super::slug_from_name;

    #[test]
    fn slugs_are_url_safe() {
        assert_eq!(slug_from_name("Bench heater Mk II"), "bench-heater-mk-ii");
        assert_eq!(slug_from_name("  --Ünïcode!! heater  "), "n-code-heater");
        assert_eq!(slug_from_name("!!!"), "build");
        assert!(slug_from_name(&"x".repeat(200)).len() <= 48);
    }
}
