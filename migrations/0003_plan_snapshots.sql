-- Compact copies of computed squad summaries, keyed by the team's input
-- version, so a planner can see what a change did to the plan. Only the
-- most recent snapshots per team are kept (pruned by the service).
CREATE TABLE plan_snapshots (
    team_id       TEXT NOT NULL,
    version       INTEGER NOT NULL,
    span_from     TEXT NOT NULL,
    span_to       TEXT NOT NULL,
    -- JSON array of summary rows (one per athlete and day)
    rows          TEXT NOT NULL,
    created_at    TEXT NOT NULL,
    PRIMARY KEY (team_id, version, span_from, span_to),
    CONSTRAINT plan_snapshots_team_fk FOREIGN KEY (team_id) REFERENCES teams (id) ON DELETE CASCADE
) STRICT;
