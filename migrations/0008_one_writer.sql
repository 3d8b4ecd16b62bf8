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
    value      REAL NOT NULL,
    client_id  TEXT
);
CREATE INDEX staged_readings_by_import ON staged_readings(import_id);
-- A resend within one import is found among the rows it has staged.
CREATE INDEX staged_readings_by_client_id ON staged_readings(import_id, client_id)
    WHERE client_id IS NOT NULL;

-- Sign-in failures are now counted per source address and per account, under fixed-length keys
-- (`source:<address>`, `account:<sha-256 of the name>`), so a long name cannot grow the table;
-- rows older than a day are pruned. Rows kept under raw names before this are dropped.
DELETE FROM login_failures;
CREATE INDEX login_failures_by_time ON login_failures(last_failed_at);
