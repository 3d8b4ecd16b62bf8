//! The one writer: every write of the logbook goes through a single connection owned by one task,
//! which commits whatever is queued in one transaction (group commit).
//!
//! A caller asks for a [`WriteTx`]; the writer opens (or continues) a transaction, marks a
//! savepoint and lends the caller its connection. The caller runs its statements and either
//! `commit`s (the savepoint is released into the group) or drops the `WriteTx` (the savepoint is
//! rolled back; nothing of that caller's write is kept). When the queue is empty, the batch is
//! full or the batch has run long enough, the writer commits once and only then answers every
//! caller of the batch: an acknowledged write is durable (`synchronous=FULL`), and a burst of
//! small writes costs one fsync instead of one each.
//!
//! Because only this connection ever writes, no write waits on SQLite's busy handler; readers
//! use their own pool and, in WAL mode, never block the writer nor wait for it.
//!
//! A `WriteTx` must only run SQL: awaiting anything else (a request body, a file) while holding
//! it stalls every writer of the server.

use std::sync::Arc;
use std::sync::atomic::{AtomicU64, Ordering};
use std::time::{Duration, Instant};

use sqlx::sqlite::{SqliteConnectOptions, SqliteConnection};
use sqlx::{ConnectOptions, Executor};
use tokio::sync::{mpsc, oneshot};

use super::{StoreError, StoreResult};

/// Writes waiting for the writer before callers wait to queue (back-pressure).
const QUEUE_CAPACITY: usize = 4096;
/// Most writes in one transaction, so one failed commit answers a bounded number of callers.
const MAX_BATCH_WRITES: usize = 512;
/// Longest a batch collects writes before it commits, so a steady stream still gets answers.
const MAX_BATCH_TIME: Duration = Duration::from_millis(20);
/// A lent connection held longer than this is logged: someone awaits something else with it.
const SLOW_LEND: Duration = Duration::from_secs(1);

/// A request for the connection.
struct Lend {
    reply: oneshot::Sender<WriteTx>,
}

/// What comes back to the writer when a caller is done with the connection.
struct Returned {
    conn: SqliteConnection,
    keep: bool,
}

/// The answer of a group commit: `Err` carries the commit's failure as text, since one error
/// answers every caller of the batch.
type Durable = Result<(), String>;

/// A write in progress on the writer's connection. Use it as a connection (`&mut *tx`), then
/// [`WriteTx::commit`]; dropping it discards everything it did.
pub struct WriteTx {
    conn: Option<SqliteConnection>,
    back: Option<oneshot::Sender<Returned>>,
    durable: Option<oneshot::Receiver<Durable>>,
}

impl WriteTx {
    /// Keeps this write and waits until the transaction holding it is durable on disk.
    pub async fn commit(mut self) -> StoreResult<()> {
        self.give_back(true);
        let durable = self.durable.take().expect("commit runs once");
        match durable.await {
            Ok(Ok(())) => Ok(()),
            Ok(Err(message)) => Err(StoreError::Commit(message)),
            Err(_) => Err(StoreError::Commit("the writer stopped".into())),
        }
    }

    /// Keeps this write without waiting for it to be durable: for steps whose loss a later,
    /// awaited write detects (the staged chunks of an import, counted when it is published).
    pub fn keep_without_waiting(mut self) {
        self.give_back(true);
    }

    fn give_back(&mut self, keep: bool) {
        if let (Some(conn), Some(back)) = (self.conn.take(), self.back.take()) {
            // The writer always waits for its connection; if it is gone, so is the connection.
            let _ = back.send(Returned { conn, keep });
        }
    }
}

impl Drop for WriteTx {
    fn drop(&mut self) {
        self.give_back(false);
    }
}

impl std::ops::Deref for WriteTx {
    type Target = SqliteConnection;
    fn deref(&self) -> &SqliteConnection {
        self.conn
            .as_ref()
            .expect("a WriteTx holds the connection until commit")
    }
}

impl std::ops::DerefMut for WriteTx {
    fn deref_mut(&mut self) -> &mut SqliteConnection {
        self.conn
            .as_mut()
            .expect("a WriteTx holds the connection until commit")
    }
}

