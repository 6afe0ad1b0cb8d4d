    -- Unlocked devices, so that locking one (or all) takes effect on the server:
    -- a copy of a session cookie made before locking opens nothing afterwards.
    -- ``id`` is the SHA-256 of the random session id the cookie carries.
    CREATE TABLE unlock (
        id          TEXT PRIMARY KEY,
        role        TEXT NOT NULL,
        created_at  REAL NOT NULL,
        expires_at  REAL NOT NULL
    );
    CREATE INDEX unlock_expires ON unlock (expires_at);
