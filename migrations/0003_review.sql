-- The team's review: rift picks per well and event, with a state and a version for
-- conflict-safe edits, and a discussion thread per well (optionally about one pick).

CREATE TABLE picks (
    id            INTEGER PRIMARY KEY,
    well_id       INTEGER NOT NULL REFERENCES wells(id) ON DELETE CASCADE,
    event         INTEGER NOT NULL CHECK (event IN (1, 2)),  -- first or second rift event
    rift_onset_ma REAL NOT NULL,
    rift_end_ma   REAL NOT NULL,
    model         TEXT NOT NULL CHECK (model IN ('uniform', 'two-layer')),
    state         TEXT NOT NULL CHECK (state IN ('draft', 'agreed', 'questioned')),
    version       INTEGER NOT NULL,  -- 1 for a new pick, +1 on every save
    updated_by    TEXT NOT NULL,
    updated_at    TEXT NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%SZ', 'now')),
    CHECK (rift_onset_ma > rift_end_ma AND rift_end_ma >= 0),
    UNIQUE (well_id, event)
);

CREATE TABLE comments (
    id         INTEGER PRIMARY KEY,
    well_id    INTEGER NOT NULL REFERENCES wells(id) ON DELETE CASCADE,
    pick_event INTEGER CHECK (pick_event IN (1, 2)),  -- NULL: about the well in general
    author     TEXT NOT NULL,
    body       TEXT NOT NULL,
    created_at TEXT NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%SZ', 'now'))
);
CREATE INDEX comments_by_well ON comments(well_id, id);
