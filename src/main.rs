//! The `eddybench` command: parses the command line and dispatches (the commands are in `cli/`).

mod cli;

use clap::Parser;

#[tokio::main]
async fn main() -> anyhow::Result<()> {
    tracing_subscriber::fmt()
        .with_env_filter(
            tracing_subscriber::EnvFilter::try_from_default_env()
                .unwrap_or_else(|_| "eddybench=info,tower_http=warn".into()),
        )
        .init();
    cli::run(cli::Cli::parse()).await
}
