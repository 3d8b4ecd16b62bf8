//! The only module that speaks SQL: one file per aggregate, all on one `Store`.

mod attachments;
mod builds;
mod digests;
mod entry_orders;
mod event_marks;
mod export;
mod inspect;
mod readings;
mod revisions;
mod runs;
mod sessions;
mod shares;
mod tokens;
mod users;
mod writer;

use std::path::Path;
use std::str::FromStr;
use std::time::Duration;

use sqlx::sqlite::{SqliteConnectOptions, SqliteJournalMode, SqlitePoolOptions, SqliteSynchronous};
use sqlx::{ConnectOptions, SqlitePool};

pub use attachments::{
    Attachment, AttachmentFiles, AttachmentId, AttachmentKind, NewAttachment, StoredFile,
};
pub use builds::{Build, BuildSummary, NewBuild};
pub use event_marks::{EventMark, MarkStored, NewEventMark};
pub use export::ImportError;
pub use inspect::TableFingerprint;
pub use readings::{NewReading, ReadingRow, ReadingsImport};
pub use revisions::{Revision, revision_number};
pub use runs::{NewRun, Outcome, Run, RunFinish};
pub use sessions::SessionUser;
pub use shares::{AuditEvent, NewShare, Share, ShareId};
pub use tokens::{ApiToken, NewToken, TokenUser};
pub use users::{Role as UserRole, User};
pub use writer::{WriteTx, WriterMetrics};

/// Errors of the store: a row that is not there, a uniqueness clash, or the database itself.
#[derive(Debug, thiserror::Error)]
pub enum StoreError {
    #[error("not found")]
    NotFound,
    #[error("{0}")]
    Conflict(String),
    #[error(transparent)]
    Database(#[from] sqlx::Error),
    #[error("stored data is malformed: {0}")]
    Corrupt(String),
    /// The transaction holding a write could not be committed; nothing of it was kept.
    #[error("the write was not saved: {0}")]
    Commit(String),
}

pub type StoreResult<T> = Result<T, StoreError>;

macro_rules! id_type {
    ($name:ident) => {
        #[derive(
            Debug,
            Clone,
            Copy,
            PartialEq,
            Eq,
            Hash,
            PartialOrd,
            Ord,
            sqlx::Type,
            serde::Serialize,
            serde::Deserialize,
        )]
        #[sqlx(transparent)]
        #[serde(transparent)]
        pub struct $name(pub i64);

        impl std::fmt::Display for $name {
            fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
                self.0.fmt(f)
            }
        }
    };
}
id_type!(UserId);
id_type!(BuildId);
id_type!(RevisionId);
id_type!(RunId);
id_type!(ReadingId);
id_type!(TokenId);

/// The logbook database: a pool of read-only connections for reads, and the one writer.
#[derive(Clone, Debug)]
pub struct Store {
    pool: SqlitePool,
    writer: writer::Writer,
}

/// The database file inside a data directory.
pub const DATABASE_FILE: &str = "eddybench.db";

/// Read connections: reads run side by side in WAL mode, never waiting for the writer.
const READ_CONNECTIONS: u32 = 8;

impl Store {
    /// Opens (creating when missing) the logbook in `data_dir`, runs the embedded migrations on
    /// the writer's connection, and starts the writer.
    pub async fn open(data_dir: &Path) -> anyhow::Result<Store> {
        std::fs::create_dir_all(data_dir)?;
        let path = data_dir.join(DATABASE_FILE);
        let base = SqliteConnectOptions::from_str(&format!("sqlite://{}", path.display()))?
            .foreign_keys(true)
            // Readers wait here only while a checkpoint restarts the WAL; the writer never
            // meets a busy lock, being the only writer.
            .busy_timeout(Duration::from_secs(5));
        let write_options = base
            .clone()
            .create_if_missing(true)
            .journal_mode(SqliteJournalMode::Wal)
            // A logged measurement must survive a power cut at the bench.
            .synchronous(SqliteSynchronous::Full);
        let mut conn = write_options.connect().await?;
        sqlx::migrate!("./migrations").run(&mut conn).await?;
        readings::forget_unpublished_imports(&mut conn).await?;
        let pool = SqlitePoolOptions::new()
            .max_connections(READ_CONNECTIONS)
            .connect_with(base.read_only(true))
            .await?;
        let writer = writer::Writer::start(conn, write_options);
        Ok(Store { pool, writer })
    }

    /// Whether the database answers (for `/healthz`).
    pub async fn ping(&self) -> StoreResult<()> {
        sqlx::query("SELECT 1").execute(&self.pool).await?;
        Ok(())
    }

    /// A write on the writer's connection: see [`WriteTx`]. It shares a transaction with the
    /// writes queued beside it, and `commit` answers once that transaction is durable.
    pub(crate) async fn begin_write(&self) -> StoreResult<WriteTx> {
        self.writer.begin().await
    }

    /// What the writer has done since start (queue depth, batch sizes, commit times).
    pub fn writer_metrics(&self) -> WriterMetrics {
        self.writer.metrics()
    }
}

/// Seconds since the Unix epoch, the time format of every table.
pub fn now_unix_s() -> i64 {
    time::OffsetDateTime::now_utc().unix_timestamp()
}

/// Turns SQLite's unique-constraint failure into a conflict with a message a person can act on.
fn conflict_on_unique(error: sqlx::Error, message: &str) -> StoreError {
    match &error {
        sqlx::Error::Database(db) if db.is_unique_violation() => {
            StoreError::Conflict(message.to_string())
        }
        _ => StoreError::Database(error),
    }
}

impl Store {
    /// Rows in a table, for tests that check that nothing was saved. Only the logbook's own
    /// table names are accepted.
    pub async fn count_rows(&self, table: &str) -> StoreResult<i64> {
        const TABLES: [&str; 16] = [
            "users",
            "sessions",
            "builds",
            "revisions",
            "parts",
            "runs",
            "readings",
            "login_failures",
            "run_digests",
            "shares",
            "audit_events",
            "api_tokens",
            "attachments",
            "reading_imports",
            "staged_readings",
            "event_marks",
        ];
        if !TABLES.contains(&table) {
            return Err(StoreError::NotFound);
        }
        let sql = format!("SELECT COUNT(*) FROM {table}");
        Ok(sqlx::query_scalar(sqlx::AssertSqlSafe(sql))
            .fetch_one(&self.pool)
            .await?)
    }
}

/// The connection settings in force, as SQLite reports them.
#[derive(Debug, sqlx::FromRow)]
pub struct Pragmas {
    pub journal_mode: String,
    pub synchronous: i64,
    pub foreign_keys: i64,
    pub busy_timeout_ms: i64,
}

impl Store {
    /// The settings of the writer's connection (the one whose durability counts); the write it
    /// borrows for this changes nothing and is discarded.
    pub async fn pragmas(&self) -> StoreResult<Pragmas> {
        let mut tx = self.begin_write().await?;
        Ok(sqlx::query_as(
            "SELECT (SELECT journal_mode FROM pragma_journal_mode) AS journal_mode,
                    (SELECT synchronous FROM pragma_synchronous) AS synchronous,
                    (SELECT foreign_keys FROM pragma_foreign_keys) AS foreign_keys,
                    (SELECT timeout FROM pragma_busy_timeout) AS busy_timeout_ms",
        )
        .fetch_one(&mut *tx)
        .await?)
    }
}
