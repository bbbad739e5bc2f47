//! Tests of the tops file reader: each kind of bad input refused with its line,
//! column and reason; many problems together; the cap on the list.

use super::tops_tests::{parse, parse_with};
use super::*;

const HEADER: &str = "well,horizon,depth_m,age_ma,lithology,water_depth_min_m,water_depth_max_m,eroded_m,eroded_at_ma\n";

/// A tops file from rows of `well,horizon,depth_m,age_ma,lithology,wd_min,wd_max,eroded_m,eroded_at_ma`;
/// row `i` is on line `i + 2`.
fn tops(rows: &[&str]) -> String {
    rows.iter()
        .fold(HEADER.to_string(), |text, row| text + row + "\n")
}

/// The one problem of a file, with its line and column.
fn only_problem(rows: &[&str]) -> (usize, String, String) {
    let p = parse(&tops(rows)).unwrap_err();
    assert_eq!(p.len(), 1, "{p:#?}");
    let p = p.into_iter().next().unwrap();
    (p.line.unwrap(), p.column.unwrap_or_default(), p.reason)
}

#[test]
fn a_missing_value_is_refused() {
    let (line, column, reason) =
        only_problem(&["Fictive-1,Top,100,0,shale,,,,", "Fictive-1,,200,10,,,,,"]);
    assert_eq!((line, column.as_str()), (3, "horizon"));
    assert_eq!(reason, "is empty; a value is required");
}

#[test]
fn a_non_numeric_depth_is_refused() {
    let (line, column, reason) = only_problem(&[
        "Fictive-1,Top,1OO,0,shale,,,,",
        "Fictive-1,Base,200,10,,,,,",
    ]);
    assert_eq!((line, column.as_str()), (2, "depth_m"));
    assert_eq!(reason, "\"1OO\" is not a number");
}

#[test]
fn nan_and_infinite_numbers_are_refused() {
    let p = parse(&tops(&[
        "Fictive-1,Top,100,NaN,shale,,,,",
        "Fictive-1,Base,-inf,10,,,,,",
    ]))
    .unwrap_err();
    let at: Vec<_> = p
        .iter()
        .map(|p| (p.line, p.column.as_deref(), p.reason.as_str()))
        .collect();
    assert_eq!(
        at,
        [
            (Some(2), Some("age_ma"), "\"NaN\" is not a finite number"),
            (Some(3), Some("depth_m"), "\"-inf\" is not a finite number"),
        ]
    );
}

#[test]
fn a_negative_age_is_refused() {
    let (line, column, reason) = only_problem(&[
        "Fictive-1,Top,100,-2,shale,,,,",
        "Fictive-1,Base,200,10,,,,,",
    ]);
    assert_eq!((line, column.as_str()), (2, "age_ma"));
    assert_eq!(
        reason,
        "-2 Ma is negative; ages are millions of years before present"
    );
}

#[test]
fn an_age_that_decreases_with_depth_is_refused() {
    let (line, column, reason) = only_problem(&[
        "Fictive-1,Base,300,40,,,,,",
        "Fictive-1,Top,100,20,shale,,,,",
        "Fictive-1,Middle,200,10,shale,,,,",
    ]);
    assert_eq!((line, column.as_str()), (4, "age_ma"));
    assert_eq!(
        reason,
        "\"Middle\" (10 Ma) is younger than \"Top\" above it (line 3, 20 Ma); ages must increase with depth"
    );
}

#[test]
fn two_surfaces_at_one_depth_with_one_age_are_refused() {
    let (line, column, reason) = only_problem(&[
        "Fictive-1,Top,100,0,shale,,,,",
        "Fictive-1,Upper,300,10,shale,,,,",
        "Fictive-1,Lower,300,10,,,,,",
    ]);
    assert_eq!((line, column.as_str()), (4, "age_ma"));
    assert_eq!(
        reason,
        "\"Lower\" and \"Upper\" (line 3) are at one depth with one age, 10 Ma; a hiatus needs two ages"
    );
}

