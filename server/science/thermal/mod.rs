//! Temperature through a well's burial history, and the maturity it gives each horizon
//! (docs/science-thermal.md 4-6).
//!
//! The sediment column and a slab of basement below it conduct heat with the
//! conductivity, heat capacity and radiogenic heat production of each unit at its
//! porosity of the time ([`properties`]). The surface holds the study's surface
//! temperature; the base of the slab receives the heat flow that the chosen stretching
//! model puts into the base of the sediment (the lithosphere model's top-of-basement
//! heat flow, the crust's radiogenic heat included). Two methods:
//!
//! * [`ThermalMethod::Transient`]: the column is buried (and eroded) continuously between
//!   the restored ages and heat is conducted at every step, so a fast-buried column is
//!   colder than its steady geotherm (the blanketing effect of sedimentation);
//! * [`ThermalMethod::SteadyPerStep`]: the steady geotherm of the column at every age;
//!   faster, and as warm as the basal heat flow allows. Its error against the transient
//!   one is measured in the tests and stated in docs/science-thermal.md 6.
//!
//! Deviation from a fully coupled model, stated: the slab's base takes the heat flow of
//! the lithosphere model as computed without the sediment's blanketing (the plate model
//! runs under water-loaded isostasy with a fixed surface temperature). The slab, a few
//! times thicker than the deepest basin, carries the transient that the sediment
//! imposes on the basement below it (docs/science-thermal.md 5).

mod column;
pub mod properties;
mod solver;
mod surface;
#[cfg(test)]
mod tests;

use crate::ScienceError;
use crate::backstrip::WellHistory;
use crate::maturity::{self, MaturityHistory, MaturityWindow, TimeTemperature};
use column::{Interval, ThermalLayer, steady_temperatures, thermal_layers};
use serde::{Deserialize, Serialize};

pub use properties::{ThermalCatalogue, ThermalProperties, generic_properties};
use surface::piecewise_linear_by_age;
pub use surface::{DEFAULT_SURFACE_TEMPERATURE_C, SurfaceTemperature};

/// Seconds in a million years (Julian years).
const SECONDS_PER_MYR: f64 = 1.0e6 * 365.25 * 86_400.0;

/// Most time steps a run takes; a longer history gets longer steps.
pub const MAX_STEPS: usize = 4000;

/// How the temperatures are computed (module note).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ThermalMethod {
    /// Conduction through time with continuous burial and erosion.
    Transient,
    /// The steady geotherm of the column at every age.
    SteadyPerStep,
}

impl ThermalMethod {
    /// Plain name for pages and files.
    pub fn label(self) -> &'static str {
        match self {
            ThermalMethod::Transient => "transient conduction with burial",
            ThermalMethod::SteadyPerStep => "steady geotherm at each age",
        }
    }
}

/// How a temperature history is run.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ThermalSettings {
    pub surface: SurfaceTemperature,
    /// The basement below the sediment: conductivity and heat capacity (its heat
    /// production is the crust model's and is in the basal heat flow, so 0 here).
    pub basement_conductivity_w_m_k: f64,
    /// Density times specific heat of the basement, J m^-3 K^-1.
    pub basement_heat_capacity_j_m3_k: f64,
    /// Thickness of basement below the deepest sediment column that the model carries, m.
    pub slab_thickness_m: f64,
    /// Density of the pore water (for the heat capacity), kg m^-3.
    pub pore_water_density_kg_m3: f64,
    pub method: ThermalMethod,
    /// Longest time step, Myr.
    pub max_step_myr: f64,
    /// Node spacing through the sediment, m.
    pub sediment_node_spacing_m: f64,
    /// Least time between two points of a horizon's temperature path, Myr (every
    /// restored age is a point too). EASY%Ro integrates each segment exactly, so this
    /// only sets how closely the path's curvature is followed, and the maturity's cost.
    pub path_sample_myr: f64,
}

