
    CREATE TABLE snippet_tag (
        snippet_id  INTEGER NOT NULL REFERENCES snippet(id) ON DELETE CASCADE,
        tag         TEXT NOT NULL,
        PRIMARY KEY (snippet_id, tag)
    );
    WITH RECURSIVE split(snippet_id, tag, rest) AS (
        SELECT id, '', tags || ',' FROM snippet
        UNION ALL
        SELECT snippet_id, trim(substr(rest, 1, instr(rest, ',') - 1)), substr(rest, instr(rest, ',') + 1)
        FROM split WHERE rest <> ''
    )
    INSERT OR IGNORE INTO snippet_tag (snippet_id, tag)
        SELECT snippet_id, lower(tag) FROM split WHERE tag <> '';
    ALTER TABLE snippet DROP COLUMN tags;
    CREATE INDEX snippet_tag_tag ON snippet_tag (tag);
    CREATE INDEX snippet_job ON snippet (job_number);
    CREATE INDEX snippet_press ON snippet (press);
    CREATE INDEX snippet_updated ON snippet (deleted_at, updated_at);
    