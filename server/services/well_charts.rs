//! Mapping a well's analysis into the chart inputs of `sagline_charts`.

use sagline_charts::{
    BurialChartData, BurialHorizon, BurialUnit, BurialUnitStep, HeatFlowChartData, MaturityBand,
    MaturityChartData, MaturityHorizon, PhaseBand, SubsidenceChartData, TectonicPoint,
    WaterDepthPoint,
};
use sagline_science::analysis::WellAnalysis;

fn phase_bands(a: &WellAnalysis) -> Vec<PhaseBand> {
    a.interpretation
        .as_ref()
        .map(|i| {
            i.proposal
                .intervals
                .iter()
                .map(|p| PhaseBand {
                    name: p.phase.label().to_string(),
                    from_ma: p.from_ma,
                    to_ma: p.to_ma,
                })
                .collect()
        })
        .unwrap_or_default()
}

/// Total and tectonic subsidence through time, with the fitted model and the phases.
pub fn subsidence_data(well_name: &str, a: &WellAnalysis) -> SubsidenceChartData {
    let steps = &a.history.steps;
    SubsidenceChartData {
        title: format!("Subsidence, well {well_name}"),
        tectonic: steps
            .iter()
            .map(|s| TectonicPoint {
                age_ma: s.age_ma,
                min_m: s.tectonic_subsidence.min,
                best_m: s.tectonic_subsidence.best,
                max_m: s.tectonic_subsidence.max,
            })
            .collect(),
        total: steps
            .iter()
            .map(|s| (s.age_ma, s.total_subsidence_m))
            .collect(),
        model_curve: a
            .interpretation
            .as_ref()
            .map(|i| i.model_curve.clone())
            .unwrap_or_default(),
        phases: phase_bands(a),
    }
}

/// Basal (mantle) heat flow of the fitted model through time: the closed form's heat
/// flow out of a plate without radiogenic heat (docs/science.md 4.4).
pub fn heat_flow_data(well_name: &str, a: &WellAnalysis) -> HeatFlowChartData {
    let i = a.interpretation.as_ref().ok();
    HeatFlowChartData {
        title: format!("Basal (mantle) heat flow of the fit, well {well_name}"),
        heat_flow: i
            .map(|i| {
                i.heat_flow_grid
                    .iter()
                    .map(|p| (p.age_ma, p.value))
                    .collect()
            })
            .unwrap_or_default(),
        equilibrium_mw_m2: i.map(|i| i.equilibrium_heat_flow_mw_m2),
        phases: phase_bands(a),
    }
}

/// Every horizon's burial depth through time, units by lithology, and the water column.
pub fn burial_data(well_name: &str, a: &WellAnalysis) -> BurialChartData {
    let h = &a.history;
    let horizons = (0..h.horizons.len())
        .map(|i| BurialHorizon {
            name: h.horizon(i).to_string(),
            depths: h
                .steps
                .iter()
                .filter_map(|s| s.horizon_depth_m(i).map(|d| (s.age_ma, d)))
                .collect(),
        })
        .filter(|b| !b.depths.is_empty())
        .collect();
    // One band per unit (and per eroded section), in column order.
    let mut units: Vec<(usize, bool, BurialUnit)> = Vec::new();
    for s in &h.steps {
        for u in &s.units {
            let step = BurialUnitStep {
                age_ma: s.age_ma,
                top_m: u.top_m,
                base_m: u.base_m,
            };
            match units
                .iter_mut()
                .find(|(i, e, _)| *i == u.unit && *e == u.eroded_section)
            {
                Some((_, _, band)) => band.steps.push(step),
                None => units.push((
                    u.unit,
                    u.eroded_section,
                    BurialUnit {
                        base_horizon: h.base_horizon(u).to_string(),
                        lithology: h.lithology(u).to_string(),
                        steps: vec![step],
                    },
                )),
            }
        }
    }
    BurialChartData {
        title: format!("Burial history, well {well_name}"),
        horizons,
        units: units.into_iter().map(|(_, _, b)| b).collect(),
        water_depth: h
            .steps
            .iter()
            .map(|s| WaterDepthPoint {
                age_ma: s.age_ma,
                min_m: s.water_depth.min,
                best_m: s.water_depth.best,
                max_m: s.water_depth.max,
            })
            .collect(),
    }
}

/// Modelled %Ro (EASY%Ro) of every horizon through time over the maturity windows
/// (docs/science-thermal.md 1-3); empty when the well has no thermal history.
pub fn maturity_data(well_name: &str, a: &WellAnalysis) -> MaturityChartData {
    let thermal = a.thermal.as_ref().ok();
    MaturityChartData {
        title: format!("Modelled maturity (EASY%Ro), well {well_name}"),
        horizons: thermal
            .map(|t| {
                t.history
                    .horizons
                    .iter()
                    .zip(&t.maturity)
                    .map(|(h, m)| MaturityHorizon {
                        name: h.name.clone(),
                        ro: m.points.iter().map(|p| (p.age_ma, p.ro_percent)).collect(),
                    })
                    .collect()
            })
            .unwrap_or_default(),
        windows: thermal
            .map(|t| {
                t.windows
                    .iter()
                    .map(|w| MaturityBand {
                        name: w.name.clone(),
                        ro_min: w.ro_min,
                        ro_max: w.ro_max,
                    })
                    .collect()
            })
            .unwrap_or_default(),
    }
}

/// The charts of the well page, as inline SVG (left out of the JSON twin).
#[derive(Debug, Default)]
pub struct WellCharts {
    pub subsidence: String,
    pub burial: String,
    pub heat_flow: String,
    pub maturity: String,
}

/// Draw the well page's charts, off the async workers.
pub async fn draw(
    well_name: String,
    a: std::sync::Arc<WellAnalysis>,
) -> Result<WellCharts, super::ServiceError> {
    tokio::task::spawn_blocking(move || {
        let size = sagline_charts::ChartSize::default();
        WellCharts {
            subsidence: sagline_charts::subsidence_chart(&subsidence_data(&well_name, &a), size),
            burial: sagline_charts::burial_chart(&burial_data(&well_name, &a), size),
            heat_flow: sagline_charts::heat_flow_chart(&heat_flow_data(&well_name, &a), size),
            maturity: sagline_charts::maturity_chart(&maturity_data(&well_name, &a), size),
        }
    })
    .await
    .map_err(|e| super::ServiceError::Internal(format!("the chart task failed: {e}")))
}
