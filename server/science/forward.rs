//! Forward model: the tops of a synthetic well whose backstripped best tectonic
//! subsidence follows a chosen stretching model. It makes test wells and demo studies,
//! so it is deterministic: the same specification gives the same well.
//!
//! Method. The model curve is the uniform or two-layer curve of [`super::fit`] (Y0 set
//! so that it starts at the Airy tectonic subsidence of the oldest surface, which has no
//! sediment below it). From the oldest surface to the youngest, the unit deposited
//! between two surface ages gets the solid thickness that makes the Airy balance at the
//! younger age, with the whole column below decompacted to that age's depositional
//! surface, equal the model curve there. That subsidence rises monotonically with the
//! new unit's solid thickness (sediment replaces lighter water), so the root is found by
//! bisection. The column is then compacted to the top surface's age to give present
//! depths below present sea level. Units never lose burial, so compaction needs no
//! erosion memory. Decompaction, Airy balance and lithology mixes are those of
//! [`super::decompaction`], [`super::backstrip`] and [`super::lithology`].

use super::backstrip::airy_tectonic_subsidence;
use super::decompaction::{decompacted_base, layer_density, mean_porosity};
use super::fit::{RiftEvent, TwoLayerFit, UniformFit};
use super::lithology::{Catalogue, Lithology};
use super::mckenzie::{Lithosphere, check_stretching_factor};
use super::search1d::bisect_root;
use super::{
    LithologyMix, ModelParameters, ScienceError, SeaLevelCurve, Surface, WaterDepth, WellColumn,
};
use serde::{Deserialize, Serialize};
use std::cmp::Ordering;

/// The stretching model the synthetic well follows.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(tag = "model", rename_all = "kebab-case")]
pub enum ForwardStretching {
    Uniform { beta: f64 },
    TwoLayer { delta: f64, beta: f64 },
}

/// One surface of the synthetic well, without its depth (the forward model finds it).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ForwardSurface {
    pub horizon: String,
    pub age_ma: f64,
    /// The unit between this surface and the next deeper one; `None` on the deepest.
    pub lithology_below: Option<LithologyMix>,
    /// The recorded range; the curve is matched with its best (middle) value.
    pub water_depth: WaterDepth,
}

/// What to build: surfaces shallowest (youngest) first, as in a [`WellColumn`].
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ForwardSpec {
    pub well: String,
    pub stretching: ForwardStretching,
    pub rift_onset_ma: f64,
    pub rift_end_ma: f64,
    pub surfaces: Vec<ForwardSurface>,
}

/// The model curve the forward well follows: tectonic subsidence (m) at an age, for
/// the spec's stretching with Y0 = 0.
fn model_curve(spec: &ForwardSpec, lithosphere: &Lithosphere, age_ma: f64) -> f64 {
    match spec.stretching {
        ForwardStretching::Uniform { beta } => UniformFit {
            events: vec![RiftEvent {
                rift_onset_ma: spec.rift_onset_ma,
                rift_end_ma: spec.rift_end_ma,
                beta,
            }],
            pre_rift_subsidence_m: 0.0,
            rms_misfit_m: 0.0,
        }
        .subsidence_m(lithosphere, age_ma),
        ForwardStretching::TwoLayer { delta, beta } => TwoLayerFit {
            delta,
            beta,
            rift_onset_ma: spec.rift_onset_ma,
            rift_end_ma: spec.rift_end_ma,
            pre_rift_subsidence_m: 0.0,
            rms_misfit_m: 0.0,
        }
        .subsidence_m(lithosphere, age_ma),
    }
}

