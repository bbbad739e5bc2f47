//! Flexural backstripping along a section (docs/science-flexure.md 6).
//!
//! Starting point: each well's Airy backstrip ([`crate::backstrip`]). At an age, Airy
//! isostasy writes a well's basement depth as
//! `S + Wd - dSL = Y_airy + w_load + dSL rho_w/(rho_m - rho_w)`, where
//! `w_load = S (rho_s - rho_w)/(rho_m - rho_w)` (plus `E rho_w/(rho_m - rho_w)` for a
//! surface at elevation E above sea level) is the deflection that the sediment load,
//! compensated locally, accounts for, and the last term is the eustatic water load.
//! With a plate of elastic thickness Te the same load is carried regionally: the
//! deflection it causes is the plate's response to the load `q = (rho_m - rho_w) g w_load`
//! along the section, with water infill (drho = rho_m - rho_w). The flexural tectonic
//! subsidence is then `Y_flex = Y_airy + w_load - w_flex` at each well. The eustatic term
//! is the same everywhere along the section, and a uniform load is compensated locally
//! by any plate, so it stays as in the Airy form. At Te = 0 the plate is skipped and
//! `w_flex = w_load` exactly, so `Y_flex = Y_airy` to the last bit.
//!
//! The load along the section at an age is interpolated linearly between the wells'
//! `w_load`. Beyond the end wells it is extended as [`LoadExtension`] says: held at the
//! end well's value (the basin goes on as it is at its ends), or tapered linearly to zero
//! over a chosen distance (0: the load stops at the end wells).
//!
//! Ages. The section's ages are all the wells' step ages, oldest first. A well whose own
//! steps do not include an age is interpolated linearly in age between its neighbouring
//! steps (marked `interpolated_in_age`). A well whose record begins after an age (its
//! oldest surface is younger) gives no load value and no subsidence at that age: the load
//! there is interpolated between the wells that do. After its youngest step a well keeps
//! its youngest load and reports no subsidence. The min / best / max water-depth bounds
//! get the same flexural correction, taken from the best water depth (the bounds differ
//! in the load only on a subaerial surface).

use super::plate::ElasticPlate;
use super::solver::{DeflectionProfile, PlateGeometry, PlateSolver, interpolate};
use crate::backstrip::WellHistory;
use crate::{Bounds, ModelParameters, ScienceError};
use rayon::prelude::*;
use serde::{Deserialize, Serialize};

/// Two ages closer than this (Myr) are one age of the section.
pub const SAME_AGE_MYR: f64 = 1e-6;

/// How the sediment load continues beyond the end wells of a section.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
pub enum LoadExtension {
    /// Held at the end well's value indefinitely.
    Hold,
    /// Falling linearly to zero over `distance_m` beyond the end well (0: stops there).
    Taper { distance_m: f64 },
}

impl LoadExtension {
    fn reach_m(self) -> f64 {
        match self {
            LoadExtension::Hold => 0.0,
            LoadExtension::Taper { distance_m } => distance_m,
        }
    }
}

/// How a section is flexurally backstripped.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct FlexuralSettings {
    pub plate: ElasticPlate,
    pub geometry: PlateGeometry,
    pub extension: LoadExtension,
    /// Points of each age's profile along the section (the end wells +10 % of the length).
    pub profile_points: usize,
}

impl Default for FlexuralSettings {
    fn default() -> Self {
        FlexuralSettings {
            plate: ElasticPlate::default(),
            geometry: PlateGeometry::Continuous,
            extension: LoadExtension::Hold,
            profile_points: 201,
        }
    }
}

/// A backstripped well placed on a section.
#[derive(Debug, Clone, Copy)]
pub struct PlacedHistory<'a> {
    pub distance_m: f64,
    pub history: &'a WellHistory,
}

/// A section flexurally backstripped with one elastic thickness.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FlexuralBackstrip {
    pub elastic_thickness_m: f64,
    /// D (N m) and alpha (m, for drho = rho_m - rho_w).
    pub rigidity_n_m: f64,
    pub flexural_parameter_m: f64,
    pub geometry: PlateGeometry,
    pub extension: LoadExtension,
    /// Oldest first.
    pub ages: Vec<SectionAgeResult>,
}

/// The section at one age.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SectionAgeResult {
    pub age_ma: f64,
    pub profile: SectionProfile,
    /// The wells with a record at this age, in section order.
    pub wells: Vec<WellFlexure>,
}

/// Along-section profiles at one age.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SectionProfile {
    pub distance_m: Vec<f64>,
    /// The sediment load as the deflection it causes compensated locally (m).
    pub local_deflection_m: Vec<f64>,
    /// The plate's deflection under it (m).
    pub flexural_deflection_m: Vec<f64>,
    /// Flexural tectonic subsidence (best) between the first and last well with a record
    /// (interpolated between them); `None` outside.
    pub tectonic_subsidence_m: Vec<Option<f64>>,
}

