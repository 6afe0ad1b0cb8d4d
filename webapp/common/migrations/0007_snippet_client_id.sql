-- A save may carry an id its sender made (a phone's outbox makes one per save), so a
-- save sent twice is kept once. client_digest is the SHA-256 of what the first save
-- held (kind, inputs, title, …): a repeat is told apart from another save that reuses
-- the id. Snippets saved without one keep NULL in both (many NULLs are allowed).
ALTER TABLE snippet ADD COLUMN client_id TEXT;
ALTER TABLE snippet ADD COLUMN client_digest TEXT;
CREATE UNIQUE INDEX snippet_client_id ON snippet (client_id);
