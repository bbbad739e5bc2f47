-- Accounts, sessions and sign-in throttling.
-- Passwords are stored only as Argon2id PHC strings; sessions only as the SHA-256
-- of their cookie token. Session and throttling times are Unix seconds (UTC).

CREATE TABLE users (
    id            INTEGER PRIMARY KEY,
    name          TEXT NOT NULL UNIQUE COLLATE NOCASE,
    role          TEXT NOT NULL CHECK (role IN ('viewer', 'interpreter', 'admin')),
    password_hash TEXT NOT NULL,
    disabled      INTEGER NOT NULL DEFAULT 0 CHECK (disabled IN (0, 1)),
    created_at    TEXT NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%SZ', 'now'))
);

CREATE TABLE sessions (
    token_hash   TEXT PRIMARY KEY,  -- hex SHA-256 of the cookie token; the token itself is never stored
    user_id      INTEGER NOT NULL REFERENCES users(id) ON DELETE CASCADE,
    csrf_token   TEXT NOT NULL,
    created_at   INTEGER NOT NULL,
    last_seen_at INTEGER NOT NULL,  -- for the idle expiry
    expires_at   INTEGER NOT NULL   -- the absolute expiry
);
CREATE INDEX sessions_by_user ON sessions(user_id);

-- One row per failed sign-in, kept for the throttling window.
CREATE TABLE login_failures (
    id        INTEGER PRIMARY KEY,
    user_name TEXT NOT NULL COLLATE NOCASE,
    client    TEXT NOT NULL,
    at        INTEGER NOT NULL
);
CREATE INDEX login_failures_by_name ON login_failures(user_name, at);
CREATE INDEX login_failures_by_client ON login_failures(client, at);
