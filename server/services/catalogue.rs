//! A study's catalogue page: model parameters with their ranges, lithologies and the
//! sea-level curve; and reading typed parameter edits.

use super::ServiceError;
use super::studies::StudyInfo;
use crate::store;
pub use crate::store::lithologies::LithologyRow;
use sagline_science::params::PARAMETER_RANGES;
use sagline_science::{ModelParameters, SeaLevelPoint};
use serde::Serialize;
use sqlx::SqlitePool;
use std::collections::HashMap;

/// One model parameter with its unit and admissible range, for the form and the API.
#[derive(Debug, Clone, Serialize)]
pub struct ParameterEntry {
    pub name: &'static str,
    pub label: &'static str,
    pub unit: &'static str,
    pub value: f64,
    pub min: f64,
    pub max: f64,
}

#[derive(Debug, Serialize)]
pub struct CatalogueView {
    pub study: StudyInfo,
    pub parameters: Vec<ParameterEntry>,
    pub thermal_time_constant_myr: f64,
    /// The study's thermal settings as stored (`None` = the default).
    pub thermal: sagline_science::analysis::thermal::ThermalChoices,
    pub lithologies: Vec<LithologyRow>,
    pub sea_level: Vec<SeaLevelPoint>,
}

/// The catalogue of a study.
pub async fn view(db: &SqlitePool, id: i64) -> Result<CatalogueView, ServiceError> {
    let study = super::studies::load(db, id).await?;
    let params = study.parameters();
    Ok(CatalogueView {
        study: StudyInfo::from(&study),
        parameters: params
            .entries()
            .into_iter()
            .map(|(r, value)| ParameterEntry {
                name: r.name,
                label: r.label,
                unit: r.unit,
                value,
                min: r.min,
                max: r.max,
            })
            .collect(),
        thermal_time_constant_myr: params.thermal_time_constant_myr(),
        thermal: study.thermal_choices(),
        lithologies: store::lithologies::list(db, id).await?,
        sea_level: store::sea_level::points(db, id).await?,
    })
}

/// A study's parameters with named values applied; every unknown name, unparsable
/// value or out-of-range value is reported (`Err` lists them).
pub async fn edited_parameters(
    db: &SqlitePool,
    id: i64,
    fields: &HashMap<String, String>,
) -> Result<Result<ModelParameters, Vec<String>>, ServiceError> {
    let study = super::studies::load(db, id).await?;
    Ok(parse_parameters(study.parameters(), fields))
}

fn parse_parameters(
    base: ModelParameters,
    fields: &HashMap<String, String>,
) -> Result<ModelParameters, Vec<String>> {
    let mut p = base;
    let mut problems = Vec::new();
    for (name, raw) in fields {
        if !PARAMETER_RANGES.iter().any(|r| r.name == name) {
            problems.push(format!("unknown parameter '{name}'"));
            continue;
        }
        match raw.trim().parse::<f64>() {
            Ok(v) if v.is_finite() => {
                p.set(name, v);
            }
            _ => problems.push(format!("{name}: '{raw}' is not a number")),
        }
    }
    if let Err(errs) = p.validate() {
        problems.extend(errs.iter().map(|e| e.to_string()));
    }
    if problems.is_empty() {
        Ok(p)
    } else {
        Err(problems)
    }
}
