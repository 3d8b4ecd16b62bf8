-- Readings of an import in progress. A long upload writes its rows here in short chunks, each
-- its own small write, so other writes are never held behind a slow body; the rows are copied
-- into `readings` in one step when the upload ends and checks out (all or nothing). Rows of an
-- import that never finished are deleted at the next start.
CREATE TABLE reading_imports (
    id          INTEGER PRIMARY KEY,
    run_id      INTEGER NOT NULL REFERENCES runs(id) ON DELETE CASCADE,
    started_at  INTEGER NOT NULL
);

CREATE TABLE staged_readings (
    import_id  INTEGER NOT NULL,
    t_s        REAL NOT NULL,
    channel    TEXT NOT NULL,
    value      REAL NOT NULL
);
CREATE INDEX staged_readings_by_import ON staged_readings(import_id);
