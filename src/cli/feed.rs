//! `eddybench feed`: reads the config, then feeds the run (or checks the sources once).

use std::path::PathBuf;

use anyhow::Context;

use eddybench::feed::config::read_config;
use eddybench::feed::{Ended, FeedOptions, STOP_SWITCH_CAUTION, check, feed};

/// What `eddybench feed --help` says above the options.
pub const LONG_ABOUT: &str = "Send readings from bench instruments (SCPI supplies and meters, \
serial loggers, files, standard input) into an open run. Readings wait in a queue on disk until \
the server has stored them, so an outage or a restart loses none and sends none twice.

With `stop_supply = true` on a SCPI supply, the feeder sends the supply's output-off command \
when a part reaches its limit or is predicted to within `stop_within_s`. THIS IS A CONVENIENCE, \
NOT A SAFETY SYSTEM: it needs the network, the server, fresh readings and a supply that obeys. \
Keep a hand on the supply's own switch.";

/// The options of `eddybench feed`.
#[derive(clap::Args)]
pub struct FeedArgs {
    /// The Eddybench server, e.g. http://192.0.2.5:8080
    #[arg(long, required_unless_present = "check")]
    server: Option<String>,
    /// The open run's id (the number in its address /builds/SLUG/runs/ID)
    #[arg(long, required_unless_present = "check")]
    run: Option<i64>,
    /// The TOML file with one [[source]] table per instrument
    #[arg(long)]
    config: PathBuf,
    /// A file holding an editor's API token (`eddybench token add`) [else EDDYBENCH_TOKEN]
    #[arg(long)]
    token_file: Option<PathBuf>,
    /// Where readings wait until stored [default: ./eddybench-feed/run-ID]
    #[arg(long)]
    queue: Option<PathBuf>,
    /// Connect to each source once, print what it read, and exit without sending anything
    #[arg(long)]
    check: bool,
}

pub async fn run(args: FeedArgs) -> anyhow::Result<()> {
    let config = read_config(&args.config)
        .map_err(|e| anyhow::anyhow!("{}: {e}; nothing started", args.config.display()))?;
    if args.check {
        let (report, all_good) = tokio::task::spawn_blocking(move || check::check(&config)).await?;
        print!("{report}");
        if !all_good {
            anyhow::bail!("a source did not give a reading it would send");
        }
        return Ok(());
    }
    let (Some(server), Some(run)) = (args.server, args.run) else {
        anyhow::bail!("--server and --run are needed to feed");
    };
    let token = match &args.token_file {
        Some(path) => std::fs::read_to_string(path)
            .with_context(|| format!("cannot read the token file {}", path.display()))?,
        None => std::env::var("EDDYBENCH_TOKEN")
            .context("give an API token in EDDYBENCH_TOKEN or with --token-file")?,
    };
    if config.sources.iter().any(|s| s.stop.is_some()) {
        eprintln!("{STOP_SWITCH_CAUTION}");
    }
    let queue_dir = args
        .queue
        .unwrap_or_else(|| PathBuf::from("eddybench-feed").join(format!("run-{run}")));
    let (ended, feed) = feed(FeedOptions {
        server,
        token: token.trim().to_string(),
        run,
        config,
        queue_dir: queue_dir.clone(),
    })
    .await?;
    let waiting = feed.queue.lock().map(|q| q.len()).unwrap_or(0);
    match ended {
        Ended::RunFinished(at) => {
            eprintln!("Run {run} was finished at {at}; the feeder stops.");
            if waiting > 0 {
                eprintln!(
                    "{} not stored; kept in {}.",
                    readings(waiting),
                    queue_dir.display()
                );
            }
            Ok(())
        }
        Ended::Stopped => {
            if waiting > 0 {
                eprintln!(
                    "Stopped. {} wait in {} and are sent when the feeder is started again for run {run}.",
                    readings(waiting),
                    queue_dir.display()
                );
            } else {
                eprintln!("Stopped; everything read was stored.");
            }
            Ok(())
        }
        Ended::Failed(why) => anyhow::bail!("{why}"),
    }
}

fn readings(count: usize) -> String {
    match count {
        1 => "1 reading".into(),
        n => format!("{n} readings"),
    }
}
