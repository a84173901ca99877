-- Why: the web page (`onhand serve`) lets the members of a shared cabinet look up, hold and take
-- parts from a phone. Each needs an account (created from the command line) with a right level
-- (member or organiser) and an Argon2id password hash, and each login a session whose token is
-- stored only as a hash, with its own anti-forgery token for forms. Removing a member ends their
-- sessions; the ledger keeps their name as text, so history survives the account.

CREATE TABLE member (
    id          INTEGER PRIMARY KEY,
    name        TEXT    NOT NULL UNIQUE COLLATE NOCASE
                        CHECK (length(name) BETWEEN 1 AND 64),
    organiser   INTEGER NOT NULL DEFAULT 0 CHECK (organiser IN (0, 1)),
    -- Argon2id PHC string; NULL until a password is set (no login possible).
    password    TEXT,
    created_at  TEXT    NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ', 'now'))
);

CREATE TABLE session (
    -- BLAKE2s-256 of the cookie's token, hex; the token itself is never stored.
    token_hash  TEXT    PRIMARY KEY,
    member_id   INTEGER NOT NULL REFERENCES member (id) ON DELETE CASCADE,
    csrf        TEXT    NOT NULL,
    created_at  TEXT    NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ', 'now')),
    expires_at  TEXT    NOT NULL
);

CREATE INDEX session_by_member ON session (member_id);