impl Default for ThermalSettings {
    /// Transient; 10 °C surface \[assumed\]; basement 2.8 W/m/K and 2700 kg/m³ × 880
    /// J/kg/K (typical crystalline crust \[memory\]); a 20 km slab; 0.25 Myr steps and 50 m
    /// nodes, the resolution at which halving both changes no horizon's temperature by
    /// more than 0.5 °C in the tests (docs/science-thermal.md 5).
    fn default() -> Self {
        ThermalSettings {
            surface: SurfaceTemperature::default_assumed(),
            basement_conductivity_w_m_k: 2.8,
            basement_heat_capacity_j_m3_k: 2700.0 * 880.0,
            slab_thickness_m: 20_000.0,
            pore_water_density_kg_m3: 1030.0,
            method: ThermalMethod::Transient,
            max_step_myr: 0.25,
            sediment_node_spacing_m: 50.0,
            path_sample_myr: 1.0,
        }
    }
}

impl ThermalSettings {
    fn check(&self) -> Result<(), ScienceError> {
        let within = |name, value: f64, lo, hi, range| {
            if value.is_finite() && (lo..=hi).contains(&value) {
                Ok(())
            } else {
                Err(ScienceError::OutOfRange { name, value, range })
            }
        };
        within(
            "basement conductivity",
            self.basement_conductivity_w_m_k,
            0.5,
            10.0,
            "0.5 to 10 W/m/K",
        )?;
        within(
            "basement heat capacity",
            self.basement_heat_capacity_j_m3_k,
            1.0e6,
            5.0e6,
            "1e6 to 5e6 J/m³/K",
        )?;
        within(
            "basement slab thickness",
            self.slab_thickness_m,
            1000.0,
            200_000.0,
            "1 to 200 km",
        )?;
        within(
            "pore water density",
            self.pore_water_density_kg_m3,
            900.0,
            1300.0,
            "900 to 1300 kg/m³",
        )?;
        within(
            "thermal time step",
            self.max_step_myr,
            1e-4,
            10.0,
            "0.0001 to 10 Myr",
        )?;
        within(
            "thermal node spacing",
            self.sediment_node_spacing_m,
            1.0,
            1000.0,
            "1 to 1000 m",
        )?;
        within(
            "temperature path sampling",
            self.path_sample_myr,
            1e-4,
            10.0,
            "0.0001 to 10 Myr",
        )
    }
}

/// The column at one restored age.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ThermalSnapshot {
    pub age_ma: f64,
    /// Surface (sea-floor) temperature, °C.
    pub surface_temperature_c: f64,
    /// Heat flow into the base of the sediment, from the lithosphere model, mW m^-2.
    pub basal_heat_flow_mw_m2: f64,
    /// Heat flow out of the top of the sediment, mW m^-2: the basal flow plus the
    /// sediment's heat production, less (transient) what warms the buried column.
    pub surface_heat_flow_mw_m2: f64,
    /// Temperature at the base of the sediment, °C.
    pub basement_top_temperature_c: f64,
}

/// One point of a temperature-depth profile.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct DepthTemperature {
    /// Depth below the depositional surface, m.
    pub depth_m: f64,
    pub temperature_c: f64,
}

/// One horizon's temperature since it was laid down, and its maturity.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct HorizonThermalHistory {
    /// Index into the well's horizons.
    pub horizon: usize,
    pub name: String,
    /// Temperature-time path, oldest first, from the age the horizon was the surface.
    pub path: Vec<TimeTemperature>,
}

/// The thermal history of a well.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ThermalHistory {
    pub method: ThermalMethod,
    /// At every restored age, oldest first.
    pub snapshots: Vec<ThermalSnapshot>,
    /// Every horizon, in well order (shallowest first).
    pub horizons: Vec<HorizonThermalHistory>,
    /// Today's temperature profile through the sediment and 1 km of basement.
    pub present_profile: Vec<DepthTemperature>,
    /// Time step used, Myr (shorter than asked when the history needed fewer steps).
    pub step_myr: f64,
}

/// Basal heat flow into the sediment at one age (linear in a series of (age, mW m^-2)
/// ordered oldest first, constant beyond its ends).
fn basal_flow_w_m2(points: &[(f64, f64)], age_ma: f64) -> f64 {
    piecewise_linear_by_age(points, age_ma) * 1e-3
}

