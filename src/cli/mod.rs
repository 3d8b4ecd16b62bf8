//! The command line: the argument definitions, and one file per command. Each command calls the
//! same checks and store functions as the pages and the API.

mod export;
mod feed;
mod import;
mod model;
mod serve;
mod token;
mod user;

use std::io::Read;
use std::net::SocketAddr;
use std::path::{Path, PathBuf};

use anyhow::Context;
use clap::{Parser, Subcommand, ValueEnum};

use eddybench::config::DEFAULT_DATA_DIR;
use eddybench::store::{Store, UserRole};

/// Eddybench: a build logbook and test-results tracker for self-oscillating induction heaters.
#[derive(Parser)]
#[command(version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(clap::Args, Clone)]
pub struct DataDir {
    /// Directory holding the database and attachments [default: ./eddybench-data]
    #[arg(long, env = "EDDYBENCH_DATA", global = true)]
    pub data_dir: Option<PathBuf>,
}

impl DataDir {
    pub fn path(&self) -> PathBuf {
        self.data_dir
            .clone()
            .unwrap_or_else(|| PathBuf::from(DEFAULT_DATA_DIR))
    }
}

#[derive(clap::Args)]
pub struct ServeArgs {
    /// Address to listen on
    #[arg(long, default_value = "127.0.0.1:8080")]
    pub listen: SocketAddr,
    /// Mark cookies Secure and send HSTS (set this when users reach the server over https)
    #[arg(long, env = "EDDYBENCH_SECURE_COOKIES")]
    pub secure_cookies: bool,
    /// The origin users reach the server at, e.g. https://heater.example.org (behind a proxy)
    #[arg(long, env = "EDDYBENCH_PUBLIC_ORIGIN")]
    pub public_origin: Option<String>,
    /// Believe a reverse proxy's X-Forwarded-Proto and X-Forwarded-Host (only behind one)
    #[arg(long, env = "EDDYBENCH_TRUST_FORWARDED")]
    pub trust_forwarded: bool,
}

#[derive(Subcommand)]
pub enum Command {
    /// Serve the logbook in the data directory
    Serve {
        #[command(flatten)]
        serve: ServeArgs,
        #[command(flatten)]
        data: DataDir,
    },
    /// Serve a throwaway instance seeded with the demo builds (a temporary data directory
    /// unless --data-dir is given) and print its address and a demo login
    Demo {
        #[command(flatten)]
        serve: ServeArgs,
        #[command(flatten)]
        data: DataDir,
    },
    /// Evaluate the driver model for a JSON file of `{"parts": ..., "operating_point": ...}`
    /// (`-` reads standard input) and print the same JSON answer as POST /api/v1/model
    Model {
        /// The request file, or `-` for standard input
        file: PathBuf,
        /// Print an aligned table with units instead of JSON
        #[arg(long)]
        table: bool,
    },
    /// Write a build as one JSON file (standard output unless --out), or as a directory of CSV
    /// tables for a spreadsheet
    Export {
        /// The build's slug, as in its address /builds/SLUG
        slug: String,
        #[arg(long, value_enum, default_value = "json")]
        format: ExportFormat,
        /// The file to write (json), or the directory to write the tables into (csv)
        /// [default for csv: ./SLUG-csv]
        #[arg(long)]
        out: Option<PathBuf>,
        #[command(flatten)]
        data: DataDir,
    },
    /// Recreate a build from an export JSON file (`-` reads standard input) and print its slug,
    /// which is SLUG-2, SLUG-3, ... when the exported slug is taken here
    Import {
        /// The export file, or `-` for standard input
        file: PathBuf,
        #[command(flatten)]
        data: DataDir,
    },
    /// Manage accounts
    User {
        #[command(subcommand)]
        command: UserCommand,
        #[command(flatten)]
        data: DataDir,
    },
    /// Send readings from bench instruments into an open run (see `feed --help`)
    #[command(long_about = feed::LONG_ABOUT)]
    Feed(feed::FeedArgs),
    /// Manage API tokens for scripts (a token acts with its user's role)
    Token {
        #[command(subcommand)]
        command: TokenCommand,
        #[command(flatten)]
        data: DataDir,
    },
}

#[derive(Clone, Copy, ValueEnum)]
pub enum RoleArg {
    Admin,
    Editor,
    Viewer,
}