#[test]
fn a_deeper_surface_of_the_same_age_is_refused() {
    let (line, column, reason) =
        only_problem(&["Fictive-1,Top,100,5,shale,,,,", "Fictive-1,Base,300,5,,,,,"]);
    assert_eq!((line, column.as_str()), (3, "age_ma"));
    assert!(
        reason.starts_with("\"Base\" has the same age, 5 Ma, as \"Top\" above it (line 2)"),
        "{reason}"
    );
}

#[test]
fn a_horizon_named_twice_in_a_well_is_refused() {
    let (line, column, reason) = only_problem(&[
        "Fictive-1,Top Chalk,100,0,shale,,,,",
        "Fictive-1,top chalk,200,10,shale,,,,",
        "Fictive-1,Base,300,20,,,,,",
    ]);
    assert_eq!((line, column.as_str()), (3, "horizon"));
    assert_eq!(
        reason,
        "horizon \"top chalk\" appears twice in well \"Fictive-1\" (also on line 2)"
    );
}

#[test]
fn the_same_horizon_in_two_wells_is_fine() {
    let text = tops(&[
        "Fictive-1,Top,100,0,shale,,,,",
        "Fictive-1,Base,200,10,,,,,",
        "Fictive-2,Top,50,0,shale,,,,",
        "Fictive-2,Base,90,10,,,,,",
    ]);
    assert_eq!(parse(&text).unwrap().wells.len(), 2);
}

#[test]
fn an_unknown_lithology_is_refused() {
    let (line, column, reason) = only_problem(&[
        "Fictive-1,Top,100,0,sandstne,,,,",
        "Fictive-1,Base,200,10,,,,,",
    ]);
    assert_eq!((line, column.as_str()), (2, "lithology"));
    assert_eq!(
        reason,
        "unknown lithology \"sandstne\": it is not in the study's lithology catalogue"
    );
}

#[test]
fn a_mix_not_summing_to_100_is_refused() {
    let (line, column, reason) = only_problem(&[
        "Fictive-1,Top,100,0,shale:60;sandstone:30,,,,",
        "Fictive-1,Base,200,10,,,,,",
    ]);
    assert_eq!((line, column.as_str()), (2, "lithology"));
    assert_eq!(
        reason,
        "the mix percentages in \"shale:60;sandstone:30\" sum to 90, not 100"
    );
}

#[test]
fn a_malformed_mix_is_refused() {
    let (line, column, reason) = only_problem(&[
        "Fictive-1,Top,100,0,shale 60;sandstone 40,,,,",
        "Fictive-1,Base,200,10,,,,,",
    ]);
    assert_eq!((line, column.as_str()), (2, "lithology"));
    assert!(
        reason.contains("the part \"shale 60\" has no percentage"),
        "{reason}"
    );
}

#[test]
fn a_missing_lithology_above_the_deepest_surface_is_refused() {
    let (line, column, reason) = only_problem(&[
        "Fictive-1,Base,300,20,,,,,",
        "Fictive-1,Top,100,0,shale,,,,",
        "Fictive-1,Middle,200,10,,,,,",
    ]);
    assert_eq!((line, column.as_str()), (4, "lithology"));
    assert!(
        reason.starts_with("is empty; the unit below \"Middle\" needs a lithology"),
        "{reason}"
    );
}

#[test]
fn a_well_with_one_surface_is_refused_at_its_line() {
    let (line, column, reason) = only_problem(&[
        "Fictive-1,Top,100,0,shale,,,,",
        "Fictive-1,Base,200,10,,,,,",
        "Fictive-2,Top,100,0,shale,,,,",
    ]);
    assert_eq!((line, column.as_str()), (4, "well"));
    assert_eq!(
        reason,
        "well \"Fictive-2\" has only one surface; at least two are needed to make a unit"
    );
}

#[test]
fn a_minimum_water_depth_above_the_maximum_is_refused() {
    let (line, column, reason) = only_problem(&[
        "Fictive-1,Top,100,0,shale,,,,",
        "Fictive-1,Base,200,10,,150,40,,",
    ]);
    assert_eq!((line, column.as_str()), (3, "water_depth_min_m"));
    assert_eq!(
        reason,
        "150 is deeper than water_depth_max_m, 40; the minimum water depth must not exceed the maximum"
    );
}

