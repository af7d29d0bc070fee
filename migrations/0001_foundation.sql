-- Foundation schema: squads, athletes, the planned week, access tokens and the audit trail.
--
-- Conventions (kept by every later migration):
-- * ids are UUIDs stored as hyphenated TEXT, so the file stays readable with the sqlite3 shell;
-- * dates are ISO TEXT (YYYY-MM-DD), local times HH:MM, instants RFC 3339 UTC TEXT;
-- * every mutable row carries `version`, bumped on each write: it is the ETag;
-- * constraints are named, because the service maps names to API errors.

CREATE TABLE teams (
    id          TEXT PRIMARY KEY NOT NULL,
    name        TEXT NOT NULL,
    time_zone   TEXT NOT NULL,
    version     INTEGER NOT NULL DEFAULT 1,
    created_at  TEXT NOT NULL,
    updated_at  TEXT NOT NULL,
    CONSTRAINT teams_name_unique UNIQUE (name)
) STRICT;

CREATE TABLE athletes (
    id                       TEXT PRIMARY KEY NOT NULL,
    team_id                  TEXT NOT NULL,
    display_name             TEXT NOT NULL,
    sex                      TEXT NOT NULL,
    date_of_birth            TEXT NOT NULL,
    height_cm                REAL NOT NULL,
    body_fat_percent         REAL,
    fat_free_mass_kg         REAL,
    -- JSON, the engine's Vo2maxSource exactly as given
    vo2max                   TEXT,
    hr_max                   REAL,
    hr_rest                  REAL,
    training_status          TEXT NOT NULL,
    position_group           TEXT,
    goal                     TEXT NOT NULL DEFAULT 'maintain',
    goal_rate_kg_per_week    REAL,
    dietary_notes            TEXT,
    -- JSON array of care flags that make the plan defer to a clinician
    care_flags               TEXT NOT NULL DEFAULT '[]',
    status                   TEXT NOT NULL DEFAULT 'active',
    version                  INTEGER NOT NULL DEFAULT 1,
    created_at               TEXT NOT NULL,
    updated_at               TEXT NOT NULL,
    CONSTRAINT athletes_team_fk FOREIGN KEY (team_id) REFERENCES teams (id) ON DELETE CASCADE,
    CONSTRAINT athletes_status_check CHECK (status IN ('active', 'archived'))
) STRICT;
CREATE INDEX athletes_by_team ON athletes (team_id, display_name, id);

CREATE TABLE body_mass_measurements (
    id            TEXT PRIMARY KEY NOT NULL,
    athlete_id    TEXT NOT NULL,
    measured_on   TEXT NOT NULL,
    body_mass_kg  REAL NOT NULL,
    note          TEXT,
    created_at    TEXT NOT NULL,
    CONSTRAINT body_mass_athlete_fk FOREIGN KEY (athlete_id) REFERENCES athletes (id) ON DELETE CASCADE,
    -- one reading per athlete and day keeps "latest on or before a date" unambiguous
    CONSTRAINT body_mass_one_per_day UNIQUE (athlete_id, measured_on)
) STRICT;

CREATE TABLE sessions (
    id                    TEXT PRIMARY KEY NOT NULL,
    team_id               TEXT NOT NULL,
    local_date            TEXT NOT NULL,
    start_time            TEXT NOT NULL,
    kind                  TEXT NOT NULL,
    title                 TEXT NOT NULL,
    key_session           INTEGER NOT NULL DEFAULT 0,
    train_low             INTEGER NOT NULL DEFAULT 0,
    carbohydrate_loading  INTEGER NOT NULL DEFAULT 0,
    notes                 TEXT,
    -- JSON array of segments exactly as given (minutes + intensity in the coach's form)
    segments              TEXT NOT NULL,
    version               INTEGER NOT NULL DEFAULT 1,
    created_at            TEXT NOT NULL,
    updated_at            TEXT NOT NULL,
    CONSTRAINT sessions_team_fk FOREIGN KEY (team_id) REFERENCES teams (id) ON DELETE CASCADE
) STRICT;
CREATE INDEX sessions_by_team_date ON sessions (team_id, local_date, start_time, id);

-- Only exceptions are stored: an athlete without a row takes full part.
CREATE TABLE participation (
    session_id    TEXT NOT NULL,
    athlete_id    TEXT NOT NULL,
    mode          TEXT NOT NULL,
    minutes       REAL,
    portion       TEXT,
    -- JSON array of segments for a replaced (e.g. rehab) session
    segments      TEXT,
    note          TEXT,
    version       INTEGER NOT NULL DEFAULT 1,
    updated_at    TEXT NOT NULL,
    PRIMARY KEY (session_id, athlete_id),
    CONSTRAINT participation_session_fk FOREIGN KEY (session_id) REFERENCES sessions (id) ON DELETE CASCADE,
    CONSTRAINT participation_athlete_fk FOREIGN KEY (athlete_id) REFERENCES athletes (id) ON DELETE CASCADE,
    CONSTRAINT participation_mode_check CHECK (mode IN ('skipped', 'shortened', 'replaced'))
) STRICT;
CREATE INDEX participation_by_athlete ON participation (athlete_id);

CREATE TABLE api_tokens (
    id            TEXT PRIMARY KEY NOT NULL,
    label         TEXT NOT NULL,
    role          TEXT NOT NULL,
    team_id       TEXT,
    -- SHA-256 of the secret; the secret itself is shown once and never stored
    token_hash    BLOB NOT NULL,
    created_at    TEXT NOT NULL,
    revoked_at    TEXT,
    CONSTRAINT api_tokens_hash_unique UNIQUE (token_hash),
    CONSTRAINT api_tokens_team_fk FOREIGN KEY (team_id) REFERENCES teams (id) ON DELETE CASCADE,
    CONSTRAINT api_tokens_role_check CHECK (role IN ('admin', 'planner', 'reader')),
    CONSTRAINT api_tokens_scope_check CHECK ((role = 'admin') = (team_id IS NULL))
) STRICT;

-- Append-only. Team deletion keeps its trail (no foreign key on purpose).
CREATE TABLE audit_log (
    seq           INTEGER PRIMARY KEY AUTOINCREMENT,
    occurred_at   TEXT NOT NULL,
    token_id      TEXT,
    team_id       TEXT,
    action        TEXT NOT NULL,
    entity_type   TEXT NOT NULL,
    entity_id     TEXT NOT NULL,
    before_json   TEXT,
    after_json    TEXT
) STRICT;
CREATE INDEX audit_by_team ON audit_log (team_id, seq);
