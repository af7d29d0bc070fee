-- What the planner stores beyond the week itself: dietitian pins, sweat
-- tests, team plan settings and secret calendar-feed links.

-- A dietitian's pinned targets for one athlete and date. The engine keeps
-- the pin and shows its own value beside it.
CREATE TABLE day_pins (
    athlete_id              TEXT NOT NULL,
    local_date              TEXT NOT NULL,
    carbohydrate_g_per_kg   REAL,
    protein_g_per_kg        REAL,
    energy_kcal             REAL,
    note                    TEXT,
    version                 INTEGER NOT NULL DEFAULT 1,
    updated_at              TEXT NOT NULL,
    PRIMARY KEY (athlete_id, local_date),
    CONSTRAINT day_pins_athlete_fk FOREIGN KEY (athlete_id) REFERENCES athletes (id) ON DELETE CASCADE
) STRICT;

-- Sweat-rate tests (body mass before/after a session); the latest one gives
-- session plans their fluid target.
CREATE TABLE sweat_tests (
    id                    TEXT PRIMARY KEY NOT NULL,
    athlete_id            TEXT NOT NULL,
    tested_on             TEXT NOT NULL,
    body_mass_before_kg   REAL NOT NULL,
    body_mass_after_kg    REAL NOT NULL,
    fluid_drunk_l         REAL NOT NULL,
    urine_l               REAL NOT NULL,
    duration_hours        REAL NOT NULL,
    note                  TEXT,
    created_at            TEXT NOT NULL,
    CONSTRAINT sweat_tests_athlete_fk FOREIGN KEY (athlete_id) REFERENCES athletes (id) ON DELETE CASCADE
) STRICT;
CREATE INDEX sweat_tests_by_athlete ON sweat_tests (athlete_id, tested_on);

-- The engine's PlanSettings for a team as JSON (thresholds, factors); NULL
-- means the documented defaults.
ALTER TABLE teams ADD COLUMN plan_settings TEXT;

-- Secret, revocable links for calendar apps (which cannot send bearer
-- tokens). Only the hash of the secret is stored.
CREATE TABLE calendar_feeds (
    id            TEXT PRIMARY KEY NOT NULL,
    athlete_id    TEXT NOT NULL,
    secret_hash   BLOB NOT NULL,
    created_at    TEXT NOT NULL,
    revoked_at    TEXT,
    CONSTRAINT calendar_feeds_hash_unique UNIQUE (secret_hash),
    CONSTRAINT calendar_feeds_athlete_fk FOREIGN KEY (athlete_id) REFERENCES athletes (id) ON DELETE CASCADE
) STRICT;
