//! The tops file: one row per surface, grouped into validated well columns.

use super::bounds::{AGE_MA, DEPTH_M, ERODED_M, MAX_NAME_CHARS, PhysicalRange, WATER_DEPTH_M};
use super::columns::{ColumnMapping, Columns, DepthUnit, Field, FileKind};
use super::lithology::LithologyNames;
use super::problems::{InputProblem, Problems};
use super::table::{ReadFile, Row};
use crate::{Erosion, LithologyMix, Surface, WaterDepth, WellColumn};
use serde::{Deserialize, Serialize};
use std::collections::HashMap;
use std::collections::hash_map::Entry;

/// Longest lithology cell (a name or a mix such as `shale:60;sandstone:40`), in characters.
const MAX_LITHOLOGY_CHARS: usize = 300;

/// How to read a tops file.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct TopsOptions {
    /// The user's word on odd headers.
    pub mapping: ColumnMapping,
    /// Unit of the depth column. `None`: feet when the column is `depth_ft`, else metres.
    pub depth_unit: Option<DepthUnit>,
    /// Unit of the water depth and `eroded_m` columns (metres unless the user says otherwise).
    pub water_depth_unit: DepthUnit,
    /// The file's name in problems; `tops.csv` when `None`.
    pub file_name: Option<String>,
}

/// A tops file read and validated.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ParsedTops {
    /// The wells in the order they first appear in the file, each shallowest surface first.
    pub wells: Vec<WellColumn>,
    /// Things the user should know that are not errors (ignored columns, unit conversions).
    pub notes: Vec<String>,
    /// Data rows read.
    pub rows: usize,
}

/// Read a tops file. `known_lithology` says whether the study's catalogue holds a
/// name (it should compare in any case); names are kept as written in the file.
/// Use [`parse_tops_with_catalogue`] to store the catalogue's own spelling.
pub fn parse_tops(
    bytes: &[u8],
    options: &TopsOptions,
    known_lithology: &dyn Fn(&str) -> bool,
) -> Result<ParsedTops, Vec<InputProblem>> {
    parse_tops_with_catalogue(bytes, options, &|name| {
        known_lithology(name).then(|| name.to_string())
    })
}

/// Read a tops file. `catalogue_name` gives the catalogue's spelling of a lithology
/// name written in any case, or `None` when the catalogue does not hold it.
pub fn parse_tops_with_catalogue(
    bytes: &[u8],
    options: &TopsOptions,
    catalogue_name: &dyn Fn(&str) -> Option<String>,
) -> Result<ParsedTops, Vec<InputProblem>> {
    let file = options
        .file_name
        .as_deref()
        .unwrap_or(FileKind::Tops.default_file_name());
    parse_tops_read(&ReadFile::read(bytes, file), options, catalogue_name)
}

/// [`parse_tops_with_catalogue`] on a file read before (problems carry its name;
/// `options.file_name` is not used).
pub fn parse_tops_read(
    read: &ReadFile,
    options: &TopsOptions,
    catalogue_name: &dyn Fn(&str) -> Option<String>,
) -> Result<ParsedTops, Vec<InputProblem>> {
    let (table, columns, mut problems) =
        Columns::open_read(read, FileKind::Tops, &options.mapping)?;
    let fields = TopsFields::new(&columns);
    let detected = if fields.depth_in_feet {
        DepthUnit::Feet
    } else {
        DepthUnit::Metres
    };
    let depth_unit = options.depth_unit.unwrap_or(detected);
    let units = Units {
        depth: depth_unit,
        water: options.water_depth_unit,
    };

    let mut names = LithologyNames::new(catalogue_name);
    let mut wells: Vec<WellRows> = Vec::new();
    let mut by_name: HashMap<&str, usize> = HashMap::new();
    for row in &table.rows {
        let (well, top) = if row.complete {
            read_row(row, &fields, units, &mut names, &mut problems)
        } else {
            (
                Some(fields.well.text(row)).filter(|w| !w.is_empty()),
                TopRow::incomplete(row.line),
            )
        };
        let Some(well) = well else { continue };
        let w = *by_name.entry(well).or_insert_with(|| {
            wells.push(WellRows {
                name: well,
                first_line: row.line,
                rows: Vec::new(),
            });
            wells.len() - 1
        });
        wells[w].rows.push(top);
    }
    let columns_built: Vec<WellColumn> = wells
        .iter()
        .filter_map(|w| build_well(w, &fields, &mut problems))
        .collect();

    let mut notes: Vec<String> = columns
        .other_headers()
        .map(|(i, h)| match h {
            "" => format!("column {} has no header and was ignored", i + 1),
            h => format!("column \"{h}\" is not a tops column and was ignored"),
        })
        .collect();
    if depth_unit == DepthUnit::Feet {
        notes.push(format!(
            "depths (column \"{}\") were read in feet and converted to metres (1 ft = 0.3048 m)",
            fields.depth.label()
        ));
    }
    if units.water == DepthUnit::Feet && (fields.has_water_depth || fields.eroded.is_present()) {
        notes.push(
            "water depths and eroded thicknesses were read in feet and converted to metres".into(),
        );
    }
    problems.result(ParsedTops {
        wells: columns_built,
        notes,
        rows: table.rows.len(),
    })
}

