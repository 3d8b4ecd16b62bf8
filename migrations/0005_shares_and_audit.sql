-- Read-only share links: a capability for one build (or one revision of it). Only the token's
-- hash is stored; the link is shown once when made. A revoked or expired link opens nothing.
CREATE TABLE shares (
    id              INTEGER PRIMARY KEY,
    build_id        INTEGER NOT NULL REFERENCES builds(id) ON DELETE CASCADE,
    revision_number INTEGER,
    label           TEXT NOT NULL,
    token_hash      TEXT NOT NULL UNIQUE,
    created_by      INTEGER REFERENCES users(id) ON DELETE SET NULL,
    created_at      INTEGER NOT NULL,
    expires_at      INTEGER,
    revoked_at      INTEGER
);
CREATE INDEX shares_by_build ON shares(build_id);

-- Who created or changed what, and when. Append-only: the triggers refuse updates and deletes.
CREATE TABLE audit_events (
    id          INTEGER PRIMARY KEY,
    at          INTEGER NOT NULL,
    actor_id    INTEGER,
    actor_name  TEXT NOT NULL,
    build_id    INTEGER,
    action      TEXT NOT NULL,
    subject     TEXT NOT NULL,
    detail      TEXT NOT NULL DEFAULT ''
);
CREATE INDEX audit_by_build ON audit_events(build_id, at DESC);

CREATE TRIGGER audit_events_no_update BEFORE UPDATE ON audit_events
BEGIN
    SELECT RAISE(ABORT, 'the audit trail is append-only');
END;

CREATE TRIGGER audit_events_no_delete BEFORE DELETE ON audit_events
BEGIN
    SELECT RAISE(ABORT, 'the audit trail is append-only');
END;
