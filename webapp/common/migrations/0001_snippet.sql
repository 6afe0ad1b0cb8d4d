
    CREATE TABLE snippet (
        id          INTEGER PRIMARY KEY,
        uid         TEXT NOT NULL UNIQUE,
        kind        TEXT NOT NULL,
        title       TEXT NOT NULL,
        job_number  TEXT NOT NULL DEFAULT '',
        press       TEXT NOT NULL DEFAULT '',
        station     TEXT NOT NULL DEFAULT '',
        notes       TEXT NOT NULL DEFAULT '',
        tags        TEXT NOT NULL DEFAULT '',
        saved_by    TEXT NOT NULL DEFAULT '',
        inputs      TEXT NOT NULL,
        results     TEXT NOT NULL,
        created_at  TEXT NOT NULL,
        updated_at  TEXT NOT NULL,
        version     INTEGER NOT NULL DEFAULT 1,
        deleted_at  TEXT
    );
    