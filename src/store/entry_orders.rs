//! The order in which a revision's channels are read at the bench (the run page's entry form).

use super::{RevisionId, Store, StoreResult, UserId, now_unix_s};

impl Store {
    /// The channel names in the order the user arranged them for this revision, if they did.
    pub async fn entry_order(&self, revision_id: RevisionId) -> StoreResult<Vec<String>> {
        let json: Option<String> =
            sqlx::query_scalar("SELECT channels_json FROM entry_orders WHERE revision_id = ?")
                .bind(revision_id)
                .fetch_optional(&self.pool)
                .await?;
        Ok(json
            .and_then(|json| serde_json::from_str(&json).ok())
            .unwrap_or_default())
    }

    /// Keeps a new order for the revision's entry form.
    pub async fn save_entry_order(
        &self,
        revision_id: RevisionId,
        channels: &[String],
        changed_by: Option<UserId>,
    ) -> StoreResult<()> {
        let json = serde_json::to_string(channels)
            .map_err(|e| super::StoreError::Corrupt(e.to_string()))?;
        sqlx::query(
            "INSERT INTO entry_orders (revision_id, channels_json, changed_by, changed_at)
             VALUES (?, ?, ?, ?)
             ON CONFLICT (revision_id) DO UPDATE SET channels_json = excluded.channels_json,
                 changed_by = excluded.changed_by, changed_at = excluded.changed_at",
        )
        .bind(revision_id)
        .bind(json)
        .bind(changed_by)
        .bind(now_unix_s())
        .execute(&self.pool)
        .await?;
        Ok(())
    }
}
