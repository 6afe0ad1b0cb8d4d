-- The shop's inks, ink sets (an ink on a substrate) and the density readings
-- each set's Tollenaar–Ernst curve is fitted to. Inks and sets are versioned
-- like snippets and rolls. An ink in use by a set cannot be deleted.
CREATE TABLE ink (
    id                INTEGER PRIMARY KEY,
    name              TEXT NOT NULL,
    name_key          TEXT NOT NULL UNIQUE,
    ink_type          TEXT NOT NULL CHECK (ink_type IN ('water_based', 'solvent_based', 'uv')),
    density_g_cm3     REAL NOT NULL,
    solids_by_volume  REAL,
    solids_by_weight  REAL,
    price             REAL,
    price_per         TEXT NOT NULL DEFAULT 'kg' CHECK (price_per IN ('kg', 'lb')),
    notes             TEXT NOT NULL DEFAULT '',
    created_at        TEXT NOT NULL,
    updated_at        TEXT NOT NULL,
    version           INTEGER NOT NULL DEFAULT 1
);

CREATE TABLE ink_set (
    id          INTEGER PRIMARY KEY,
    name        TEXT NOT NULL,
    name_key    TEXT NOT NULL UNIQUE,
    ink         INTEGER NOT NULL REFERENCES ink(id),
    substrate   TEXT NOT NULL,
    notes       TEXT NOT NULL DEFAULT '',
    created_at  TEXT NOT NULL,
    updated_at  TEXT NOT NULL,
    version     INTEGER NOT NULL DEFAULT 1
);
CREATE INDEX ink_set_ink ON ink_set (ink);

CREATE TABLE ink_reading (
    id             INTEGER PRIMARY KEY,
    ink_set        INTEGER NOT NULL REFERENCES ink_set(id) ON DELETE CASCADE,
    read_on        TEXT NOT NULL,
    density        REAL NOT NULL,
    film_um        REAL NOT NULL,
    anilox_cm3_m2  REAL,
    transfer       REAL,
    notes          TEXT NOT NULL DEFAULT '',
    created_at     TEXT NOT NULL,
    updated_at     TEXT NOT NULL,
    version        INTEGER NOT NULL DEFAULT 1
);
CREATE INDEX ink_reading_set ON ink_reading (ink_set, read_on);