/// One well at one age: Airy against flexural compensation.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WellFlexure {
    pub well: String,
    pub distance_m: f64,
    /// The age is not one of the well's own steps: its values are interpolated in age.
    pub interpolated_in_age: bool,
    pub airy_tectonic_subsidence: Bounds,
    pub flexural_tectonic_subsidence: Bounds,
    /// The sediment load's deflection, compensated locally (m).
    pub local_load_deflection_m: f64,
    /// The sediment load's deflection on the plate (m).
    pub flexural_load_deflection_m: f64,
}

/// One well's series, oldest first: (age, w_load, Airy Y).
struct Series<'a> {
    well: &'a str,
    distance_m: f64,
    steps: Vec<(f64, f64, Bounds)>,
}

/// A well at one section age.
struct Sample {
    load_m: f64,
    /// `None` after the well's youngest step (load held, no subsidence reported).
    airy: Option<Bounds>,
    interpolated: bool,
}

impl Series<'_> {
    fn at(&self, age: f64) -> Option<Sample> {
        let (oldest, youngest) = (self.steps[0], self.steps[self.steps.len() - 1]);
        if age > oldest.0 + SAME_AGE_MYR {
            return None;
        }
        if age < youngest.0 - SAME_AGE_MYR {
            return Some(Sample {
                load_m: youngest.1,
                airy: None,
                interpolated: true,
            });
        }
        if let Some(s) = self
            .steps
            .iter()
            .find(|s| (s.0 - age).abs() <= SAME_AGE_MYR)
        {
            return Some(Sample {
                load_m: s.1,
                airy: Some(s.2),
                interpolated: false,
            });
        }
        // Steps are oldest first: the first step younger than `age` and the one before it.
        let j = self.steps.iter().position(|s| s.0 < age)?;
        let (older, younger) = (self.steps[j - 1], self.steps[j]);
        let t = (older.0 - age) / (older.0 - younger.0);
        let mix = |a: f64, b: f64| a + t * (b - a);
        Some(Sample {
            load_m: mix(older.1, younger.1),
            airy: Some(Bounds {
                min: mix(older.2.min, younger.2.min),
                best: mix(older.2.best, younger.2.best),
                max: mix(older.2.max, younger.2.max),
            }),
            interpolated: true,
        })
    }
}

/// The load along the section at one age: knots (distance, w_load), sorted, distinct.
struct LoadLine {
    knots_x: Vec<f64>,
    knots_w: Vec<f64>,
    extension: LoadExtension,
}

impl LoadLine {
    fn new(mut knots: Vec<(f64, f64)>, extension: LoadExtension) -> Self {
        knots.sort_by(|a, b| a.0.total_cmp(&b.0));
        let mut knots_x: Vec<f64> = Vec::with_capacity(knots.len());
        let mut knots_w: Vec<f64> = Vec::with_capacity(knots.len());
        let mut count = 0.0;
        for (x, w) in knots {
            // Wells at one distance: their mean load.
            if knots_x.last() == Some(&x) {
                let last = knots_w.len() - 1;
                knots_w[last] = (knots_w[last] * count + w) / (count + 1.0);
                count += 1.0;
            } else {
                knots_x.push(x);
                knots_w.push(w);
                count = 1.0;
            }
        }
        LoadLine {
            knots_x,
            knots_w,
            extension,
        }
    }

    /// The load's local deflection at `x` (m).
    fn at(&self, x: f64) -> f64 {
        let n = self.knots_x.len();
        if n == 0 {
            return 0.0;
        }
        let (first, last) = (self.knots_x[0], self.knots_x[n - 1]);
        let beyond = if x < first {
            Some((first - x, self.knots_w[0]))
        } else if x > last {
            Some((x - last, self.knots_w[n - 1]))
        } else {
            None
        };
        match (beyond, self.extension) {
            (None, _) => interpolate(&self.knots_x, &self.knots_w, x),
            (Some((_, end)), LoadExtension::Hold) => end,
            (Some((d, end)), LoadExtension::Taper { distance_m }) => {
                if d >= distance_m {
                    0.0
                } else {
                    end * (1.0 - d / distance_m)
                }
            }
        }
    }

    /// Mean over `[a, b]` by Simpson's rule (exact on a linear piece).
    fn mean(&self, a: f64, b: f64) -> f64 {
        (self.at(a) + 4.0 * self.at(0.5 * (a + b)) + self.at(b)) / 6.0
    }
}

