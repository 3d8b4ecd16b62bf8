//! The `eddybench` command: parses the command line and dispatches.

use std::io::Read;
use std::net::SocketAddr;
use std::path::PathBuf;
use std::sync::Arc;

use anyhow::{Context, bail};
use clap::{Parser, Subcommand, ValueEnum};

use eddybench::config::{Config, DEFAULT_DATA_DIR};
use eddybench::secrets::{generate_password, hash_password};
use eddybench::store::{Store, StoreError, TokenId, UserRole};
use eddybench::{AppState, app};

mod cli;

/// Eddybench: a build logbook and test-results tracker for self-oscillating induction heaters.
#[derive(Parser)]
#[command(version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(clap::Args, Clone)]
struct DataDir {
    /// Directory holding the database and attachments [default: ./eddybench-data]
    #[arg(long, env = "EDDYBENCH_DATA", global = true)]
    data_dir: Option<PathBuf>,
}

impl DataDir {
    fn path(&self) -> PathBuf {
        self.data_dir
            .clone()
            .unwrap_or_else(|| PathBuf::from(DEFAULT_DATA_DIR))
    }
}

#[derive(clap::Args)]
struct ServeArgs {
    /// Address to listen on
    #[arg(long, default_value = "127.0.0.1:8080")]
    listen: SocketAddr,
    /// Mark cookies Secure and send HSTS (set this when users reach the server over https)
    #[arg(long, env = "EDDYBENCH_SECURE_COOKIES")]
    secure_cookies: bool,
    /// The origin users reach the server at, e.g. https://heater.example.org (behind a proxy)
    #[arg(long, env = "EDDYBENCH_PUBLIC_ORIGIN")]
    public_origin: Option<String>,
    /// Believe a reverse proxy's X-Forwarded-Proto and X-Forwarded-Host (only behind one)
    #[arg(long, env = "EDDYBENCH_TRUST_FORWARDED")]
    trust_forwarded: bool,
}

#[derive(Subcommand)]
enum Command {
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
    #[command(long_about = cli::feed::LONG_ABOUT)]
    Feed(cli::feed::FeedArgs),
    /// Manage API tokens for scripts (a token acts with its user's role)
    Token {
        #[command(subcommand)]
        command: TokenCommand,
        #[command(flatten)]
        data: DataDir,
    },
}