#[derive(Clone, Copy)]
struct Units {
    depth: DepthUnit,
    water: DepthUnit,
}

struct TopsFields {
    well: Field,
    horizon: Field,
    depth: Field,
    depth_in_feet: bool,
    age: Field,
    lithology: Field,
    water_depth: Field,
    water_min: Field,
    water_max: Field,
    has_water_depth: bool,
    eroded: Field,
    eroded_at: Field,
}

impl TopsFields {
    fn new(columns: &Columns) -> Self {
        let metres = columns.field("depth_m");
        let depth_in_feet = !metres.is_present();
        let water_depth = columns.field("water_depth_m");
        let water_min = columns.field("water_depth_min_m");
        TopsFields {
            well: columns.field("well"),
            horizon: columns.field("horizon"),
            depth: if depth_in_feet {
                columns.field("depth_ft")
            } else {
                metres
            },
            depth_in_feet,
            age: columns.field("age_ma"),
            lithology: columns.field("lithology"),
            has_water_depth: water_depth.is_present() || water_min.is_present(),
            water_depth,
            water_min,
            water_max: columns.field("water_depth_max_m"),
            eroded: columns.field("eroded_m"),
            eroded_at: columns.field("eroded_at_ma"),
        }
    }
}

/// One row as read, before the well it belongs to is checked as a whole.
struct TopRow<'t> {
    line: usize,
    horizon: &'t str,
    depth_m: Option<f64>,
    age_ma: Option<f64>,
    lithology: Option<LithologyMix>,
    lithology_given: bool,
    /// `None`: not given, so the default applies.
    water_depth: Option<WaterDepth>,
    erosion: Option<Erosion>,
    /// No problem was found in the row.
    sound: bool,
}

impl TopRow<'_> {
    /// A row with the wrong field count (already reported), counted in its well
    /// when its well cell can be read.
    fn incomplete(line: usize) -> Self {
        TopRow {
            line,
            horizon: "",
            depth_m: None,
            age_ma: None,
            lithology: None,
            lithology_given: false,
            water_depth: None,
            erosion: None,
            sound: false,
        }
    }
}

struct WellRows<'t> {
    name: &'t str,
    first_line: usize,
    rows: Vec<TopRow<'t>>,
}

fn read_row<'t>(
    row: &'t Row,
    f: &TopsFields,
    units: Units,
    names: &mut LithologyNames,
    problems: &mut Problems,
) -> (Option<&'t str>, TopRow<'t>) {
    let before = problems.count();
    let well = f.well.required_text(row, problems).and_then(|_| {
        f.well
            .bounded_text(row, problems, "the well name", MAX_NAME_CHARS)
    });
    let horizon = f
        .horizon
        .required_text(row, problems)
        .and_then(|_| {
            f.horizon
                .bounded_text(row, problems, "the horizon name", MAX_NAME_CHARS)
        })
        .unwrap_or("");
    let depth_m = f
        .depth
        .required_number(row, problems)
        .and_then(|d| in_metres(row, &f.depth, units.depth, d, &DEPTH_M, problems));
    let age_ma = f.age.required_number(row, problems).and_then(|age| {
        if age < 0.0 {
            f.age.problem(
                row,
                problems,
                format!("{age} Ma is negative; ages are millions of years before present"),
            );
            return None;
        }
        f.age.within(row, problems, age, &AGE_MA, None)
    });
    let lithology_text = f
        .lithology
        .bounded_text(row, problems, "the lithology", MAX_LITHOLOGY_CHARS)
        .unwrap_or("");
    let lithology = match lithology_text {
        "" => None,
        text => names
            .parse(text)
            .map_err(|reason| f.lithology.problem(row, problems, reason))
            .ok(),
    };
    let water_depth = read_water_depth(row, f, units.water, problems);
    let erosion = read_erosion(row, f, units.water, problems);
    let top = TopRow {
        line: row.line,
        horizon,
        depth_m,
        age_ma,
        lithology,
        // An over-long cell was given (and is reported as such), not left empty.
        lithology_given: !f.lithology.text(row).is_empty(),
        water_depth,
        erosion,
        sound: problems.count() == before,
    };
    (well, top)
}

