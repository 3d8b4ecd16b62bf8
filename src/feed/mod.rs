//! The bench-side feeder (`eddybench feed`): reads SCPI supplies and meters, serial loggers,
//! followed files and standard input, keeps every reading in a durable queue on disk, and sends
//! them in batches into an open run through the JSON API, each once, with the time it was read.
//!
//! Sources run on threads of their own (blocking I/O with timeouts, so a silent instrument
//! holds up nobody); the sender, the stop switch and the status line are tasks.

/// `--check`: each source read once.
pub mod check;
/// The TOML file and its checks.
pub mod config;
/// `lines-file`: a followed file.
pub mod lines_file;
/// `lines-serial`: a logger on a serial port.
pub mod lines_serial;
/// Line links to instruments: TCP and serial ports.
pub mod link;
/// The durable queue on disk.
pub mod queue;
/// What a source read, and the checks of a value.
pub mod reading;
/// `scpi-tcp` and `scpi-serial`: queries every `every_s`.
pub mod scpi;
/// Posts queued readings until the run is finished.
pub mod sender;
/// The server's JSON API as the feeder uses it.
pub mod server;
/// What the tasks and threads of a feed share.
pub mod state;
/// The status lines.
pub mod status;
/// `stdin`: piped lines.
pub mod stdin;
/// The opt-in stop switch of a SCPI supply.
pub mod stop_switch;

use std::path::PathBuf;
use std::sync::Arc;
use std::time::Duration;

use config::{FeedConfig, SourceKind};
use queue::Queue;
pub use sender::Ended;
use server::Server;
use state::Feed;

/// The caution the command's help and the README give, and the feeder prints when its stop
/// switch is on.
pub const STOP_SWITCH_CAUTION: &str = "The stop switch is a convenience, not a safety system: \
it needs the network, the server, fresh readings and a supply that obeys a command. Keep a hand \
on the supply's own switch, and follow your local codes and licensed practice for mains, tank \
voltage and hot metal.";

/// How long a stopping feeder goes on sending what is queued.
const DRAIN_FOR: Duration = Duration::from_secs(10);

pub struct FeedOptions {
    /// `http://host:port` of the Eddybench server.
    pub server: String,
    pub token: String,
    pub run: i64,
    pub config: FeedConfig,
    pub queue_dir: PathBuf,
}

/// Feeds the run until it is finished, the feeder is told to stop, or it cannot go on.
pub async fn feed(options: FeedOptions) -> anyhow::Result<(Ended, Arc<Feed>)> {
    let queue = Queue::open(&options.queue_dir, options.run)?;
    let server = Server::new(&options.server, &options.token)?;
    // A followed file starts where its queued readings end, or where it ends now.
    let starts: Vec<_> = (options.config.sources.iter().enumerate())
        .map(|(i, source)| match &source.access {
            config::Access::File { path } => {
                queue.file_position(i).or_else(|| lines_file::end_of(path))
            }
            _ => None,
        })
        .collect();
    let labels = options.config.sources.iter().map(|s| s.label()).collect();
    let feed = Arc::new(Feed::new(queue, labels));
    for (index, source) in options.config.sources.iter().enumerate() {
        let off = match &source.stop {
            Some(switch) => {
                let (send_off, receive_off) = std::sync::mpsc::channel();
                tokio::spawn(stop_switch::watch(
                    feed.clone(),
                    server.clone(),
                    options.run,
                    switch.clone(),
                    source.every_s,
                    send_off,
                ));
                Some(receive_off)
            }
            None => None,
        };
        let (feed, source, start) = (feed.clone(), source.clone(), starts[index]);
        std::thread::Builder::new()
            .name(format!("source {index}"))
            .spawn(move || match source.kind {
                SourceKind::ScpiTcp | SourceKind::ScpiSerial => {
                    scpi::run(&feed, index, &source, off)
                }
                SourceKind::LinesSerial => lines_serial::run(&feed, index, &source),
                SourceKind::LinesFile => lines_file::run(&feed, index, &source, start),
                SourceKind::Stdin => stdin::run(&feed, index, &source),
            })?;
    }
    let status = tokio::spawn(status::show(feed.clone(), server.base().to_string()));
    let mut sending = tokio::spawn(sender::send(feed.clone(), server, options.run));
    let ended = tokio::select! {
        ended = &mut sending => ended?,
        () = stop_asked() => {
            feed.stop();
            tokio::time::timeout(DRAIN_FOR, sending)
                .await
                .map_or(Ok(Ended::Stopped), |r| r)?
        }
    };
    feed.stop();
    let _ = status.await;
    Ok((ended, feed))
}

/// Ctrl-C or SIGTERM.
async fn stop_asked() {
    let terminate = async {
        match tokio::signal::unix::signal(tokio::signal::unix::SignalKind::terminate()) {
            Ok(mut signal) => {
                signal.recv().await;
            }
            Err(_) => std::future::pending().await,
        }
    };
    tokio::select! {
        _ = tokio::signal::ctrl_c() => {}
        () = terminate => {}
    }
}
