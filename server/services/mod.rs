//! Services: the application's operations that change data. Each runs its SQL
//! (through `crate::store`) in one transaction and writes its activity-log row in
//! that same transaction, so a change and its record land together or not at all.

pub mod accounts;
pub mod activity;
pub mod backup;
pub mod cache;
pub mod catalogue;
pub mod exports;
pub mod import;
pub mod results;
pub mod review;
pub mod sections;
pub mod studies;
pub mod upload;
pub mod well_charts;
pub mod well_page;
pub mod well_view;

pub use sagline_science::input::InputProblem;

/// The largest input file accepted (bytes).
pub const MAX_FILE_BYTES: usize = sagline_science::input::MAX_FILE_BYTES;

/// What can go wrong in an operation, in words a user can act on. The web layer
/// maps each kind to its HTTP status; database errors stay internal.
#[derive(Debug, thiserror::Error)]
pub enum ServiceError {
    #[error("{0} not found")]
    NotFound(String),
    #[error("{0}")]
    Invalid(String),
    #[error("the input has {} problem(s)", .0.len())]
    Problems(Vec<InputProblem>),
    #[error("{0}")]
    Conflict(String),
    /// Too many tries in a row (the sign-in throttle); the text says how long to wait.
    #[error("{0}")]
    TooManyTries(String),
    /// A save made against an old version; `current` is the stored state (JSON).
    #[error("{message}")]
    Stale {
        message: String,
        current: Option<serde_json::Value>,
    },
    #[error(transparent)]
    Database(#[from] sqlx::Error),
    /// Something that should not happen (a panicked analysis task); logged, never shown.
    #[error("internal error: {0}")]
    Internal(String),
}

use crate::store;
use crate::store::activity::Change;
use sagline_science::ModelParameters;
use sagline_science::lithology::{Catalogue, Lithology};
use serde::Deserialize;
use sqlx::SqlitePool;

/// Create a study with the default model parameters and the published lithology
/// catalogue. Returns its id. A name already taken is a conflict, also when two people
/// create the same name at once (the database's unique name decides, inside the
/// transaction, so there is no window between a check and the insert).
pub async fn create_study(
    db: &SqlitePool,
    name: &str,
    description: &str,
    actor: &str,
) -> Result<i64, ServiceError> {
    let mut tx = store::write_transaction(db).await?;
    let params = ModelParameters::default();
    let id = match store::studies::insert(&mut *tx, name, description, &params).await {
        Err(sqlx::Error::Database(e)) if e.is_unique_violation() => {
            return Err(ServiceError::Conflict(format!(
                "A study named '{name}' already exists; choose another name."
            )));
        }
        other => other?,
    };
    for l in Catalogue::published_defaults().lithologies() {
        store::lithologies::upsert(
            &mut *tx,
            id,
            &l.name,
            l.surface_porosity,
            l.compaction_per_km,
            l.grain_density_kg_m3,
            &l.source,
        )
        .await?;
    }
    store::activity::record(
        &mut *tx,
        Some(id),
        Change {
            actor,
            action: "create study",
            subject: name,
            before: None,
            after: Some(serde_json::to_string(&params).unwrap_or_default()),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(id)
}

/// Replace a study's model parameters (already validated), recording before -> after.
pub async fn update_parameters(
    db: &SqlitePool,
    study_id: i64,
    p: &ModelParameters,
    actor: &str,
) -> Result<(), ServiceError> {
    let mut tx = store::write_transaction(db).await?;
    let before = store::studies::get(&mut *tx, study_id)
        .await?
        .ok_or_else(|| ServiceError::NotFound(format!("study {study_id}")))?
        .parameters();
    store::studies::update_parameters(&mut *tx, study_id, p).await?;
    let changed: Vec<String> = before
        .entries()
        .iter()
        .zip(p.entries().iter())
        .filter(|(a, b)| a.1 != b.1)
        .map(|(a, b)| format!("{}: {} -> {}", a.0.name, a.1, b.1))
        .collect();
    if !changed.is_empty() {
        store::activity::record(
            &mut *tx,
            Some(study_id),
            Change {
                actor,
                action: "edit parameters",
                subject: "model parameters",
                before: Some(serde_json::to_string(&before).unwrap_or_default()),
                after: Some(serde_json::to_string(p).unwrap_or_default()),
            },
        )
        .await?;
    }
    tx.commit().await?;
    Ok(())
}

/// Replace a study's thermal settings (checked here), recording before -> after.
pub async fn update_thermal(
    db: &SqlitePool,
    study_id: i64,
    t: &sagline_science::analysis::thermal::ThermalChoices,
    actor: &str,
) -> Result<(), ServiceError> {
    t.inputs("this study")
        .map_err(|e| ServiceError::Invalid(e.to_string()))?;
    let mut tx = store::write_transaction(db).await?;
    let before = store::studies::get(&mut *tx, study_id)
        .await?
        .ok_or_else(|| ServiceError::NotFound(format!("study {study_id}")))?
        .thermal_choices();
    store::studies::update_thermal(&mut *tx, study_id, t).await?;
    if before != *t {
        store::activity::record(
            &mut *tx,
            Some(study_id),
            Change {
                actor,
                action: "edit thermal settings",
                subject: "thermal settings",
                before: Some(serde_json::to_string(&before).unwrap_or_default()),
                after: Some(serde_json::to_string(t).unwrap_or_default()),
            },
        )
        .await?;
    }
    tx.commit().await?;
    Ok(())
}

/// A lithology as typed in the catalogue form or sent to the API.
#[derive(Debug, Clone, Deserialize)]
pub struct LithologyEdit {
    pub name: String,
    pub surface_porosity: f64,
    pub compaction_per_km: f64,
    pub grain_density_kg_m3: f64,
    #[serde(default)]
    pub source: String,
}

/// Add a lithology or change one (matched by name), after checking physical ranges.
pub async fn save_lithology(
    db: &SqlitePool,
    study_id: i64,
    edit: &LithologyEdit,
    actor: &str,
) -> Result<(), ServiceError> {
    let name = edit.name.trim();
    if name.is_empty() || name.contains([':', ';', ',']) {
        return Err(ServiceError::Invalid(
            "A lithology needs a name without ':', ';' or ',' (they separate mix parts).".into(),
        ));
    }
    let lith = Lithology::new(
        name,
        edit.surface_porosity,
        edit.compaction_per_km,
        edit.grain_density_kg_m3,
    )
    .map_err(|e| ServiceError::Invalid(format!("Lithology '{name}': {e}")))?;
    let mut tx = store::write_transaction(db).await?;
    let before = store::lithologies::list(&mut *tx, study_id)
        .await?
        .into_iter()
        .find(|l| l.name.eq_ignore_ascii_case(name));
    let source = if edit.source.trim().is_empty() {
        before
            .as_ref()
            .map(|b| b.source.clone())
            .unwrap_or_else(|| "entered by the team".into())
    } else {
        edit.source.trim().to_string()
    };
    store::lithologies::upsert(
        &mut *tx,
        study_id,
        name,
        lith.surface_porosity,
        lith.compaction_per_km,
        lith.grain_density_kg_m3,
        &source,
    )
    .await?;
    let describe =
        |phi: f64, c: f64, rho: f64| format!("phi0 {phi}, c {c} /km, grain density {rho} kg/m³");
    store::activity::record(
        &mut *tx,
        Some(study_id),
        Change {
            actor,
            action: if before.is_some() {
                "edit lithology"
            } else {
                "add lithology"
            },
            subject: name,
            before: before.map(|b| {
                describe(
                    b.surface_porosity,
                    b.compaction_per_km,
                    b.grain_density_kg_m3,
                )
            }),
            after: Some(describe(
                lith.surface_porosity,
                lith.compaction_per_km,
                lith.grain_density_kg_m3,
            )),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(())
}

/// Remove a lithology that no surface uses.
pub async fn delete_lithology(
    db: &SqlitePool,
    study_id: i64,
    lithology_id: i64,
    actor: &str,
) -> Result<(), ServiceError> {
    let mut tx = store::write_transaction(db).await?;
    let row = store::lithologies::get(&mut *tx, study_id, lithology_id)
        .await?
        .ok_or_else(|| ServiceError::NotFound(format!("lithology {lithology_id}")))?;
    let used = store::lithologies::usage_count(&mut tx, study_id, &row.name).await?;
    if used > 0 {
        return Err(ServiceError::Conflict(format!(
            "Lithology '{}' is used by {used} unit(s) of this study's wells; change those wells first.",
            row.name
        )));
    }
    store::lithologies::delete(&mut *tx, study_id, lithology_id).await?;
    store::activity::record(
        &mut *tx,
        Some(study_id),
        Change {
            actor,
            action: "delete lithology",
            subject: &row.name,
            before: Some(format!(
                "phi0 {}, c {} /km, grain density {} kg/m³",
                row.surface_porosity, row.compaction_per_km, row.grain_density_kg_m3
            )),
            after: None,
        },
    )
    .await?;
    tx.commit().await?;
    Ok(())
}

/// Everything a study's wells are analysed with: parameters, catalogue, sea level.
pub async fn study_inputs(
    db: &SqlitePool,
    study_id: i64,
) -> Result<sagline_science::analysis::StudyInputs, ServiceError> {
    let study = store::studies::get(db, study_id)
        .await?
        .ok_or_else(|| ServiceError::NotFound(format!("study {study_id}")))?;
    let rows = store::lithologies::list(db, study_id).await?;
    let points = store::sea_level::points(db, study_id).await?;
    inputs_of(&study, rows, points)
}

/// A study's analysis inputs from its stored rows (no SQL).
pub fn inputs_of(
    study: &store::studies::StudyRow,
    rows: Vec<store::lithologies::LithologyRow>,
    points: Vec<sagline_science::SeaLevelPoint>,
) -> Result<sagline_science::analysis::StudyInputs, ServiceError> {
    let lithologies = rows
        .into_iter()
        .map(|r| {
            Lithology::new(
                &r.name,
                r.surface_porosity,
                r.compaction_per_km,
                r.grain_density_kg_m3,
            )
            .map(|l| l.with_source(r.source))
            .map_err(|e| {
                ServiceError::Invalid(format!("lithology '{}' of this study: {e}", r.name))
            })
        })
        .collect::<Result<Vec<_>, _>>()?;
    let catalogue =
        Catalogue::new(lithologies).map_err(|e| ServiceError::Invalid(e.to_string()))?;
    let sea_level = sagline_science::SeaLevelCurve::new(points)
        .map_err(|e| ServiceError::Invalid(e.to_string()))?;
    Ok(sagline_science::analysis::StudyInputs {
        params: study.parameters(),
        catalogue,
        sea_level,
        thermal: study
            .thermal_choices()
            .inputs("this study")
            .map_err(|e| ServiceError::Invalid(format!("thermal settings of this study: {e}")))?,
    })
}

/// A stored well as the science core's column.
pub fn well_column(
    name: &str,
    rows: &[store::wells::SurfaceRow],
) -> Result<sagline_science::WellColumn, ServiceError> {
    let surfaces = rows
        .iter()
        .map(|r| {
            r.to_surface().map_err(|e| {
                ServiceError::Invalid(format!(
                    "the stored lithology of well {name}, horizon {}: {e}",
                    r.horizon
                ))
            })
        })
        .collect::<Result<Vec<_>, _>>()?;
    sagline_science::WellColumn::new(name, surfaces)
        .map_err(|e| ServiceError::Invalid(e.to_string()))
}
