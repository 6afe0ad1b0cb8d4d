-- The anilox roll register: rolls (versioned like snippets), their volume
-- measurements and cleanings. Log entries are never overwritten: a correction
-- or removal keeps the old entry in roll_entry_change.
CREATE TABLE roll (
    id                INTEGER PRIMARY KEY,
    roll_id           TEXT NOT NULL,
    roll_key          TEXT NOT NULL UNIQUE,
    screen_lpi        REAL NOT NULL,
    angle             INTEGER NOT NULL,
    nominal_bcm       REAL NOT NULL,
    certificate_bcm   REAL,
    engraved_on       TEXT NOT NULL,
    press             TEXT NOT NULL DEFAULT '',
    location          TEXT NOT NULL DEFAULT '',
    status            TEXT NOT NULL CHECK (status IN ('in_use', 'spare', 'sent_out', 'retired')),
    notes             TEXT NOT NULL DEFAULT '',
    created_at        TEXT NOT NULL,
    updated_at        TEXT NOT NULL,
    version           INTEGER NOT NULL DEFAULT 1
);

CREATE TABLE roll_measurement (
    id            INTEGER PRIMARY KEY,
    roll          INTEGER NOT NULL REFERENCES roll(id),
    measured_on   TEXT NOT NULL,
    volume_bcm    REAL NOT NULL,
    condition     TEXT NOT NULL CHECK (condition IN ('as_found', 'after_cleaning')),
    method        TEXT NOT NULL DEFAULT '',
    measured_by   TEXT NOT NULL DEFAULT '',
    created_at    TEXT NOT NULL,
    updated_at    TEXT NOT NULL,
    version       INTEGER NOT NULL DEFAULT 1,
    removed_at    TEXT
);
CREATE INDEX roll_measurement_roll ON roll_measurement (roll, measured_on);

CREATE TABLE roll_cleaning (
    id            INTEGER PRIMARY KEY,
    roll          INTEGER NOT NULL REFERENCES roll(id),
    cleaned_on    TEXT NOT NULL,
    method        TEXT NOT NULL DEFAULT '',
    cleaned_by    TEXT NOT NULL DEFAULT '',
    notes         TEXT NOT NULL DEFAULT '',
    created_at    TEXT NOT NULL,
    updated_at    TEXT NOT NULL,
    version       INTEGER NOT NULL DEFAULT 1,
    removed_at    TEXT
);
CREATE INDEX roll_cleaning_roll ON roll_cleaning (roll, cleaned_on);

CREATE TABLE roll_entry_change (
    id          INTEGER PRIMARY KEY,
    kind        TEXT NOT NULL CHECK (kind IN ('measurement', 'cleaning')),
    entry       INTEGER NOT NULL,
    changed_at  TEXT NOT NULL,
    action      TEXT NOT NULL CHECK (action IN ('corrected', 'removed')),
    before      TEXT NOT NULL,
    reason      TEXT NOT NULL DEFAULT ''
);
CREATE INDEX roll_entry_change_entry ON roll_entry_change (kind, entry);