/// The temperature of every horizon of `history` at every age.
///
/// Inputs: `unit_properties[i]` are the thermal properties of unit `i` (between
/// surfaces `i` and `i + 1`), from [`ThermalCatalogue::resolve`]; `basal_heat_flow` is
/// the heat flow into the base of the sediment, (age Ma, mW m^-2) oldest first, e.g. the
/// stretching model's top-of-basement heat flow on a 1 Myr grid.
///
/// Method and grid in the module note and the solver (`thermal/solver.rs`). The run starts in steady state at
/// the oldest age. Horizon paths are sampled every [`ThermalSettings::path_sample_myr`]
/// (at the time steps) and at every restored age (a horizon's depth between two
/// restored ages is linear in time, as its unit's top and base are).
///
/// Errors: settings out of range ([`ThermalSettings`]), a heat flow outside 0 to 500
/// mW m^-2 or not finite, a property list that does not match the units, a history of
/// more than [`MAX_STEPS`] restored ages.
pub fn temperature_history(
    history: &WellHistory,
    unit_properties: &[ThermalProperties],
    basal_heat_flow: &[(f64, f64)],
    settings: &ThermalSettings,
) -> Result<ThermalHistory, ScienceError> {
    settings.check()?;
    check_inputs(history, unit_properties, basal_heat_flow)?;
    let steps = &history.steps;
    let oldest = steps[0].age_ma;
    let youngest = steps[steps.len() - 1].age_ma;
    // Sub-steps of each interval, enough that none is longer than the step asked for,
    // within MAX_STEPS in all.
    let span = oldest - youngest;
    let step_myr = settings
        .max_step_myr
        .max(span / (MAX_STEPS - steps.len()).max(1) as f64);
    let max_sediment = steps
        .iter()
        .map(|s| s.sediment_thickness_m)
        .fold(0.0, f64::max);
    let nodes = solver::grid(
        max_sediment,
        settings.slab_thickness_m,
        settings.sediment_node_spacing_m,
    );
    let domain_base = *nodes.last().expect("a grid has nodes");
    let basement = ThermalLayer {
        top_m: 0.0,
        base_m: 0.0,
        conductivity_w_m_k: settings.basement_conductivity_w_m_k,
        heat_capacity_j_m3_k: settings.basement_heat_capacity_j_m3_k,
        heat_production_w_m3: 0.0,
    };
    let layers_at = |interval: &Interval, s: f64| {
        thermal_layers(
            &interval.units_at(s),
            interval.thickness_m(s),
            unit_properties,
            &basement,
            settings.pore_water_density_kg_m3,
            domain_base,
        )
    };

    let mut paths: Vec<Vec<TimeTemperature>> = vec![Vec::new(); history.horizons.len()];
    let mut snapshots = Vec::with_capacity(steps.len());
    // Temperatures at the nodes (transient only).
    let mut temperatures: Vec<f64> = Vec::new();
    let mut last_layers: Vec<ThermalLayer> = Vec::new();
    // Age of the last point put on the horizon paths.
    let mut last_sampled = f64::INFINITY;

    for k in 0..steps.len() {
        // The interval ending at step k (for k = 0, the first column as it stands).
        let interval = Interval::new(&steps[k.saturating_sub(1)], &steps[k]);
        let (older_age, younger_age) = (steps[k.saturating_sub(1)].age_ma, steps[k].age_ma);
        let duration = older_age - younger_age;
        let substeps = if k == 0 {
            0
        } else {
            ((duration / step_myr).ceil() as usize).max(1)
        };
        let age_at = |s: f64| older_age - s * duration;
        let horizon_depth = |h: usize, s: f64| -> Option<f64> {
            // A horizon not yet laid down at the interval's start appears at its end.
            let young = steps[k].horizon_depth_m(h)?;
            let old = steps[k.saturating_sub(1)].horizon_depth_m(h)?;
            Some(old + (young - old) * s)
        };
        if k == 0 {
            let layers = layers_at(&interval, 1.0);
            let surface_c = settings.surface.at(younger_age);
            let q_b = basal_flow_w_m2(basal_heat_flow, younger_age);
            if settings.method == ThermalMethod::Transient {
                temperatures = steady_temperatures(
                    &layers,
                    steps[0].sediment_thickness_m,
                    surface_c,
                    q_b,
                    &nodes,
                );
            }
            last_layers = layers;
        }
        for j in 1..=substeps {
            let (s_old, s_new) = ((j - 1) as f64 / substeps as f64, j as f64 / substeps as f64);
            let age = age_at(s_new);
            let sample_now = j < substeps && last_sampled - age >= settings.path_sample_myr - 1e-9;
            // The steady method carries nothing from step to step: only the points it
            // reports need computing.
            if settings.method == ThermalMethod::SteadyPerStep && j < substeps && !sample_now {
                continue;
            }
            let layers = layers_at(&interval, s_new);
            let surface_c = settings.surface.at(age);
            let q_b = basal_flow_w_m2(basal_heat_flow, age);
            if settings.method == ThermalMethod::Transient {
                let surface_before = settings.surface.at(age_at(s_old));
                let buried: Vec<f64> = interval
                    .depths_before(&nodes, s_new, s_old)
                    .into_iter()
                    .map(|before| {
                        if before <= 0.0 {
                            surface_before
                        } else {
                            solver::temperature_at(&nodes, &temperatures, before)
                        }
                    })
                    .collect();
                let dt_s = (s_new - s_old) * duration * SECONDS_PER_MYR;
                temperatures = if dt_s > 0.0 {
                    let c = solver::coefficients(&nodes, &layers);
                    solver::conduction_step(&c, &buried, dt_s, surface_c, q_b)
                } else {
                    buried
                };
            }
            if sample_now {
                last_sampled = age;
                sample_horizons(
                    &mut paths,
                    age,
                    |h| horizon_depth(h, s_new),
                    &nodes,
                    &temperatures,
                    &layers,
                    interval.thickness_m(s_new),
                    surface_c,
                    q_b,
                    settings.method,
                );
            }
            last_layers = layers;
        }
        // The restored age itself: every horizon present, and the snapshot.
        last_sampled = younger_age;
        let surface_c = settings.surface.at(younger_age);
        let q_b = basal_flow_w_m2(basal_heat_flow, younger_age);
        let sediment = steps[k].sediment_thickness_m;
        sample_horizons(
            &mut paths,
            younger_age,
            |h| steps[k].horizon_depth_m(h),
            &nodes,
            &temperatures,
            &last_layers,
            sediment,
            surface_c,
            q_b,
            settings.method,
        );
        snapshots.push(snapshot(
            younger_age,
            &nodes,
            &temperatures,
            &last_layers,
            sediment,
            surface_c,
            q_b,
            settings.method,
        ));
    }

    let present_sediment = steps[steps.len() - 1].sediment_thickness_m;
    let profile_depths: Vec<f64> = nodes
        .iter()
        .copied()
        .take_while(|z| *z <= present_sediment + 1000.0)
        .collect();
    let profile_temps = temperatures_at(
        &profile_depths,
        &nodes,
        &temperatures,
        &last_layers,
        present_sediment,
        settings.surface.at(youngest),
        basal_flow_w_m2(basal_heat_flow, youngest),
        settings.method,
    );
    let present_profile = profile_depths
        .iter()
        .zip(profile_temps)
        .map(|(&depth_m, temperature_c)| DepthTemperature {
            depth_m,
            temperature_c,
        })
        .collect();
    let horizons = paths
        .into_iter()
        .enumerate()
        .map(|(horizon, path)| HorizonThermalHistory {
            horizon,
            name: history.horizons[horizon].clone(),
            path,
        })
        .collect();
    Ok(ThermalHistory {
        method: settings.method,
        snapshots,
        horizons,
        present_profile,
        step_myr,
    })
}

