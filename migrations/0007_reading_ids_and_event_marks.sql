-- Readings carry the id their sender made (a phone's offline queue, an instrument script), so a
-- resend after a lost answer stores nothing twice. Older rows have none. `t_s` stays the time
-- the value was read (seconds since the run started), never the time it arrived.
ALTER TABLE readings ADD COLUMN client_id TEXT;
CREATE UNIQUE INDEX readings_by_client_id ON readings(run_id, client_id)
    WHERE client_id IS NOT NULL;

-- Marks on a run's timeline ("workpiece in", "fan on"): a short text at a time since the start.
-- A wrong mark is voided with a reason, never deleted.
CREATE TABLE event_marks (
    id           INTEGER PRIMARY KEY,
    run_id       INTEGER NOT NULL REFERENCES runs(id) ON DELETE CASCADE,
    t_s          REAL NOT NULL,
    text         TEXT NOT NULL,
    client_id    TEXT,
    made_by      INTEGER REFERENCES users(id) ON DELETE SET NULL,
    made_at      INTEGER NOT NULL,
    voided_at    INTEGER,
    voided_by    INTEGER REFERENCES users(id) ON DELETE SET NULL,
    void_reason  TEXT
);
CREATE INDEX event_marks_by_run ON event_marks(run_id, t_s);
CREATE UNIQUE INDEX event_marks_by_client_id ON event_marks(run_id, client_id)
    WHERE client_id IS NOT NULL;

-- The order in which the bench reads a revision's channels, as the user arranged the entry form
-- of its runs (a JSON array of channel names). Kept per revision: the same parts are read in the
-- same order run after run.
CREATE TABLE entry_orders (
    revision_id   INTEGER PRIMARY KEY REFERENCES revisions(id) ON DELETE CASCADE,
    channels_json TEXT NOT NULL,
    changed_by    INTEGER REFERENCES users(id) ON DELETE SET NULL,
    changed_at    INTEGER NOT NULL
);
