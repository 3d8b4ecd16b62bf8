-- Bearer tokens for scripts that log through the JSON API. A token acts with its user's role.
-- The token itself is printed once when it is made; only its hash is stored, so a copy of the
-- database hands out no working token. Revoking keeps the row (for `token list` and the record
-- of what was used when) and stops it working at once.
CREATE TABLE api_tokens (
    id            INTEGER PRIMARY KEY,
    user_id       INTEGER NOT NULL REFERENCES users(id) ON DELETE CASCADE,
    -- What the token is for ("bench logger", "thermocouple script"), to tell tokens apart.
    label         TEXT NOT NULL DEFAULT '',
    token_hash    TEXT NOT NULL UNIQUE,
    created_at    INTEGER NOT NULL,
    -- Touched at most once a minute, so a script posting readings does not write on every call.
    last_used_at  INTEGER,
    revoked_at    INTEGER
);
CREATE INDEX api_tokens_by_user ON api_tokens(user_id);
