-- What build pages keep of each run (analysis::run_summary::RunDigest as JSON), so that no page
-- reads a build's readings. A row is deleted whenever its run's readings or outcome change and
-- made again on the next view; `version` lets a new release recompute old digests.
CREATE TABLE run_digests (
    run_id       INTEGER PRIMARY KEY REFERENCES runs(id) ON DELETE CASCADE,
    version      INTEGER NOT NULL,
    digest_json  TEXT NOT NULL,
    computed_at  INTEGER NOT NULL
);

-- Rows logged on each run, kept with every insert so that lists of many runs never count
-- readings.
ALTER TABLE runs ADD COLUMN reading_count INTEGER NOT NULL DEFAULT 0;
