//! `lines-file`: follows a file another program appends lines to, as `tail -F` does: a file
//! renamed away and made anew (rotation) is read to its end and the new one from its start; a
//! file cut short is read again from its start. Where it was read up to is kept with the queued
//! readings, so a restarted feeder goes on from there instead of sending lines twice.

use std::fs::File;
use std::io::{self, Read, Seek, SeekFrom};
use std::os::unix::fs::MetadataExt;
use std::path::Path;
use std::time::Duration;

use super::config::{Access, SourceConfig};
use super::link::LineAssembler;
use super::reading::{FilePos, LineNames};
use super::state::{Feed, value_of_line};

/// How often the file is looked at for new lines.
const FOLLOW_EVERY: Duration = Duration::from_millis(250);

struct Followed {
    file: File,
    inode: u64,
    /// The byte after the last whole line read.
    offset: u64,
    /// The byte after the last byte read.
    read_to: u64,
    lines: LineAssembler,
}

/// Follows the file from `start` (where its readings were queued up to, or its end when the
/// feeder started: lines written before are an earlier session's), else from its beginning.
pub fn run(feed: &Feed, index: usize, source: &SourceConfig, start: Option<FilePos>) {
    let Access::File { path } = &source.access else {
        return;
    };
    let names = LineNames(&source.channels);
    let mut first_open = start;
    let mut followed: Option<Followed> = None;
    while !feed.is_stopping() {
        let current = match followed.as_mut() {
            Some(current) => current,
            None => match open(path, first_open.take()) {
                Ok(opened) => {
                    feed.fault(index, None);
                    followed.insert(opened)
                }
                Err(e) => {
                    let what = if e.kind() == io::ErrorKind::NotFound {
                        "waiting for the file to appear".to_string()
                    } else {
                        format!("cannot open ({e})")
                    };
                    feed.with_status(index, |s| s.fault = Some(what));
                    feed.nap(FOLLOW_EVERY);
                    continue;
                }
            },
        };
        if let Err(e) = read_new_lines(feed, index, &names, current) {
            feed.fault(index, Some(format!("cannot read ({e}); reopening")));
            followed = None;
            continue;
        }
        match std::fs::metadata(path) {
            // Renamed away or deleted: what was written to it has been read; the next file
            // starts from its beginning.
            Ok(meta) if meta.ino() != current.inode => followed = None,
            Err(_) => followed = None,
            // Cut short in place: start again at its beginning.
            Ok(meta) if meta.len() < current.offset => {
                if current.file.seek(SeekFrom::Start(0)).is_err() {
                    followed = None;
                } else {
                    current.offset = 0;
                    current.read_to = 0;
                    current.lines = LineAssembler::default();
                }
            }
            Ok(_) => {}
        }
        feed.nap(FOLLOW_EVERY);
    }
}

/// Where a file ends now, to follow it from there.
pub fn end_of(path: &Path) -> Option<FilePos> {
    let meta = std::fs::metadata(path).ok()?;
    Some(FilePos {
        inode: meta.ino(),
        offset: meta.len(),
    })
}

/// Opens the file at `start` when it is still the same file and not cut shorter, else at its
/// beginning (a file made after a rotation, or after the feeder started).
fn open(path: &Path, start: Option<FilePos>) -> io::Result<Followed> {
    let mut file = File::open(path)?;
    let meta = file.metadata()?;
    let inode = meta.ino();
    let offset = match start {
        Some(start) if start.inode == inode && start.offset <= meta.len() => start.offset,
        _ => 0,
    };
    file.seek(SeekFrom::Start(offset))?;
    Ok(Followed {
        file,
        inode,
        offset,
        read_to: offset,
        lines: LineAssembler::default(),
    })
}

/// Reads to the file's end and queues the whole lines' values with the place they end at.
fn read_new_lines(
    feed: &Feed,
    index: usize,
    names: &LineNames,
    current: &mut Followed,
) -> io::Result<()> {
    let mut buffer = vec![0u8; 64 * 1024];
    loop {
        let n = current.file.read(&mut buffer)?;
        if n == 0 {
            return Ok(());
        }
        let chunk = &buffer[..n];
        let values: Vec<_> = current
            .lines
            .push(chunk)
            .iter()
            .filter_map(|line| value_of_line(feed, index, names, line))
            .collect();
        let chunk_start = current.read_to;
        current.read_to += n as u64;
        // Whole lines end at the chunk's last newline; the rest waits for its end.
        let Some(last_newline) = chunk.iter().rposition(|b| *b == b'\n') else {
            continue;
        };
        current.offset = chunk_start + last_newline as u64 + 1;
        let pos = FilePos {
            inode: current.inode,
            offset: current.offset,
        };
        feed.queue_values_from(index, &values, Some(pos));
    }
}
