//! A study's sections: named lines across the well set, stored with a version and an
//! elastic thickness Te that the team proposes and agrees like a pick, and their
//! analysis (the wells within the chosen distance projected onto the line, flexural
//! backstripping at the section's Te, a Te sweep, Airy against flexural subsidence per
//! well; `analysis::section`, docs/science-flexure.md 10). Every change writes its
//! activity row in the same transaction.

use super::ServiceError;
use super::cache::AnalysisCache;
use super::results::{self, StudyMemo};
use crate::store;
use crate::store::activity::Change;
use crate::store::sections::{SectionRow, SectionValues};
use sagline_science::analysis::section::{SectionReport, SectionRequest, analyse_section};
use sagline_science::flexure::backstrip::LoadExtension;
use sagline_science::flexure::section::{MapPoint, SectionLine};
use sagline_science::flexure::{ElasticPlate, PlateGeometry};
use sagline_science::input::WellLocation;
use serde::{Deserialize, Serialize};
use sqlx::SqlitePool;
use std::sync::Arc;

/// The states of a section's elastic thickness, in the words the team uses.
pub const TE_STATES: [&str; 2] = ["proposed", "agreed"];
/// The elastic thickness a new section is given when none is typed (km): the middle
/// value of continental plates the science core uses (`ElasticPlate::default`).
pub const DEFAULT_TE_KM: f64 = 20.0;
/// The distance from the line a new section takes wells from when none is typed (m).
pub const DEFAULT_MAX_OFFSET_M: f64 = 5_000.0;
/// The elastic thicknesses of every section's Te sweep (km); 0 is local (Airy) compensation.
pub const TE_SWEEP_KM: [f64; 7] = [0.0, 5.0, 10.0, 20.0, 30.0, 50.0, 80.0];
/// The longest section name accepted (characters).
pub const MAX_NAME_CHARS: usize = 120;
/// The most points a section line may have.
pub const MAX_POINTS: usize = 200;
/// The farthest a well may lie from the line and still be placed on it (m).
pub const MAX_OFFSET_LIMIT_M: f64 = 1_000_000.0;

/// A stored section, its line read back.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Section {
    pub id: i64,
    pub study_id: i64,
    pub name: String,
    /// In the study's map coordinates (x, y in m), in order along the line.
    pub points: Vec<MapPoint>,
    /// Length of the line (m).
    pub length_m: f64,
    /// Wells farther from the line than this are left out (m).
    pub max_offset_m: f64,
    /// The elastic thickness Te of the flexural backstripping (km).
    pub elastic_thickness_km: f64,
    /// "proposed" or "agreed".
    pub te_state: String,
    pub version: i64,
    pub updated_by: String,
    pub updated_at: String,
}

impl Section {
    fn from_row(row: SectionRow) -> Result<Section, ServiceError> {
        let points: Vec<MapPoint> = serde_json::from_str(&row.points).map_err(|e| {
            ServiceError::Internal(format!(
                "section {}: stored points do not read: {e}",
                row.id
            ))
        })?;
        let length_m = SectionLine {
            name: row.name.clone(),
            points: points.clone(),
        }
        .length_m();
        Ok(Section {
            id: row.id,
            study_id: row.study_id,
            name: row.name,
            points,
            length_m,
            max_offset_m: row.max_offset_m,
            elastic_thickness_km: row.elastic_thickness_km,
            te_state: row.te_state,
            version: row.version,
            updated_by: row.updated_by,
            updated_at: row.updated_at,
        })
    }

    /// The points as a user types them: one `x, y` per line.
    pub fn points_text(&self) -> String {
        self.points
            .iter()
            .map(|p| format!("{}, {}", p.x_m, p.y_m))
            .collect::<Vec<_>>()
            .join("\n")
    }
}

/// A section as a user saves it. `version` is the version the user's page showed (any
/// value for a new section).
#[derive(Debug, Clone, Deserialize)]
pub struct SectionEdit {
    pub name: String,
    pub points: Vec<MapPoint>,
    #[serde(default = "default_max_offset")]
    pub max_offset_m: f64,
    #[serde(default = "default_te")]
    pub elastic_thickness_km: f64,
    #[serde(default = "default_state")]
    pub te_state: String,
    #[serde(default)]
    pub version: i64,
}

