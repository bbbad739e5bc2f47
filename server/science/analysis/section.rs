//! The analysis of a section: wells placed on the line, the restored section, flexural
//! backstripping at the section's Te, the Te sweep, Airy against flexural subsidence per
//! well, and the foreland fit, in one serialisable report (the JSON twin of the section
//! page and of `sagline section`; docs/science-flexure.md 10).

use crate::backstrip::WellHistory;
use crate::flexure::backstrip::{
    FlexuralBackstrip, FlexuralSettings, LoadExtension, PlacedHistory, RestoredSectionAge,
    SAME_AGE_MYR, flexural_backstrip, restored_section, te_sweep,
};
use crate::flexure::foreland::{
    ForelandFitSettings, ForelandHistory, SubsidencePoint, fit_foreland_through_time,
};
use crate::flexure::section::{SectionLine, SectionMember, wells_on_section};
use crate::flexure::{ElasticPlate, PlateGeometry};
use crate::input::WellLocation;
use crate::{ModelParameters, ScienceError};
use serde::{Deserialize, Serialize};

/// The smallest uncertainty given to a well's tectonic subsidence in the foreland fit (m):
/// a water depth known "exactly" is still known only to some metres (common practice).
pub const SIGMA_FLOOR_M: f64 = 10.0;

/// The caution shown with every section result.
pub const CAUTION: &str = "Flexural backstripping and foreland fits rest on choices (elastic thickness, how the load continues beyond the end wells, where the plate is broken) and on a thin elastic plate; the results support, and do not replace, qualified judgement and local rules.";

/// What to compute for a section.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SectionRequest {
    pub line: SectionLine,
    /// Wells farther from the line than this are left out (m).
    pub max_offset_m: f64,
    /// E, nu and the section's Te.
    pub plate: ElasticPlate,
    pub geometry: PlateGeometry,
    pub extension: LoadExtension,
    /// Elastic thicknesses of the sweep (m); empty: no sweep.
    pub te_sweep_m: Vec<f64>,
    pub foreland: Option<ForelandRequest>,
}

/// The foreland fit: at which ages, with which model.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ForelandRequest {
    /// Section ages to fit (Ma); each must be an age of the section.
    pub ages_ma: Vec<f64>,
    pub settings: ForelandFitSettings,
    /// Fit the subsidence since this age (each well's value at it subtracted); `None`:
    /// the tectonic subsidence itself, with a free offset if the settings say so.
    pub reference_age_ma: Option<f64>,
}

/// The whole result.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SectionReport {
    pub section: SectionOut,
    pub plate: ElasticPlate,
    pub geometry: PlateGeometry,
    pub extension: LoadExtension,
    /// rho_m - rho_w (kg m^-3): the backstripped basin is water-filled.
    pub density_contrast_kg_m3: f64,
    pub parameters: ModelParameters,
    /// On the section, in order.
    pub wells: Vec<SectionMember>,
    pub wells_too_far: Vec<SectionMember>,
    /// Wells of the tops file without a projected position.
    pub wells_unplaced: Vec<String>,
    /// Horizons against distance at every age (independent of Te).
    pub restored: Vec<RestoredSectionAge>,
    /// Flexural backstripping at the section's Te.
    pub flexural: FlexuralBackstrip,
    /// Airy against flexural tectonic subsidence, per well.
    pub comparison: Vec<WellComparison>,
    pub te_sweep: Vec<TeSweepOut>,
    pub foreland: Option<ForelandHistory>,
    pub warnings: Vec<String>,
    pub caution: &'static str,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SectionOut {
    pub name: String,
    pub points: Vec<crate::flexure::section::MapPoint>,
    pub length_m: f64,
    pub max_offset_m: f64,
}

/// One well's tectonic subsidence, Airy against flexural, oldest first.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WellComparison {
    pub well: String,
    pub distance_m: f64,
    pub ages_ma: Vec<f64>,
    pub airy_m: Vec<f64>,
    pub flexural_m: Vec<f64>,
}

/// One Te of the sweep: each well's flexural tectonic subsidence (best) at its ages, and
/// the along-section tectonic-subsidence profile at each age.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TeSweepOut {
    pub elastic_thickness_m: f64,
    pub flexural_parameter_m: f64,
    pub wells: Vec<WellComparison>,
    pub profiles: Vec<SweepProfile>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SweepProfile {
    pub age_ma: f64,
    pub distance_m: Vec<f64>,
    pub tectonic_subsidence_m: Vec<Option<f64>>,
}

fn comparisons(run: &FlexuralBackstrip, members: &[SectionMember]) -> Vec<WellComparison> {
    members
        .iter()
        .map(|m| {
            let mut c = WellComparison {
                well: m.well.clone(),
                distance_m: m.distance_m,
                ages_ma: Vec::new(),
                airy_m: Vec::new(),
                flexural_m: Vec::new(),
            };
            for age in &run.ages {
                if let Some(w) = age.wells.iter().find(|w| w.well == m.well) {
                    c.ages_ma.push(age.age_ma);
                    c.airy_m.push(w.airy_tectonic_subsidence.best);
                    c.flexural_m.push(w.flexural_tectonic_subsidence.best);
                }
            }
            c
        })
        .collect()
}