/// Build the synthetic well (see the module notes for the method). The result passes
/// [`WellColumn::new`], with the spec's water-depth ranges, and a unit of zero thickness
/// (a hiatus) wherever the model curve is flat and the water depth unchanged.
///
/// Errors: factors below 1, a rift end not younger than its onset, invalid parameters,
/// an unknown lithology, surfaces not ordered youngest first, or a model curve that would
/// need sediment to be removed (uplift faster than the water shallows) between two ages.
pub fn forward_well(
    spec: &ForwardSpec,
    catalogue: &Catalogue,
    params: &ModelParameters,
    sea_level: &SeaLevelCurve,
) -> Result<WellColumn, ScienceError> {
    let lithosphere = Lithosphere::water_loaded(params)?;
    match spec.stretching {
        ForwardStretching::Uniform { beta } => {
            check_stretching_factor("beta", beta)?;
        }
        ForwardStretching::TwoLayer { delta, beta } => {
            check_stretching_factor("delta", delta)?;
            check_stretching_factor("beta", beta)?;
        }
    }
    let invalid = |reason: String| ScienceError::InvalidColumn {
        well: spec.well.clone(),
        reason,
    };
    if spec.rift_onset_ma.partial_cmp(&spec.rift_end_ma) != Some(Ordering::Greater) {
        return Err(invalid(
            "the rift onset must be older than the rift end".into(),
        ));
    }
    let surfaces = &spec.surfaces;
    if surfaces.len() < 2
        || surfaces
            .windows(2)
            .any(|w| w[0].age_ma.partial_cmp(&w[1].age_ma) != Some(Ordering::Less))
    {
        return Err(invalid(
            "needs two or more surfaces, youngest first, ages strictly increasing".into(),
        ));
    }
    // Units oldest first: unit k lies below surface k (shallowest-first index).
    let units: Vec<Lithology> = surfaces[..surfaces.len() - 1]
        .iter()
        .map(|s| {
            let mix = s.lithology_below.as_ref().ok_or_else(|| {
                invalid(format!("surface '{}' needs a lithology below", s.horizon))
            })?;
            catalogue.resolve(mix)
        })
        .collect::<Result<_, _>>()?;

    let oldest = surfaces.len() - 1;
    let best_y = |k: usize, column: &[(usize, f64)]| {
        let s = &surfaces[k];
        let (thickness, mass) = restored_column(&units, column, params.water_density_kg_m3);
        let density = if thickness > 0.0 {
            mass / thickness
        } else {
            0.0
        };
        airy_tectonic_subsidence(
            thickness,
            density,
            s.water_depth.best_m(),
            sea_level.at(s.age_ma),
            params,
        )
    };
    let start = best_y(oldest, &[]);
    let origin = model_curve(spec, &lithosphere, surfaces[oldest].age_ma);
    // (unit index, solid thickness), youngest unit first, as the column is restored.
    let mut column: Vec<(usize, f64)> = Vec::with_capacity(units.len());
    for k in (0..oldest).rev() {
        let target = start + model_curve(spec, &lithosphere, surfaces[k].age_ma) - origin;
        let mut trial = Vec::with_capacity(column.len() + 1);
        let mut at = |solid: f64| {
            trial.clear();
            trial.push((k, solid));
            trial.extend_from_slice(&column);
            best_y(k, &trial) - target
        };
        let no_sediment = at(0.0);
        let solid = if no_sediment.abs() < 1e-9 {
            0.0
        } else if no_sediment > 0.0 {
            return Err(invalid(format!(
                "between {} and {} Ma the model curve rises less than the water deepens; it would need negative sediment",
                surfaces[k + 1].age_ma,
                surfaces[k].age_ma
            )));
        } else {
            let mut high = 1000.0;
            while at(high) < 0.0 && high < 1e6 {
                high *= 2.0;
            }
            bisect_root(&mut at, 0.0, high, 1e-7).ok_or_else(|| {
                invalid(format!(
                    "no unit thickness reaches the model curve at {} Ma",
                    surfaces[k].age_ma
                ))
            })?
        };
        column.insert(0, (k, solid));
    }

    // Present depths: the column compacted below the top surface.
    let top = &surfaces[0];
    let mut depth = top.water_depth.best_m() - sea_level.at(top.age_ma);
    let mut below_surface = 0.0;
    let mut built = Vec::with_capacity(surfaces.len());
    for (k, s) in surfaces.iter().enumerate() {
        built.push(Surface {
            horizon: s.horizon.clone(),
            depth_m: depth,
            age_ma: s.age_ma,
            lithology_below: s.lithology_below.clone(),
            water_depth: s.water_depth,
            erosion: None,
        });
        if k < oldest {
            let base = decompacted_base(&units[k], below_surface, column[k].1)?;
            depth += base - below_surface;
            below_surface = base;
        }
    }
    WellColumn::new(spec.well.clone(), built)
}

/// Thickness (m) and mass per area (kg m^-2) of the units `(index, solid thickness)`,
/// youngest first, restored below a depositional surface.
fn restored_column(
    units: &[Lithology],
    column: &[(usize, f64)],
    pore_fluid_density_kg_m3: f64,
) -> (f64, f64) {
    let (mut top, mut mass) = (0.0, 0.0);
    for &(k, solid) in column {
        let lithology = &units[k];
        // Tops and solid thicknesses here are finite and non-negative, which is all the
        // decompaction solve can refuse.
        let base = decompacted_base(lithology, top, solid).unwrap_or(top);
        let porosity = mean_porosity(lithology, top, base);
        mass += layer_density(lithology, porosity, pore_fluid_density_kg_m3) * (base - top);
        top = base;
    }
    (top, mass)
}

#[cfg(test)]
#[path = "forward_tests.rs"]
mod tests;
