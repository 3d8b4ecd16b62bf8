-- Mistakes are taken back, never deleted. A reading, run, revision or build can be voided with a
-- reason and restored; a voided row leaves every analysis, chart, list and picker but stays in
-- the history and the export, with who voided it, when and why. The audit trail records both.
ALTER TABLE readings ADD COLUMN voided_at INTEGER;
ALTER TABLE readings ADD COLUMN voided_by INTEGER REFERENCES users(id) ON DELETE SET NULL;
ALTER TABLE readings ADD COLUMN void_reason TEXT NOT NULL DEFAULT '';

ALTER TABLE runs ADD COLUMN voided_at INTEGER;
ALTER TABLE runs ADD COLUMN voided_by INTEGER REFERENCES users(id) ON DELETE SET NULL;
ALTER TABLE runs ADD COLUMN void_reason TEXT NOT NULL DEFAULT '';

ALTER TABLE revisions ADD COLUMN voided_at INTEGER;
ALTER TABLE revisions ADD COLUMN voided_by INTEGER REFERENCES users(id) ON DELETE SET NULL;
ALTER TABLE revisions ADD COLUMN void_reason TEXT NOT NULL DEFAULT '';

ALTER TABLE builds ADD COLUMN voided_at INTEGER;
ALTER TABLE builds ADD COLUMN voided_by INTEGER REFERENCES users(id) ON DELETE SET NULL;
ALTER TABLE builds ADD COLUMN void_reason TEXT NOT NULL DEFAULT '';
-- An archived build is off the builds list and still readable at its address.
ALTER TABLE builds ADD COLUMN archived_at INTEGER;

-- The addresses a build had before it was renamed: they redirect to its current slug, and are
-- never handed to another build.
CREATE TABLE build_old_slugs (
    slug      TEXT PRIMARY KEY,
    build_id  INTEGER NOT NULL REFERENCES builds(id) ON DELETE CASCADE
);

-- A disabled account cannot sign in; its sessions are ended and its tokens refused at once.
ALTER TABLE users ADD COLUMN disabled_at INTEGER;