/// Counters of the writer, for a metrics page.
#[derive(Debug, Default)]
struct Counters {
    writes_kept: AtomicU64,
    writes_discarded: AtomicU64,
    batches: AtomicU64,
    failed_commits: AtomicU64,
    largest_batch: AtomicU64,
    commit_time_total_us: AtomicU64,
    slowest_commit_us: AtomicU64,
}

/// A snapshot of the writer's work since start.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct WriterMetrics {
    /// Writes waiting for the connection right now.
    pub queue_depth: u64,
    /// Writes committed (each acknowledged once durable).
    pub writes_kept: u64,
    /// Writes their callers dropped or that failed; rolled back to their savepoint.
    pub writes_discarded: u64,
    /// Transactions committed (or attempted): one fsync each.
    pub batches: u64,
    pub failed_commits: u64,
    /// Most writes that shared one commit.
    pub largest_batch: u64,
    /// Time spent in COMMIT, in total and the longest one (microseconds).
    pub commit_time_total_us: u64,
    pub slowest_commit_us: u64,
}

/// The handle callers hold; cloning it shares the one writer.
#[derive(Clone)]
pub(super) struct Writer {
    queue: mpsc::Sender<Lend>,
    counters: Arc<Counters>,
}

impl std::fmt::Debug for Writer {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Writer")
            .field("metrics", &self.metrics())
            .finish()
    }
}

impl Writer {
    /// Starts the writer task on `conn` (migrations already run). `options` reopens the
    /// connection should a caller lose it.
    pub(super) fn start(conn: SqliteConnection, options: SqliteConnectOptions) -> Writer {
        let (queue, requests) = mpsc::channel(QUEUE_CAPACITY);
        let counters = Arc::new(Counters::default());
        tokio::spawn(run(conn, options, requests, counters.clone()));
        Writer { queue, counters }
    }

    /// Waits for the connection, inside the writer's current transaction.
    pub(super) async fn begin(&self) -> StoreResult<WriteTx> {
        let (reply, lent) = oneshot::channel();
        self.queue
            .send(Lend { reply })
            .await
            .map_err(|_| StoreError::Commit("the writer stopped".into()))?;
        lent.await
            .map_err(|_| StoreError::Commit("the writer could not start a transaction".into()))
    }

    pub(super) fn metrics(&self) -> WriterMetrics {
        let c = &self.counters;
        WriterMetrics {
            queue_depth: (self.queue.max_capacity() - self.queue.capacity()) as u64,
            writes_kept: c.writes_kept.load(Ordering::Relaxed),
            writes_discarded: c.writes_discarded.load(Ordering::Relaxed),
            batches: c.batches.load(Ordering::Relaxed),
            failed_commits: c.failed_commits.load(Ordering::Relaxed),
            largest_batch: c.largest_batch.load(Ordering::Relaxed),
            commit_time_total_us: c.commit_time_total_us.load(Ordering::Relaxed),
            slowest_commit_us: c.slowest_commit_us.load(Ordering::Relaxed),
        }
    }
}

