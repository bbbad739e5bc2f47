//! Invented tops files shared by the upload tests, and checks of a stored column.
//! Every well and horizon name here is invented.

use super::TestApp;
use reqwest::StatusCode;
use serde_json::Value;

pub const HEADER: &str = "well,horizon,depth_m,age_ma,lithology,water_depth_min_m,water_depth_max_m,eroded_m,eroded_at_ma";

/// Two invented wells. Veyra-1 has a mix, a water-depth range, rows out of depth
/// order (one after Veyra-2's) and an erosional unconformity: two surfaces at one
/// depth, the deeper carrying the erosion (PRODUCT.md "Input formats"). Veyra-2
/// names a lithology in another case than the catalogue.
pub const VALID_TOPS: &str = "\
well,horizon,depth_m,age_ma,lithology,water_depth_min_m,water_depth_max_m,eroded_m,eroded_at_ma
Veyra-1,Sea floor,85,0,shale,,,,
Veyra-1,Top Sand,1210,38,sandstone,0,25,250,30
Veyra-1,Top Marl,640.5,12.5,shale:70;sandstone:30,40,90,,
Veyra-1,Top Basement,1980.25,110,,,,,
Veyra-2,Sea floor,140,0,Shale,,,,
Veyra-2,Top Chalk,1020,60,chalk,150,300,,
Veyra-2,Base Chalk,1450,95,,,,,
Veyra-1,Base Marl,1210,25,sandstone,,,,
";

/// A surface as the file gives it (after sorting by depth), with the defaults of
/// PRODUCT.md "Input formats" applied: the shallowest surface's water depth is its
/// own depth, others' is 0; lithology names take the catalogue's spelling.
pub struct Expected {
    pub horizon: &'static str,
    pub depth_m: f64,
    pub age_ma: f64,
    pub lithology: Option<&'static str>,
    pub water_depth_m: (f64, f64),
    pub erosion: Option<(f64, f64)>,
}

pub const fn surface(
    horizon: &'static str,
    depth_m: f64,
    age_ma: f64,
    lithology: Option<&'static str>,
    water_depth_m: (f64, f64),
    erosion: Option<(f64, f64)>,
) -> Expected {
    Expected {
        horizon,
        depth_m,
        age_ma,
        lithology,
        water_depth_m,
        erosion,
    }
}

pub const VEYRA_1: [Expected; 5] = [
    surface("Sea floor", 85.0, 0.0, Some("shale"), (85.0, 85.0), None),
    surface(
        "Top Marl",
        640.5,
        12.5,
        Some("shale:70;sandstone:30"),
        (40.0, 90.0),
        None,
    ),
    surface(
        "Base Marl",
        1210.0,
        25.0,
        Some("sandstone"),
        (0.0, 0.0),
        None,
    ),
    surface(
        "Top Sand",
        1210.0,
        38.0,
        Some("sandstone"),
        (0.0, 25.0),
        Some((250.0, 30.0)),
    ),
    surface("Top Basement", 1980.25, 110.0, None, (0.0, 0.0), None),
];

pub const VEYRA_2: [Expected; 3] = [
    surface("Sea floor", 140.0, 0.0, Some("shale"), (140.0, 140.0), None),
    surface(
        "Top Chalk",
        1020.0,
        60.0,
        Some("chalk"),
        (150.0, 300.0),
        None,
    ),
    surface("Base Chalk", 1450.0, 95.0, None, (0.0, 0.0), None),
];

/// Check a well's JSON twin against the expected column, field by field.
pub fn assert_column(well: &Value, expected: &[Expected]) {
    let column = well["column"].as_array().expect("column array");
    let name = &well["well"]["name"];
    assert_eq!(column.len(), expected.len(), "{name}: surfaces stored");
    for (row, e) in column.iter().zip(expected) {
        let what = format!("{name} {}", e.horizon);
        assert_eq!(
            row["horizon"], e.horizon,
            "{what}: horizon (sorted by depth)"
        );
        assert_eq!(row["depth_m"].as_f64(), Some(e.depth_m), "{what}: depth_m");
        assert_eq!(row["age_ma"].as_f64(), Some(e.age_ma), "{what}: age_ma");
        assert_eq!(
            row["unit_lithology"].as_str(),
            e.lithology,
            "{what}: lithology"
        );
        assert_eq!(
            row["water_depth_min_m"].as_f64(),
            Some(e.water_depth_m.0),
            "{what}: water_depth_min_m"
        );
        assert_eq!(
            row["water_depth_max_m"].as_f64(),
            Some(e.water_depth_m.1),
            "{what}: water_depth_max_m"
        );
        assert_eq!(
            row["eroded_m"].as_f64(),
            e.erosion.map(|x| x.0),
            "{what}: eroded_m"
        );
        assert_eq!(
            row["eroded_at_ma"].as_f64(),
            e.erosion.map(|x| x.1),
            "{what}: eroded_at_ma"
        );
    }
}

/// An app with a study that already holds one well, so "nothing changed" means something.
pub async fn app_with_a_stored_well() -> (TestApp, i64) {
    let app = TestApp::empty().await;
    let study = app.create_study("Veyra Shelf").await;
    let first = app
        .upload_tops(
            study,
            &format!("{HEADER}\nOrrin-7,Sea floor,60,0,shale,,,,\nOrrin-7,Top Sand,900,20,,,,,\n"),
        )
        .await;
    assert_eq!(first.status, StatusCode::OK, "{}", first.body);
    (app, study)
}

/// The valid file with its data line `line` (header = 1) replaced.
pub fn with_line(line: usize, replacement: &str) -> String {
    let mut lines: Vec<&str> = VALID_TOPS.lines().collect();
    lines[line - 1] = replacement;
    lines.join("\n") + "\n"
}

pub const REPLACEMENT: &str = "\
well,horizon,depth_m,age_ma,lithology
Veyra-2,Sea floor,150,0,shale
Veyra-2,Top Chalk,1010,58,chalk
Veyra-2,Mid Chalk,1200,75,chalk
Veyra-2,Base Chalk,1470,97,
Veyra-4,Sea floor,70,0,sandstone
Veyra-4,Top Shale,800,25,
";
