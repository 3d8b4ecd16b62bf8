//! The durable queue: every reading is appended to a file and flushed to disk before anything
//! else happens to it, and a separate marker records how far the server has stored them. A
//! feeder killed at any moment restarts from the marker: what the server stored is not sent
//! again (and, sent again after a lost answer, carries the same id, which the server stores once).
//!
//! Files in the queue's directory: `readings.jsonl` (one reading a line, appended), `sent` (the
//! last sequence number done with, replaced atomically), `meta.json` (the run it belongs to and
//! the prefix of its ids).

use std::collections::{BTreeMap, VecDeque};
use std::fs::{self, File, OpenOptions};
use std::io::{self, BufRead, BufReader, Seek, Write};
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use super::reading::{FilePos, QueuedReading, ReadAt};

/// How the ids of readings from a feeder begin.
pub const ID_MARK: &str = "feed-";
/// Start the file afresh once everything in it is done and it has grown this large.
const COMPACT_AFTER_BYTES: u64 = 1 << 20;

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct QueueMeta {
    pub run: i64,
    /// Ids are `feed-<prefix>-<seq>`: unique to this queue, so two feeders never share one, and
    /// marked as an instrument's (a phone's ids do not start with `feed-`).
    pub id_prefix: String,
    /// The run's start on the server (Unix seconds), once known, so readings can be turned into
    /// times since the start while the server is out of reach.
    pub run_started_unix_s: Option<i64>,
    /// Where each followed file was read up to when the readings file was last started afresh
    /// (by source index); later places are on the readings themselves.
    #[serde(default)]
    pub file_positions: BTreeMap<usize, FilePos>,
}

pub struct Queue {
    dir: PathBuf,
    file: File,
    file_len: u64,
    meta: QueueMeta,
    next_seq: u64,
    done_up_to: u64,
    pending: VecDeque<QueuedReading>,
}

impl Queue {
    /// Opens (or makes) the queue of `run` in `dir`. Refuses a directory holding another run's
    /// readings, which would otherwise be sent into this one.
    pub fn open(dir: &Path, run: i64) -> anyhow::Result<Queue> {
        fs::create_dir_all(dir)?;
        let meta_path = dir.join("meta.json");
        let meta = match fs::read(&meta_path) {
            Ok(bytes) => {
                let meta: QueueMeta = serde_json::from_slice(&bytes).map_err(|e| {
                    anyhow::anyhow!("{} is damaged ({e}); move it away", meta_path.display())
                })?;
                if meta.run != run {
                    anyhow::bail!(
                        "the queue in {} belongs to run {}; give run {run} its own --queue",
                        dir.display(),
                        meta.run
                    );
                }
                meta
            }
            Err(e) if e.kind() == io::ErrorKind::NotFound => {
                let meta = QueueMeta {
                    run,
                    id_prefix: hex::encode(rand::random::<[u8; 6]>()),
                    run_started_unix_s: None,
                    file_positions: BTreeMap::new(),
                };
                replace_durably(&meta_path, &serde_json::to_vec(&meta)?)?;
                meta
            }
            Err(e) => return Err(e.into()),
        };
        let done_up_to = match fs::read_to_string(dir.join("sent")) {
            Ok(text) => text.trim().parse().map_err(|_| {
                anyhow::anyhow!(
                    "{} is damaged; move the queue away",
                    dir.join("sent").display()
                )
            })?,
            Err(e) if e.kind() == io::ErrorKind::NotFound => 0,
            Err(e) => return Err(e.into()),
        };
        let path = dir.join("readings.jsonl");
        let mut file = OpenOptions::new()
            .create(true)
            .read(true)
            .append(true)
            .open(&path)?;
        let (kept, good_len) = read_back(&mut file, &path)?;
        let file_len = file.metadata()?.len();
        if good_len < file_len {
            // A line cut short by a crash mid-write: it was never acknowledged to anyone.
            file.set_len(good_len)?;
            file.sync_all()?;
        }
        let last_seq = kept.last().map_or(0, |r| r.seq);
        let mut meta = meta;
        for reading in &kept {
            if let Some(pos) = reading.file_pos {
                meta.file_positions.insert(reading.source, pos);
            }
        }
        let pending: VecDeque<_> = kept.into_iter().filter(|r| r.seq > done_up_to).collect();
        Ok(Queue {
            dir: dir.to_path_buf(),
            file,
            file_len: good_len,
            meta,
            next_seq: last_seq.max(done_up_to) + 1,
            done_up_to,
            pending,
        })
    }

    pub fn meta(&self) -> &QueueMeta {
        &self.meta
    }

    /// Where a followed file was read up to, as far as its readings are queued.
    pub fn file_position(&self, source: usize) -> Option<FilePos> {
        self.meta.file_positions.get(&source).copied()
    }

