//! `token`: API tokens for scripts.

use anyhow::{Context, bail};

use eddybench::store::{Store, StoreError, TokenId};

use super::TokenCommand;

pub async fn token_command(store: &Store, command: TokenCommand) -> anyhow::Result<()> {
    match command {
        TokenCommand::Add { user, label } => {
            let owner = store
                .user_by_name(user.trim())
                .await?
                .with_context(|| format!("no user named {user}"))?;
            let label = label.trim();
            if label.chars().count() > 120 {
                bail!("keep the label under 120 characters");
            }
            let new = store.create_token(owner.id, label).await?;
            println!(
                "Token {} for {} ({}).",
                new.id,
                owner.name,
                owner.role.as_str()
            );
            // Printed once; only its hash is stored.
            println!("Token: {}", new.token);
            println!("Send it as `Authorization: Bearer <token>`.");
            Ok(())
        }
        TokenCommand::Revoke { id } => {
            match store.revoke_token(TokenId(id)).await {
                Ok(()) => println!("Revoked token {id}."),
                Err(StoreError::NotFound) => bail!("no token {id}"),
                Err(error) => return Err(error.into()),
            }
            Ok(())
        }
        TokenCommand::List => {
            let when = |t: Option<i64>| t.map_or_else(|| "-".to_string(), date_time);
            println!(
                "{:>4}  {:<16} {:<24} {:<20} {:<20} REVOKED",
                "ID", "USER", "LABEL", "CREATED", "LAST USED"
            );
            for token in store.list_tokens().await? {
                println!(
                    "{:>4}  {:<16} {:<24} {:<20} {:<20} {}",
                    token.id,
                    token.user_name,
                    token.label,
                    date_time(token.created_at),
                    when(token.last_used_at),
                    when(token.revoked_at)
                );
            }
            Ok(())
        }
    }
}

/// `2026-12-01 17:40 UTC`, as the pages show times.
fn date_time(unix_s: i64) -> String {
    let format = time::macros::format_description!("[year]-[month]-[day] [hour]:[minute] UTC");
    time::OffsetDateTime::from_unix_timestamp(unix_s)
        .ok()
        .and_then(|t| t.format(&format).ok())
        .unwrap_or_default()
}