#[derive(Clone, Copy, ValueEnum)]
enum RoleArg {
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
enum ExportFormat {
    Json,
    Csv,
}

#[derive(Subcommand)]
enum UserCommand {
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
}

#[derive(Subcommand)]
enum TokenCommand {
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

#[tokio::main]
async fn main() -> anyhow::Result<()> {
    tracing_subscriber::fmt()
        .with_env_filter(
            tracing_subscriber::EnvFilter::try_from_default_env()
                .unwrap_or_else(|_| "eddybench=info,tower_http=warn".into()),
        )
        .init();
    match Cli::parse().command {
        Command::Serve { serve, data } => {
            let store = Store::open(&data.path()).await?;
            run_server(store, config_for(&serve, data.path()), serve.listen, None).await
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
            run_server(store, config_for(&serve, path), serve.listen, Some(banner)).await
        }
        Command::Model { file, table } => model_command(&file, table),
        Command::Export {
            slug,
            format,
            out,
            data,
        } => {
            let store = Store::open(&data.path()).await?;
            export_command(&store, &slug, format, out).await
        }
        Command::Import { file, data } => {
            let store = Store::open(&data.path()).await?;
            import_command(&store, &file).await
        }
        Command::User { command, data } => {
            let store = Store::open(&data.path()).await?;
            user_command(&store, command).await
        }
        Command::Feed(args) => cli::feed::run(args).await,
        Command::Token { command, data } => {
            let store = Store::open(&data.path()).await?;
            token_command(&store, command).await
        }
    }
}

fn config_for(serve: &ServeArgs, data_dir: PathBuf) -> Config {
    let mut config = Config::new(data_dir);
    config.secure_cookies = serve.secure_cookies
        || serve
            .public_origin
            .as_deref()
            .is_some_and(|o| o.starts_with("https://"));
    config.public_origin = serve.public_origin.clone();
    config.trust_forwarded = serve.trust_forwarded;
    config
}

async fn run_server(
    store: Store,
    config: Config,
    listen: SocketAddr,
    banner: Option<String>,
) -> anyhow::Result<()> {
    let listener = tokio::net::TcpListener::bind(listen)
        .await
        .with_context(|| format!("cannot listen on {listen}"))?;
    let address = listener.local_addr()?;
    let router = app(AppState {
        store,
        config: Arc::new(config),
    });
    println!("Eddybench is serving at http://{address}/");
    if let Some(banner) = banner {
        println!("{banner}");
    }
    // axum::serve leaves Nagle's algorithm on; small responses then wait for ACKs.
    let listener = axum::serve::ListenerExt::tap_io(listener, |tcp| {
        let _ = tcp.set_nodelay(true);
    });
    axum::serve(listener, router)
        .with_graceful_shutdown(async {
            let _ = tokio::signal::ctrl_c().await;
        })
        .await?;
    Ok(())
}

async fn user_command(store: &Store, command: UserCommand) -> anyhow::Result<()> {
    match command {
        UserCommand::Add {
            name,
            role,
            password_stdin,
            display_name,
        } => {
            let name = name.trim().to_string();
            if name.is_empty() || name.len() > 64 || name.chars().any(char::is_whitespace) {
                bail!("a user name is 1 to 64 characters without spaces");
            }
            let (password, generated) = if password_stdin {
                let mut text = String::new();
                std::io::stdin().read_to_string(&mut text)?;
                let text = text.trim_end_matches(['\n', '\r']).to_string();
                if text.chars().count() < 12 {
                    bail!("use a password of at least 12 characters");
                }
                (text, false)
            } else {
                (generate_password(), true)
            };
            let to_hash = password.clone();
            let hash = tokio::task::spawn_blocking(move || hash_password(&to_hash)).await?;
            let display = display_name.unwrap_or_else(|| name.clone());
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

async fn export_command(
    store: &Store,
    slug: &str,
    format: ExportFormat,
    out: Option<PathBuf>,
) -> anyhow::Result<()> {
    use eddybench::export::tables::{Table, write_table};
    let mut document = match store.export_build(slug).await {
        Err(eddybench::store::StoreError::NotFound) => bail!("there is no build `{slug}`"),
        other => other?,
    };
    document.add_analyses();
    match (format, out) {
        (ExportFormat::Json, None) => println!("{}", document.to_json()),
        (ExportFormat::Json, Some(path)) => std::fs::write(&path, document.to_json() + "\n")
            .with_context(|| format!("cannot write {}", path.display()))?,
        (ExportFormat::Csv, out) => {
            let dir = out.unwrap_or_else(|| PathBuf::from(format!("{slug}-csv")));
            std::fs::create_dir_all(&dir)
                .with_context(|| format!("cannot create {}", dir.display()))?;
            for table in Table::ALL {
                let path = dir.join(table.file_name());
                std::fs::write(&path, write_table(&document, table))
                    .with_context(|| format!("cannot write {}", path.display()))?;
            }
            eprintln!("Wrote {} tables to {}", Table::ALL.len(), dir.display());
        }
    }
    Ok(())
}

async fn import_command(store: &Store, file: &std::path::Path) -> anyhow::Result<()> {
    let text = if file.as_os_str() == "-" {
        let mut text = String::new();
        std::io::stdin().read_to_string(&mut text)?;
        text
    } else {
        std::fs::read_to_string(file).with_context(|| format!("cannot read {}", file.display()))?
    };
    let document = eddybench::export::parse_document(&text)
        .with_context(|| format!("nothing imported from {}", file.display()))?;
    let slug = store
        .import_build(&document)
        .await
        .with_context(|| format!("nothing imported from {}", file.display()))?;
    if slug != document.build.slug {
        eprintln!(
            "The slug `{}` is taken here; imported as `{slug}`.",
            document.build.slug
        );
    }
    println!("{slug}");
    Ok(())
}

fn model_command(file: &std::path::Path, table: bool) -> anyhow::Result<()> {
    use eddybench::analysis::model_table::{MODEL_CAVEATS, quantity_rows};
    use eddybench::web::api::model::{ModelRequest, evaluate_request};
    let text = if file.as_os_str() == "-" {
        let mut text = String::new();
        std::io::stdin().read_to_string(&mut text)?;
        text
    } else {
        std::fs::read_to_string(file).with_context(|| format!("cannot read {}", file.display()))?
    };
    let request: ModelRequest =
        serde_json::from_str(&text).context("the request is not valid JSON for the model")?;
    let report = match evaluate_request(&request) {
        Ok(report) => report,
        Err(eddybench::web::AppError::Invalid { field, message }) => bail!("{field}: {message}"),
        Err(other) => bail!("{other}"),
    };
    if !table {
        let mut answer = serde_json::to_value(&report)?;
        answer["caveats"] = serde_json::json!(MODEL_CAVEATS);
        println!("{}", serde_json::to_string_pretty(&answer)?);
        return Ok(());
    }
    let rows = quantity_rows(&report);
    let width = rows
        .iter()
        .map(|r| r.title.chars().count())
        .max()
        .unwrap_or(0);
    for row in &rows {
        let pad = width - row.title.chars().count();
        println!("{}{}  {}", row.title, " ".repeat(pad), row.display());
    }
    if report.switch_thermal_runaway {
        println!("\nSwitch thermal runaway: no steady junction temperature below its limit.");
    }
    println!();
    if report.flags.is_empty() {
        println!("No flags.");
    }
    for flag in &report.flags {
        let severity = serde_json::to_value(flag.severity)?;
        println!(
            "{:<8} {:<20} {}",
            severity.as_str().unwrap_or(""),
            flag.code,
            flag.message
        );
    }
    println!();
    for caveat in MODEL_CAVEATS {
        println!("Note: {caveat}");
    }
    Ok(())
}

async fn token_command(store: &Store, command: TokenCommand) -> anyhow::Result<()> {
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