fn default_max_offset() -> f64 {
    DEFAULT_MAX_OFFSET_M
}
fn default_te() -> f64 {
    DEFAULT_TE_KM
}
fn default_state() -> String {
    "proposed".into()
}

/// Points typed as `x, y` pairs, one per line or separated by `;`, in metres.
pub fn points_from_text(text: &str) -> Result<Vec<MapPoint>, ServiceError> {
    text.split(['\n', ';'])
        .map(str::trim)
        .filter(|p| !p.is_empty())
        .enumerate()
        .map(|(i, p)| {
            let parts: Vec<&str> = p
                .split([',', ' ', '\t'])
                .map(str::trim)
                .filter(|s| !s.is_empty())
                .collect();
            match parts.as_slice() {
                [x, y] => match (x.parse::<f64>(), y.parse::<f64>()) {
                    (Ok(x_m), Ok(y_m)) if x_m.is_finite() && y_m.is_finite() => {
                        Ok(MapPoint { x_m, y_m })
                    }
                    _ => Err(ServiceError::Invalid(format!(
                        "Point {} (\"{p}\"): x and y must be numbers of metres.",
                        i + 1
                    ))),
                },
                _ => Err(ServiceError::Invalid(format!(
                    "Point {} (\"{p}\") is not an x, y pair.",
                    i + 1
                ))),
            }
        })
        .collect()
}

/// Check an edit; the line's own rules (two or more points, finite, no zero-length
/// segment) are the science core's.
fn check(edit: &SectionEdit) -> Result<String, ServiceError> {
    let bad = |m: String| Err(ServiceError::Invalid(m));
    let name = edit.name.trim();
    if name.is_empty() || name.chars().count() > MAX_NAME_CHARS {
        return bad(format!(
            "A section needs a name of 1 to {MAX_NAME_CHARS} characters."
        ));
    }
    if edit.points.len() > MAX_POINTS {
        return bad(format!(
            "A section line may have at most {MAX_POINTS} points; this one has {}.",
            edit.points.len()
        ));
    }
    SectionLine::new(name, edit.points.clone())
        .map_err(|e| ServiceError::Invalid(format!("The section line: {e}.")))?;
    let d = edit.max_offset_m;
    if !(d.is_finite() && (0.0..=MAX_OFFSET_LIMIT_M).contains(&d)) {
        return bad(format!(
            "The distance from the line must be 0 to {MAX_OFFSET_LIMIT_M} m, not {d} m."
        ));
    }
    let te = edit.elastic_thickness_km;
    if ElasticPlate::default()
        .with_thickness(te * 1e3)
        .validate()
        .is_err()
    {
        return bad(format!(
            "The elastic thickness Te must be 0 to {} km, not {te} km (0 is local, Airy, compensation).",
            sagline_science::flexure::plate::MAX_ELASTIC_THICKNESS_M / 1e3
        ));
    }
    if !TE_STATES.contains(&edit.te_state.as_str()) {
        return bad(format!(
            "The state of Te '{}' is not one of: {}.",
            edit.te_state,
            TE_STATES.join(", ")
        ));
    }
    Ok(name.to_string())
}

fn section_json(s: &Section) -> String {
    serde_json::to_string(s).unwrap_or_default()
}

fn taken(name: &str) -> ServiceError {
    ServiceError::Conflict(format!(
        "This study already has a section named '{name}'; choose another name."
    ))
}

async fn study_exists(db: &SqlitePool, study_id: i64) -> Result<(), ServiceError> {
    super::studies::load(db, study_id).await.map(|_| ())
}

/// Every section of a study, by name.
pub async fn list(db: &SqlitePool, study_id: i64) -> Result<Vec<Section>, ServiceError> {
    study_exists(db, study_id).await?;
    store::sections::list(db, study_id)
        .await?
        .into_iter()
        .map(Section::from_row)
        .collect()
}

/// A section of a study, or not found (naming the study when it is the study that is missing).
pub async fn get(db: &SqlitePool, study_id: i64, section_id: i64) -> Result<Section, ServiceError> {
    match store::sections::get(db, study_id, section_id).await? {
        Some(row) => Section::from_row(row),
        None => {
            study_exists(db, study_id).await?;
            Err(ServiceError::NotFound(format!(
                "section {section_id} in study {study_id}"
            )))
        }
    }
}