fn check_inputs(
    history: &WellHistory,
    unit_properties: &[ThermalProperties],
    basal_heat_flow: &[(f64, f64)],
) -> Result<(), ScienceError> {
    if history.steps.len() < 2 || history.steps.len() > MAX_STEPS / 2 {
        return Err(ScienceError::OutOfRange {
            name: "number of restored ages in a burial history",
            value: history.steps.len() as f64,
            range: "2 to 2000",
        });
    }
    if unit_properties.len() != history.unit_lithologies.len() {
        return Err(ScienceError::InvalidModel(format!(
            "{} units but thermal properties for {}",
            history.unit_lithologies.len(),
            unit_properties.len()
        )));
    }
    for p in unit_properties {
        p.check()?;
    }
    if basal_heat_flow.is_empty() {
        return Err(ScienceError::InvalidModel(
            "no basal heat flow was given".into(),
        ));
    }
    for &(age, q) in basal_heat_flow {
        if !(age.is_finite() && q.is_finite() && (0.0..=500.0).contains(&q)) {
            return Err(ScienceError::OutOfRange {
                name: "basal heat flow (mW/m²)",
                value: q,
                range: "0 to 500 mW/m² at a finite age",
            });
        }
    }
    if basal_heat_flow.windows(2).any(|p| p[1].0 > p[0].0) {
        return Err(ScienceError::InvalidModel(
            "basal heat flow ages must run oldest first".into(),
        ));
    }
    Ok(())
}

