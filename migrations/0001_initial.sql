-- Sagline schema: studies and their model parameters, wells, surfaces (formation tops),
-- the per-study lithology catalogue, sea-level points, uploads and the activity log.
-- Timestamps are UTC in RFC 3339 form.

CREATE TABLE studies (
    id                          INTEGER PRIMARY KEY,
    name                        TEXT NOT NULL UNIQUE,
    description                 TEXT NOT NULL DEFAULT '',
    created_at                  TEXT NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%SZ', 'now')),
    mantle_density_kg_m3        REAL NOT NULL,
    crust_density_kg_m3         REAL NOT NULL,
    water_density_kg_m3         REAL NOT NULL,
    lithosphere_thickness_m     REAL NOT NULL,
    crust_thickness_m           REAL NOT NULL,
    asthenosphere_temperature_c REAL NOT NULL,
    thermal_expansion_per_c     REAL NOT NULL,
    thermal_diffusivity_m2_s    REAL NOT NULL,
    thermal_conductivity_w_m_k  REAL NOT NULL
);

CREATE TABLE uploads (
    id          INTEGER PRIMARY KEY,
    study_id    INTEGER NOT NULL REFERENCES studies(id) ON DELETE CASCADE,
    file_name   TEXT NOT NULL,
    kind        TEXT NOT NULL CHECK (kind IN ('tops', 'wells', 'sea level')),
    uploaded_at TEXT NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%SZ', 'now')),
    uploaded_by TEXT NOT NULL,
    rows        INTEGER NOT NULL,
    outcome     TEXT NOT NULL
);
CREATE INDEX uploads_by_study ON uploads(study_id);

CREATE TABLE wells (
    id        INTEGER PRIMARY KEY,
    study_id  INTEGER NOT NULL REFERENCES studies(id) ON DELETE CASCADE,
    name      TEXT NOT NULL,
    x         REAL,
    y         REAL,
    lat       REAL,
    lon       REAL,
    notes     TEXT NOT NULL DEFAULT '',
    upload_id INTEGER REFERENCES uploads(id) ON DELETE SET NULL,
    UNIQUE (study_id, name)
);

CREATE TABLE surfaces (
    id                INTEGER PRIMARY KEY,
    well_id           INTEGER NOT NULL REFERENCES wells(id) ON DELETE CASCADE,
    position          INTEGER NOT NULL,  -- 0 = shallowest (the present depositional surface)
    horizon           TEXT NOT NULL,
    depth_m           REAL NOT NULL,     -- below present sea level, positive down
    age_ma            REAL NOT NULL,
    lithology         TEXT,              -- unit below: 'shale' or 'shale:60;sandstone:40'; NULL on the deepest
    water_depth_min_m REAL NOT NULL,
    water_depth_max_m REAL NOT NULL,
    eroded_m          REAL,
    eroded_at_ma      REAL,
    UNIQUE (well_id, horizon),
    UNIQUE (well_id, position)
);

CREATE TABLE lithologies (
    id                  INTEGER PRIMARY KEY,
    study_id            INTEGER NOT NULL REFERENCES studies(id) ON DELETE CASCADE,
    name                TEXT NOT NULL COLLATE NOCASE,
    surface_porosity    REAL NOT NULL,
    compaction_per_km   REAL NOT NULL,
    grain_density_kg_m3 REAL NOT NULL,
    source              TEXT NOT NULL DEFAULT '',
    UNIQUE (study_id, name)
);

CREATE TABLE sea_level_points (
    id          INTEGER PRIMARY KEY,
    study_id    INTEGER NOT NULL REFERENCES studies(id) ON DELETE CASCADE,
    age_ma      REAL NOT NULL,
    sea_level_m REAL NOT NULL,
    UNIQUE (study_id, age_ma)
);

-- Every change, with who, when, and the state before and after (JSON or text).
CREATE TABLE activity (
    id       INTEGER PRIMARY KEY,
    study_id INTEGER REFERENCES studies(id) ON DELETE CASCADE,
    at       TEXT NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ', 'now')),
    actor    TEXT NOT NULL,
    action   TEXT NOT NULL,
    subject  TEXT NOT NULL,
    before_state TEXT,
    after_state  TEXT
);
CREATE INDEX activity_by_study ON activity(study_id, id);
