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

use std::path::Path;
use std::str::FromStr;
use std::time::Duration;

use sqlx::sqlite::{SqliteConnectOptions, SqliteJournalMode, SqlitePoolOptions, SqliteSynchronous};
use sqlx::{Sqlite, SqlitePool, Transaction};

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

/// The logbook database.
#[derive(Clone, Debug)]
pub struct Store {
    pool: SqlitePool,
}

/// The database file inside a data directory.
pub const DATABASE_FILE: &str = "eddybench.db";

impl Store {
    /// Opens (creating when missing) the logbook in `data_dir` and runs the embedded migrations.
    pub async fn open(data_dir: &Path) -> anyhow::Result<Store> {
        std::fs::create_dir_all(data_dir)?;
        let path = data_dir.join(DATABASE_FILE);
        let options = SqliteConnectOptions::from_str(&format!("sqlite://{}", path.display()))?
            .create_if_missing(true)
            .journal_mode(SqliteJournalMode::Wal)
            // A logged measurement must survive a power cut at the bench.
            .synchronous(SqliteSynchronous::Full)
            .foreign_keys(true)
            .busy_timeout(Duration::from_secs(5));
        let pool = SqlitePoolOptions::new()
            .max_connections(8)
            .connect_with(options)
            .await?;
        sqlx::migrate!("./migrations").run(&pool).await?;
        Ok(Store { pool })
    }

    /// Whether the database answers (for `/healthz`).
    pub async fn ping(&self) -> StoreResult<()> {
        sqlx::query("SELECT 1").execute(&self.pool).await?;
        Ok(())
    }

    /// A write transaction that takes the write lock up front, so a read-then-write cannot be
    /// overtaken by another writer between its read and its write.
    async fn begin_write(&self) -> StoreResult<Transaction<'static, Sqlite>> {
        Ok(self.pool.begin_with("BEGIN IMMEDIATE").await?)
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
        const TABLES: [&str; 14] = [
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
    pub async fn pragmas(&self) -> StoreResult<Pragmas> {
        Ok(sqlx::query_as(
            "SELECT (SELECT journal_mode FROM pragma_journal_mode) AS journal_mode,
                    (SELECT synchronous FROM pragma_synchronous) AS synchronous,
                    (SELECT foreign_keys FROM pragma_foreign_keys) AS foreign_keys,
                    (SELECT timeout FROM pragma_busy_timeout) AS busy_timeout_ms",
        )
        .fetch_one(&self.pool)
        .await?)
    }
}
