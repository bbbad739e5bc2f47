//! Tests of the tops file reader: a valid file read exactly, and its variants
//! (column order and case, BOM and CRLF, feet, odd headers, unknown columns).

use super::*;
use crate::tolerance::assert_relative;
use crate::{Erosion, LithologyMix, MixPart, Surface, WaterDepth, WellColumn};

/// An invented study catalogue, matched in any case.
fn catalogue_name(name: &str) -> Option<String> {
    ["shale", "sandstone", "limestone"]
        .into_iter()
        .find(|c| c.eq_ignore_ascii_case(name))
        .map(str::to_string)
}

pub(super) fn known(name: &str) -> bool {
    catalogue_name(name).is_some()
}

pub(super) fn parse_with(
    text: &str,
    options: &TopsOptions,
) -> Result<ParsedTops, Vec<InputProblem>> {
    parse_tops(text.as_bytes(), options, &known)
}

pub(super) fn parse(text: &str) -> Result<ParsedTops, Vec<InputProblem>> {
    parse_with(text, &TopsOptions::default())
}

/// Two invented wells; rows of both interleaved and out of depth order.
const VALID: &str = "\
well,horizon,depth_m,age_ma,lithology,water_depth_m,water_depth_min_m,water_depth_max_m,eroded_m,eroded_at_ma
Fictive-1,Sea floor,120,0,shale,,,,,
Fictive-2,Hiatus base,900,52,limestone,,,,,
Fictive-1,Base,2100,145,,,,,,
Fictive-2,Ground,-35,0,Sandstone,,,,,
Fictive-1,Mid unit,850,23,shale:60;sandstone:40,,50,150,,
Fictive-2,Floor,1600,90,,,,,,
Fictive-1,Break,1400,66,sandstone,,0,20,300,40
Fictive-1,Unconformity,1400,30,sandstone,,,,,
Fictive-2,Hiatus top,900,30,limestone,10,,,,
";

fn surface(
    horizon: &str,
    depth_m: f64,
    age_ma: f64,
    lithology: Option<LithologyMix>,
    water: WaterDepth,
) -> Surface {
    Surface {
        horizon: horizon.into(),
        depth_m,
        age_ma,
        lithology_below: lithology,
        water_depth: water,
        erosion: None,
    }
}

/// The wells of [`VALID`], written out by hand from the file above.
fn valid_wells() -> Vec<WellColumn> {
    let single = |n: &str| Some(LithologyMix::single(n));
    let mix = LithologyMix {
        parts: vec![
            MixPart {
                lithology: "shale".into(),
                fraction: 0.6,
            },
            MixPart {
                lithology: "sandstone".into(),
                fraction: 0.4,
            },
        ],
    };
    let mut brk = surface(
        "Break",
        1400.0,
        66.0,
        single("sandstone"),
        WaterDepth {
            min_m: 0.0,
            max_m: 20.0,
        },
    );
    brk.erosion = Some(Erosion {
        eroded_m: 300.0,
        eroded_at_ma: 40.0,
    });
    vec![
        WellColumn {
            name: "Fictive-1".into(),
            surfaces: vec![
                // The present surface's water depth defaults to its own depth (PRODUCT.md).
                surface(
                    "Sea floor",
                    120.0,
                    0.0,
                    single("shale"),
                    WaterDepth::exact(120.0),
                ),
                surface(
                    "Mid unit",
                    850.0,
                    23.0,
                    Some(mix),
                    WaterDepth {
                        min_m: 50.0,
                        max_m: 150.0,
                    },
                ),
                surface(
                    "Unconformity",
                    1400.0,
                    30.0,
                    single("sandstone"),
                    WaterDepth::exact(0.0),
                ),
                brk,
                surface("Base", 2100.0, 145.0, None, WaterDepth::exact(0.0)),
            ],
        },
        WellColumn {
            name: "Fictive-2".into(),
            surfaces: vec![
                // Land 35 m above sea level: the default water depth is -35 m.
                surface(
                    "Ground",
                    -35.0,
                    0.0,
                    single("Sandstone"),
                    WaterDepth::exact(-35.0),
                ),
                surface(
                    "Hiatus top",
                    900.0,
                    30.0,
                    single("limestone"),
                    WaterDepth::exact(10.0),
                ),
                surface(
                    "Hiatus base",
                    900.0,
                    52.0,
                    single("limestone"),
                    WaterDepth::exact(0.0),
                ),
                surface("Floor", 1600.0, 90.0, None, WaterDepth::exact(0.0)),
            ],
        },
    ]
}

#[test]
fn a_valid_file_is_read_exactly() {
    let parsed = parse(VALID).unwrap();
    assert_eq!(parsed.rows, 9);
    assert_eq!(parsed.wells, valid_wells());
    assert!(parsed.notes.is_empty(), "{:?}", parsed.notes);
}

#[test]
fn the_catalogue_spelling_is_kept_when_the_catalogue_gives_it() {
    let parsed =
        parse_tops_with_catalogue(VALID.as_bytes(), &TopsOptions::default(), &catalogue_name)
            .unwrap();
    let ground = &parsed.wells[1].surfaces[0];
    assert_eq!(
        ground.lithology_below,
        Some(LithologyMix::single("sandstone"))
    );
}