/// Analyse a section (docs/science-flexure.md 10). `locations` are the study's well
/// positions; `histories` the Airy backstrips of the study's wells (any order, by name).
/// Wells of `histories` with no position are listed as unplaced; positions without a
/// backstrip are ignored.
///
/// Errors: an invalid line or distance; no backstripped well on the section; invalid
/// parameters or plate; a sweep Te out of range; a foreland age that is no age of the
/// section; a failed foreland fit.
pub fn analyse_section(
    request: &SectionRequest,
    locations: &[WellLocation],
    histories: &[WellHistory],
    params: &ModelParameters,
) -> Result<SectionReport, ScienceError> {
    let line = SectionLine::new(request.line.name.clone(), request.line.points.clone())?;
    let with_history: Vec<WellLocation> = locations
        .iter()
        .filter(|l| histories.iter().any(|h| h.well == l.name))
        .cloned()
        .collect();
    let mut placed_wells = wells_on_section(&line, &with_history, request.max_offset_m)?;
    for h in histories {
        if !locations.iter().any(|l| l.name == h.well) {
            placed_wells.unplaced.push(h.well.clone());
        }
    }
    if placed_wells.members.is_empty() {
        return Err(ScienceError::InvalidSection(format!(
            "no well lies within {} m of '{}'",
            request.max_offset_m, line.name
        )));
    }
    let placed: Vec<PlacedHistory> = placed_wells
        .members
        .iter()
        .map(|m| PlacedHistory {
            distance_m: m.distance_m,
            history: histories
                .iter()
                .find(|h| h.well == m.well)
                .expect("members have histories"),
        })
        .collect();
    let settings = FlexuralSettings {
        plate: request.plate,
        geometry: request.geometry,
        extension: request.extension,
        ..Default::default()
    };
    let flexural = flexural_backstrip(&placed, params, &settings)?;
    for &te in &request.te_sweep_m {
        request.plate.with_thickness(te).validate()?;
    }
    let sweep = te_sweep(&placed, params, &settings, &request.te_sweep_m)?;
    let te_sweep_out = sweep
        .iter()
        .map(|run| TeSweepOut {
            elastic_thickness_m: run.elastic_thickness_m,
            flexural_parameter_m: run.flexural_parameter_m,
            wells: comparisons(run, &placed_wells.members),
            profiles: run
                .ages
                .iter()
                .map(|a| SweepProfile {
                    age_ma: a.age_ma,
                    distance_m: a.profile.distance_m.clone(),
                    tectonic_subsidence_m: a.profile.tectonic_subsidence_m.clone(),
                })
                .collect(),
        })
        .collect();
    let drho = params.mantle_density_kg_m3 - params.water_density_kg_m3;

    let mut warnings = Vec::new();
    if !placed_wells.unplaced.is_empty() {
        warnings.push(format!(
            "{} well(s) have no projected position (x, y) and are not on the section: {}",
            placed_wells.unplaced.len(),
            placed_wells.unplaced.join(", ")
        ));
    }
    if placed_wells.members.len() < 2 {
        warnings.push(
            "only one well lies on the section: its load is uniform along the line, so flexure changes nothing".into(),
        );
    }
    let foreland = match &request.foreland {
        None => None,
        Some(f) => Some(foreland_fit(&flexural, f, &request.plate, drho)?),
    };
    if let Some(h) = &foreland {
        warnings.extend(h.warnings.iter().cloned());
        for a in &h.fits {
            warnings.extend(
                a.fit
                    .warnings
                    .iter()
                    .map(|w| format!("foreland fit at {} Ma: {w}", a.age_ma)),
            );
        }
    }
    Ok(SectionReport {
        section: SectionOut {
            name: line.name.clone(),
            length_m: line.length_m(),
            points: line.points.clone(),
            max_offset_m: request.max_offset_m,
        },
        plate: request.plate,
        geometry: request.geometry,
        extension: request.extension,
        density_contrast_kg_m3: drho,
        parameters: *params,
        comparison: comparisons(&flexural, &placed_wells.members),
        restored: restored_section(&placed),
        wells: placed_wells.members,
        wells_too_far: placed_wells.too_far,
        wells_unplaced: placed_wells.unplaced,
        flexural,
        te_sweep: te_sweep_out,
        foreland,
        warnings,
        caution: CAUTION,
    })
}

/// The foreland fit on the flexural tectonic subsidence of the section's Te.
fn foreland_fit(
    run: &FlexuralBackstrip,
    request: &ForelandRequest,
    plate: &ElasticPlate,
    drho: f64,
) -> Result<ForelandHistory, ScienceError> {
    let find = |age: f64| {
        run.ages
            .iter()
            .find(|a| (a.age_ma - age).abs() <= SAME_AGE_MYR)
            .ok_or_else(|| {
                let ages: Vec<String> = run.ages.iter().map(|a| format!("{}", a.age_ma)).collect();
                ScienceError::InvalidSection(format!(
                    "{age} Ma is not an age of the section (its ages: {} Ma)",
                    ages.join(", ")
                ))
            })
    };
    let reference = request.reference_age_ma.map(find).transpose()?;
    let mut series = Vec::new();
    for &age in &request.ages_ma {
        let at = find(age)?;
        let points: Vec<SubsidencePoint> = at
            .wells
            .iter()
            .filter_map(|w| {
                let y = w.flexural_tectonic_subsidence;
                let base = match reference {
                    Some(r) => {
                        r.wells
                            .iter()
                            .find(|v| v.well == w.well)?
                            .flexural_tectonic_subsidence
                            .best
                    }
                    None => 0.0,
                };
                Some(SubsidencePoint {
                    distance_m: w.distance_m,
                    subsidence_m: y.best - base,
                    sigma_m: (0.5 * (y.max - y.min)).max(SIGMA_FLOOR_M),
                })
            })
            .collect();
        series.push((at.age_ma, points));
    }
    fit_foreland_through_time(&series, plate, drho, &request.settings)
}
