//! Whole-well and whole-study analysis on top of the science core: resolve the
//! study's inputs once, run every well (in parallel: wells are independent), and
//! shape the results as the JSON contract of PRODUCT.md.

pub mod calibration;
pub mod contract;
pub mod section;
pub mod thermal;

use crate::backstrip::{self, WellHistory};
use crate::fit::SubsidenceObservation;
use crate::heat_flow::{self, HeatFlowPoint};
use crate::lithology::Catalogue;
use crate::mckenzie::Lithosphere;
use crate::phases::{self, PhaseProposal};
use crate::uncertainty::{self, MonteCarloSettings, StretchingUncertainty};
use crate::{ModelParameters, ScienceError, SeaLevelCurve, WellColumn};
use contract::{
    HistoryOut, LithologyOut, ParametersOut, PhaseOut, RangeOut, Report, RiftEventOut,
    StretchingOut, TwoLayerOut, WellOut,
};
use rayon::prelude::*;
use std::collections::BTreeMap;

/// What every well of a study is analysed with.
#[derive(Debug, Clone)]
pub struct StudyInputs {
    pub params: ModelParameters,
    pub catalogue: Catalogue,
    pub sea_level: SeaLevelCurve,
    /// Surface temperature, thermal properties, crust and maturity windows.
    pub thermal: thermal::ThermalInputs,
}

/// Step of the regular heat-flow and model-curve grid (Myr).
pub const GRID_STEP_MYR: f64 = 1.0;

/// Seed and size of the Monte-Carlo draw over the palaeo-water-depth ranges. A fixed
/// seed makes every run of the same inputs give the same ranges.
pub const MONTE_CARLO: MonteCarloSettings = MonteCarloSettings {
    draws: 200,
    seed: 20_261_201,
};

/// The team's rift timing for a well: one or two (onset, end) pairs in Ma, oldest first.
pub type RiftTiming = Vec<(f64, f64)>;

/// The stretching interpretation of a well's tectonic subsidence.
#[derive(Debug, Clone)]
pub struct Interpretation {
    /// Phases and fits: proposed by the search, or refitted to the team's timing.
    pub proposal: PhaseProposal,
    /// Ranges of the factors (None when no rift was found).
    pub uncertainty: Option<StretchingUncertainty>,
    /// Uniform-model heat flow at every history age (equilibrium when there is no rift).
    pub heat_flow_at_ages: Vec<HeatFlowPoint>,
    /// The same on a regular grid, oldest first.
    pub heat_flow_grid: Vec<HeatFlowPoint>,
    /// Two-layer heat flow at every history age (when there is a two-layer fit).
    pub two_layer_heat_flow_at_ages: Vec<HeatFlowPoint>,
    /// The fitted model's tectonic subsidence on the regular grid: (age, m).
    pub model_curve: Vec<(f64, f64)>,
    /// Equilibrium surface heat flow K T1 / a (mW/m²).
    pub equilibrium_heat_flow_mw_m2: f64,
}

/// The full analysis of one well.
#[derive(Debug, Clone)]
pub struct WellAnalysis {
    pub history: WellHistory,
    /// The fit, or why there is none (too few ages, or a pick outside the well's ages).
    pub interpretation: Result<Interpretation, String>,
    /// Temperatures and maturity under the interpretation, or why there are none.
    pub thermal: Result<thermal::WellThermal, String>,
}

/// Why a well has no thermal history when it has no interpretation.
pub const THERMAL_NEEDS_FIT: &str =
    "no thermal history: it follows the stretching interpretation, and there is none";

/// The thermal history of a well under its interpretation, or why there is none.
pub fn thermal_of(
    well: &WellColumn,
    history: &WellHistory,
    interpretation: &Result<Interpretation, String>,
    inputs: &StudyInputs,
) -> Result<thermal::WellThermal, String> {
    match interpretation {
        Ok(i) => thermal::well_thermal(well, history, i, &inputs.params, &inputs.thermal)
            .map_err(|e| format!("no thermal history: {e}")),
        Err(_) => Err(THERMAL_NEEDS_FIT.into()),
    }
}

/// The tectonic-subsidence series the fits use, oldest first.
pub fn observations(history: &WellHistory) -> Vec<SubsidenceObservation> {
    history
        .steps
        .iter()
        .map(|s| SubsidenceObservation {
            age_ma: s.age_ma,
            tectonic_subsidence: s.tectonic_subsidence,
        })
        .collect()
}