/// Create a section (version 1).
pub async fn create(
    db: &SqlitePool,
    study_id: i64,
    edit: &SectionEdit,
    actor: &str,
) -> Result<Section, ServiceError> {
    let name = check(edit)?;
    study_exists(db, study_id).await?;
    let points = serde_json::to_string(&edit.points)
        .map_err(|e| ServiceError::Internal(format!("points as JSON: {e}")))?;
    let values = SectionValues {
        name: &name,
        points: &points,
        max_offset_m: edit.max_offset_m,
        elastic_thickness_km: edit.elastic_thickness_km,
        te_state: &edit.te_state,
    };
    let mut tx = store::write_transaction(db).await?;
    let id = match store::sections::insert(&mut *tx, study_id, &values, actor).await {
        Err(sqlx::Error::Database(e)) if e.is_unique_violation() => return Err(taken(&name)),
        other => other?,
    };
    let section = store::sections::get(&mut *tx, study_id, id)
        .await?
        .ok_or_else(|| ServiceError::Internal("the new section was not stored".into()))
        .and_then(Section::from_row)?;
    store::activity::record(
        &mut *tx,
        Some(study_id),
        Change {
            actor,
            action: "create section",
            subject: &name,
            before: None,
            after: Some(section_json(&section)),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(section)
}

fn stale(tried: &str, version: i64, current: Option<&Section>) -> ServiceError {
    let message = match current {
        Some(c) => format!(
            "Not saved: section '{}' was changed by {} while you were editing (your page showed version {version}, the section is now at version {}). It now reads: {} point(s), wells within {} m, Te {} km ({}). You tried {tried}. Review their change and save again.",
            c.name,
            c.updated_by,
            c.version,
            c.points.len(),
            c.max_offset_m,
            c.elastic_thickness_km,
            c.te_state,
        ),
        None => format!(
            "Not saved: the section was removed by someone else while you were editing (your page showed version {version}). Reload to see the current sections."
        ),
    };
    ServiceError::Stale {
        message,
        current: current.map(|c| serde_json::to_value(c).unwrap_or_default()),
    }
}

/// What a save did: `edit section Te` when only Te or its state changed, else `edit section`.
fn edit_kind(before: &Section, after: &Section) -> &'static str {
    let same_line = before.name == after.name
        && before.points == after.points
        && before.max_offset_m == after.max_offset_m;
    if same_line {
        "edit section Te"
    } else {
        "edit section"
    }
}

/// Save a section made against `edit.version`. A save against an old version is
/// refused with the stored section in the message, and nothing is overwritten.
pub async fn update(
    db: &SqlitePool,
    study_id: i64,
    section_id: i64,
    edit: &SectionEdit,
    actor: &str,
) -> Result<Section, ServiceError> {
    let name = check(edit)?;
    let points = serde_json::to_string(&edit.points)
        .map_err(|e| ServiceError::Internal(format!("points as JSON: {e}")))?;
    let values = SectionValues {
        name: &name,
        points: &points,
        max_offset_m: edit.max_offset_m,
        elastic_thickness_km: edit.elastic_thickness_km,
        te_state: &edit.te_state,
    };
    let mut tx = store::write_transaction(db).await?;
    let before = store::sections::get(&mut *tx, study_id, section_id)
        .await?
        .map(Section::from_row)
        .transpose()?;
    let Some(b) = before else {
        drop(tx);
        get(db, study_id, section_id).await?;
        return Err(stale("to save it", edit.version, None));
    };
    let stored =
        match store::sections::update(&mut *tx, study_id, section_id, edit.version, &values, actor)
            .await
        {
            Err(sqlx::Error::Database(e)) if e.is_unique_violation() => return Err(taken(&name)),
            other => other?,
        };
    if !stored {
        let tried = format!(
            "{} point(s), wells within {} m, Te {} km ({})",
            edit.points.len(),
            edit.max_offset_m,
            edit.elastic_thickness_km,
            edit.te_state
        );
        return Err(stale(&tried, edit.version, Some(&b)));
    }
    let after = store::sections::get(&mut *tx, study_id, section_id)
        .await?
        .ok_or_else(|| ServiceError::Internal("the saved section was not stored".into()))
        .and_then(Section::from_row)?;
    store::activity::record(
        &mut *tx,
        Some(study_id),
        Change {
            actor,
            action: edit_kind(&b, &after),
            subject: &after.name,
            before: Some(section_json(&b)),
            after: Some(section_json(&after)),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(after)
}

/// Remove a section as of `version`.
pub async fn remove(
    db: &SqlitePool,
    study_id: i64,
    section_id: i64,
    version: i64,
    actor: &str,
) -> Result<Section, ServiceError> {
    let mut tx = store::write_transaction(db).await?;
    let before = store::sections::get(&mut *tx, study_id, section_id)
        .await?
        .map(Section::from_row)
        .transpose()?;
    let Some(b) = before.clone().filter(|b| b.version == version) else {
        if before.is_none() {
            drop(tx);
            get(db, study_id, section_id).await?;
        }
        return Err(stale("to remove it", version, before.as_ref()));
    };
    store::sections::delete(&mut *tx, study_id, section_id, version).await?;
    store::activity::record(
        &mut *tx,
        Some(study_id),
        Change {
            actor,
            action: "remove section",
            subject: &b.name,
            before: Some(section_json(&b)),
            after: None,
        },
    )
    .await?;
    tx.commit().await?;
    Ok(b)
}

/// What analysing a section gives: the report, or why there is none, and the wells of
/// the study that could not be backstripped (so they are not on the section).
#[derive(Debug, Clone)]
pub struct SectionAnalysis {
    pub report: Result<SectionReport, String>,
    pub wells_not_analysed: Vec<String>,
    /// The study's inputs the wells were backstripped with (for what downloads say).
    pub inputs: sagline_science::analysis::StudyInputs,
}

/// The request the section page analyses: the section's line, distance and Te on a
/// continuous plate, the load held at the end wells' values beyond them, and the Te
/// sweep of [`TE_SWEEP_KM`] (with the section's Te added when it is not one of them).
pub fn request_of(section: &Section) -> SectionRequest {
    let mut sweep: Vec<f64> = TE_SWEEP_KM.to_vec();
    if !sweep.contains(&section.elastic_thickness_km) {
        sweep.push(section.elastic_thickness_km);
        sweep.sort_by(f64::total_cmp);
    }
    SectionRequest {
        line: SectionLine {
            name: section.name.clone(),
            points: section.points.clone(),
        },
        max_offset_m: section.max_offset_m,
        plate: ElasticPlate::default().with_thickness(section.elastic_thickness_km * 1e3),
        geometry: PlateGeometry::Continuous,
        extension: LoadExtension::Hold,
        te_sweep_m: sweep.iter().map(|t| t * 1e3).collect(),
        foreland: None,
    }
}

/// Analyse a section on the study's current wells: their Airy backstrips (from the
/// content-keyed cache), the located ones within the distance projected onto the line
/// and ordered along it, and the flexural backstripping, off the async workers.
pub async fn analyse(
    db: &SqlitePool,
    cache: &Arc<AnalysisCache>,
    memo: &StudyMemo,
    section: &Section,
) -> Result<SectionAnalysis, ServiceError> {
    let study = results::study_results_memo(db, cache, memo, section.study_id).await?;
    let request = request_of(section);
    tokio::task::spawn_blocking(move || {
        let (inputs, wells) = &*study;
        let mut locations = Vec::new();
        let mut histories = Vec::new();
        let mut wells_not_analysed = Vec::new();
        for w in wells {
            match &w.outcome {
                Ok(a) => {
                    histories.push(a.history.clone());
                    locations.push(WellLocation {
                        name: w.well.name.clone(),
                        x: w.well.x,
                        y: w.well.y,
                        lat: w.well.lat,
                        lon: w.well.lon,
                        notes: String::new(),
                    });
                }
                Err(_) => wells_not_analysed.push(w.well.name.clone()),
            }
        }
        let report = analyse_section(&request, &locations, &histories, &inputs.params)
            .map_err(|e| e.to_string());
        SectionAnalysis {
            report,
            wells_not_analysed,
            inputs: inputs.clone(),
        }
    })
    .await
    .map_err(|e| ServiceError::Internal(format!("the section analysis task failed: {e}")))
}

/// A well of the study with a map position, for the sections list's hint.
#[derive(Debug, Clone, Serialize)]
pub struct LocatedWells {
    pub count: usize,
    /// Smallest and largest x and y of the located wells (m), if any.
    pub x_range_m: Option<(f64, f64)>,
    pub y_range_m: Option<(f64, f64)>,
}

/// The sections list of a study.
#[derive(Debug, Clone, Serialize)]
pub struct SectionsView {
    pub study: super::studies::StudyInfo,
    pub sections: Vec<Section>,
    pub located_wells: LocatedWells,
    pub default_te_km: f64,
    pub default_max_offset_m: f64,
}

fn range(values: impl Iterator<Item = f64>) -> Option<(f64, f64)> {
    values.fold(None, |acc, v| {
        Some(acc.map_or((v, v), |(lo, hi): (f64, f64)| (lo.min(v), hi.max(v))))
    })
}

/// The sections of a study, and where its located wells lie.
pub async fn sections_view(db: &SqlitePool, study_id: i64) -> Result<SectionsView, ServiceError> {
    let study = super::studies::load(db, study_id).await?;
    let sections = list(db, study_id).await?;
    let wells = store::wells::list(db, study_id).await?;
    let located: Vec<(f64, f64)> = wells.iter().filter_map(|w| Some((w.x?, w.y?))).collect();
    Ok(SectionsView {
        study: super::studies::StudyInfo::from(&study),
        sections,
        located_wells: LocatedWells {
            count: located.len(),
            x_range_m: range(located.iter().map(|p| p.0)),
            y_range_m: range(located.iter().map(|p| p.1)),
        },
        default_te_km: DEFAULT_TE_KM,
        default_max_offset_m: DEFAULT_MAX_OFFSET_M,
    })
}

/// One age of the section page's age chooser.
#[derive(Debug, Clone, Serialize)]
pub struct AgeOption {
    pub age_ma: f64,
    pub shown: bool,
}

/// One row of the section page's wells table.
#[derive(Debug, Clone, Serialize)]
pub struct SectionWellRow {
    pub well: String,
    pub well_id: Option<i64>,
    pub distance_m: f64,
    pub offset_m: f64,
}

/// One age of one well: Airy against flexural tectonic subsidence (m).
#[derive(Debug, Clone, Serialize)]
pub struct ComparisonRow {
    pub age_ma: f64,
    pub airy_m: f64,
    pub flexural_m: f64,
    /// Flexural minus Airy (m).
    pub difference_m: f64,
}

/// A well's Airy-against-flexural table.
#[derive(Debug, Clone, Serialize)]
pub struct WellComparisonView {
    pub well: String,
    pub distance_m: f64,
    pub rows: Vec<ComparisonRow>,
}

/// One well of the Te sweep table: its flexural tectonic subsidence (m) at the shown
/// age for each elastic thickness of the sweep (`None`: no record at that age).
#[derive(Debug, Clone, Serialize)]
pub struct SweepRow {
    pub well: String,
    pub distance_m: f64,
    pub flexural_m: Vec<Option<f64>>,
}

/// The section page: the section, its wells, the tables and the chart (left out of the
/// JSON twin), or why it could not be analysed.
#[derive(Debug, Clone, Serialize)]
pub struct SectionView {
    pub study: super::studies::StudyInfo,
    pub section: Section,
    pub points_text: String,
    pub te_states: [&'static str; 2],
    /// Why the section could not be analysed, in words a user can act on.
    pub analysis_error: Option<String>,
    pub wells: Vec<SectionWellRow>,
    /// Located wells farther from the line than the section's distance.
    pub wells_too_far: usize,
    /// Wells without a map position (x, y).
    pub wells_unplaced: Vec<String>,
    /// Wells of the study that could not be backstripped (not on the section).
    pub wells_not_analysed: Vec<String>,
    /// The ages of the section (Ma), youngest first, and the one the chart and the
    /// sweep table show.
    pub ages_ma: Vec<f64>,
    pub shown_age_ma: Option<f64>,
    /// The ages for the page's age chooser, youngest first, the shown one marked.
    #[serde(skip)]
    pub age_options: Vec<AgeOption>,
    pub comparison: Vec<WellComparisonView>,
    /// The elastic thicknesses of the sweep (km) and their flexural parameter (km).
    pub sweep_te_km: Vec<f64>,
    pub sweep_alpha_km: Vec<f64>,
    pub sweep: Vec<SweepRow>,
    pub warnings: Vec<String>,
    /// The whole science report (the JSON twin only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub report: Option<SectionReport>,
    pub caution: &'static str,
    #[serde(skip)]
    pub chart: String,
    /// The restored section at the shown age (left out of the JSON twin).
    #[serde(skip)]
    pub restored_chart: String,
    /// What the section's downloads say about themselves.
    #[serde(skip)]
    pub export: super::exports::ExportMeta,
}

/// The caution shown with every section result (the science core's).
pub const CAUTION: &str = sagline_science::analysis::section::CAUTION;

fn same_age(a: f64, b: f64) -> bool {
    (a - b).abs() <= sagline_science::flexure::backstrip::SAME_AGE_MYR
}

/// The header of the section's Airy-against-flexural CSV download.
pub const COMPARISON_CSV_HEADER: [&str; 7] = [
    "well",
    "distance_m",
    "age_ma",
    "te_km",
    "airy_tectonic_subsidence_m",
    "flexural_tectonic_subsidence_m",
    "flexural_minus_airy_m",
];

/// The section's Airy-against-flexural table as CSV rows (per well, youngest age first).
pub fn comparison_rows(view: &SectionView) -> Vec<Vec<String>> {
    let te = view.section.elastic_thickness_km.to_string();
    view.comparison
        .iter()
        .flat_map(|c| {
            let te = te.clone();
            c.rows.iter().map(move |r| {
                vec![
                    c.well.clone(),
                    format!("{:.3}", c.distance_m),
                    r.age_ma.to_string(),
                    te.clone(),
                    format!("{:.3}", r.airy_m),
                    format!("{:.3}", r.flexural_m),
                    format!("{:.3}", r.difference_m),
                ]
            })
        })
        .collect()
}

/// The deflection chart at one age of the report.
pub fn deflection_chart(report: &SectionReport, age_ma: f64) -> String {
    let at = report
        .flexural
        .ages
        .iter()
        .find(|a| same_age(a.age_ma, age_ma));
    let data = sagline_charts::SectionProfileChartData {
        title: format!(
            "Load deflection along section {} at {} Ma",
            report.section.name, age_ma
        ),
        distance_m: at.map(|a| a.profile.distance_m.clone()).unwrap_or_default(),
        local_deflection_m: at
            .map(|a| a.profile.local_deflection_m.clone())
            .unwrap_or_default(),
        flexural_deflection_m: at
            .map(|a| a.profile.flexural_deflection_m.clone())
            .unwrap_or_default(),
        elastic_thickness_km: report.flexural.elastic_thickness_m / 1e3,
        wells: at
            .map(|a| {
                a.wells
                    .iter()
                    .map(|w| (w.well.clone(), w.distance_m))
                    .collect()
            })
            .unwrap_or_default(),
    };
    sagline_charts::section_profile_chart(&data, sagline_charts::ChartSize::default())
}

/// The restored section (horizons against distance, below present sea level) at one age
/// of the report.
pub fn restored_chart(report: &SectionReport, age_ma: f64) -> String {
    let wells = report
        .restored
        .iter()
        .find(|a| same_age(a.age_ma, age_ma))
        .map(|a| {
            a.wells
                .iter()
                .map(|w| sagline_charts::RestoredColumn {
                    name: w.well.clone(),
                    distance_m: w.distance_m,
                    surface_m: w.surface_m,
                    base_m: w.base_m,
                    horizons: w
                        .horizons
                        .iter()
                        .map(|h| (h.horizon.clone(), h.depth_m))
                        .collect(),
                })
                .collect()
        })
        .unwrap_or_default();
    let data = sagline_charts::RestoredSectionChartData {
        title: format!(
            "Restored section {} at {} Ma (independent of Te)",
            report.section.name, age_ma
        ),
        wells,
    };
    sagline_charts::restored_section_chart(&data, sagline_charts::ChartSize::default())
}

/// The section page's view; `age_ma` picks the age the chart and sweep table show
/// (the nearest age of the section; the youngest when not given). `draw`: draw the chart.
pub async fn section_view(
    db: &SqlitePool,
    cache: &Arc<AnalysisCache>,
    memo: &StudyMemo,
    study_id: i64,
    section_id: i64,
    age_ma: Option<f64>,
    draw: bool,
) -> Result<SectionView, ServiceError> {
    let study = super::studies::load(db, study_id).await?;
    let section = get(db, study_id, section_id).await?;
    let analysis = analyse(db, cache, memo, &section).await?;
    let well_ids: std::collections::HashMap<String, i64> = store::wells::list(db, study_id)
        .await?
        .into_iter()
        .map(|w| (w.name, w.id))
        .collect();
    let mut view = SectionView {
        study: super::studies::StudyInfo::from(&study),
        points_text: section.points_text(),
        section,
        te_states: TE_STATES,
        analysis_error: None,
        wells: Vec::new(),
        wells_too_far: 0,
        wells_unplaced: Vec::new(),
        wells_not_analysed: analysis.wells_not_analysed,
        ages_ma: Vec::new(),
        shown_age_ma: None,
        age_options: Vec::new(),
        comparison: Vec::new(),
        sweep_te_km: Vec::new(),
        sweep_alpha_km: Vec::new(),
        sweep: Vec::new(),
        warnings: Vec::new(),
        report: None,
        caution: CAUTION,
        chart: String::new(),
        restored_chart: String::new(),
        export: super::exports::ExportMeta::new(&study.name, &analysis.inputs),
    };
    let report = match analysis.report {
        Ok(r) => r,
        Err(e) => {
            view.analysis_error = Some(e);
            return Ok(view);
        }
    };
    view.wells = report
        .wells
        .iter()
        .map(|m| SectionWellRow {
            well: m.well.clone(),
            well_id: well_ids.get(&m.well).copied(),
            distance_m: m.distance_m,
            offset_m: m.offset_m,
        })
        .collect();
    view.wells_too_far = report.wells_too_far.len();
    view.wells_unplaced = report.wells_unplaced.clone();
    view.ages_ma = report
        .flexural
        .ages
        .iter()
        .rev()
        .map(|a| a.age_ma)
        .collect();
    let shown = match age_ma {
        Some(want) => view
            .ages_ma
            .iter()
            .copied()
            .min_by(|a, b| (a - want).abs().total_cmp(&(b - want).abs())),
        None => view.ages_ma.first().copied(),
    };
    view.shown_age_ma = shown;
    view.age_options = view
        .ages_ma
        .iter()
        .map(|&age_ma| AgeOption {
            age_ma,
            shown: shown == Some(age_ma),
        })
        .collect();
    view.comparison = report
        .comparison
        .iter()
        .map(|c| WellComparisonView {
            well: c.well.clone(),
            distance_m: c.distance_m,
            rows: c
                .ages_ma
                .iter()
                .zip(&c.airy_m)
                .zip(&c.flexural_m)
                .rev()
                .map(|((&age_ma, &airy_m), &flexural_m)| ComparisonRow {
                    age_ma,
                    airy_m,
                    flexural_m,
                    difference_m: flexural_m - airy_m,
                })
                .collect(),
        })
        .collect();
    view.sweep_te_km = report
        .te_sweep
        .iter()
        .map(|s| s.elastic_thickness_m / 1e3)
        .collect();
    view.sweep_alpha_km = report
        .te_sweep
        .iter()
        .map(|s| s.flexural_parameter_m / 1e3)
        .collect();
    view.sweep = report
        .wells
        .iter()
        .map(|m| SweepRow {
            well: m.well.clone(),
            distance_m: m.distance_m,
            flexural_m: report
                .te_sweep
                .iter()
                .map(|s| {
                    let c = s.wells.iter().find(|c| c.well == m.well)?;
                    let age = shown?;
                    let i = c.ages_ma.iter().position(|&a| same_age(a, age))?;
                    c.flexural_m.get(i).copied()
                })
                .collect(),
        })
        .collect();
    view.warnings = report.warnings.clone();
    if !view.wells_not_analysed.is_empty() {
        view.warnings.push(format!(
            "{} well(s) could not be backstripped and are not on the section: {}",
            view.wells_not_analysed.len(),
            view.wells_not_analysed.join(", ")
        ));
    }
    if !draw {
        view.report = Some(report);
    } else if let Some(age) = shown {
        (view.chart, view.restored_chart) = tokio::task::spawn_blocking(move || {
            (deflection_chart(&report, age), restored_chart(&report, age))
        })
        .await
        .map_err(|e| ServiceError::Internal(format!("the chart task failed: {e}")))?;
    }
    Ok(view)
}