#[test]
fn half_a_water_depth_range_is_refused() {
    let (line, column, reason) = only_problem(&[
        "Fictive-1,Top,100,0,shale,,80,,",
        "Fictive-1,Base,200,10,,,,,",
    ]);
    assert_eq!((line, column.as_str()), (2, "water_depth_min_m"));
    assert_eq!(
        reason,
        "is empty but water_depth_max_m is given; a range needs both"
    );
}

#[test]
fn a_single_water_depth_and_a_range_on_one_row_are_refused() {
    let text = "well,horizon,depth_m,age_ma,lithology,water_depth_m,water_depth_min_m,water_depth_max_m\n\
                Fictive-1,Top,100,0,shale,30,20,40\nFictive-1,Base,200,10,,,,\n";
    let p = parse(text).unwrap_err();
    assert_eq!(
        (p[0].line, p[0].column.as_deref()),
        (Some(2), Some("water_depth_min_m"))
    );
    assert!(
        p[0].reason.starts_with("the row also has water_depth_m"),
        "{}",
        p[0]
    );
}

#[test]
fn eroded_m_without_eroded_at_ma_is_refused() {
    let (line, column, reason) = only_problem(&[
        "Fictive-1,Top,100,0,shale,,,,",
        "Fictive-1,Break,200,10,shale,,,250,",
        "Fictive-1,Base,300,20,,,,,",
    ]);
    assert_eq!((line, column.as_str()), (3, "eroded_at_ma"));
    assert_eq!(
        reason,
        "is empty but eroded_m is given; an erosion needs both"
    );
}

#[test]
fn eroded_at_ma_without_eroded_m_is_refused() {
    let (line, column, reason) = only_problem(&[
        "Fictive-1,Top,100,0,shale,,,,",
        "Fictive-1,Break,200,10,shale,,,,5",
        "Fictive-1,Base,300,20,,,,,",
    ]);
    assert_eq!((line, column.as_str()), (3, "eroded_m"));
    assert_eq!(
        reason,
        "is empty but eroded_at_ma is given; an erosion needs both"
    );
}

#[test]
fn erosion_below_a_surface_at_another_depth_is_refused() {
    let (line, column, reason) = only_problem(&[
        "Fictive-1,Top,100,0,shale,,,,",
        "Fictive-1,Break,200,10,shale,,,250,5",
        "Fictive-1,Base,300,20,,,,,",
    ]);
    assert_eq!((line, column.as_str()), (3, "eroded_m"));
    assert!(
        reason.starts_with(
            "\"Break\" carries an erosion but is deeper than \"Top\" above it (line 2)"
        ),
        "{reason}"
    );
}

#[test]
fn eroded_at_ma_outside_the_unconformity_is_refused() {
    let (line, column, reason) = only_problem(&[
        "Fictive-1,Top,100,0,shale,,,,",
        "Fictive-1,Break,100,10,shale,,,250,12",
        "Fictive-1,Base,300,20,,,,,",
    ]);
    assert_eq!((line, column.as_str()), (3, "eroded_at_ma"));
    assert_eq!(
        reason,
        "12 Ma must lie between the age of \"Top\" above (0 Ma) and this surface's age (10 Ma)"
    );
}

#[test]
fn erosion_on_the_present_surface_is_refused() {
    let (line, column, reason) = only_problem(&[
        "Fictive-1,Top,100,1,shale,,,250,0.5",
        "Fictive-1,Base,300,20,,,,,",
    ]);
    assert_eq!((line, column.as_str()), (2, "eroded_m"));
    assert!(
        reason.starts_with("\"Top\" is the well's shallowest surface (the present surface);"),
        "{reason}"
    );
}

