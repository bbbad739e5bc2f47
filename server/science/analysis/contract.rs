//! The batch JSON contract of PRODUCT.md ("a stable contract; extend, don't break").
//!
//! These structs are only the serialised shape; `super::run` fills them from the
//! science core's results. Field names and nesting follow PRODUCT.md exactly;
//! additions are marked as extensions.

use crate::ModelParameters;
use serde::Serialize;
use std::collections::BTreeMap;

/// The whole output of `sagline analyze --format json`.
#[derive(Debug, Clone, Serialize)]
pub struct Report {
    pub parameters: ParametersOut,
    pub wells: Vec<WellOut>,
}

/// The parameters as used, with the lithology catalogue.
#[derive(Debug, Clone, Serialize)]
pub struct ParametersOut {
    #[serde(flatten)]
    pub model: ModelParameters,
    pub lithologies: Vec<LithologyOut>,
}

#[derive(Debug, Clone, Serialize)]
pub struct LithologyOut {
    pub name: String,
    pub surface_porosity: f64,
    pub compaction_per_km: f64,
    pub grain_density_kg_m3: f64,
}

#[derive(Debug, Clone, Copy, Serialize)]
pub struct RangeOut {
    pub min: f64,
    pub best: f64,
    pub max: f64,
}

/// One entry per surface age (and per `eroded_at_ma`), oldest first.
#[derive(Debug, Clone, Serialize)]
pub struct HistoryOut {
    pub age_ma: f64,
    pub sediment_thickness_m: f64,
    pub sediment_density_kg_m3: Option<f64>,
    pub water_depth_m: RangeOut,
    pub sea_level_m: f64,
    pub tectonic_subsidence_m: RangeOut,
    /// Burial depth of each horizon below the depositional surface (m).
    pub horizon_depths_m: BTreeMap<String, f64>,
    /// Extension: the surface that was the depositional surface at this age.
    pub depositional_horizon: String,
    /// Extension: basement depth below present sea level under its sediment and water (m).
    pub total_subsidence_m: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct PhaseOut {
    pub phase: &'static str,
    pub from_ma: f64,
    pub to_ma: f64,
}

#[derive(Debug, Clone, Copy, Serialize)]
pub struct HeatFlowPoint {
    pub age_ma: f64,
    pub value: f64,
}

/// The uniform-stretching (McKenzie 1978) fit. `beta` is the cumulative factor (the
/// product over rift events); onset is the first event's, end the last event's.
#[derive(Debug, Clone, Serialize)]
pub struct StretchingOut {
    pub model: &'static str,
    pub beta: f64,
    pub beta_min: f64,
    pub beta_max: f64,
    pub rift_onset_ma: f64,
    pub rift_end_ma: f64,
    pub rms_misfit_m: f64,
    /// Basal (mantle) heat flow of the fitted model at every history age: the closed
    /// form's heat flow out of a plate without radiogenic heat (see `heat_flow_basis`).
    pub heat_flow_mw_m2: Vec<HeatFlowPoint>,
    /// Extension: "proposed" by the phase search, or "team pick".
    pub origin: &'static str,
    /// Extension: each rift event (one or two).
    pub rift_events: Vec<RiftEventOut>,
    /// Extension: the two-layer (crust delta, mantle beta) fit beside the uniform one.
    pub two_layer: Option<TwoLayerOut>,
    /// Extension: what `heat_flow_mw_m2` is.
    pub heat_flow_basis: &'static str,
    /// Extension: the chosen finite-duration fit (numerical plate), when one was chosen;
    /// `beta` and the events above are then the closed-form fit at the same timing.
    pub finite_duration: Option<FiniteOut>,
    /// Extension: the sources of `beta_min`..`beta_max` (the combined range).
    pub beta_range: Option<BetaRangeOut>,
}

/// A rift of finite duration fitted with the numerical plate.
#[derive(Debug, Clone, Serialize)]
pub struct FiniteOut {
    /// "uniform-finite" or "two-layer-finite".
    pub model: &'static str,
    /// delta (equal to `mantle_factor` for a uniform event).
    pub crust_factor: f64,
    pub mantle_factor: f64,
    pub rift_onset_ma: f64,
    pub rift_end_ma: f64,
    pub pre_rift_subsidence_m: f64,
    pub rms_misfit_m: f64,
}

/// What the uniform beta's range is made of: the water-depth ranges (curve shifts and
/// Monte-Carlo draws), the lithosphere-parameter draws (5-95 %), and the factor both
/// half-widths were widened by for a misfit beyond the ranges.
#[derive(Debug, Clone, Serialize)]
pub struct BetaRangeOut {
    pub water_depth_min: f64,
    pub water_depth_max: f64,
    pub lithosphere_parameters_min: f64,
    pub lithosphere_parameters_max: f64,
    pub misfit_inflation: f64,
    /// "water depth" or "lithosphere parameters".
    pub dominant: &'static str,
}

/// How the stretching model was chosen (present whenever the well was interpreted,
/// "no rift" included).
#[derive(Debug, Clone, Serialize)]
pub struct ModelChoiceOut {
    /// The model the proposal (or the team's pick) settled on: "no-rift", "uniform",
    /// "two-events" or "two-layer".
    pub chosen_model: &'static str,
    /// The fullest model's squared misfit over what the data's ranges allow (1 = within
    /// them); scores were divided by it.
    pub misfit_scale: f64,
    /// Every model tried, best score first, so the closeness of the call shows.
    pub alternatives: Vec<AlternativeOut>,
}

/// One model tried by the proposal, with its score.
#[derive(Debug, Clone, Serialize)]
pub struct AlternativeOut {
    pub model: &'static str,
    /// BIC against the data's uncertainty (lower is better).
    pub bic: f64,
    /// BIC less the chosen model's.
    pub bic_above_chosen: f64,
    pub rms_misfit_m: f64,
    /// Why it was not chosen although it might score better, if so.
    pub refused: Option<String>,
}

#[derive(Debug, Clone, Copy, Serialize)]
pub struct RiftEventOut {
    pub rift_onset_ma: f64,
    pub rift_end_ma: f64,
    pub beta: f64,
}

/// The two-layer fit (Royden & Keen 1980 geometry): crust thinned by delta, mantle
/// lithosphere by beta.
#[derive(Debug, Clone, Serialize)]
pub struct TwoLayerOut {
    pub model: &'static str,
    pub delta: f64,
    pub delta_min: f64,
    pub delta_max: f64,
    pub beta: f64,
    pub beta_min: f64,
    pub beta_max: f64,
    pub rift_onset_ma: f64,
    pub rift_end_ma: f64,
    pub rms_misfit_m: f64,
    pub heat_flow_mw_m2: Vec<HeatFlowPoint>,
}

#[derive(Debug, Clone, Serialize)]
pub struct WellOut {
    pub well: String,
    pub warnings: Vec<String>,
    pub history: Vec<HistoryOut>,
    pub phases: Vec<PhaseOut>,
    pub stretching: Option<StretchingOut>,
    /// Extension: how the model was chosen, with the alternatives and their scores.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub model_choice: Option<ModelChoiceOut>,
    /// Extension: why there is no stretching fit, when there is none.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub fit_note: Option<String>,
    /// Extension: temperatures and maturity of every horizon through time.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub thermal: Option<super::thermal::ThermalOut>,
    /// Extension: why there is no thermal history, when there is none.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub thermal_note: Option<String>,
    /// Extension: the model against the well's calibration points, with a heat-flow
    /// proposal (only when calibration data were given for the well).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub calibration: Option<super::calibration::WellCalibration>,
}
