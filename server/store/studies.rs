//! Studies and their model parameters.

use super::StoreResult;
use sagline_science::ModelParameters;
use sagline_science::analysis::thermal::ThermalChoices;
use serde::Serialize;
use sqlx::{FromRow, SqliteExecutor};

#[derive(Debug, Clone, Serialize, FromRow)]
pub struct StudyRow {
    pub id: i64,
    pub name: String,
    pub description: String,
    pub created_at: String,
    #[sqlx(flatten)]
    #[serde(skip)]
    pub params: ParamsRow,
    #[sqlx(flatten)]
    #[serde(skip)]
    pub thermal: ThermalRow,
}

/// The thermal-setting columns of a study; NULL keeps the program's default.
#[derive(Debug, Clone, Copy, FromRow, Default, PartialEq)]
pub struct ThermalRow {
    pub surface_temperature_c: Option<f64>,
    pub crust_heat_production_uw_m3: Option<f64>,
    pub crust_heat_production_decay_km: Option<f64>,
}

impl From<ThermalRow> for ThermalChoices {
    fn from(r: ThermalRow) -> Self {
        ThermalChoices {
            surface_temperature_c: r.surface_temperature_c,
            crust_heat_production_uw_m3: r.crust_heat_production_uw_m3,
            crust_heat_production_decay_km: r.crust_heat_production_decay_km,
        }
    }
}

/// The parameter columns of a study, mirrored 1:1 from `ModelParameters`.
#[derive(Debug, Clone, Copy, FromRow, Default)]
pub struct ParamsRow {
    pub mantle_density_kg_m3: f64,
    pub crust_density_kg_m3: f64,
    pub water_density_kg_m3: f64,
    pub lithosphere_thickness_m: f64,
    pub crust_thickness_m: f64,
    pub asthenosphere_temperature_c: f64,
    pub thermal_expansion_per_c: f64,
    pub thermal_diffusivity_m2_s: f64,
    pub thermal_conductivity_w_m_k: f64,
}

impl From<ParamsRow> for ModelParameters {
    fn from(r: ParamsRow) -> Self {
        ModelParameters {
            mantle_density_kg_m3: r.mantle_density_kg_m3,
            crust_density_kg_m3: r.crust_density_kg_m3,
            water_density_kg_m3: r.water_density_kg_m3,
            lithosphere_thickness_m: r.lithosphere_thickness_m,
            crust_thickness_m: r.crust_thickness_m,
            asthenosphere_temperature_c: r.asthenosphere_temperature_c,
            thermal_expansion_per_c: r.thermal_expansion_per_c,
            thermal_diffusivity_m2_s: r.thermal_diffusivity_m2_s,
            thermal_conductivity_w_m_k: r.thermal_conductivity_w_m_k,
        }
    }
}

impl StudyRow {
    pub fn parameters(&self) -> ModelParameters {
        self.params.into()
    }

    pub fn thermal_choices(&self) -> ThermalChoices {
        self.thermal.into()
    }
}

/// Replace a study's thermal settings (already validated; `None` = the default).
pub async fn update_thermal(
    db: impl SqliteExecutor<'_>,
    id: i64,
    t: &ThermalChoices,
) -> StoreResult<()> {
    sqlx::query(
        "UPDATE studies SET surface_temperature_c = ?, crust_heat_production_uw_m3 = ?,
            crust_heat_production_decay_km = ?
         WHERE id = ?",
    )
    .bind(t.surface_temperature_c)
    .bind(t.crust_heat_production_uw_m3)
    .bind(t.crust_heat_production_decay_km)
    .bind(id)
    .execute(db)
    .await?;
    Ok(())
}

/// A study with the counts shown on the studies page.
#[derive(Debug, Clone, Serialize, FromRow)]
pub struct StudySummary {
    pub id: i64,
    pub name: String,
    pub description: String,
    pub created_at: String,
    pub wells: i64,
    pub surfaces: i64,
}

pub async fn list(db: impl SqliteExecutor<'_>) -> StoreResult<Vec<StudySummary>> {
    sqlx::query_as(
        "SELECT s.id, s.name, s.description, s.created_at,
                (SELECT COUNT(*) FROM wells w WHERE w.study_id = s.id) AS wells,
                (SELECT COUNT(*) FROM surfaces f JOIN wells w ON w.id = f.well_id
                  WHERE w.study_id = s.id) AS surfaces
         FROM studies s ORDER BY s.name",
    )
    .fetch_all(db)
    .await
}

pub async fn get(db: impl SqliteExecutor<'_>, id: i64) -> StoreResult<Option<StudyRow>> {
    sqlx::query_as("SELECT * FROM studies WHERE id = ?")
        .bind(id)
        .fetch_optional(db)
        .await
}

pub async fn find_by_name(
    db: impl SqliteExecutor<'_>,
    name: &str,
) -> StoreResult<Option<StudyRow>> {
    sqlx::query_as("SELECT * FROM studies WHERE name = ?")
        .bind(name)
        .fetch_optional(db)
        .await
}

pub async fn insert(
    db: impl SqliteExecutor<'_>,
    name: &str,
    description: &str,
    p: &ModelParameters,
) -> StoreResult<i64> {
    let id = sqlx::query_scalar(
        "INSERT INTO studies (name, description, mantle_density_kg_m3, crust_density_kg_m3,
            water_density_kg_m3, lithosphere_thickness_m, crust_thickness_m,
            asthenosphere_temperature_c, thermal_expansion_per_c, thermal_diffusivity_m2_s,
            thermal_conductivity_w_m_k)
         VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?) RETURNING id",
    )
    .bind(name)
    .bind(description)
    .bind(p.mantle_density_kg_m3)
    .bind(p.crust_density_kg_m3)
    .bind(p.water_density_kg_m3)
    .bind(p.lithosphere_thickness_m)
    .bind(p.crust_thickness_m)
    .bind(p.asthenosphere_temperature_c)
    .bind(p.thermal_expansion_per_c)
    .bind(p.thermal_diffusivity_m2_s)
    .bind(p.thermal_conductivity_w_m_k)
    .fetch_one(db)
    .await?;
    Ok(id)
}

pub async fn update_parameters(
    db: impl SqliteExecutor<'_>,
    id: i64,
    p: &ModelParameters,
) -> StoreResult<()> {
    sqlx::query(
        "UPDATE studies SET mantle_density_kg_m3 = ?, crust_density_kg_m3 = ?,
            water_density_kg_m3 = ?, lithosphere_thickness_m = ?, crust_thickness_m = ?,
            asthenosphere_temperature_c = ?, thermal_expansion_per_c = ?,
            thermal_diffusivity_m2_s = ?, thermal_conductivity_w_m_k = ?
         WHERE id = ?",
    )
    .bind(p.mantle_density_kg_m3)
    .bind(p.crust_density_kg_m3)
    .bind(p.water_density_kg_m3)
    .bind(p.lithosphere_thickness_m)
    .bind(p.crust_thickness_m)
    .bind(p.asthenosphere_temperature_c)
    .bind(p.thermal_expansion_per_c)
    .bind(p.thermal_diffusivity_m2_s)
    .bind(p.thermal_conductivity_w_m_k)
    .bind(id)
    .execute(db)
    .await?;
    Ok(())
}
