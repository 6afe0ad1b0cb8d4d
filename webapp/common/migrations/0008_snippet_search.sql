-- Search and the Saved list at shop scale (a million snippets).
--
-- snippet_search: an FTS5 index of the words of every snippet not in the bin
-- (title, job number, notes, tags); its rowid is the snippet's id. Triggers
-- keep it in step with snippet and snippet_tag, so no code writes it. Words
-- are found whole or by their start ("cy" finds Cyan); the 2- and 3-letter
-- prefix indexes keep the first keystrokes quick. Accents are ignored.
CREATE VIRTUAL TABLE snippet_search USING fts5(
    title, job_number, notes, tags,
    tokenize = 'unicode61 remove_diacritics 2',
    prefix = '2 3'
);

INSERT INTO snippet_search (rowid, title, job_number, notes, tags)
    SELECT s.id, s.title, s.job_number, s.notes,
           coalesce((SELECT group_concat(t.tag, ' ') FROM snippet_tag t WHERE t.snippet_id = s.id), '')
    FROM snippet s WHERE s.deleted_at IS NULL;

CREATE TRIGGER snippet_search_insert AFTER INSERT ON snippet WHEN new.deleted_at IS NULL
BEGIN
    INSERT INTO snippet_search (rowid, title, job_number, notes, tags)
        VALUES (new.id, new.title, new.job_number, new.notes, '');
END;

CREATE TRIGGER snippet_search_update AFTER UPDATE OF title, job_number, notes, deleted_at ON snippet
WHEN old.title IS NOT new.title OR old.job_number IS NOT new.job_number OR old.notes IS NOT new.notes
     OR (old.deleted_at IS NULL) <> (new.deleted_at IS NULL)
BEGIN
    DELETE FROM snippet_search WHERE rowid = old.id;
    INSERT INTO snippet_search (rowid, title, job_number, notes, tags)
        SELECT new.id, new.title, new.job_number, new.notes,
               coalesce((SELECT group_concat(t.tag, ' ') FROM snippet_tag t WHERE t.snippet_id = new.id), '')
        WHERE new.deleted_at IS NULL;
END;

CREATE TRIGGER snippet_search_delete AFTER DELETE ON snippet
BEGIN
    DELETE FROM snippet_search WHERE rowid = old.id;
END;

CREATE TRIGGER snippet_search_tag_insert AFTER INSERT ON snippet_tag
BEGIN
    UPDATE snippet_search
        SET tags = (SELECT group_concat(t.tag, ' ') FROM snippet_tag t WHERE t.snippet_id = new.snippet_id)
        WHERE rowid = new.snippet_id;
END;

CREATE TRIGGER snippet_search_tag_delete AFTER DELETE ON snippet_tag
BEGIN
    UPDATE snippet_search
        SET tags = coalesce((SELECT group_concat(t.tag, ' ') FROM snippet_tag t WHERE t.snippet_id = old.snippet_id), '')
        WHERE rowid = old.snippet_id;
END;

-- The list's filters and sorts over snippets not in the bin (newest and oldest
-- change walk snippet_updated of 0002; job numbers sort empty ones last). The press and
-- station indexes also give the filter menus their distinct values by a few
-- index seeks, not a scan of every snippet.
CREATE INDEX snippet_live_press ON snippet (press, updated_at) WHERE deleted_at IS NULL;
CREATE INDEX snippet_live_station ON snippet (station, updated_at) WHERE deleted_at IS NULL;
CREATE INDEX snippet_live_kind ON snippet (kind, updated_at) WHERE deleted_at IS NULL;
CREATE INDEX snippet_live_title ON snippet (title COLLATE NOCASE, id) WHERE deleted_at IS NULL;
CREATE INDEX snippet_live_job ON snippet (job_number = '', job_number COLLATE NOCASE, station, id)
    WHERE deleted_at IS NULL;