#[test]
fn a_thickness_eroded_that_is_not_positive_is_refused() {
    let (line, column, reason) = only_problem(&[
        "Fictive-1,Top,100,0,shale,,,,",
        "Fictive-1,Break,200,10,shale,,,0,5",
        "Fictive-1,Base,300,20,,,,,",
    ]);
    assert_eq!((line, column.as_str()), (3, "eroded_m"));
    assert!(
        reason.starts_with("0 is not a positive thickness"),
        "{reason}"
    );
}

#[test]
fn a_row_with_a_missing_field_is_refused() {
    let (line, column, reason) =
        only_problem(&["Fictive-1,Top,100,0,shale,,,", "Fictive-1,Base,200,10,,,,,"]);
    assert_eq!((line, column.as_str()), (2, ""));
    assert!(
        reason.starts_with("has 8 fields but the header has 9"),
        "{reason}"
    );
}

#[test]
fn a_header_only_file_is_refused() {
    let p = parse(HEADER).unwrap_err();
    assert_eq!(
        p[0].to_string(),
        "tops.csv: the file has a header but no data rows"
    );
}

#[test]
fn the_file_name_labels_problems() {
    let options = TopsOptions {
        file_name: Some("north_area_tops.csv".into()),
        ..TopsOptions::default()
    };
    let p = parse_with("", &options).unwrap_err();
    assert_eq!(p[0].to_string(), "north_area_tops.csv: the file is empty");
}

#[test]
fn every_problem_is_reported_together_in_line_order() {
    let p = parse(&tops(&[
        "Fictive-1,Top,100,0,shale,,,,",
        "Fictive-1,Top,x,10,shale,,,,",
        "Fictive-1,Base,300,20,grit,,,,",
        "Fictive-2,Only,50,0,,,,,",
        "Fictive-1,Deep,400,15,,90,10,,",
        ",Orphan,10,0,shale,,,,",
    ]))
    .unwrap_err();
    let at: Vec<_> = p
        .iter()
        .map(|p| (p.line.unwrap(), p.column.as_deref().unwrap()))
        .collect();
    assert_eq!(
        at,
        [
            (3, "depth_m"),
            (3, "horizon"),
            (4, "lithology"),
            (5, "well"),
            (6, "water_depth_min_m"),
            (6, "age_ma"),
            (7, "well"),
        ],
        "{p:#?}"
    );
}

#[test]
fn a_very_broken_file_lists_the_first_problems_and_counts_the_rest() {
    let rows: Vec<String> = (0..300)
        .map(|i| format!("Fictive-1,H{i},deep,{i},shale,,,,"))
        .collect();
    let rows: Vec<&str> = rows.iter().map(String::as_str).collect();
    let p = parse(&tops(&rows)).unwrap_err();
    assert_eq!(p.len(), MAX_PROBLEMS + 1);
    assert_eq!(p[0].line, Some(2));
    assert_eq!(p[MAX_PROBLEMS - 1].line, Some(MAX_PROBLEMS + 1));
    assert_eq!(
        p[MAX_PROBLEMS].to_string(),
        "tops.csv: and 100 more problems"
    );
}

