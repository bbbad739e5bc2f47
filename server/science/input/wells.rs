//! The wells file: where each well is, and any notes about it.

use super::bounds::{COORDINATE_M, MAX_NAME_CHARS, MAX_NOTE_CHARS, check_length};
use super::columns::{ColumnMapping, Columns, FileKind};
use super::problems::InputProblem;
use super::table::ReadFile;
use serde::{Deserialize, Serialize};
use std::collections::HashMap;
use std::collections::hash_map::Entry;

/// How to read a wells file.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct WellsOptions {
    /// The user's word on odd headers.
    pub mapping: ColumnMapping,
    /// The file's name in problems; `wells.csv` when `None`.
    pub file_name: Option<String>,
}

/// A well's position and notes. At least one of the pairs (`x`, `y`) and
/// (`lat`, `lon`) is given, each pair whole.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct WellLocation {
    pub name: String,
    /// Projected easting (m).
    pub x: Option<f64>,
    /// Projected northing (m).
    pub y: Option<f64>,
    /// Latitude (degrees, -90 to 90).
    pub lat: Option<f64>,
    /// Longitude (degrees, -180 to 180).
    pub lon: Option<f64>,
    /// The file's other columns as `header: value`, separated by `; ` (empty cells left out).
    pub notes: String,
}

/// A wells file read and validated.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ParsedWells {
    /// In file order.
    pub wells: Vec<WellLocation>,
    /// Things the user should know that are not errors.
    pub notes: Vec<String>,
    /// Data rows read.
    pub rows: usize,
}

/// Read a wells file: `well` and `x` + `y` (projected metres) or `lat` + `lon`
/// (degrees); every other column is kept as notes. A well listed twice is refused.
pub fn parse_wells(bytes: &[u8], options: &WellsOptions) -> Result<ParsedWells, Vec<InputProblem>> {
    let file = options
        .file_name
        .as_deref()
        .unwrap_or(FileKind::Wells.default_file_name());
    parse_wells_read(&ReadFile::read(bytes, file), options)
}