    /// Remembers the run's start for the next time the server cannot be asked.
    pub fn set_run_started(&mut self, unix_s: i64) -> io::Result<()> {
        if self.meta.run_started_unix_s != Some(unix_s) {
            self.meta.run_started_unix_s = Some(unix_s);
            let bytes = serde_json::to_vec(&self.meta).map_err(io::Error::other)?;
            replace_durably(&self.dir.join("meta.json"), &bytes)?;
        }
        Ok(())
    }

    /// Appends readings of one source, each given its id now, and flushes them to disk before
    /// returning.
    pub fn push(
        &mut self,
        source: usize,
        values: &[(String, f64, ReadAt)],
        file_pos: Option<FilePos>,
    ) -> io::Result<Vec<QueuedReading>> {
        let mut added: Vec<QueuedReading> = values
            .iter()
            .enumerate()
            .map(|(i, (channel, value, time))| {
                let seq = self.next_seq + i as u64;
                QueuedReading {
                    seq,
                    id: format!("{ID_MARK}{}-{seq}", self.meta.id_prefix),
                    source,
                    channel: channel.clone(),
                    value: *value,
                    time: *time,
                    file_pos: None,
                }
            })
            .collect();
        let Some(last) = added.last_mut() else {
            return Ok(added);
        };
        last.file_pos = file_pos;
        let mut lines = Vec::new();
        for reading in &added {
            serde_json::to_writer(&mut lines, reading).map_err(io::Error::other)?;
            lines.push(b'\n');
        }
        self.file.write_all(&lines)?;
        self.file.sync_data()?;
        self.file_len += lines.len() as u64;
        self.next_seq += added.len() as u64;
        self.pending.extend(added.iter().cloned());
        if let Some(pos) = file_pos {
            self.meta.file_positions.insert(source, pos);
        }
        Ok(added)
    }

    /// The oldest readings not yet done with, in order.
    pub fn oldest(&self, max: usize) -> Vec<QueuedReading> {
        self.pending.iter().take(max).cloned().collect()
    }

    pub fn len(&self) -> usize {
        self.pending.len()
    }

    pub fn is_empty(&self) -> bool {
        self.pending.is_empty()
    }

    /// Readings waiting, per source.
    pub fn waiting_of(&self, source: usize) -> usize {
        self.pending.iter().filter(|r| r.source == source).count()
    }

    /// Marks everything up to `seq` done (stored by the server, or refused by it for good) and
    /// records that on disk before returning.
    pub fn done_up_to(&mut self, seq: u64) -> io::Result<Vec<QueuedReading>> {
        if seq <= self.done_up_to {
            return Ok(Vec::new());
        }
        replace_durably(&self.dir.join("sent"), seq.to_string().as_bytes())?;
        self.done_up_to = seq;
        let mut done = Vec::new();
        while self.pending.front().is_some_and(|r| r.seq <= seq) {
            done.extend(self.pending.pop_front());
        }
        if self.pending.is_empty() && self.file_len > COMPACT_AFTER_BYTES {
            // The marker already says all of it is done, and the file places go to the meta
            // first: a crash between the steps loses nothing.
            let bytes = serde_json::to_vec(&self.meta).map_err(io::Error::other)?;
            replace_durably(&self.dir.join("meta.json"), &bytes)?;
            self.file.set_len(0)?;
            self.file.sync_all()?;
            self.file_len = 0;
        }
        Ok(done)
    }
}

/// The readings in the file, and the length of its whole lines.
fn read_back(file: &mut File, path: &Path) -> anyhow::Result<(Vec<QueuedReading>, u64)> {
    file.rewind()?;
    let mut reader = BufReader::new(&*file);
    let mut kept = Vec::new();
    let mut good_len = 0u64;
    let mut line = Vec::new();
    let mut number = 0;
    loop {
        line.clear();
        let read = reader.read_until(b'\n', &mut line)?;
        if read == 0 {
            break;
        }
        number += 1;
        if !line.ends_with(b"\n") {
            // Only the last line can be cut short.
            break;
        }
        let reading: QueuedReading = serde_json::from_slice(&line).map_err(|e| {
            anyhow::anyhow!(
                "{} line {number} is damaged ({e}); move the queue away",
                path.display()
            )
        })?;
        good_len += read as u64;
        kept.push(reading);
    }
    Ok((kept, good_len))
}

/// Writes a small file so that a crash leaves either the old or the new content.
fn replace_durably(path: &Path, bytes: &[u8]) -> io::Result<()> {
    let temporary = path.with_extension("new");
    let mut file = File::create(&temporary)?;
    file.write_all(bytes)?;
    file.sync_all()?;
    fs::rename(&temporary, path)?;
    if let Some(dir) = path.parent() {
        File::open(dir)?.sync_all()?;
    }
    Ok(())
}

#[cfg(test)]
#[path = "queue_tests.rs"]
mod tests;