#[test]
fn impossible_values_are_refused_with_their_bounds() {
    // Each row breaks one physical bound (input/bounds.rs); the rest of the file is sound.
    let cases: [(&[&str], usize, &str, &str); 7] = [
        (
            &[
                "Fictive-1,Top,100,0,shale,,,,",
                "Fictive-1,Base,200,1e15,,,,,",
            ],
            3,
            "age_ma",
            "1e15 Ma is out of range for an age (from 0 to 4600 Ma)",
        ),
        (
            &[
                "Fictive-1,Top,100,0,shale,,,,",
                "Fictive-1,Base,1e308,10,,,,,",
            ],
            3,
            "depth_m",
            "1e308 m is out of range for a depth (from -9000 to 30000 m)",
        ),
        (
            &[
                "Fictive-1,Top,100,0,shale,-20000,10,,",
                "Fictive-1,Base,200,10,,,,,",
            ],
            2,
            "water_depth_min_m",
            "-20000 m is out of range for a water depth (from -9000 to 11000 m)",
        ),
        (
            &[
                "Fictive-1,Top,100,0,shale,0,12000,,",
                "Fictive-1,Base,200,10,,,,,",
            ],
            2,
            "water_depth_max_m",
            "12000 m is out of range for a water depth",
        ),
        (
            &[
                "Fictive-1,Top,100,0,shale,,,,",
                "Fictive-1,Unc,500,5,shale,,,,",
                "Fictive-1,Below,500,20,sandstone,,,20000,10",
                "Fictive-1,Base,900,30,,,,,",
            ],
            4,
            "eroded_m",
            "20000 m is out of range for an eroded thickness (above 0 to 10000 m)",
        ),
        (
            &[
                "Fictive-1,Top,100,0,shale,,,,",
                "Fictive-1,Unc,500,5,shale,,,,",
                "Fictive-1,Below,500,20,sandstone,,,200,1e9",
                "Fictive-1,Base,900,30,,,,,",
            ],
            4,
            "eroded_at_ma",
            "1e9 Ma is out of range for an age",
        ),
        (
            &[
                "Fictive-1,Top,100,0,shale,,,,",
                "Fictive-1,Base,200,145000000,,,,,",
            ],
            3,
            "age_ma",
            "145000000 Ma is out of range for an age",
        ),
    ];
    for (rows, line, column, start) in cases {
        let (l, c, reason) = only_problem(rows);
        assert_eq!((l, c.as_str()), (line, column), "{reason}");
        assert!(reason.starts_with(start), "{reason}");
    }
}

#[test]
fn an_age_column_in_years_says_how_to_fix_it() {
    let (_, _, reason) = only_problem(&[
        "Fictive-1,Top,100,0,shale,,,,",
        "Fictive-1,Base,200,145000000,,,,,",
    ]);
    assert!(
        reason.ends_with("it looks like an age in years: write 145 Ma"),
        "{reason}"
    );
}

#[test]
fn a_depth_in_feet_out_of_range_is_shown_as_written() {
    let text = "well,horizon,depth_ft,age_ma,lithology\nFictive-1,Top,100,0,shale\nFictive-1,Base,125000,10,\n";
    let p = parse(text).unwrap_err();
    assert_eq!(p.len(), 1, "{p:#?}");
    assert_eq!(p[0].column.as_deref(), Some("depth_ft"));
    assert!(
        p[0].reason
            .starts_with("125000 ft (38100 m) is out of range for a depth"),
        "{}",
        p[0].reason
    );
}

#[test]
fn overlong_names_are_refused() {
    let long = "W".repeat(101);
    let rows = [
        format!("{long},Top,100,0,shale,,,,"),
        format!("{long},Base,200,10,,,,,"),
    ];
    let p = parse(&tops(&rows.iter().map(String::as_str).collect::<Vec<_>>())).unwrap_err();
    assert!(!p.is_empty());
    assert!(p.iter().all(|p| p.column.as_deref() == Some("well")
        && p.reason == "the well name has 101 characters; at most 100 are accepted"));
    let rows = [
        format!("Fictive-1,{long},100,0,shale,,,,"),
        "Fictive-1,Base,200,10,,,,,".to_string(),
    ];
    let (line, column, reason) = only_problem(&rows.iter().map(String::as_str).collect::<Vec<_>>());
    assert_eq!((line, column.as_str()), (2, "horizon"));
    assert_eq!(
        reason,
        "the horizon name has 101 characters; at most 100 are accepted"
    );
}

#[test]
fn an_overlong_lithology_is_refused_once_not_also_as_missing() {
    let long = "shale".repeat(61);
    let rows = [
        format!("Fictive-1,Top,100,0,{long},,,,"),
        "Fictive-1,Base,200,10,,,,,".to_string(),
    ];
    let (line, column, reason) = only_problem(&rows.iter().map(String::as_str).collect::<Vec<_>>());
    assert_eq!((line, column.as_str()), (2, "lithology"));
    assert!(
        reason.starts_with("the lithology has 305 characters"),
        "{reason}"
    );
}