fn read_water_depth(
    row: &Row,
    f: &TopsFields,
    unit: DepthUnit,
    problems: &mut Problems,
) -> Option<WaterDepth> {
    let read = |field: &Field, problems: &mut Problems| {
        field
            .number(row, problems)
            .and_then(|v| in_metres(row, field, unit, v, &WATER_DEPTH_M, problems))
    };
    let single = read(&f.water_depth, problems);
    let min = read(&f.water_min, problems);
    let max = read(&f.water_max, problems);
    let (min_given, max_given) = (
        !f.water_min.text(row).is_empty(),
        !f.water_max.text(row).is_empty(),
    );
    if !f.water_depth.text(row).is_empty() && (min_given || max_given) {
        let range = if min_given {
            &f.water_min
        } else {
            &f.water_max
        };
        range.problem(
            row,
            problems,
            format!(
                "the row also has {}; give one water depth or a min + max range, not both",
                f.water_depth.label()
            ),
        );
        return None;
    }
    if min_given != max_given {
        let (empty, given) = if min_given {
            (&f.water_max, &f.water_min)
        } else {
            (&f.water_min, &f.water_max)
        };
        empty.problem(
            row,
            problems,
            format!(
                "is empty but {} is given; a range needs both",
                given.label()
            ),
        );
        return None;
    }
    match (min, max) {
        (Some(min), Some(max)) if min > max => {
            f.water_min.problem(
                row,
                problems,
                format!(
                    "{} is deeper than {}, {}; the minimum water depth must not exceed the maximum",
                    f.water_min.text(row),
                    f.water_max.label(),
                    f.water_max.text(row)
                ),
            );
            None
        }
        (Some(min), Some(max)) => Some(WaterDepth {
            min_m: min,
            max_m: max,
        }),
        _ => single.map(WaterDepth::exact),
    }
}

fn read_erosion(
    row: &Row,
    f: &TopsFields,
    unit: DepthUnit,
    problems: &mut Problems,
) -> Option<Erosion> {
    let eroded = f.eroded.number(row, problems);
    let at = f.eroded_at.number(row, problems);
    let (eroded_given, at_given) = (
        !f.eroded.text(row).is_empty(),
        !f.eroded_at.text(row).is_empty(),
    );
    if eroded_given != at_given {
        let (empty, given) = if eroded_given {
            (&f.eroded_at, &f.eroded)
        } else {
            (&f.eroded, &f.eroded_at)
        };
        empty.problem(
            row,
            problems,
            format!(
                "is empty but {} is given; an erosion needs both",
                given.label()
            ),
        );
        return None;
    }
    let (eroded, at) = (eroded?, at?);
    if eroded <= 0.0 {
        f.eroded.problem(
            row,
            problems,
            format!("{eroded} is not a positive thickness; leave both erosion cells empty where nothing was eroded"),
        );
        return None;
    }
    let eroded_m = in_metres(row, &f.eroded, unit, eroded, &ERODED_M, problems);
    let at = f.eroded_at.within(row, problems, at, &AGE_MA, None);
    Some(Erosion {
        eroded_m: eroded_m?,
        eroded_at_ma: at?,
    })
}

/// A length read in `unit`, in metres when it lies within `range`; otherwise the
/// reason is reported (showing the value as written when it was in feet).
fn in_metres(
    row: &Row,
    field: &Field,
    unit: DepthUnit,
    value: f64,
    range: &PhysicalRange,
    problems: &mut Problems,
) -> Option<f64> {
    let metres = unit.to_metres(value);
    let written = (unit == DepthUnit::Feet).then(|| format!("{} ft", field.text(row)));
    field.within(row, problems, metres, range, written.as_deref())
}