/// Fit the stretching models to a backstripped history.
pub fn interpret(
    history: &WellHistory,
    params: &ModelParameters,
    timing: Option<&[(f64, f64)]>,
) -> Result<Interpretation, ScienceError> {
    let lithosphere = Lithosphere::water_loaded(params)?;
    let obs = observations(history);
    let mut proposal = match timing {
        Some(t) if !t.is_empty() => phases::phases_from_picks(&lithosphere, &obs, t)?,
        _ => phases::propose_phases(&lithosphere, &obs)?,
    };
    let uncertainty = match &proposal.uniform {
        Some(fit) => Some(uncertainty::stretching_uncertainty(
            &lithosphere,
            &obs,
            fit,
            proposal.two_layer.as_ref(),
            MONTE_CARLO,
            proposal.scores.misfit_scale,
        )?),
        None => None,
    };
    // A post-rift-only well's factor is as uncertain as its rift's age: the range holds
    // every factor that fits equally well.
    let uncertainty = uncertainty.map(|mut u| {
        if let Some((low, high)) = proposal.post_rift_factor_span {
            u.combined_min = u.combined_min.min(low);
            u.combined_max = u.combined_max.max(high);
        }
        u
    });
    // The range is the closed-form uniform fit's; a chosen finite-duration model whose
    // factors it does not hold must not be read against it.
    if let (Some(f), Some(u)) = (&proposal.finite, &uncertainty)
        && let Some(w) = finite_outside_range_warning(f, u.combined_min, u.combined_max)
    {
        proposal.warnings.push(w);
    }
    let ages: Vec<f64> = obs.iter().map(|o| o.age_ma).collect();
    let oldest = ages[0];
    let youngest = ages[ages.len() - 1];
    let grid = heat_flow::regular_ages(oldest, youngest, GRID_STEP_MYR)?;
    let equilibrium = lithosphere.equilibrium_heat_flow_mw_m2();
    let flat = |ages: &[f64]| {
        ages.iter()
            .map(|&age_ma| HeatFlowPoint {
                age_ma,
                value: equilibrium,
            })
            .collect::<Vec<_>>()
    };
    let (heat_flow_at_ages, heat_flow_grid, model_curve) = match &proposal.uniform {
        Some(fit) => (
            heat_flow::uniform_heat_flow_history(&lithosphere, fit, &ages),
            heat_flow::uniform_heat_flow_history(&lithosphere, fit, &grid),
            grid.iter()
                .map(|&a| (a, fit.subsidence_m(&lithosphere, a)))
                .collect(),
        ),
        None => {
            let line = &proposal.no_rift;
            let curve = grid
                .iter()
                .map(|&a| {
                    (
                        a,
                        line.subsidence_at_oldest_m + line.rate_m_per_myr * (oldest - a),
                    )
                })
                .collect();
            (flat(&ages), flat(&grid), curve)
        }
    };
    // A finite-duration model: its curve and heat flow come from the numerical plate.
    let (heat_flow_at_ages, heat_flow_grid, model_curve) = match &proposal.finite {
        Some(f) => finite_histories(&lithosphere, f, &ages, &grid)?,
        None => (heat_flow_at_ages, heat_flow_grid, model_curve),
    };
    let two_layer_heat_flow_at_ages = proposal
        .two_layer
        .as_ref()
        .map(|f| heat_flow::two_layer_heat_flow_history(&lithosphere, f, &ages))
        .unwrap_or_default();
    Ok(Interpretation {
        proposal,
        uncertainty,
        heat_flow_at_ages,
        heat_flow_grid,
        two_layer_heat_flow_at_ages,
        model_curve,
        equilibrium_heat_flow_mw_m2: equilibrium,
    })
}

/// Analyse one well: backstrip, then fit (with the team's timing when given). Pure and
/// CPU-bound. A well that cannot be backstripped is an error; a well that cannot be
/// fitted keeps its history and says why.
pub fn analyse_well(
    well: &WellColumn,
    inputs: &StudyInputs,
    timing: Option<&[(f64, f64)]>,
) -> Result<WellAnalysis, ScienceError> {
    let history = backstrip::backstrip(well, &inputs.catalogue, &inputs.params, &inputs.sea_level)?;
    let interpretation = interpret(&history, &inputs.params, timing).map_err(|e| e.to_string());
    let thermal = thermal_of(well, &history, &interpretation, inputs);
    Ok(WellAnalysis {
        history,
        interpretation,
        thermal,
    })
}

