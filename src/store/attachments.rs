//! Attachments: pictures of a run. The rows are here; the bytes are files in the data directory
//! named by their SHA-256, so a path is built from a hash and never from anything a client sent.

use std::io::{self, Write};
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};

use super::{RunId, Store, StoreError, StoreResult, UserId, now_unix_s};

#[derive(
    Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, sqlx::Type, Serialize, Deserialize,
)]
#[sqlx(transparent)]
#[serde(transparent)]
pub struct AttachmentId(pub i64);

impl std::fmt::Display for AttachmentId {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        self.0.fmt(f)
    }
}

/// What a picture shows.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum AttachmentKind {
    Setup,
    Scope,
    Thermal,
    Other,
}

impl AttachmentKind {
    pub const ALL: [AttachmentKind; 4] = [
        AttachmentKind::Setup,
        AttachmentKind::Scope,
        AttachmentKind::Thermal,
        AttachmentKind::Other,
    ];

    pub fn as_str(self) -> &'static str {
        match self {
            AttachmentKind::Setup => "setup",
            AttachmentKind::Scope => "scope",
            AttachmentKind::Thermal => "thermal",
            AttachmentKind::Other => "other",
        }
    }

    pub fn parse(text: &str) -> Option<AttachmentKind> {
        Self::ALL.into_iter().find(|k| k.as_str() == text)
    }

    pub fn title(self) -> &'static str {
        match self {
            AttachmentKind::Setup => "Set-up",
            AttachmentKind::Scope => "Scope capture",
            AttachmentKind::Thermal => "Thermal image",
            AttachmentKind::Other => "Other",
        }
    }
}

#[derive(Debug, Clone, Serialize, sqlx::FromRow)]
pub struct Attachment {
    pub id: AttachmentId,
    pub run_id: RunId,
    pub sha256: String,
    pub media_type: String,
    pub byte_size: i64,
    pub width_px: Option<i64>,
    pub height_px: Option<i64>,
    pub original_name: String,
    pub caption: String,
    pub kind: String,
    pub uploaded_by: Option<UserId>,
    /// The uploader's display name, while the account exists.
    pub uploader: Option<String>,
    pub uploaded_at: i64,
}

pub struct NewAttachment<'a> {
    pub run_id: RunId,
    pub sha256: &'a str,
    pub media_type: &'a str,
    pub byte_size: i64,
    pub width_px: Option<i64>,
    pub height_px: Option<i64>,
    pub original_name: &'a str,
    pub caption: &'a str,
    pub kind: AttachmentKind,
    pub uploaded_by: Option<UserId>,
}

const ATTACHMENT_SELECT: &str = "SELECT a.id, a.run_id, a.sha256, a.media_type, a.byte_size,
        a.width_px, a.height_px, a.original_name, a.caption, a.kind, a.uploaded_by,
        u.display_name AS uploader, a.uploaded_at
     FROM attachments a LEFT JOIN users u ON u.id = a.uploaded_by";

impl Store {
    /// Records a picture whose file is already stored; the run must exist.
    pub async fn add_attachment(&self, new: &NewAttachment<'_>) -> StoreResult<AttachmentId> {
        let mut tx = self.begin_write().await?;
        let run: Option<i64> = sqlx::query_scalar("SELECT 1 FROM runs WHERE id = ?")
            .bind(new.run_id)
            .fetch_optional(&mut *tx)
            .await?;
        if run.is_none() {
            return Err(StoreError::NotFound);
        }
        let id = sqlx::query_scalar(
            "INSERT INTO attachments (run_id, sha256, media_type, byte_size, width_px, height_px,
                original_name, caption, kind, uploaded_by, uploaded_at)
             VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?) RETURNING id",
        )
        .bind(new.run_id)
        .bind(new.sha256)
        .bind(new.media_type)
        .bind(new.byte_size)
        .bind(new.width_px)
        .bind(new.height_px)
        .bind(new.original_name)
        .bind(new.caption)
        .bind(new.kind.as_str())
        .bind(new.uploaded_by)
        .bind(now_unix_s())
        .fetch_one(&mut *tx)
        .await?;
        tx.commit().await?;
        Ok(id)
    }

    /// The pictures of a run, in the order they were attached.
    pub async fn attachments_of_run(&self, run_id: RunId) -> StoreResult<Vec<Attachment>> {
        Ok(sqlx::query_as(sqlx::AssertSqlSafe(format!(
            "{ATTACHMENT_SELECT} WHERE a.run_id = ? ORDER BY a.id"
        )))
        .bind(run_id)
        .fetch_all(&self.pool)
        .await?)
    }

    /// One picture of a run; a picture of another run is not found.
    pub async fn attachment_of_run(
        &self,
        run_id: RunId,
        id: AttachmentId,
    ) -> StoreResult<Attachment> {
        sqlx::query_as(sqlx::AssertSqlSafe(format!(
            "{ATTACHMENT_SELECT} WHERE a.id = ? AND a.run_id = ?"
        )))
        .bind(id)
        .bind(run_id)
        .fetch_optional(&self.pool)
        .await?
        .ok_or(StoreError::NotFound)
    }

    /// All attachment rows, for tests that check that nothing was saved.
    pub async fn count_attachments(&self) -> StoreResult<i64> {
        Ok(sqlx::query_scalar("SELECT COUNT(*) FROM attachments")
            .fetch_one(&self.pool)
            .await?)
    }
}

