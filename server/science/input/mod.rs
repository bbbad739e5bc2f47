//! Reading and checking the input files: tops, wells, sea level and picks.
//!
//! The web upload and the `sagline analyze` command both come through here. This
//! module does no file or network I/O: it takes a file's bytes and returns typed,
//! validated data, or every problem found, each with its file, line, column and
//! reason (e.g. `tops.csv line 7, column depth_m: "abc" is not a number`). At most
//! [`MAX_PROBLEMS`] are listed, then one "and N more problems" entry. Nothing of a
//! file that has a problem should be stored.
//!
//! # Input formats
//!
//! All four files are CSV: comma-separated, UTF-8 (a byte-order mark is fine),
//! at most 64 MiB, with a header row. Header names are matched in any case and
//! columns may come in any order; spaces or hyphens in a header read as `_`
//! (`Depth M` is `depth_m`). Cells are trimmed; blank lines are skipped; every row
//! must have as many fields as the header (quote a cell that holds a comma, and
//! close every quote: one left open is refused at its line). Numbers use a
//! decimal point (`1250.5`, `1.2e3`). Line numbers count the header as line 1. A
//! [`ColumnMapping`] names our column for any other header
//! (`Well Name` → `well`, `TVDSS` → `depth_ft`, or `""` to ignore a header).
//!
//! ## Tops file
//!
//! One row per surface (formation top). Rows of a well may come in any order;
//! they are sorted by depth, then age.
//!
//! | column | meaning |
//! |---|---|
//! | `well` | well name (required) |
//! | `horizon` | surface name (required; unique within a well, in any case) |
//! | `depth_m` or `depth_ft` | depth below present sea level, positive down (required) |
//! | `age_ma` | age of the surface in Ma, not negative (required); ages increase with depth |
//! | `lithology` | the unit between this surface and the next deeper one: a catalogue name (any case), or a mix `shale:60;sandstone:40` (percent, summing to 100 within 0.01); empty only on a well's deepest surface |
//! | `water_depth_m`, or `water_depth_min_m` + `water_depth_max_m` | palaeo-water depth when this surface was the depositional surface, m; negative is land elevation; default 0, but the shallowest surface's default is its own depth |
//! | `eroded_m` + `eroded_at_ma` | optional, on the deeper of two surfaces at one depth, just below an erosional unconformity: a section of the unit-below's lithology was laid down on it until `eroded_at_ma`, when it was `eroded_m` thick (positive), then removed; `eroded_at_ma` lies strictly between the age of the surface above and this surface's age |
//!
//! - Depths in `depth_ft`, or when the user says the depth unit is feet, are
//!   converted to metres (1 ft = 0.3048 m). Water depths and `eroded_m` are in
//!   metres unless the user sets their unit to feet as well.
//! - Two surfaces at one depth are a hiatus or an unconformity and need two ages;
//!   erosion is given on the deeper of the two.
//! - A well needs at least two surfaces.
//! - Other columns are reported in the notes and ignored.
//!
//! ## Wells file (optional)
//!
//! | column | meaning |
//! |---|---|
//! | `well` | well name (required; each well once) |
//! | `x` + `y` | projected position, m |
//! | `lat` + `lon` | position in degrees (-90 to 90, -180 to 180) |
//!
//! Each row needs one whole pair (or both). Every other column is kept as the
//! well's notes, as `header: value; header: value`.
//!
//! ## Sea-level file (optional)
//!
//! | column | meaning |
//! |---|---|
//! | `age_ma` | age in Ma, not negative, each age once (required) |
//! | `sea_level_m` | eustatic sea level above present, m (required) |
//!
//! The curve is linearly interpolated between points and held at its ends.
//!
//! ## Picks file (for `sagline analyze --picks`)
//!
//! | column | meaning |
//! |---|---|
//! | `well` | well name (required; each well once per event) |
//! | `rift_onset_ma` | rift onset, Ma (required, not negative, at most 4,600: the age of the Earth) |
//! | `rift_end_ma` | rift end, Ma (required, as the onset, and younger than it) |
//! | `event` | 1 (the older rift event, the default) or 2; event 2 needs an event 1 and starts when or after it ends |
//!
//! ## Example tops file
//!
//! ```text
//! well,horizon,depth_m,age_ma,lithology,water_depth_min_m,water_depth_max_m,eroded_m,eroded_at_ma
//! Fictive-1,Sea floor,120,0,shale,,,,
//! Fictive-1,Mid unit,850,23,shale:60;sandstone:40,50,150,,
//! Fictive-1,Unconformity,1400,30,sandstone,,,,
//! Fictive-1,Break,1400,66,sandstone,0,20,300,40
//! Fictive-1,Base,2100,145,,,,,
//! ```

mod bounds;
mod calibration;
mod columns;
mod guess;
mod lithology;
mod picks;
mod preview;
mod problems;
mod sea_level;
mod table;
mod tops;
#[cfg(test)]
mod tops_refusal_tests;
#[cfg(test)]
mod tops_roundtrip_tests;
#[cfg(test)]
mod tops_tests;
mod wells;

pub use bounds::{
    AGE_MA, COORDINATE_M, DEPTH_M, ERODED_M, MAX_NAME_CHARS, MAX_NOTE_CHARS, PhysicalRange,
    SEA_LEVEL_M, WATER_DEPTH_M, check_length,
};
pub use calibration::{CalibrationKind, CalibrationPoint, parse_calibration};
pub use columns::{ColumnMapping, DepthUnit, FileKind, MatchedColumn};
pub use guess::guess_mapping;
pub use lithology::MIX_SUM_TOLERANCE_PERCENT;
pub use picks::{RiftPick, parse_picks, timings_of};
pub use preview::{PREVIEW_ROWS, Preview, PreviewOptions, PreviewRow, preview, preview_read};
pub use problems::{InputProblem, MAX_PROBLEMS, name_file};
pub use sea_level::{parse_sea_level, parse_sea_level_read};
pub use table::{MAX_FILE_BYTES, ReadFile};
pub use tops::{ParsedTops, TopsOptions, parse_tops, parse_tops_read, parse_tops_with_catalogue};
pub use wells::{ParsedWells, WellLocation, WellsOptions, parse_wells, parse_wells_read};