/// [`parse_wells`] on a file read before (problems carry its name;
/// `options.file_name` is not used).
pub fn parse_wells_read(
    read: &ReadFile,
    options: &WellsOptions,
) -> Result<ParsedWells, Vec<InputProblem>> {
    let (table, columns, mut problems) =
        Columns::open_read(read, FileKind::Wells, &options.mapping)?;
    let well = columns.field("well");
    let (x, y, lat, lon) = (
        columns.field("x"),
        columns.field("y"),
        columns.field("lat"),
        columns.field("lon"),
    );
    let others: Vec<(usize, &str)> = columns.other_headers().collect();

    let mut wells = Vec::with_capacity(table.rows.len());
    let mut first_line: HashMap<&str, usize> = HashMap::new();
    for row in table.rows.iter().filter(|r| r.complete) {
        let before = problems.count();
        let name = well
            .required_text(row, &mut problems)
            .and_then(|_| well.bounded_text(row, &mut problems, "the well name", MAX_NAME_CHARS));
        let mut pair = |a: &super::columns::Field, b: &super::columns::Field, limits: [f64; 2]| {
            let values = [a, b].map(|f| f.number(row, &mut problems));
            for (f, (v, limit)) in [a, b].into_iter().zip(values.into_iter().zip(limits)) {
                match v {
                    Some(v) if limit.is_infinite() => {
                        f.within(row, &mut problems, v, &COORDINATE_M, None);
                    }
                    Some(v) if v.abs() > limit => f.problem(
                        row,
                        &mut problems,
                        format!("{v} is outside -{limit} to {limit} degrees"),
                    ),
                    _ => {}
                }
            }
            let given = [a, b].map(|f| !f.text(row).is_empty());
            if given[0] != given[1] {
                let (empty, full) = if given[0] { (b, a) } else { (a, b) };
                empty.problem(
                    row,
                    &mut problems,
                    format!(
                        "is empty but {} is given; a position needs both",
                        full.label()
                    ),
                );
            }
            (values[0], values[1], given[0] || given[1])
        };
        let (x_m, y_m, projected) = pair(&x, &y, [f64::INFINITY; 2]);
        let (lat_deg, lon_deg, geographic) = pair(&lat, &lon, [90.0, 180.0]);
        if !projected && !geographic {
            let column = if x.is_present() { &x } else { &lat };
            column.problem(
                row,
                &mut problems,
                "the well has no position; give x + y or lat + lon",
            );
        }
        let Some(name) = name else { continue };
        match first_line.entry(name) {
            Entry::Occupied(first) => well.problem(
                row,
                &mut problems,
                format!(
                    "well \"{name}\" is listed twice (also on line {})",
                    first.get()
                ),
            ),
            Entry::Vacant(v) => {
                v.insert(row.line);
            }
        }
        if problems.count() > before {
            continue;
        }
        let notes = others
            .iter()
            .filter_map(|&(i, header)| {
                let text = row.cell(Some(i));
                (!text.is_empty()).then(|| format!("{header}: {text}"))
            })
            .collect::<Vec<_>>()
            .join("; ");
        if let Err(reason) = check_length(
            "the text of this row's notes (its other columns)",
            &notes,
            MAX_NOTE_CHARS,
        ) {
            problems.at(row.line, None, reason);
            continue;
        }
        wells.push(WellLocation {
            name: name.to_string(),
            x: x_m,
            y: y_m,
            lat: lat_deg,
            lon: lon_deg,
            notes,
        });
    }
    let notes = match others.len() {
        0 => Vec::new(),
        _ => vec![format!(
            "kept as well notes: {}",
            others
                .iter()
                .map(|(_, h)| format!("\"{h}\""))
                .collect::<Vec<_>>()
                .join(", ")
        )],
    };
    problems.result(ParsedWells {
        wells,
        notes,
        rows: table.rows.len(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn parse(text: &str) -> Result<ParsedWells, Vec<InputProblem>> {
        parse_wells(text.as_bytes(), &WellsOptions::default())
    }

    #[test]
    fn positions_and_notes_are_read() {
        let w = parse(
            "Well,X,Y,Lat,Lon,operator_note,spud\n\
             Kestrel-1,451200.5,6730100,,,tight hole,2019-04-02\n\
             Plover-2,,,58.25,-1.5,,\n",
        )
        .unwrap();
        assert_eq!(w.rows, 2);
        assert_eq!(
            w.wells,
            [
                WellLocation {
                    name: "Kestrel-1".into(),
                    x: Some(451200.5),
                    y: Some(6730100.0),
                    lat: None,
                    lon: None,
                    notes: "operator_note: tight hole; spud: 2019-04-02".into(),
                },
                WellLocation {
                    name: "Plover-2".into(),
                    x: None,
                    y: None,
                    lat: Some(58.25),
                    lon: Some(-1.5),
                    notes: String::new(),
                },
            ]
        );
        assert_eq!(w.notes, ["kept as well notes: \"operator_note\", \"spud\""]);
    }

    #[test]
    fn a_mapping_reads_odd_headers() {
        let options = WellsOptions {
            mapping: ColumnMapping::new()
                .with("UWI", "well")
                .with("Easting", "x")
                .with("Northing", "y"),
            file_name: None,
        };
        let w = parse_wells(b"UWI,Easting,Northing\nKestrel-1,1,2\n", &options).unwrap();
        assert_eq!((w.wells[0].x, w.wells[0].y), (Some(1.0), Some(2.0)));
        assert!(w.notes.is_empty());
    }

    #[test]
    fn a_latitude_out_of_range_is_refused() {
        let p = parse("well,lat,lon\nKestrel-1,91,3\n").unwrap_err();
        assert_eq!((p[0].line, p[0].column.as_deref()), (Some(2), Some("lat")));
        assert_eq!(p[0].reason, "91 is outside -90 to 90 degrees");
    }

    #[test]
    fn a_longitude_out_of_range_is_refused() {
        let p = parse("well,lat,lon\nKestrel-1,45,-180.5\n").unwrap_err();
        assert_eq!((p[0].line, p[0].column.as_deref()), (Some(2), Some("lon")));
    }

    #[test]
    fn half_a_position_is_refused() {
        let p = parse("well,x,y\nKestrel-1,100,\n").unwrap_err();
        assert_eq!((p[0].line, p[0].column.as_deref()), (Some(2), Some("y")));
        assert_eq!(
            p[0].reason,
            "is empty but x is given; a position needs both"
        );
    }

    #[test]
    fn a_well_without_position_is_refused() {
        let p = parse("well,x,y\nKestrel-1,,\n").unwrap_err();
        assert_eq!((p[0].line, p[0].column.as_deref()), (Some(2), Some("x")));
        assert_eq!(
            p[0].reason,
            "the well has no position; give x + y or lat + lon"
        );
    }

    #[test]
    fn a_well_listed_twice_is_refused() {
        let p = parse("well,x,y\nKestrel-1,1,2\nPlover-2,3,4\nKestrel-1,5,6\n").unwrap_err();
        assert_eq!((p[0].line, p[0].column.as_deref()), (Some(4), Some("well")));
        assert_eq!(
            p[0].reason,
            "well \"Kestrel-1\" is listed twice (also on line 2)"
        );
    }

    #[test]
    fn a_non_numeric_coordinate_is_refused() {
        let p = parse("well,x,y\nKestrel-1,1,north\n").unwrap_err();
        assert_eq!(
            p[0].to_string(),
            "wells.csv line 2, column y: \"north\" is not a number"
        );
    }

    #[test]
    fn coordinates_beyond_any_projection_are_refused() {
        let p = parse("well,x,y\nFictive-1,1e300,5\n").unwrap_err();
        assert_eq!(p.len(), 1, "{p:#?}");
        assert_eq!((p[0].line, p[0].column.as_deref()), (Some(2), Some("x")));
        assert!(
            p[0].reason
                .starts_with("1e300 m is out of range for a map coordinate"),
            "{}",
            p[0].reason
        );
    }

    #[test]
    fn overlong_notes_and_names_are_refused() {
        let note = "n".repeat(MAX_NOTE_CHARS);
        let p = parse(&format!("well,x,y,remark\nFictive-1,1,2,{note}\n")).unwrap_err();
        assert_eq!(p.len(), 1, "{p:#?}");
        assert_eq!(p[0].line, Some(2));
        assert!(
            p[0].reason
                .starts_with("the text of this row's notes (its other columns) has"),
            "{}",
            p[0].reason
        );
        let name = "W".repeat(MAX_NAME_CHARS + 1);
        let p = parse(&format!("well,x,y\n{name},1,2\n")).unwrap_err();
        assert_eq!(p[0].column.as_deref(), Some("well"));
    }
}