/// The attachment files of a data directory: `attachments/ab/cdef…` for the bytes whose SHA-256
/// is `abcdef…`, and `attachments/thumbs/ab/cdef….jpg` for their thumbnail.
#[derive(Debug, Clone)]
pub struct AttachmentFiles {
    root: PathBuf,
}

/// A file written (or found already there) under its hash.
#[derive(Debug, Clone)]
pub struct StoredFile {
    pub sha256: String,
    /// False when the same bytes were stored before (by this run or another).
    pub newly_written: bool,
}

impl AttachmentFiles {
    pub const DIRECTORY: &'static str = "attachments";

    pub fn in_data_dir(data_dir: &Path) -> AttachmentFiles {
        AttachmentFiles {
            root: data_dir.join(Self::DIRECTORY),
        }
    }

    pub fn original_path(&self, sha256: &str) -> StoreResult<PathBuf> {
        let (fan, rest) = split_hash(sha256)?;
        Ok(self.root.join(fan).join(rest))
    }

    pub fn thumbnail_path(&self, sha256: &str) -> StoreResult<PathBuf> {
        let (fan, rest) = split_hash(sha256)?;
        Ok(self
            .root
            .join("thumbs")
            .join(fan)
            .join(format!("{rest}.jpg")))
    }

    /// Stores bytes under their SHA-256 unless that file exists already. Blocking: call from a
    /// blocking task.
    pub fn save_original(&self, bytes: &[u8]) -> io::Result<StoredFile> {
        let sha256 = hex::encode(Sha256::digest(bytes));
        let path = self.original_path(&sha256).map_err(io::Error::other)?;
        let newly_written = write_once(&path, bytes)?;
        Ok(StoredFile {
            sha256,
            newly_written,
        })
    }

    /// Stores the thumbnail of the file `sha256` unless it exists already. Blocking.
    pub fn save_thumbnail(&self, sha256: &str, bytes: &[u8]) -> io::Result<bool> {
        let path = self.thumbnail_path(sha256).map_err(io::Error::other)?;
        write_once(&path, bytes)
    }

    pub async fn read_original(&self, sha256: &str) -> io::Result<Vec<u8>> {
        let path = self.original_path(sha256).map_err(io::Error::other)?;
        tokio::fs::read(path).await
    }

    /// The thumbnail of `sha256`, or `None` when it has none (small pictures, GIFs).
    pub async fn read_thumbnail(&self, sha256: &str) -> io::Result<Option<Vec<u8>>> {
        let path = self.thumbnail_path(sha256).map_err(io::Error::other)?;
        match tokio::fs::read(path).await {
            Ok(bytes) => Ok(Some(bytes)),
            Err(error) if error.kind() == io::ErrorKind::NotFound => Ok(None),
            Err(error) => Err(error),
        }
    }
}

/// `ab` and `cdef…` of a well-formed hash; anything else is refused before it nears a path.
fn split_hash(sha256: &str) -> StoreResult<(&str, &str)> {
    let well_formed = sha256.len() == 64
        && sha256
            .bytes()
            .all(|b| matches!(b, b'0'..=b'9' | b'a'..=b'f'));
    if !well_formed {
        return Err(StoreError::Corrupt(format!(
            "not a SHA-256 file name: {sha256:?}"
        )));
    }
    Ok(sha256.split_at(2))
}

/// Writes a file whose name is its content's hash: a temporary file in the same directory,
/// flushed to disk, then renamed into place, so a reader never sees half a file and a crash
/// leaves either the whole file or none. When the file exists the bytes are the same and
/// nothing is written.
fn write_once(path: &Path, bytes: &[u8]) -> io::Result<bool> {
    if path.exists() {
        return Ok(false);
    }
    let directory = path.parent().expect("hashed paths have a directory");
    std::fs::create_dir_all(directory)?;
    let mut temporary = tempfile::Builder::new()
        .prefix(".upload-")
        .tempfile_in(directory)?;
    temporary.write_all(bytes)?;
    temporary.as_file().sync_all()?;
    // Two uploads of the same picture may race here; both files hold the same bytes, so
    // whichever rename lands last replaces an identical file.
    temporary.persist(path).map_err(|e| e.error)?;
    std::fs::File::open(directory)?.sync_all()?;
    Ok(true)
}