/// Temperatures at `depths` (increasing): from the node solution, or the steady
/// geotherm of `layers`.
#[allow(clippy::too_many_arguments)]
fn temperatures_at(
    depths: &[f64],
    nodes: &[f64],
    temperatures: &[f64],
    layers: &[ThermalLayer],
    sediment_m: f64,
    surface_c: f64,
    basal_w_m2: f64,
    method: ThermalMethod,
) -> Vec<f64> {
    match method {
        ThermalMethod::Transient => depths
            .iter()
            .map(|&z| solver::temperature_at(nodes, temperatures, z))
            .collect(),
        ThermalMethod::SteadyPerStep => {
            steady_temperatures(layers, sediment_m, surface_c, basal_w_m2, depths)
        }
    }
}

#[allow(clippy::too_many_arguments)]
fn sample_horizons(
    paths: &mut [Vec<TimeTemperature>],
    age_ma: f64,
    depth_of: impl Fn(usize) -> Option<f64>,
    nodes: &[f64],
    temperatures: &[f64],
    layers: &[ThermalLayer],
    sediment_m: f64,
    surface_c: f64,
    basal_w_m2: f64,
    method: ThermalMethod,
) {
    let mut present: Vec<(usize, f64)> = (0..paths.len())
        .filter_map(|h| depth_of(h).map(|d| (h, d)))
        .collect();
    present.sort_by(|a, b| a.1.total_cmp(&b.1));
    let depths: Vec<f64> = present.iter().map(|p| p.1).collect();
    let temps = temperatures_at(
        &depths,
        nodes,
        temperatures,
        layers,
        sediment_m,
        surface_c,
        basal_w_m2,
        method,
    );
    for ((h, _), t) in present.into_iter().zip(temps) {
        let path = &mut paths[h];
        // Equal ages (a zero-length interval) keep the later, buried temperature.
        if path.last().is_some_and(|p| p.age_ma == age_ma) {
            path.pop();
        }
        path.push(TimeTemperature {
            age_ma,
            temperature_c: t,
        });
    }
}

#[allow(clippy::too_many_arguments)]
fn snapshot(
    age_ma: f64,
    nodes: &[f64],
    temperatures: &[f64],
    layers: &[ThermalLayer],
    sediment_m: f64,
    surface_c: f64,
    basal_w_m2: f64,
    method: ThermalMethod,
) -> ThermalSnapshot {
    let production: f64 = layers
        .iter()
        .map(|l| (l.base_m.min(sediment_m) - l.top_m).max(0.0) * l.heat_production_w_m3)
        .sum();
    let surface_flow = match method {
        ThermalMethod::SteadyPerStep => basal_w_m2 + production,
        ThermalMethod::Transient => {
            // Across the first control volume boundary, by the exact series resistance.
            let c = solver::coefficients(&nodes[..2.min(nodes.len())], layers);
            c.conductance[0] * (temperatures[1] - temperatures[0])
        }
    };
    let top_of_basement = temperatures_at(
        &[sediment_m],
        nodes,
        temperatures,
        layers,
        sediment_m,
        surface_c,
        basal_w_m2,
        method,
    )[0];
    ThermalSnapshot {
        age_ma,
        surface_temperature_c: surface_c,
        basal_heat_flow_mw_m2: basal_w_m2 * 1e3,
        surface_heat_flow_mw_m2: surface_flow * 1e3,
        basement_top_temperature_c: top_of_basement,
    }
}

/// EASY%Ro of every horizon along its path, with its passage through `windows`
/// ([`maturity::easy_ro_history`]); a horizon with a path of one point is fresh (%Ro
/// 0.20).
///
/// Errors: those of [`maturity::easy_ro_history`] (not expected for a computed history).
pub fn horizon_maturity(
    thermal: &ThermalHistory,
    windows: &[MaturityWindow],
) -> Result<Vec<MaturityHistory>, ScienceError> {
    thermal
        .horizons
        .iter()
        .map(|h| maturity::easy_ro_history(&h.path, windows))
        .collect()
}
