-- Sections of a study: a named line of two or more points in the study's map
-- coordinates (x, y in m, as the wells' positions), the distance from the line within
-- which wells are placed on it, and the elastic thickness Te of its flexural
-- backstripping as a reviewed choice (proposed or agreed). `version` is 1 when the
-- section is made and +1 on every change, so a save against an old version is refused.

CREATE TABLE sections (
    id                   INTEGER PRIMARY KEY,
    study_id             INTEGER NOT NULL REFERENCES studies(id) ON DELETE CASCADE,
    name                 TEXT NOT NULL,
    points               TEXT NOT NULL,  -- JSON: [{"x_m": ..., "y_m": ...}, ...], in order along the line
    max_offset_m         REAL NOT NULL CHECK (max_offset_m >= 0),
    elastic_thickness_km REAL NOT NULL CHECK (elastic_thickness_km >= 0),
    te_state             TEXT NOT NULL CHECK (te_state IN ('proposed', 'agreed')),
    version              INTEGER NOT NULL,
    updated_by           TEXT NOT NULL,
    updated_at           TEXT NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%SZ', 'now')),
    UNIQUE (study_id, name)
);
