//! `user`: accounts from the command line.

use std::io::Read;

use anyhow::anyhow;

use eddybench::checks::accounts;
use eddybench::secrets::{generate_password, hash_password};
use eddybench::store::{Store, UserRole};

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
        UserCommand::List => {
            for user in store.list_users().await? {
                println!(
                    "{:<24} {:<8} {}",
                    user.name,
                    user.role.as_str(),
                    user.display_name
                );
            }
            Ok(())
        }
    }
}
