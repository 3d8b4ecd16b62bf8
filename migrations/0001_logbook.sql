-- The logbook: accounts, builds, revisions with their parts, runs and their readings.
-- Times are Unix seconds (UTC) in INTEGER columns; physical values are SI in REAL columns.

-- People who can sign in. `role` decides what they may do: a viewer reads, an editor also writes,
-- an admin also manages users.
CREATE TABLE users (
    id              INTEGER PRIMARY KEY,
    name            TEXT NOT NULL UNIQUE COLLATE NOCASE,
    display_name    TEXT NOT NULL,
    role            TEXT NOT NULL CHECK (role IN ('viewer', 'editor', 'admin')),
    password_hash   TEXT NOT NULL,
    created_at      INTEGER NOT NULL
);

-- Failed sign-ins per account name since the last good one. Kept by the name typed, whether or
-- not such a user exists, so the slow-down of repeated failures tells nothing about who exists.
CREATE TABLE login_failures (
    name            TEXT PRIMARY KEY COLLATE NOCASE,
    failures        INTEGER NOT NULL,
    last_failed_at  INTEGER NOT NULL
);

-- Server-side sessions. The cookie carries a random id; only its hash is stored, so a copy of the
-- database does not hand out live sessions.
CREATE TABLE sessions (
    id_hash       TEXT PRIMARY KEY,
    user_id       INTEGER NOT NULL REFERENCES users(id) ON DELETE CASCADE,
    csrf_token    TEXT NOT NULL,
    created_at    INTEGER NOT NULL,
    last_seen_at  INTEGER NOT NULL
);
CREATE INDEX sessions_by_user ON sessions(user_id);

-- One heater project.
CREATE TABLE builds (
    id          INTEGER PRIMARY KEY,
    slug        TEXT NOT NULL UNIQUE,
    name        TEXT NOT NULL,
    purpose     TEXT NOT NULL DEFAULT '',
    notes       TEXT NOT NULL DEFAULT '',
    created_by  INTEGER REFERENCES users(id) ON DELETE SET NULL,
    created_at  INTEGER NOT NULL
);

-- An immutable snapshot of a build's parts list. Editing parts makes a new revision whose
-- `parent_id` is the one it was copied from; runs point at the exact revision they ran on.
CREATE TABLE revisions (
    id          INTEGER PRIMARY KEY,
    build_id    INTEGER NOT NULL REFERENCES builds(id) ON DELETE CASCADE,
    number      INTEGER NOT NULL CHECK (number >= 1),
    parent_id   INTEGER REFERENCES revisions(id),
    notes       TEXT NOT NULL DEFAULT '',
    created_by  INTEGER REFERENCES users(id) ON DELETE SET NULL,
    created_at  INTEGER NOT NULL,
    UNIQUE (build_id, number)
);

-- The parts of a revision, one row per role (the parts contract of DESIGN.md): the role's
-- parameters as a JSON object in SI units, its label and quantity lifted out for listing.
CREATE TABLE parts (
    id           INTEGER PRIMARY KEY,
    revision_id  INTEGER NOT NULL REFERENCES revisions(id) ON DELETE CASCADE,
    position     INTEGER NOT NULL,
    role         TEXT NOT NULL,
    label        TEXT NOT NULL DEFAULT '',
    quantity     INTEGER NOT NULL CHECK (quantity >= 0),
    params_json  TEXT NOT NULL,
    UNIQUE (revision_id, position)
);
CREATE INDEX parts_by_revision ON parts(revision_id);

-- One bench session on one revision.
CREATE TABLE runs (
    id                            INTEGER PRIMARY KEY,
    build_id                      INTEGER NOT NULL REFERENCES builds(id) ON DELETE CASCADE,
    revision_id                   INTEGER NOT NULL REFERENCES revisions(id),
    started_at                    INTEGER NOT NULL,
    -- Who stood at the bench (free text: not everyone at the bench has an account), and the
    -- account that logged the run.
    operator                      TEXT NOT NULL DEFAULT '',
    created_by                    INTEGER REFERENCES users(id) ON DELETE SET NULL,
    supply_setting_v              REAL,
    supply_current_limit_a        REAL,
    load                          TEXT NOT NULL CHECK (load IN ('none', 'ferrous', 'non_ferrous', 'water')),
    water_mass_kg                 REAL,
    vessel_heat_capacity_j_per_k  REAL,
    notes                         TEXT NOT NULL DEFAULT '',
    -- The channels the operator logs on this run, as a JSON list of channel names.
    channels_json                 TEXT NOT NULL DEFAULT '[]',
    finished_at                   INTEGER,
    outcome                       TEXT CHECK (outcome IN ('completed', 'stopped', 'part_failed')),
    failed_part                   TEXT,
    outcome_note                  TEXT NOT NULL DEFAULT ''
);
CREATE INDEX runs_by_build ON runs(build_id, started_at DESC);
CREATE INDEX runs_by_revision ON runs(revision_id, started_at DESC);

-- The time series of a run. A correction is a new row that names the row it replaces in
-- `corrects_id`; the old row stays, so nothing logged is silently overwritten.
CREATE TABLE readings (
    id           INTEGER PRIMARY KEY,
    run_id       INTEGER NOT NULL REFERENCES runs(id) ON DELETE CASCADE,
    t_s          REAL NOT NULL,
    channel      TEXT NOT NULL,
    value        REAL NOT NULL,
    corrects_id  INTEGER REFERENCES readings(id),
    entered_by   INTEGER REFERENCES users(id) ON DELETE SET NULL,
    entered_at   INTEGER NOT NULL
);
CREATE INDEX readings_by_run ON readings(run_id, channel, t_s);
CREATE INDEX readings_corrections ON readings(corrects_id) WHERE corrects_id IS NOT NULL;
