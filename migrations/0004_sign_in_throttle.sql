-- The sign-in throttle, per (user name as typed, client address) instead of per name
-- and per address: a stranger's wrong guesses from elsewhere no longer make the real
-- user wait. One row per pair: the tries in a row without success (each counted before
-- its password is checked), until when the client must wait, and the last try, all in
-- Unix seconds (UTC). A successful sign-in from the address deletes its row.

DROP TABLE login_failures;

CREATE TABLE sign_in_throttle (
    user_name   TEXT NOT NULL COLLATE NOCASE,  -- as typed: also names no account has
    client      TEXT NOT NULL,                 -- the client's IP address
    tries       INTEGER NOT NULL CHECK (tries >= 1),
    wait_until  INTEGER NOT NULL DEFAULT 0,    -- no try is checked before this time
    last_try_at INTEGER NOT NULL,
    PRIMARY KEY (user_name, client)
);
CREATE INDEX sign_in_throttle_by_last_try ON sign_in_throttle(last_try_at);
