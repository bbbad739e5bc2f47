//! An invented rift study for the review, results and chart tests: three wells of a
//! made-up trough whose tectonic subsidence has a clear syn-rift step and a post-rift
//! sag, with map coordinates. Every well, horizon and study name here is invented.

use super::{Agent, csv_part};
use reqwest::StatusCode;
use reqwest::multipart::Form;
use serde_json::Value;

/// Three wells: a deep trough centre, a shallower flank and one between. Each has a
/// pre-rift sand, a thick syn-rift shale, a chalk and a post-rift fill; the deepest
/// row closes the column (no lithology below it).
pub const RIFT_TOPS: &str = "\
well,horizon,depth_m,age_ma,lithology,water_depth_min_m,water_depth_max_m
Tarn-1,Sea floor,120,0,shale,100,150
Tarn-1,Top Clay,820,23.03,shale:60;sandstone:40,50,120
Tarn-1,Top Marl,1650,56.0,shale,150,300
Tarn-1,Top Chalk,1900,66.0,chalk,200,400
Tarn-1,Top Lower Shale,2600,145.0,shale,150,350
Tarn-1,Top Rift Sand,3900,165.3,sandstone,0,20
Tarn-1,Top Basement,4500,201.4,,0,10
Tarn-2,Sea floor,95,0,shale,80,110
Tarn-2,Top Clay,700,23.03,shale:60;sandstone:40,40,90
Tarn-2,Top Marl,1400,56.0,shale,100,250
Tarn-2,Top Chalk,1620,66.0,chalk,150,300
Tarn-2,Top Lower Shale,2250,145.0,shale,100,250
Tarn-2,Top Rift Sand,3300,165.3,sandstone,0,20
Tarn-2,Top Basement,3850,201.4,,0,10
Tarn-3,Sea floor,110,0,shale,90,130
Tarn-3,Top Clay,760,23.03,shale:60;sandstone:40,45,100
Tarn-3,Top Marl,1520,56.0,shale,120,280
Tarn-3,Top Chalk,1760,66.0,chalk,180,350
Tarn-3,Top Lower Shale,2420,145.0,shale,120,300
Tarn-3,Top Rift Sand,3600,165.3,sandstone,0,20
Tarn-3,Top Basement,4180,201.4,,0,10
";

/// Projected coordinates of the three wells (metres).
pub const RIFT_WELLS: &str = "\
well,x,y
Tarn-1,431000,5120000
Tarn-2,437500,5127500
Tarn-3,444000,5133000
";

/// The well every single-well test works on.
pub const TROUGH_WELL: &str = "Tarn-1";

/// Upload a tops file and a wells file together through `POST /api/studies/{id}/tops`.
pub async fn upload_tops_and_wells(
    agent: &Agent,
    study: i64,
    tops: &str,
    wells: &str,
) -> super::Answer {
    let form = Form::new()
        .part("tops", csv_part(tops.as_bytes().to_vec(), "tops.csv"))
        .part("wells", csv_part(wells.as_bytes().to_vec(), "wells.csv"));
    agent
        .post_multipart(&format!("/api/studies/{study}/tops"), form)
        .await
}

/// Create a study named `name` holding the three rift wells; returns its id.
pub async fn rift_study(agent: &Agent, name: &str) -> i64 {
    let study = agent.create_study(name).await;
    let answer = upload_tops_and_wells(agent, study, RIFT_TOPS, RIFT_WELLS).await;
    assert_eq!(
        answer.status,
        StatusCode::OK,
        "upload the rift wells: {}",
        answer.body
    );
    study
}

/// The `analysis.stretching` object of a well's JSON twin, checking there is one.
pub fn stretching(well: &Value) -> &Value {
    let st = &well["analysis"]["stretching"];
    assert!(
        st.is_object(),
        "well {} has no stretching fit: {}",
        well["well"]["name"],
        well["analysis"]
    );
    st
}