/// Check a well's rows together and build its column; `None` when it has problems
/// (all recorded).
fn build_well(well: &WellRows, f: &TopsFields, problems: &mut Problems) -> Option<WellColumn> {
    if well.rows.len() < 2 {
        problems.at(
            well.first_line,
            Some(f.well.label()),
            format!(
                "well \"{}\" has only one surface; at least two are needed to make a unit",
                well.name
            ),
        );
        return None;
    }
    let before = problems.count();
    let mut seen: HashMap<String, usize> = HashMap::new();
    for r in well.rows.iter().filter(|r| !r.horizon.is_empty()) {
        match seen.entry(r.horizon.to_lowercase()) {
            Entry::Vacant(v) => {
                v.insert(r.line);
            }
            Entry::Occupied(first) => problems.at(
                r.line,
                Some(f.horizon.label()),
                format!(
                    "horizon \"{}\" appears twice in well \"{}\" (also on line {})",
                    r.horizon,
                    well.name,
                    first.get()
                ),
            ),
        }
    }

    // Rows of a well may come in any order; a hiatus (equal depths) orders by age.
    let mut placed: Vec<(&TopRow, f64, f64)> = well
        .rows
        .iter()
        .filter_map(|r| Some((r, r.depth_m?, r.age_ma?)))
        .collect();
    placed.sort_by(|a, b| a.1.total_cmp(&b.1).then(a.2.total_cmp(&b.2)));
    for pair in placed.windows(2) {
        let ((above, above_depth, above_age), (r, depth, age)) = (pair[0], pair[1]);
        let reason = if age < above_age {
            format!(
                "\"{}\" ({age} Ma) is younger than \"{}\" above it (line {}, {above_age} Ma); ages must increase with depth",
                r.horizon, above.horizon, above.line
            )
        } else if age == above_age && depth == above_depth {
            format!(
                "\"{}\" and \"{}\" (line {}) are at one depth with one age, {age} Ma; a hiatus needs two ages",
                r.horizon, above.horizon, above.line
            )
        } else if age == above_age {
            format!(
                "\"{}\" has the same age, {age} Ma, as \"{}\" above it (line {}); ages must increase with depth",
                r.horizon, above.horizon, above.line
            )
        } else {
            continue;
        };
        problems.at(r.line, Some(f.age.label()), reason);
    }
    let last = placed.len().saturating_sub(1);
    for (i, &(r, depth, age)) in placed.iter().enumerate() {
        if i < last && !r.lithology_given {
            problems.at(
                r.line,
                Some(f.lithology.label()),
                format!(
                    "is empty; the unit below \"{}\" needs a lithology (only a well's deepest surface has none)",
                    r.horizon
                ),
            );
        }
        let Some(e) = r.erosion else { continue };
        if i == 0 || i == last {
            let which = if i == 0 {
                "shallowest surface (the present surface)"
            } else {
                "deepest surface"
            };
            problems.at(
                r.line,
                Some(f.eroded.label()),
                format!(
                    "\"{}\" is the well's {which}; erosion belongs on the surface just below an unconformity, with a unit below it",
                    r.horizon
                ),
            );
            continue;
        }
        let (above, above_depth, above_age) = placed[i - 1];
        if depth != above_depth {
            problems.at(
                r.line,
                Some(f.eroded.label()),
                format!(
                    "\"{}\" carries an erosion but is deeper than \"{}\" above it (line {}); an erosional unconformity is two surfaces at one depth, the deeper one carrying the erosion",
                    r.horizon, above.horizon, above.line
                ),
            );
        }
        if !(e.eroded_at_ma > above_age && e.eroded_at_ma < age) {
            problems.at(
                r.line,
                Some(f.eroded_at.label()),
                format!(
                    "{} Ma must lie between the age of \"{}\" above ({above_age} Ma) and this surface's age ({age} Ma)",
                    e.eroded_at_ma, above.horizon
                ),
            );
        }
    }
    if problems.count() > before || well.rows.iter().any(|r| !r.sound) {
        return None;
    }

    let surfaces = placed
        .iter()
        .enumerate()
        .map(|(i, &(r, depth_m, age_ma))| Surface {
            horizon: r.horizon.to_string(),
            depth_m,
            age_ma,
            lithology_below: r.lithology.clone(),
            // PRODUCT.md: the present surface's water depth, when not given, is its own depth.
            water_depth: r.water_depth.unwrap_or(WaterDepth::exact(if i == 0 {
                depth_m
            } else {
                0.0
            })),
            erosion: r.erosion,
        })
        .collect();
    WellColumn::new(well.name, surfaces)
        .map_err(|e| problems.at(well.first_line, None, e.to_string()))
        .ok()
}
