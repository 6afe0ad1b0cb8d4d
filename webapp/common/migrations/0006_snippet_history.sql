    -- Who changed a snippet last and who moved it to the bin, and every earlier version:
    -- before a change, the snippet as it was is copied into ``snippet_version``.
    -- ``data`` is JSON: the fields a person edits, the inputs and the results.
    ALTER TABLE snippet ADD COLUMN changed_by TEXT NOT NULL DEFAULT '';
    ALTER TABLE snippet ADD COLUMN deleted_by TEXT NOT NULL DEFAULT '';
    CREATE TABLE snippet_version (
        snippet_id  INTEGER NOT NULL REFERENCES snippet(id) ON DELETE CASCADE,
        version     INTEGER NOT NULL,
        data        TEXT NOT NULL,
        changed_by  TEXT NOT NULL DEFAULT '',
        changed_at  TEXT NOT NULL,
        PRIMARY KEY (snippet_id, version)
    );
