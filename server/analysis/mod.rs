//! Whole-well and whole-study analysis on top of the science core: resolve the
//! study's inputs once, run every well (in parallel: wells are independent), and
//! shape the results as the JSON contract of PRODUCT.md.

pub mod contract;

use crate::science::backstrip::{self, WellHistory};
use crate::science::lithology::Catalogue;
use crate::science::{ModelParameters, ScienceError, SeaLevelCurve, WellColumn};
use contract::{HistoryOut, LithologyOut, ParametersOut, RangeOut, Report, WellOut};
use rayon::prelude::*;
use std::collections::BTreeMap;

/// What every well of a study is analysed with.
#[derive(Debug, Clone)]
pub struct StudyInputs {
    pub params: ModelParameters,
    pub catalogue: Catalogue,
    pub sea_level: SeaLevelCurve,
}

/// The full analysis of one well.
#[derive(Debug, Clone)]
pub struct WellAnalysis {
    pub history: WellHistory,
}

/// Analyse one well. Pure and CPU-bound.
pub fn analyse_well(well: &WellColumn, inputs: &StudyInputs) -> Result<WellAnalysis, ScienceError> {
    let history = backstrip::backstrip(well, &inputs.catalogue, &inputs.params, &inputs.sea_level)?;
    Ok(WellAnalysis { history })
}

/// Analyse many wells on all cores, calling `progress` after each. Results keep the input order.
pub fn analyse_wells(
    wells: &[WellColumn],
    inputs: &StudyInputs,
    progress: &(dyn Fn() + Sync),
) -> Vec<Result<WellAnalysis, ScienceError>> {
    wells
        .par_iter()
        .map(|w| {
            let r = analyse_well(w, inputs);
            progress();
            r
        })
        .collect()
}

/// The `parameters` object of the contract: everything as used.
pub fn parameters_out(inputs: &StudyInputs) -> ParametersOut {
    ParametersOut {
        model: inputs.params,
        lithologies: inputs
            .catalogue
            .lithologies()
            .iter()
            .map(|l| LithologyOut {
                name: l.name.clone(),
                surface_porosity: l.surface_porosity,
                compaction_per_km: l.compaction_per_km,
                grain_density_kg_m3: l.grain_density_kg_m3,
            })
            .collect(),
    }
}

fn range(b: crate::science::Bounds) -> RangeOut {
    RangeOut {
        min: b.min,
        best: b.best,
        max: b.max,
    }
}

/// One well's entry of the contract.
pub fn well_out(a: &WellAnalysis) -> WellOut {
    let h = &a.history;
    WellOut {
        well: h.well.clone(),
        warnings: h.warnings.clone(),
        history: h
            .steps
            .iter()
            .map(|s| HistoryOut {
                age_ma: s.age_ma,
                sediment_thickness_m: s.sediment_thickness_m,
                sediment_density_kg_m3: s.sediment_density_kg_m3,
                water_depth_m: range(s.water_depth),
                sea_level_m: s.sea_level_m,
                tectonic_subsidence_m: range(s.tectonic_subsidence),
                horizon_depths_m: s
                    .horizon_depths
                    .iter()
                    .map(|d| (h.horizon(d.horizon).to_string(), d.depth_m))
                    .collect::<BTreeMap<_, _>>(),
                depositional_horizon: s.depositional_horizon.clone(),
                total_subsidence_m: s.total_subsidence_m,
            })
            .collect(),
        phases: Vec::new(),
        stretching: None,
    }
}

/// A well that could not be analysed still appears, with its reason as a warning.
pub fn failed_well_out(name: &str, error: &ScienceError) -> WellOut {
    WellOut {
        well: name.to_string(),
        warnings: vec![format!("not analysed: {error}")],
        history: Vec::new(),
        phases: Vec::new(),
        stretching: None,
    }
}

/// The whole report of a set of wells.
pub fn report(wells: &[WellColumn], results: &[Result<WellAnalysis, ScienceError>], inputs: &StudyInputs) -> Report {
    Report {
        parameters: parameters_out(inputs),
        wells: wells
            .iter()
            .zip(results)
            .map(|(w, r)| match r {
                Ok(a) => well_out(a),
                Err(e) => failed_well_out(&w.name, e),
            })
            .collect(),
    }
}

/// The CSV header of `--format csv`: one row per well and age.
pub const CSV_HEADER: [&str; 17] = [
    "well",
    "age_ma",
    "depositional_horizon",
    "sediment_thickness_m",
    "sediment_density_kg_m3",
    "water_depth_min_m",
    "water_depth_best_m",
    "water_depth_max_m",
    "sea_level_m",
    "tectonic_subsidence_min_m",
    "tectonic_subsidence_best_m",
    "tectonic_subsidence_max_m",
    "total_subsidence_m",
    "phase",
    "beta",
    "rift_onset_ma",
    "rift_end_ma",
];

/// The CSV rows of one well (strings, in the order of [`CSV_HEADER`]).
pub fn csv_rows(w: &WellOut) -> Vec<Vec<String>> {
    let num = |x: f64| format!("{x:.3}");
    let opt = |x: Option<f64>| x.map(num).unwrap_or_default();
    w.history
        .iter()
        .map(|h| {
            let phase = w
                .phases
                .iter()
                .find(|p| h.age_ma <= p.from_ma && h.age_ma >= p.to_ma)
                .map(|p| p.phase.to_string())
                .unwrap_or_default();
            let s = w.stretching.as_ref();
            vec![
                w.well.clone(),
                num(h.age_ma),
                h.depositional_horizon.clone(),
                num(h.sediment_thickness_m),
                opt(h.sediment_density_kg_m3),
                num(h.water_depth_m.min),
                num(h.water_depth_m.best),
                num(h.water_depth_m.max),
                num(h.sea_level_m),
                num(h.tectonic_subsidence_m.min),
                num(h.tectonic_subsidence_m.best),
                num(h.tectonic_subsidence_m.max),
                num(h.total_subsidence_m),
                phase,
                opt(s.map(|s| s.beta)),
                opt(s.map(|s| s.rift_onset_ma)),
                opt(s.map(|s| s.rift_end_ma)),
            ]
        })
        .collect()
}