fn series_of<'a>(well: &PlacedHistory<'a>, params: &ModelParameters) -> Series<'a> {
    let (rho_m, rho_w) = (params.mantle_density_kg_m3, params.water_density_kg_m3);
    let water_share = rho_w / (rho_m - rho_w);
    Series {
        well: &well.history.well,
        distance_m: well.distance_m,
        steps: well
            .history
            .steps
            .iter()
            .map(|s| {
                let y = s.tectonic_subsidence;
                // The Airy split of the basement depth (module notes).
                let load = s.total_subsidence_m - y.best - s.sea_level_m * water_share;
                (s.age_ma, load, y)
            })
            .collect(),
    }
}

/// The section's ages: every step age of every well, oldest first.
pub fn section_ages(wells: &[PlacedHistory]) -> Vec<f64> {
    let mut ages: Vec<f64> = wells
        .iter()
        .flat_map(|w| w.history.steps.iter().map(|s| s.age_ma))
        .collect();
    ages.sort_by(|a, b| b.total_cmp(a));
    ages.dedup_by(|a, b| (*a - *b).abs() <= SAME_AGE_MYR);
    ages
}

fn check_inputs(
    wells: &[PlacedHistory],
    params: &ModelParameters,
    settings: &FlexuralSettings,
) -> Result<(), ScienceError> {
    if wells.is_empty() {
        return Err(ScienceError::InvalidSection(
            "no well lies on the section".into(),
        ));
    }
    if let Some(w) = wells
        .iter()
        .find(|w| !w.distance_m.is_finite() || w.history.steps.is_empty())
    {
        return Err(ScienceError::InvalidSection(format!(
            "well '{}' has no position along the section or no backstrip",
            w.history.well
        )));
    }
    if let Err(mut problems) = params.validate() {
        return Err(problems.swap_remove(0));
    }
    settings.plate.validate()?;
    if let LoadExtension::Taper { distance_m } = settings.extension
        && !(distance_m.is_finite() && distance_m >= 0.0)
    {
        return Err(ScienceError::InvalidSection(format!(
            "the load taper beyond the end wells must be a non-negative distance, not {distance_m}"
        )));
    }
    if let PlateGeometry::Broken { break_m } = settings.geometry
        && !break_m.is_finite()
    {
        return Err(ScienceError::InvalidSection(
            "the plate's break must be a finite distance along the section".into(),
        ));
    }
    Ok(())
}

/// Flexurally backstrip a section with the plate of `settings` (method in the module
/// notes; docs/science-flexure.md 6). `wells` are the wells' Airy backstrips with their
/// distance along the section, in any order.
///
/// Errors: no wells; a well without steps or distance; invalid parameters or plate; a
/// negative taper distance; a non-finite break.
pub fn flexural_backstrip(
    wells: &[PlacedHistory],
    params: &ModelParameters,
    settings: &FlexuralSettings,
) -> Result<FlexuralBackstrip, ScienceError> {
    check_inputs(wells, params, settings)?;
    let mut placed: Vec<PlacedHistory> = wells.to_vec();
    placed.sort_by(|a, b| a.distance_m.total_cmp(&b.distance_m));
    let series: Vec<Series> = placed.iter().map(|w| series_of(w, params)).collect();
    let ages = section_ages(&placed);
    let drho = params.mantle_density_kg_m3 - params.water_density_kg_m3;
    let rigidity = settings.plate.rigidity_n_m();
    let alpha = settings.plate.flexural_parameter_m(drho);

    let first = placed[0].distance_m;
    let last = placed[placed.len() - 1].distance_m;
    let reach = settings.extension.reach_m();
    let solver = (alpha > 0.0)
        .then(|| PlateSolver::new(settings.geometry, alpha, first - reach, last + reach));
    let margin = if last > first {
        0.1 * (last - first)
    } else {
        10e3
    };
    let points = settings.profile_points.max(2);
    let profile_x: Vec<f64> = (0..points)
        .map(|i| first - margin + (last - first + 2.0 * margin) * i as f64 / (points - 1) as f64)
        .collect();

    let results = ages
        .iter()
        .map(|&age| {
            let samples: Vec<Option<Sample>> = series.iter().map(|s| s.at(age)).collect();
            let load = LoadLine::new(
                series
                    .iter()
                    .zip(&samples)
                    .filter_map(|(s, m)| m.as_ref().map(|m| (s.distance_m, m.load_m)))
                    .collect(),
                settings.extension,
            );
            let deflection: Option<DeflectionProfile> = solver
                .as_ref()
                .map(|solver| solver.solve(&|a, b| load.mean(a, b), &[]));
            let flexed = |x: f64| match &deflection {
                Some(p) => p.deflection_at(x),
                None => load.at(x),
            };
            let wells: Vec<WellFlexure> = series
                .iter()
                .zip(&samples)
                .filter_map(|(s, m)| {
                    let m = m.as_ref()?;
                    let airy = m.airy?;
                    let w_flex = if deflection.is_some() {
                        flexed(s.distance_m)
                    } else {
                        m.load_m
                    };
                    let correction = m.load_m - w_flex;
                    Some(WellFlexure {
                        well: s.well.to_string(),
                        distance_m: s.distance_m,
                        interpolated_in_age: m.interpolated,
                        airy_tectonic_subsidence: airy,
                        flexural_tectonic_subsidence: Bounds {
                            min: airy.min + correction,
                            best: airy.best + correction,
                            max: airy.max + correction,
                        },
                        local_load_deflection_m: m.load_m,
                        flexural_load_deflection_m: w_flex,
                    })
                })
                .collect();
            let (ts_x, ts_airy): (Vec<f64>, Vec<f64>) = wells
                .iter()
                .map(|w| (w.distance_m, w.airy_tectonic_subsidence.best))
                .unzip();
            let profile = SectionProfile {
                distance_m: profile_x.clone(),
                local_deflection_m: profile_x.iter().map(|&x| load.at(x)).collect(),
                flexural_deflection_m: profile_x.iter().map(|&x| flexed(x)).collect(),
                tectonic_subsidence_m: profile_x
                    .iter()
                    .map(|&x| {
                        let inside = !ts_x.is_empty() && x >= ts_x[0] && x <= ts_x[ts_x.len() - 1];
                        inside.then(|| interpolate(&ts_x, &ts_airy, x) + load.at(x) - flexed(x))
                    })
                    .collect(),
            };
            SectionAgeResult {
                age_ma: age,
                profile,
                wells,
            }
        })
        .collect();
    Ok(FlexuralBackstrip {
        elastic_thickness_m: settings.plate.elastic_thickness_m,
        rigidity_n_m: rigidity,
        flexural_parameter_m: alpha,
        geometry: settings.geometry,
        extension: settings.extension,
        ages: results,
    })
}