/// Analyse many wells on all cores, calling `progress` after each. Results keep the input order.
pub fn analyse_wells(
    wells: &[WellColumn],
    inputs: &StudyInputs,
    timings: &(dyn Fn(&str) -> Option<RiftTiming> + Sync),
    progress: &(dyn Fn() + Sync),
) -> Vec<Result<WellAnalysis, ScienceError>> {
    wells
        .par_iter()
        .map(|w| {
            let timing = timings(&w.name);
            let r = analyse_well(w, inputs, timing.as_deref());
            progress();
            r
        })
        .collect()
}

/// Why a well has no fit when only backstripping was asked for.
pub const FITS_NOT_REQUESTED: &str = "fits not requested (backstripping only)";

/// Backstrip many wells on all cores without fitting stretching models: the history
/// alone, for quick checks of large well sets. Results keep the input order.
pub fn backstrip_wells(
    wells: &[WellColumn],
    inputs: &StudyInputs,
    progress: &(dyn Fn() + Sync),
) -> Vec<Result<WellAnalysis, ScienceError>> {
    wells
        .par_iter()
        .map(|w| {
            let r = backstrip::backstrip(w, &inputs.catalogue, &inputs.params, &inputs.sea_level)
                .map(|history| WellAnalysis {
                    history,
                    interpretation: Err(FITS_NOT_REQUESTED.into()),
                    thermal: Err(FITS_NOT_REQUESTED.into()),
                });
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

fn range(b: crate::Bounds) -> RangeOut {
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
        warnings: h
            .warnings
            .iter()
            .cloned()
            .chain(
                a.interpretation
                    .iter()
                    .flat_map(|i| i.proposal.warnings.iter().cloned()),
            )
            .collect(),
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
        phases: a
            .interpretation
            .as_ref()
            .map(|i| {
                i.proposal
                    .intervals
                    .iter()
                    .map(|p| PhaseOut {
                        phase: p.phase.label(),
                        from_ma: p.from_ma,
                        to_ma: p.to_ma,
                    })
                    .collect()
            })
            .unwrap_or_default(),
        stretching: a.interpretation.as_ref().ok().and_then(stretching_out),
        model_choice: a.interpretation.as_ref().ok().map(model_choice_out),
        fit_note: fit_note(a),
        thermal: a.thermal.as_ref().ok().map(|t| thermal::thermal_out(t, h)),
        thermal_note: a.thermal.as_ref().err().cloned(),
        calibration: None,
    }
}

/// Why a well has no stretching fit, when it has none.
pub fn fit_note(a: &WellAnalysis) -> Option<String> {
    match &a.interpretation {
        Ok(i) if i.proposal.uniform.is_none() => {
            Some("no rift: the subsidence is best explained without stretching".into())
        }
        Ok(_) => None,
        Err(e) => Some(format!("no fit: {e}")),
    }
}

/// The `stretching` object of the contract, from an interpretation (None without a rift).
pub fn stretching_out(i: &Interpretation) -> Option<StretchingOut> {
    let fit = i.proposal.uniform.as_ref()?;
    let first = fit.events.first()?;
    let last = fit.events.last()?;
    let combined = i.uncertainty.as_ref();
    let beta = fit.cumulative_beta();
    let two_layer = i.proposal.two_layer.as_ref().map(|t| {
        let u = i.uncertainty.as_ref();
        TwoLayerOut {
            model: "two-layer",
            delta: t.delta,
            delta_min: u
                .and_then(|u| u.two_layer_delta)
                .map(|s| s.min())
                .unwrap_or(t.delta),
            delta_max: u
                .and_then(|u| u.two_layer_delta)
                .map(|s| s.max())
                .unwrap_or(t.delta),
            beta: t.beta,
            beta_min: u
                .and_then(|u| u.two_layer_beta)
                .map(|s| s.min())
                .unwrap_or(t.beta),
            beta_max: u
                .and_then(|u| u.two_layer_beta)
                .map(|s| s.max())
                .unwrap_or(t.beta),
            rift_onset_ma: t.rift_onset_ma,
            rift_end_ma: t.rift_end_ma,
            rms_misfit_m: t.rms_misfit_m,
            heat_flow_mw_m2: i
                .two_layer_heat_flow_at_ages
                .iter()
                .map(|p| contract::HeatFlowPoint {
                    age_ma: p.age_ma,
                    value: p.value,
                })
                .collect(),
        }
    });
    Some(StretchingOut {
        model: "uniform",
        beta,
        beta_min: combined.map(|u| u.combined_min).unwrap_or(beta),
        beta_max: combined.map(|u| u.combined_max).unwrap_or(beta),
        rift_onset_ma: first.rift_onset_ma,
        rift_end_ma: last.rift_end_ma,
        rms_misfit_m: fit.rms_misfit_m,
        heat_flow_mw_m2: i
            .heat_flow_at_ages
            .iter()
            .map(|p| contract::HeatFlowPoint {
                age_ma: p.age_ma,
                value: p.value,
            })
            .collect(),
        origin: match i.proposal.origin {
            phases::PickOrigin::Proposed => "proposed",
            phases::PickOrigin::Team => "team pick",
        },
        rift_events: fit
            .events
            .iter()
            .map(|e| RiftEventOut {
                rift_onset_ma: e.rift_onset_ma,
                rift_end_ma: e.rift_end_ma,
                beta: e.beta,
            })
            .collect(),
        two_layer,
        heat_flow_basis: if i.proposal.finite.is_some() {
            FINITE_HEAT_FLOW_BASIS
        } else {
            HEAT_FLOW_BASIS
        },
        finite_duration: i.proposal.finite.map(|f| contract::FiniteOut {
            model: model_key(i.proposal.model),
            crust_factor: f.crust_factor,
            mantle_factor: f.mantle_factor,
            rift_onset_ma: f.rift_onset_ma,
            rift_end_ma: f.rift_end_ma,
            pre_rift_subsidence_m: f.pre_rift_subsidence_m,
            rms_misfit_m: f.rms_misfit_m,
        }),
        beta_range: combined.map(|u| contract::BetaRangeOut {
            water_depth_min: u.beta.min(),
            water_depth_max: u.beta.max(),
            lithosphere_parameters_min: u.parameter_beta.p05,
            lithosphere_parameters_max: u.parameter_beta.p95,
            misfit_inflation: u.misfit_inflation,
            dominant: u.dominant.label(),
        }),
    })
}

/// The `model_choice` object of the contract.
pub fn model_choice_out(i: &Interpretation) -> contract::ModelChoiceOut {
    contract::ModelChoiceOut {
        chosen_model: model_key(i.proposal.model),
        misfit_scale: i.proposal.scores.misfit_scale,
        alternatives: i
            .proposal
            .alternatives
            .iter()
            .map(|a| contract::AlternativeOut {
                model: model_key(a.model),
                bic: a.bic,
                bic_above_chosen: a.bic_above_best,
                rms_misfit_m: a.rms_misfit_m,
                refused: a.refused.clone(),
            })
            .collect(),
    }
}

/// Heat flow at the history ages and on the grid, and the model curve on the grid.
type ModelHistories = (Vec<HeatFlowPoint>, Vec<HeatFlowPoint>, Vec<(f64, f64)>);

/// The warning for a chosen finite-duration fit whose mantle or crust factor lies outside
/// the beta range (which is computed for the closed-form uniform fit), or None.
pub fn finite_outside_range_warning(
    f: &crate::finite_fit::FiniteRiftFit,
    beta_min: f64,
    beta_max: f64,
) -> Option<String> {
    let outside = |x: f64| x < beta_min || x > beta_max;
    (outside(f.mantle_factor) || outside(f.crust_factor)).then(|| {
        format!(
            "The chosen finite-duration model stretches the crust by {:.2} and the mantle by {:.2}, outside the beta range {:.2}-{:.2}, which is that of the closed-form uniform fit: no range is computed for the finite-duration factors yet, so read them without one.",
            f.crust_factor, f.mantle_factor, beta_min, beta_max
        )
    })
}

/// Heat flow at `ages` and on `grid`, and the model curve on `grid`, of a finite-duration
/// fit, from one run of the numerical plate at [`crate::finite_fit::HISTORY_RESOLUTION`]
/// (heat flow out of the top of a plate without radiogenic heat: the basal heat flow).
fn finite_histories(
    lithosphere: &Lithosphere,
    fit: &crate::finite_fit::FiniteRiftFit,
    ages: &[f64],
    grid: &[f64],
) -> Result<ModelHistories, ScienceError> {
    use crate::numerical_lithosphere as plate;
    let mut wanted: Vec<f64> = ages.iter().chain(grid).copied().collect();
    wanted.sort_by(|a, b| b.total_cmp(a));
    wanted.dedup();
    let history = plate::run_plate(
        lithosphere,
        &plate::CrustalHeatProduction::NONE,
        &[fit.event()],
        plate::IsostasyConvention::McKenzie,
        &crate::finite_fit::HISTORY_RESOLUTION,
        &wanted,
        false,
    )?;
    let at = |age: f64| {
        let i = wanted.partition_point(|&a| a > age);
        &history.states[i]
    };
    let flow = |list: &[f64]| {
        list.iter()
            .map(|&age_ma| HeatFlowPoint {
                age_ma,
                value: at(age_ma).surface_heat_flow_mw_m2,
            })
            .collect::<Vec<_>>()
    };
    let curve = grid
        .iter()
        .map(|&a| (a, fit.pre_rift_subsidence_m + at(a).subsidence_m))
        .collect();
    Ok((flow(ages), flow(grid), curve))
}

/// What the contract's `heat_flow_mw_m2` is.
pub const HEAT_FLOW_BASIS: &str = "basal (mantle) heat flow of the closed-form stretching model, without radiogenic heat; the surface heat flow is higher by the crust's and sediments' heat production";

/// What `heat_flow_mw_m2` is when a finite-duration model was chosen.
pub const FINITE_HEAT_FLOW_BASIS: &str = "basal (mantle) heat flow of the numerical lithosphere stretched over the rift interval, without radiogenic heat; the surface heat flow is higher by the crust's and sediments' heat production";

/// The contract's key of a model.
pub fn model_key(model: phases::StretchingModel) -> &'static str {
    match model {
        phases::StretchingModel::NoRift => "no-rift",
        phases::StretchingModel::Uniform => "uniform",
        phases::StretchingModel::TwoEvents => "two-events",
        phases::StretchingModel::TwoLayer => "two-layer",
        phases::StretchingModel::FiniteUniform => "uniform-finite",
        phases::StretchingModel::FiniteTwoLayer => "two-layer-finite",
        phases::StretchingModel::PostRiftOnly => "post-rift-only",
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
        model_choice: None,
        fit_note: None,
        thermal: None,
        thermal_note: None,
        calibration: None,
    }
}

/// Add each well's calibration (its points against the model, and the heat-flow
/// proposal) to its report entry; a well with points but no thermal history says why
/// in its warnings.
pub fn attach_calibration(
    wells: &[WellColumn],
    results: &[Result<WellAnalysis, ScienceError>],
    outs: &mut [WellOut],
    inputs: &StudyInputs,
    points: &[crate::input::CalibrationPoint],
) {
    for ((w, r), out) in wells.iter().zip(results).zip(outs.iter_mut()) {
        if !points.iter().any(|p| p.well == w.name) {
            continue;
        }
        let Ok(a) = r else { continue };
        match &a.thermal {
            Ok(t) => match calibration::calibrate_well(w, &a.history, t, &inputs.thermal, points) {
                Ok(c) => out.calibration = Some(c),
                Err(e) => out.warnings.push(format!("calibration not done: {e}")),
            },
            Err(why) => out
                .warnings
                .push(format!("calibration points not compared: {why}")),
        }
    }
}

/// The whole report of a set of wells.
pub fn report(
    wells: &[WellColumn],
    results: &[Result<WellAnalysis, ScienceError>],
    inputs: &StudyInputs,
) -> Report {
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::finite_fit::FiniteRiftFit;

    fn finite(crust_factor: f64, mantle_factor: f64) -> FiniteRiftFit {
        FiniteRiftFit {
            rift_onset_ma: 170.0,
            rift_end_ma: 150.0,
            crust_factor,
            mantle_factor,
            pre_rift_subsidence_m: 0.0,
            rms_misfit_m: 10.0,
            chi_square: 5.0,
        }
    }

    #[test]
    fn a_finite_fit_outside_the_closed_form_range_is_warned_about() {
        // A depth-dependent finite fit (mantle 3.1) read against a uniform range 1.65-2.08.
        let w = finite_outside_range_warning(&finite(1.84, 3.10), 1.65, 2.08).expect("a warning");
        assert!(w.contains("3.10") && w.contains("1.65-2.08"), "{w}");
        // Inside the range on both factors: nothing to say.
        assert_eq!(
            finite_outside_range_warning(&finite(1.8, 1.9), 1.65, 2.08),
            None
        );
        // The crust alone outside is enough.
        assert!(finite_outside_range_warning(&finite(1.5, 1.9), 1.65, 2.08).is_some());
    }
}
