-- The Saved list's filters, sorts and counts at a million snippets, with a plan
-- that does not hang on the statistics SQLite keeps.
--
-- snippet_updated (deleted_at, updated_at) looked to the query planner like a
-- seek to about 50 snippets for "deleted_at IS NULL" (ANALYZE counts every
-- stamp of the bin as its own value), so it won over the list's own indexes and
-- a press filter or a title sort read and sorted every live snippet. It gives
-- way to a partial index of live snippets by last change and one of the bin.
--
-- Every index the list walks now also holds the other filter columns (kind,
-- press, station and the time of the last change), so a filter is checked in
-- the index and a snippet's row is read only for the page shown.
DROP INDEX snippet_updated;
DROP INDEX snippet_live_press;
DROP INDEX snippet_live_station;
DROP INDEX snippet_live_kind;
DROP INDEX snippet_live_title;
DROP INDEX snippet_live_job;

CREATE INDEX snippet_live_updated ON snippet (updated_at, id, kind, press, station) WHERE deleted_at IS NULL;
CREATE INDEX snippet_binned ON snippet (deleted_at, id) WHERE deleted_at IS NOT NULL;
-- The export, oldest first, streams from its first snippet instead of sorting them all.
CREATE INDEX snippet_live_created ON snippet (created_at, id) WHERE deleted_at IS NULL;
CREATE INDEX snippet_live_press ON snippet (press, updated_at, id, kind, station) WHERE deleted_at IS NULL;
CREATE INDEX snippet_live_station ON snippet (station, updated_at, id, kind, press) WHERE deleted_at IS NULL;
CREATE INDEX snippet_live_kind ON snippet (kind, updated_at, id, press, station) WHERE deleted_at IS NULL;
CREATE INDEX snippet_live_title ON snippet (title COLLATE NOCASE, id, kind, press, station, updated_at)
    WHERE deleted_at IS NULL;
CREATE INDEX snippet_live_job ON snippet (job_number = '', job_number COLLATE NOCASE, station, id, kind, press,
    updated_at) WHERE deleted_at IS NULL;

-- snippet_tally: how many snippets not in the bin have each kind, press and
-- station. The Saved list's count without words or dates is a sum over these
-- few rows, not a count of a million. Triggers keep it in step; no code writes it.
CREATE TABLE snippet_tally (
    kind    TEXT NOT NULL,
    press   TEXT NOT NULL,
    station TEXT NOT NULL,
    live    INTEGER NOT NULL,
    PRIMARY KEY (kind, press, station)
) WITHOUT ROWID;

INSERT INTO snippet_tally (kind, press, station, live)
    SELECT kind, press, station, count(*) FROM snippet WHERE deleted_at IS NULL GROUP BY kind, press, station;

CREATE TRIGGER snippet_tally_insert AFTER INSERT ON snippet WHEN new.deleted_at IS NULL
BEGIN
    INSERT INTO snippet_tally (kind, press, station, live) VALUES (new.kind, new.press, new.station, 1)
        ON CONFLICT (kind, press, station) DO UPDATE SET live = live + 1;
END;

CREATE TRIGGER snippet_tally_delete AFTER DELETE ON snippet WHEN old.deleted_at IS NULL
BEGIN
    UPDATE snippet_tally SET live = live - 1
        WHERE kind = old.kind AND press = old.press AND station = old.station;
END;

CREATE TRIGGER snippet_tally_update_old AFTER UPDATE OF kind, press, station, deleted_at ON snippet
WHEN old.deleted_at IS NULL AND (new.deleted_at IS NOT NULL OR old.kind IS NOT new.kind
     OR old.press IS NOT new.press OR old.station IS NOT new.station)
BEGIN
    UPDATE snippet_tally SET live = live - 1
        WHERE kind = old.kind AND press = old.press AND station = old.station;
END;

CREATE TRIGGER snippet_tally_update_new AFTER UPDATE OF kind, press, station, deleted_at ON snippet
WHEN new.deleted_at IS NULL AND (old.deleted_at IS NOT NULL OR old.kind IS NOT new.kind
     OR old.press IS NOT new.press OR old.station IS NOT new.station)
BEGIN
    INSERT INTO snippet_tally (kind, press, station, live) VALUES (new.kind, new.press, new.station, 1)
        ON CONFLICT (kind, press, station) DO UPDATE SET live = live + 1;
END;