/// [`flexural_backstrip`] for each elastic thickness of `elastic_thicknesses_m`, in that
/// order (on all cores: the runs are independent).
pub fn te_sweep(
    wells: &[PlacedHistory],
    params: &ModelParameters,
    settings: &FlexuralSettings,
    elastic_thicknesses_m: &[f64],
) -> Result<Vec<FlexuralBackstrip>, ScienceError> {
    elastic_thicknesses_m
        .par_iter()
        .map(|&te| {
            let settings = FlexuralSettings {
                plate: settings.plate.with_thickness(te),
                ..*settings
            };
            flexural_backstrip(wells, params, &settings)
        })
        .collect()
}

/// The restored section at one age (independent of Te): each well with a step at that age,
/// its depositional surface, horizons and base of column below present sea level.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RestoredSectionAge {
    pub age_ma: f64,
    pub wells: Vec<RestoredWell>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RestoredWell {
    pub well: String,
    pub distance_m: f64,
    /// The depositional surface (sea floor, or land if negative) below present sea level,
    /// `Wd - dSL` with the best water depth (m).
    pub surface_m: f64,
    /// Each horizon present, top down, below present sea level (m).
    pub horizons: Vec<RestoredHorizon>,
    /// The base of the analysed column below present sea level, `S + Wd - dSL` (m).
    pub base_m: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RestoredHorizon {
    pub horizon: String,
    pub depth_m: f64,
}

/// The restored section at every section age (oldest first): wells are shown at the ages
/// of their own steps only (no interpolation of horizons in age).
pub fn restored_section(wells: &[PlacedHistory]) -> Vec<RestoredSectionAge> {
    let mut placed: Vec<PlacedHistory> = wells.to_vec();
    placed.sort_by(|a, b| a.distance_m.total_cmp(&b.distance_m));
    section_ages(&placed)
        .into_iter()
        .map(|age| RestoredSectionAge {
            age_ma: age,
            wells: placed
                .iter()
                .filter_map(|w| {
                    let h = w.history;
                    let step = h
                        .steps
                        .iter()
                        .find(|s| (s.age_ma - age).abs() <= SAME_AGE_MYR)?;
                    let surface = step.water_depth.best - step.sea_level_m;
                    Some(RestoredWell {
                        well: h.well.clone(),
                        distance_m: w.distance_m,
                        surface_m: surface,
                        horizons: step
                            .horizon_depths
                            .iter()
                            .map(|d| RestoredHorizon {
                                horizon: h.horizon(d.horizon).to_string(),
                                depth_m: surface + d.depth_m,
                            })
                            .collect(),
                        base_m: step.total_subsidence_m,
                    })
                })
                .collect(),
        })
        .collect()
}

#[cfg(test)]
#[path = "backstrip_tests.rs"]
mod tests;