/// The writer's loop: one batch per turn until every handle is dropped (the queue is drained
/// first, so a clean stop answers every write it accepted).
async fn run(
    mut conn: SqliteConnection,
    options: SqliteConnectOptions,
    mut requests: mpsc::Receiver<Lend>,
    counters: Arc<Counters>,
) {
    while let Some(first) = requests.recv().await {
        if let Err(error) = conn.execute("BEGIN IMMEDIATE").await {
            tracing::error!(%error, "the writer could not begin a transaction");
            // The caller sees its request refused; the next one tries again.
            drop(first);
            continue;
        }
        let started = Instant::now();
        let mut waiting: Vec<oneshot::Sender<Durable>> = Vec::new();
        let mut broken: Option<String> = None;
        let mut next = Some(first);
        while let Some(lend) = next.take() {
            let outcome = lend_once(conn, &options, lend, &counters).await;
            conn = outcome.conn;
            if let Some(durable) = outcome.durable {
                waiting.push(durable);
            }
            if let Some(error) = outcome.broken {
                broken = Some(error);
                break;
            }
            if waiting.len() >= MAX_BATCH_WRITES || started.elapsed() >= MAX_BATCH_TIME {
                break;
            }
            next = requests.try_recv().ok();
        }
        let commit_started = Instant::now();
        let result: Durable = match broken {
            Some(error) => {
                let _ = conn.execute("ROLLBACK").await;
                Err(error)
            }
            None => conn
                .execute("COMMIT")
                .await
                .map(|_| ())
                .map_err(|e| e.to_string()),
        };
        if result.is_err() {
            // A failed COMMIT may leave the transaction open; end it so the next batch starts
            // clean (an error here only means it was already ended).
            let _ = conn.execute("ROLLBACK").await;
            counters.failed_commits.fetch_add(1, Ordering::Relaxed);
            tracing::error!(error = ?result, writes = waiting.len(), "a group commit failed");
        } else {
            counters
                .writes_kept
                .fetch_add(waiting.len() as u64, Ordering::Relaxed);
        }
        let commit_us = commit_started.elapsed().as_micros() as u64;
        counters.batches.fetch_add(1, Ordering::Relaxed);
        counters
            .largest_batch
            .fetch_max(waiting.len() as u64, Ordering::Relaxed);
        counters
            .commit_time_total_us
            .fetch_add(commit_us, Ordering::Relaxed);
        counters
            .slowest_commit_us
            .fetch_max(commit_us, Ordering::Relaxed);
        for caller in waiting {
            let _ = caller.send(result.clone());
        }
    }
}

/// The connection after one lend, the caller's durability channel when it kept its write, and
/// the error that broke the whole transaction, if one did.
struct LendOutcome {
    conn: SqliteConnection,
    durable: Option<oneshot::Sender<Durable>>,
    broken: Option<String>,
}

/// Lends the connection to one caller inside a savepoint and takes it back.
async fn lend_once(
    mut conn: SqliteConnection,
    options: &SqliteConnectOptions,
    lend: Lend,
    counters: &Counters,
) -> LendOutcome {
    if let Err(error) = conn.execute("SAVEPOINT write").await {
        return LendOutcome {
            conn,
            durable: None,
            broken: Some(error.to_string()),
        };
    }
    let (back, mut returned) = oneshot::channel();
    let (durable, durable_rx) = oneshot::channel();
    // A caller that has gone away drops the WriteTx, which sends the connection back.
    let _ = lend.reply.send(WriteTx {
        conn: Some(conn),
        back: Some(back),
        durable: Some(durable_rx),
    });
    let returned = match tokio::time::timeout(SLOW_LEND, &mut returned).await {
        Ok(returned) => returned,
        Err(_) => {
            tracing::warn!("a write has held the writer's connection for over a second");
            returned.await
        }
    };
    let Ok(Returned { mut conn, keep }) = returned else {
        // Only a leaked WriteTx loses the connection; start again on a new one.
        return LendOutcome {
            conn: reconnect(options).await,
            durable: None,
            broken: Some("the writer's connection was lost".into()),
        };
    };
    let ended = if keep {
        conn.execute("RELEASE write").await
    } else {
        counters.writes_discarded.fetch_add(1, Ordering::Relaxed);
        match conn.execute("ROLLBACK TO write").await {
            Ok(_) => conn.execute("RELEASE write").await,
            Err(error) => Err(error),
        }
    };
    match ended {
        Ok(_) => LendOutcome {
            conn,
            durable: keep.then_some(durable),
            broken: None,
        },
        // SQLite ended the whole transaction (disk full, I/O error): the batch is lost, and
        // this caller is told so with the others.
        Err(error) => LendOutcome {
            conn,
            durable: keep.then_some(durable),
            broken: Some(error.to_string()),
        },
    }
}

async fn reconnect(options: &SqliteConnectOptions) -> SqliteConnection {
    loop {
        match options.connect().await {
            Ok(conn) => return conn,
            Err(error) => {
                tracing::error!(%error, "the writer cannot reopen the database; retrying");
                tokio::time::sleep(Duration::from_secs(1)).await;
            }
        }
    }
}
