-- Sign-in sessions of the built-in squad board. A dietitian exchanges an API
-- token for a session cookie once; the cookie's secret is never stored, only
-- its SHA-256. A session dies with its token (revocation or deletion), at
-- its expiry, or at sign-out (row deleted).
CREATE TABLE board_sessions (
    -- SHA-256 of the cookie's 256-bit secret
    secret_hash   BLOB PRIMARY KEY NOT NULL,
    token_id      TEXT NOT NULL,
    created_at    TEXT NOT NULL,
    expires_at    TEXT NOT NULL,
    CONSTRAINT board_sessions_token_fk FOREIGN KEY (token_id) REFERENCES api_tokens (id) ON DELETE CASCADE
) STRICT;
CREATE INDEX board_sessions_by_expiry ON board_sessions (expires_at);
