//! `user`: accounts from the command line.

use std::io::Read;

use anyhow::anyhow;

use eddybench::checks::accounts;
use eddybench::secrets::{generate_password, hash_password};
use eddybench::store::{Store, StoreError, UserRole};

use super::UserCommand;

pub async fn user_command(store: &Store, command: UserCommand) -> anyhow::Result<()> {
    match command {
        UserCommand::Add {
            name,
            role,
            password_stdin,
            display_name,
        } => {
            let name = accounts::user_name(&name).map_err(|m| anyhow!("user name: {m}"))?;
            let (password, generated) = if password_stdin {
                let mut text = String::new();
                std::io::stdin().read_to_string(&mut text)?;
                let text = text.trim_end_matches(['\n', '\r']).to_string();
                accounts::new_password(&text).map_err(|m| anyhow!("password: {m}"))?;
                (text, false)
            } else {
                (generate_password(), true)
            };
            let to_hash = password.clone();
            let hash = tokio::task::spawn_blocking(move || hash_password(&to_hash)).await?;
            let display = accounts::display_name(display_name.as_deref().unwrap_or(""), &name);
            let role = UserRole::from(role);
            store.create_user(&name, &display, role, &hash).await?;
            println!("Added {name} ({}).", role.as_str());
            if generated {
                // Printed once; only its hash is stored.
                println!("Password: {password}");
            }
            Ok(())
        }
        UserCommand::Disable { name } => {
            refused_if_missing(
                store.set_user_disabled(name.trim(), true, None).await,
                &name,
            )?;
            println!("Disabled {name}: its sessions ended and its tokens stopped.");
            Ok(())
        }
        UserCommand::Enable { name } => {
            refused_if_missing(
                store.set_user_disabled(name.trim(), false, None).await,
                &name,
            )?;
            println!("Enabled {name}.");
            Ok(())
        }
        UserCommand::Role { name, role } => {
            let role = UserRole::from(role);
            refused_if_missing(store.set_user_role(name.trim(), role, None).await, &name)?;
            println!("{name} is now {}.", role.as_str());
            Ok(())
        }
        UserCommand::List => {
            for user in store.list_users().await? {
                let state = if user.disabled_at.is_some() {
                    "disabled"
                } else {
                    ""
                };
                println!(
                    "{:<24} {:<8} {:<9} {}",
                    user.name,
                    user.role.as_str(),
                    state,
                    user.display_name
                );
            }
            Ok(())
        }
    }
}

/// A store answer as the command line says it: a missing account by name, a refusal as is.
fn refused_if_missing(result: Result<(), StoreError>, name: &str) -> anyhow::Result<()> {
    match result {
        Ok(()) => Ok(()),
        Err(StoreError::NotFound) => Err(anyhow!("no user named {name}")),
        Err(StoreError::Conflict(message)) => Err(anyhow!("{message}")),
        Err(other) => Err(other.into()),
    }
}