impl From<RoleArg> for UserRole {
    fn from(role: RoleArg) -> UserRole {
        match role {
            RoleArg::Admin => UserRole::Admin,
            RoleArg::Editor => UserRole::Editor,
            RoleArg::Viewer => UserRole::Viewer,
        }
    }
}

#[derive(Clone, Copy, ValueEnum)]
pub enum ExportFormat {
    Json,
    Csv,
}

#[derive(Subcommand)]
pub enum UserCommand {
    /// Add an account; prints a generated password unless --password-stdin is given
    Add {
        /// Sign-in name
        name: String,
        /// What the account may do: a viewer reads, an editor also writes, an admin also
        /// manages users
        #[arg(long, value_enum)]
        role: RoleArg,
        /// Read the password from standard input instead of generating one
        #[arg(long)]
        password_stdin: bool,
        /// Name shown on pages [default: the sign-in name]
        #[arg(long)]
        display_name: Option<String>,
    },
    /// List accounts
    List,
    /// Stop an account: it cannot sign in, and its sessions and API tokens stop at once
    Disable {
        /// Sign-in name
        name: String,
    },
    /// Let a disabled account sign in again (its revoked tokens stay revoked)
    Enable {
        /// Sign-in name
        name: String,
    },
    /// Change what an account may do (in force from its next request)
    Role {
        /// Sign-in name
        name: String,
        #[arg(value_enum)]
        role: RoleArg,
    },
}

#[derive(Subcommand)]
pub enum TokenCommand {
    /// Make a token for a user; prints it once (only its hash is stored)
    Add {
        /// Sign-in name of the user the token acts for
        user: String,
        /// What the token is for, to tell tokens apart in `token list`
        #[arg(long, default_value = "")]
        label: String,
    },
    /// Stop a token working, by the id `token add` and `token list` print
    Revoke { id: i64 },
    /// List tokens: id, user, label, created, last used, revoked
    List,
}

/// Runs one parsed command.
pub async fn run(cli: Cli) -> anyhow::Result<()> {
    match cli.command {
        Command::Serve { serve, data } => {
            let store = Store::open(&data.path()).await?;
            serve::run_server(
                store,
                serve::config_for(&serve, data.path()),
                serve.listen,
                None,
            )
            .await
        }
        Command::Demo { serve, data } => {
            // Keep the temporary directory alive for as long as the server runs.
            let (path, _temporary) = match data.data_dir {
                Some(path) => (path, None),
                None => {
                    let dir = tempfile::Builder::new()
                        .prefix("eddybench-demo-")
                        .tempdir()?;
                    (dir.path().to_path_buf(), Some(dir))
                }
            };
            let store = Store::open(&path).await?;
            let login = eddybench::demo::seed(&store).await?;
            let banner = format!(
                "Demo data in {}\nSign in as `{}` with password `{}` (editor), or `{}` / `{}` (viewer).",
                path.display(),
                login.editor_name,
                login.editor_password,
                login.viewer_name,
                login.viewer_password
            );
            serve::run_server(
                store,
                serve::config_for(&serve, path),
                serve.listen,
                Some(banner),
            )
            .await
        }
        Command::Model { file, table } => model::model_command(&file, table),
        Command::Export {
            slug,
            format,
            out,
            data,
        } => {
            let store = Store::open(&data.path()).await?;
            export::export_command(&store, &slug, format, out).await
        }
        Command::Import { file, data } => {
            let store = Store::open(&data.path()).await?;
            import::import_command(&store, &file).await
        }
        Command::User { command, data } => {
            let store = Store::open(&data.path()).await?;
            user::user_command(&store, command).await
        }
        Command::Feed(args) => feed::run(args).await,
        Command::Token { command, data } => {
            let store = Store::open(&data.path()).await?;
            token::token_command(&store, command).await
        }
    }
}

/// The text of a file, or of standard input for `-`.
fn read_input(file: &Path) -> anyhow::Result<String> {
    if file.as_os_str() == "-" {
        let mut text = String::new();
        std::io::stdin().read_to_string(&mut text)?;
        Ok(text)
    } else {
        std::fs::read_to_string(file).with_context(|| format!("cannot read {}", file.display()))
    }
}
