-- Pictures attached to a run at the bench: a photograph of the set-up, a scope capture, a
-- thermal image. The bytes live in the data directory, in attachments/ab/cdef... named by the
-- SHA-256 of the bytes, so the same picture attached twice is one file and two rows, and nothing
-- a client sends (its file name, its Content-Type) ever becomes part of a path.
CREATE TABLE attachments (
    id             INTEGER PRIMARY KEY,
    run_id         INTEGER NOT NULL REFERENCES runs(id) ON DELETE CASCADE,
    -- Lower-case hex SHA-256 of the file: the only thing the path on disk is built from.
    sha256         TEXT NOT NULL CHECK (length(sha256) = 64 AND sha256 NOT GLOB '*[^0-9a-f]*'),
    -- Detected from the file's first bytes, never taken from the client.
    media_type     TEXT NOT NULL
                   CHECK (media_type IN ('image/jpeg', 'image/png', 'image/webp', 'image/gif')),
    byte_size      INTEGER NOT NULL CHECK (byte_size > 0),
    -- The picture's size as shown (after the camera's orientation tag), when it could be read;
    -- the page uses it for the width and height of the thumbnail so the layout does not jump.
    width_px       INTEGER CHECK (width_px > 0),
    height_px      INTEGER CHECK (height_px > 0),
    -- The name the file had on the phone, cleaned of paths and control characters: for display only.
    original_name  TEXT NOT NULL DEFAULT '',
    caption        TEXT NOT NULL DEFAULT '',
    kind           TEXT NOT NULL CHECK (kind IN ('setup', 'scope', 'thermal', 'other')),
    uploaded_by    INTEGER REFERENCES users(id) ON DELETE SET NULL,
    uploaded_at    INTEGER NOT NULL
);
CREATE INDEX attachments_by_run ON attachments(run_id, id);
-- Whether a file on disk is still referenced by any row (for a later clean-up of orphans).
CREATE INDEX attachments_by_hash ON attachments(sha256);
