//! A synthetic well whose Airy tectonic subsidence follows any given curve: test wells
//! for the flexure code, made from a plate model the fits do not share
//! (docs/science-flexure.md 9).
//!
//! From the oldest surface to the youngest, the unit laid down between two surface ages
//! gets the solid thickness that makes the Airy balance at the younger age, with the
//! whole column below decompacted to that age's depositional surface, equal the curve
//! there (bisection: the subsidence rises monotonically with the new unit's thickness).
//! The column is then compacted to the top surface's age for present depths. A curve that
//! falls faster than the water shallows cannot be built and is refused.

use crate::backstrip::airy_tectonic_subsidence;
use crate::decompaction::{decompacted_base, layer_density, mean_porosity};
use crate::lithology::{Catalogue, Lithology};
use crate::search1d::bisect_root;
use crate::{
    LithologyMix, ModelParameters, ScienceError, SeaLevelCurve, Surface, WaterDepth, WellColumn,
};

/// One surface of the synthetic well, without its depth.
#[derive(Debug, Clone, PartialEq)]
pub struct CurveSurface {
    pub horizon: String,
    pub age_ma: f64,
    /// The unit below; `None` on the deepest surface.
    pub lithology_below: Option<LithologyMix>,
    pub water_depth: WaterDepth,
}

/// Build the well (method in the module notes). `surfaces` youngest first; the curve is
/// matched with each surface's best water depth, relative to its value at the oldest
/// surface (which has no sediment below it).
pub fn well_following_curve(
    name: &str,
    surfaces: &[CurveSurface],
    tectonic_subsidence_m: &dyn Fn(f64) -> f64,
    catalogue: &Catalogue,
    params: &ModelParameters,
    sea_level: &SeaLevelCurve,
) -> Result<WellColumn, ScienceError> {
    let invalid = |reason: String| ScienceError::InvalidColumn {
        well: name.to_string(),
        reason,
    };
    if surfaces.len() < 2 || surfaces.windows(2).any(|w| w[0].age_ma >= w[1].age_ma) {
        return Err(invalid(
            "needs two or more surfaces, youngest first, ages strictly increasing".into(),
        ));
    }
    let units: Vec<Lithology> = surfaces[..surfaces.len() - 1]
        .iter()
        .map(|s| {
            let mix = s.lithology_below.as_ref().ok_or_else(|| {
                invalid(format!("surface '{}' needs a lithology below", s.horizon))
            })?;
            catalogue.resolve(mix)
        })
        .collect::<Result<_, _>>()?;
    let rho_w = params.water_density_kg_m3;
    let restored = |column: &[(usize, f64)]| {
        let (mut top, mut mass) = (0.0, 0.0);
        for &(k, solid) in column {
            let base = decompacted_base(&units[k], top, solid).unwrap_or(top);
            let porosity = mean_porosity(&units[k], top, base);
            mass += layer_density(&units[k], porosity, rho_w) * (base - top);
            top = base;
        }
        (top, mass)
    };
    let y_at = |k: usize, column: &[(usize, f64)]| {
        let s = &surfaces[k];
        let (thickness, mass) = restored(column);
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
    let oldest = surfaces.len() - 1;
    let start = y_at(oldest, &[]);
    let origin = tectonic_subsidence_m(surfaces[oldest].age_ma);
    let mut column: Vec<(usize, f64)> = Vec::with_capacity(units.len());
    for k in (0..oldest).rev() {
        let target = start + tectonic_subsidence_m(surfaces[k].age_ma) - origin;
        let mut trial = Vec::with_capacity(column.len() + 1);
        let mut at = |solid: f64| {
            trial.clear();
            trial.push((k, solid));
            trial.extend_from_slice(&column);
            y_at(k, &trial) - target
        };
        let bare = at(0.0);
        let solid = if bare.abs() < 1e-9 {
            0.0
        } else if bare > 0.0 {
            return Err(invalid(format!(
                "at {} Ma the curve is shallower than the water allows without removing sediment",
                surfaces[k].age_ma
            )));
        } else {
            let mut high = 1000.0;
            while at(high) < 0.0 && high < 1e6 {
                high *= 2.0;
            }
            bisect_root(&mut at, 0.0, high, 1e-7).ok_or_else(|| {
                invalid(format!(
                    "no unit reaches the curve at {} Ma",
                    surfaces[k].age_ma
                ))
            })?
        };
        column.insert(0, (k, solid));
    }
    let top = &surfaces[0];
    let mut depth = top.water_depth.best_m() - sea_level.at(top.age_ma);
    let mut below = 0.0;
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
            let base = decompacted_base(&units[k], below, column[k].1)?;
            depth += base - below;
            below = base;
        }
    }
    WellColumn::new(name, built)
}