/// `text` with its columns in `order` and, if `shout`, the header in capitals.
fn reorder(text: &str, order: &[usize], shout: bool) -> String {
    let mut out = String::new();
    for (n, line) in text.lines().enumerate() {
        let cells: Vec<&str> = line.split(',').collect();
        let row: Vec<&str> = order.iter().map(|&i| cells[i]).collect();
        let row = row.join(",");
        out += &if n == 0 && shout {
            row.to_uppercase()
        } else {
            row
        };
        out += "\n";
    }
    out
}

#[test]
fn columns_in_another_order_and_case_read_the_same() {
    let text = reorder(VALID, &[9, 4, 2, 0, 7, 3, 1, 6, 5, 8], true);
    assert!(
        text.starts_with("ERODED_AT_MA,LITHOLOGY,DEPTH_M,WELL,"),
        "{text}"
    );
    assert_eq!(parse(&text).unwrap().wells, valid_wells());
}

#[test]
fn a_bom_and_crlf_line_ends_read_the_same() {
    let text = format!("\u{feff}{}\r\n\r\n", VALID.replace('\n', "\r\n"));
    assert_eq!(parse(&text).unwrap().wells, valid_wells());
}

#[test]
fn unknown_columns_are_noted_and_ignored() {
    let text: String = VALID
        .lines()
        .enumerate()
        .map(|(n, line)| match n {
            0 => format!("{line},Remarks,\n"),
            _ => format!("{line},cored,\n"),
        })
        .collect();
    let parsed = parse(&text).unwrap();
    assert_eq!(parsed.wells, valid_wells());
    assert_eq!(
        parsed.notes,
        [
            "column \"Remarks\" is not a tops column and was ignored",
            "column 12 has no header and was ignored"
        ]
    );
}

#[test]
fn depths_in_feet_are_converted_to_metres() {
    let text = "well,horizon,depth_ft,age_ma,lithology,water_depth_m\n\
                Fictive-1,Top,1000,0,shale,100\n\
                Fictive-1,Base,10000,50,,\n";
    let parsed = parse(text).unwrap();
    let s = &parsed.wells[0].surfaces;
    // 1 ft = 0.3048 m exactly (international foot; from memory).
    assert_relative(s[0].depth_m, 304.8, 1e-15, "1000 ft");
    assert_relative(s[1].depth_m, 3048.0, 1e-15, "10000 ft");
    // Water depth stays in metres unless the user says otherwise.
    assert_eq!(s[0].water_depth, WaterDepth::exact(100.0));
    assert_eq!(
        parsed.notes,
        [
            "depths (column \"depth_ft\") were read in feet and converted to metres (1 ft = 0.3048 m)"
        ]
    );

    let options = TopsOptions {
        water_depth_unit: DepthUnit::Feet,
        ..TopsOptions::default()
    };
    let parsed = parse_with(text, &options).unwrap();
    assert_relative(
        parsed.wells[0].surfaces[0].water_depth.min_m,
        30.48,
        1e-15,
        "100 ft of water",
    );
    assert_eq!(parsed.notes.len(), 2);
}

#[test]
fn the_user_can_say_a_depth_m_column_is_in_feet() {
    let options = TopsOptions {
        depth_unit: Some(DepthUnit::Feet),
        ..TopsOptions::default()
    };
    let parsed = parse_with(VALID, &options).unwrap();
    // 2100 ft = 640.08 m (1 ft = 0.3048 m exactly; from memory).
    assert_relative(parsed.wells[0].base().depth_m, 640.08, 1e-15, "2100 ft");
    // The present surface's default water depth is its depth, now in metres.
    assert_relative(
        parsed.wells[0].surfaces[0].water_depth.max_m,
        36.576,
        1e-15,
        "120 ft",
    );
}

const ODD: &str = "Well Name,Top,TVDSS,Age (Ma),Lith\n\
                   Fictive-3,Sea floor,328,0,SHALE\n\
                   Fictive-3,Base,3280,40,\n";

fn odd_mapping() -> ColumnMapping {
    ColumnMapping::new()
        .with("Well Name", "well")
        .with("top", "horizon")
        .with("TVDSS", "depth_ft")
        .with("Age (Ma)", "age_ma")
        .with("Lith", "lithology")
}

#[test]
fn odd_headers_are_read_through_a_mapping() {
    let options = TopsOptions {
        mapping: odd_mapping(),
        ..TopsOptions::default()
    };
    let parsed = parse_with(ODD, &options).unwrap();
    let w = &parsed.wells[0];
    assert_eq!(w.name, "Fictive-3");
    assert_eq!(w.surfaces[1].horizon, "Base");
    assert_eq!(w.surfaces[1].age_ma, 40.0);
    assert_relative(
        w.surfaces[1].depth_m,
        999.744,
        1e-15,
        "3280 ft (1 ft = 0.3048 m; from memory)",
    );
    assert_eq!(
        w.surfaces[0].lithology_below,
        Some(LithologyMix::single("SHALE"))
    );
    // Problems name the column as the file heads it.
    let bad = ODD.replace(",3280,", ",deep,");
    let p = parse_with(&bad, &options).unwrap_err();
    assert_eq!(
        p[0].to_string(),
        "tops.csv line 3, column TVDSS: \"deep\" is not a number"
    );
}

#[test]
fn without_the_mapping_odd_headers_are_refused_at_the_header() {
    let p = parse(ODD).unwrap_err();
    assert_eq!(p.len(), 5);
    assert!(p.iter().all(|p| p.line == Some(1) && p.column.is_none()));
    assert!(
        p[2].reason
            .starts_with("the required column depth_m or depth_ft is missing"),
        "{}",
        p[2]
    );
}
