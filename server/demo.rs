//! The demo study: an invented rift basin built from the files in `demo-db/`
//! (compiled into the binary, so a new database can be seeded anywhere).

use crate::services::import::{self, NamedFile, UploadFiles, UploadOptions};
use crate::services::{self, ServiceError};
use sqlx::SqlitePool;

/// The demo study's name.
pub const DEMO_STUDY_NAME: &str = "Brennock Trough (demo)";
const DEMO_DESCRIPTION: &str = "An invented rift basin with invented wells and data, for trying Sagline out. It has no real-world meaning.";
/// Who the activity log names for the seeding.
const DEMO_ACTOR: &str = "demo builder";

const TOPS: &[u8] = include_bytes!("../demo-db/tops.csv");
const WELLS: &[u8] = include_bytes!("../demo-db/wells.csv");
const SEA_LEVEL: &[u8] = include_bytes!("../demo-db/sea_level.csv");

/// Create the demo study in `db` through the same validation and import path as a
/// user's upload. Returns the study id.
pub async fn seed(db: &SqlitePool) -> Result<i64, ServiceError> {
    let study_id =
        services::create_study(db, DEMO_STUDY_NAME, DEMO_DESCRIPTION, DEMO_ACTOR).await?;
    let files = UploadFiles {
        tops: Some(NamedFile {
            file_name: "tops.csv".into(),
            bytes: TOPS.to_vec(),
        }),
        wells: Some(NamedFile {
            file_name: "wells.csv".into(),
            bytes: WELLS.to_vec(),
        }),
        sea_level: Some(NamedFile {
            file_name: "sea_level.csv".into(),
            bytes: SEA_LEVEL.to_vec(),
        }),
    };
    let catalogue: Vec<String> = crate::store::lithologies::list(db, study_id)
        .await?
        .into_iter()
        .map(|l| l.name)
        .collect();
    let upload = import::validate(&files, &UploadOptions::default(), &catalogue)
        .map_err(ServiceError::Problems)?;
    import::store_upload(db, study_id, &upload, false, DEMO_ACTOR).await?;
    Ok(study_id)
}
