use super::*;

fn values(n: usize, from: f64) -> Vec<(String, f64, ReadAt)> {
    (0..n)
        .map(|i| {
            (
                "supply_voltage".to_string(),
                from + i as f64,
                ReadAt::Clock(1_000.0 + i as f64),
            )
        })
        .collect()
}

#[test]
fn readings_survive_a_restart_until_marked_done() {
    let dir = tempfile::tempdir().unwrap();
    let mut queue = Queue::open(dir.path(), 7).unwrap();
    let added = queue.push(0, &values(5, 10.0), None).unwrap();
    assert_eq!(
        added.iter().map(|r| r.seq).collect::<Vec<_>>(),
        [1, 2, 3, 4, 5]
    );
    let prefix = queue.meta().id_prefix.clone();
    assert_eq!(added[2].id, format!("feed-{prefix}-3"));
    queue.done_up_to(2).unwrap();
    drop(queue);

    let mut queue = Queue::open(dir.path(), 7).unwrap();
    let left = queue.oldest(100);
    assert_eq!(left.iter().map(|r| r.seq).collect::<Vec<_>>(), [3, 4, 5]);
    assert_eq!(
        left[0], added[2],
        "the same id, value and time after a restart"
    );
    let more = queue.push(1, &values(1, 99.0), None).unwrap();
    assert_eq!(
        more[0].seq, 6,
        "sequence numbers continue, ids are never reused"
    );
    assert_eq!(queue.waiting_of(1), 1);
    assert_eq!(queue.done_up_to(6).unwrap().len(), 4);
    assert!(queue.is_empty());
}

#[test]
fn a_line_cut_short_by_a_crash_is_dropped_and_later_lines_follow_it() {
    let dir = tempfile::tempdir().unwrap();
    let mut queue = Queue::open(dir.path(), 1).unwrap();
    queue.push(0, &values(2, 1.0), None).unwrap();
    drop(queue);
    let path = dir.path().join("readings.jsonl");
    let mut file = OpenOptions::new().append(true).open(&path).unwrap();
    file.write_all(br#"{"seq":3,"id":"x-3","sou"#).unwrap();
    drop(file);

    let mut queue = Queue::open(dir.path(), 1).unwrap();
    assert_eq!(queue.len(), 2);
    queue.push(0, &values(1, 5.0), None).unwrap();
    drop(queue);
    let queue = Queue::open(dir.path(), 1).unwrap();
    let seqs: Vec<u64> = queue.oldest(10).iter().map(|r| r.seq).collect();
    assert_eq!(seqs, [1, 2, 3]);
}

#[test]
fn damage_in_the_middle_is_reported_not_skipped() {
    let dir = tempfile::tempdir().unwrap();
    let mut queue = Queue::open(dir.path(), 1).unwrap();
    queue.push(0, &values(1, 1.0), None).unwrap();
    drop(queue);
    let path = dir.path().join("readings.jsonl");
    let mut text = fs::read_to_string(&path).unwrap();
    text.insert_str(0, "not json\n");
    fs::write(&path, text).unwrap();
    let error = Queue::open(dir.path(), 1).err().unwrap().to_string();
    assert!(error.contains("line 1 is damaged"), "{error}");
}

#[test]
fn another_runs_queue_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    Queue::open(dir.path(), 3).unwrap();
    let error = Queue::open(dir.path(), 4).err().unwrap().to_string();
    assert!(error.contains("belongs to run 3"), "{error}");
}

#[test]
fn the_file_starts_afresh_once_all_is_done() {
    let dir = tempfile::tempdir().unwrap();
    let mut queue = Queue::open(dir.path(), 1).unwrap();
    let mut last = 0;
    while queue.file_len <= COMPACT_AFTER_BYTES {
        last = queue
            .push(0, &values(500, 1.0), None)
            .unwrap()
            .last()
            .unwrap()
            .seq;
    }
    queue.done_up_to(last - 1).unwrap();
    assert!(
        queue.file_len > COMPACT_AFTER_BYTES,
        "one reading still waits"
    );
    queue.done_up_to(last).unwrap();
    assert_eq!(queue.file_len, 0);
    let next = queue.push(0, &values(1, 1.0), None).unwrap()[0].seq;
    assert_eq!(next, last + 1);
    drop(queue);
    let queue = Queue::open(dir.path(), 1).unwrap();
    assert_eq!(queue.oldest(5)[0].seq, last + 1);
}

#[test]
fn the_run_start_is_remembered() {
    let dir = tempfile::tempdir().unwrap();
    let mut queue = Queue::open(dir.path(), 1).unwrap();
    assert_eq!(queue.meta().run_started_unix_s, None);
    queue.set_run_started(1_700_000_000).unwrap();
    drop(queue);
    let queue = Queue::open(dir.path(), 1).unwrap();
    assert_eq!(queue.meta().run_started_unix_s, Some(1_700_000_000));
}

#[test]
fn a_followed_files_place_is_kept_with_its_readings_and_across_a_fresh_start() {
    let dir = tempfile::tempdir().unwrap();
    let mut queue = Queue::open(dir.path(), 1).unwrap();
    assert_eq!(queue.file_position(2), None);
    let pos = FilePos {
        inode: 77,
        offset: 120,
    };
    let added = queue.push(2, &values(3, 1.0), Some(pos)).unwrap();
    assert_eq!(
        added[2].file_pos,
        Some(pos),
        "on the last reading of the lines read"
    );
    drop(queue);
    let mut queue = Queue::open(dir.path(), 1).unwrap();
    assert_eq!(queue.file_position(2), Some(pos));
    while queue.file_len <= COMPACT_AFTER_BYTES {
        queue.push(0, &values(500, 1.0), None).unwrap();
    }
    let last = queue.oldest(usize::MAX).last().unwrap().seq;
    queue.done_up_to(last).unwrap();
    assert_eq!(queue.file_len, 0);
    drop(queue);
    let queue = Queue::open(dir.path(), 1).unwrap();
    assert_eq!(queue.file_position(2), Some(pos));
}
