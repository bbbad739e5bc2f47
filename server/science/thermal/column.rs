//! The sediment column between two restored ages, as piecewise-constant thermal
//! layers over the model's depth range (docs/science-thermal.md 5).
//!
//! A well's burial history restores the column at its surface and erosion ages only.
//! Between two of them every unit's top and base move linearly in time; a unit present
//! at one end only (being laid down, or being eroded) has zero thickness at the
//! surface at the other end. Within a unit a grain keeps its fraction of the unit's
//! thickness, which is how the solver follows material as it is buried.

use super::properties::ThermalProperties;
use crate::backstrip::HistoryStep;
use crate::burial::RestoredUnit;

/// One unit's identity across ages: its index, and whether it is the eroded section
/// laid down on its top surface.
pub(crate) type UnitKey = (usize, bool);

/// A unit's position and state at one age (depths below the depositional surface, m).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct PlacedUnit {
    pub key: UnitKey,
    pub top_m: f64,
    pub base_m: f64,
    pub porosity: f64,
    pub bulk_density_kg_m3: f64,
}

impl PlacedUnit {
    fn from_restored(u: &RestoredUnit) -> Self {
        PlacedUnit {
            key: (u.unit, u.eroded_section),
            top_m: u.top_m,
            base_m: u.base_m,
            porosity: u.mean_porosity,
            bulk_density_kg_m3: u.density_kg_m3,
        }
    }
}

/// The column between two restored ages: the units at both ends, matched by key.
#[derive(Debug, Clone)]
pub(crate) struct Interval {
    /// (unit at the older age, unit at the younger age), top down at the younger age;
    /// a unit absent at one end sits at the surface with zero thickness there.
    pairs: Vec<(PlacedUnit, PlacedUnit)>,
    older_thickness_m: f64,
    younger_thickness_m: f64,
}

impl Interval {
    pub fn new(older: &HistoryStep, younger: &HistoryStep) -> Self {
        let absent = |u: &PlacedUnit| PlacedUnit {
            top_m: 0.0,
            base_m: 0.0,
            ..*u
        };
        let old: Vec<PlacedUnit> = older.units.iter().map(PlacedUnit::from_restored).collect();
        let young: Vec<PlacedUnit> = younger
            .units
            .iter()
            .map(PlacedUnit::from_restored)
            .collect();
        // Units that leave the column (eroded) sit above everything still there, so
        // they go first; then the younger column's units top down.
        let mut pairs: Vec<(PlacedUnit, PlacedUnit)> = old
            .iter()
            .filter(|o| !young.iter().any(|y| y.key == o.key))
            .map(|o| (*o, absent(o)))
            .collect();
        for y in &young {
            let o = old.iter().find(|o| o.key == y.key).copied();
            pairs.push((o.unwrap_or_else(|| absent(y)), *y));
        }
        Interval {
            pairs,
            older_thickness_m: older.sediment_thickness_m,
            younger_thickness_m: younger.sediment_thickness_m,
        }
    }

    /// Sediment thickness at fraction `s` of the interval (0 = older age, 1 = younger).
    pub fn thickness_m(&self, s: f64) -> f64 {
        lerp(self.older_thickness_m, self.younger_thickness_m, s)
    }

    /// The units at fraction `s`, top down: (key, top, base, porosity, bulk density).
    pub fn units_at(&self, s: f64) -> Vec<PlacedUnit> {
        self.pairs
            .iter()
            .map(|(o, y)| PlacedUnit {
                key: y.key,
                top_m: lerp(o.top_m, y.top_m, s),
                base_m: lerp(o.base_m, y.base_m, s),
                porosity: if o.base_m > o.top_m {
                    lerp(o.porosity, y.porosity, s)
                } else {
                    y.porosity
                },
                bulk_density_kg_m3: if o.base_m > o.top_m {
                    lerp(o.bulk_density_kg_m3, y.bulk_density_kg_m3, s)
                } else {
                    y.bulk_density_kg_m3
                },
            })
            .filter(|u| u.base_m > u.top_m)
            .collect()
    }

    /// Where the grain now at depth `depth_m` (fraction `s_new`) was at fraction `s_old`
    /// (m below the surface; 0 for sediment laid down in between). Below the sediment,
    /// the basement moves with the base of the column.
    /// The point-by-point form, kept as the reference the walk is tested against.
    #[cfg(test)]
    pub fn depth_before(&self, depth_m: f64, s_new: f64, s_old: f64) -> f64 {
        let base_new = self.thickness_m(s_new);
        if depth_m >= base_new {
            return depth_m - base_new + self.thickness_m(s_old);
        }
        for (o, y) in &self.pairs {
            let top = lerp(o.top_m, y.top_m, s_new);
            let base = lerp(o.base_m, y.base_m, s_new);
            if depth_m <= base && base > top {
                let f = ((depth_m - top) / (base - top)).clamp(0.0, 1.0);
                let top_old = lerp(o.top_m, y.top_m, s_old);
                let base_old = lerp(o.base_m, y.base_m, s_old);
                return top_old + f * (base_old - top_old);
            }
        }
        depth_m
    }
}

impl Interval {
    /// [`Interval::depth_before`] of every one of `depths_m` (increasing), in one walk
    /// down the column: the units are top down at every fraction, so the unit holding
    /// a deeper point is never above the one holding a shallower point.
    pub fn depths_before(&self, depths_m: &[f64], s_new: f64, s_old: f64) -> Vec<f64> {
        let base_new = self.thickness_m(s_new);
        let base_old = self.thickness_m(s_old);
        // Each unit at both fractions: (top, base) new, (top, base) old.
        let placed: Vec<((f64, f64), (f64, f64))> = self
            .pairs
            .iter()
            .map(|(o, y)| {
                (
                    (
                        lerp(o.top_m, y.top_m, s_new),
                        lerp(o.base_m, y.base_m, s_new),
                    ),
                    (
                        lerp(o.top_m, y.top_m, s_old),
                        lerp(o.base_m, y.base_m, s_old),
                    ),
                )
            })
            .collect();
        let mut i = 0;
        depths_m
            .iter()
            .map(|&depth| {
                if depth >= base_new {
                    return depth - base_new + base_old;
                }
                while i < placed.len() {
                    let ((top, base), _) = placed[i];
                    if depth <= base && base > top {
                        break;
                    }
                    i += 1;
                }
                match placed.get(i) {
                    Some(&((top, base), (top_old, base_old_unit))) => {
                        let f = ((depth - top) / (base - top)).clamp(0.0, 1.0);
                        top_old + f * (base_old_unit - top_old)
                    }
                    None => depth,
                }
            })
            .collect()
    }
}

fn lerp(a: f64, b: f64, s: f64) -> f64 {
    a + (b - a) * s
}

/// A layer of constant thermal properties.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct ThermalLayer {
    pub top_m: f64,
    pub base_m: f64,
    pub conductivity_w_m_k: f64,
    pub heat_capacity_j_m3_k: f64,
    pub heat_production_w_m3: f64,
}

/// The thermal layers from the surface to `domain_base_m`: the units (with the
/// properties of unit `key.0`), then the basement.
pub(crate) fn thermal_layers(
    units: &[PlacedUnit],
    sediment_thickness_m: f64,
    unit_properties: &[ThermalProperties],
    basement: &ThermalLayer,
    water_density_kg_m3: f64,
    domain_base_m: f64,
) -> Vec<ThermalLayer> {
    let mut layers: Vec<ThermalLayer> = units
        .iter()
        .map(|u| {
            let p = &unit_properties[u.key.0];
            let phi = u.porosity.clamp(0.0, 1.0);
            // Grains' share of the bulk density: (1 - phi) rho_g = rho_b - phi rho_w.
            let grain_mass = (u.bulk_density_kg_m3 - phi * water_density_kg_m3).max(0.0);
            ThermalLayer {
                top_m: u.top_m,
                base_m: u.base_m,
                conductivity_w_m_k: p.bulk_conductivity_w_m_k(phi),
                heat_capacity_j_m3_k: grain_mass * p.specific_heat_j_kg_k
                    + phi
                        * water_density_kg_m3
                        * super::properties::PORE_WATER_SPECIFIC_HEAT_J_KG_K,
                heat_production_w_m3: p.bulk_heat_production_w_m3(phi),
            }
        })
        .collect();
    layers.push(ThermalLayer {
        top_m: sediment_thickness_m,
        base_m: domain_base_m.max(sediment_thickness_m),
        ..*basement
    });
    layers
}

/// Running integrals of a layered column, so any depth interval's heat capacity,
/// heat production and thermal resistance cost one lookup at each end.
pub(crate) struct ColumnIntegrals<'a> {
    layers: &'a [ThermalLayer],
    /// At each layer's top: integral from the surface of (rho c, A, 1/k).
    at_top: Vec<[f64; 3]>,
}

impl<'a> ColumnIntegrals<'a> {
    pub fn new(layers: &'a [ThermalLayer]) -> Self {
        let mut at_top = Vec::with_capacity(layers.len());
        let mut sum = [0.0; 3];
        for l in layers {
            at_top.push(sum);
            let h = l.base_m - l.top_m;
            sum[0] += h * l.heat_capacity_j_m3_k;
            sum[1] += h * l.heat_production_w_m3;
            sum[2] += h / l.conductivity_w_m_k;
        }
        ColumnIntegrals { layers, at_top }
    }

    /// The integrals from the surface to `depth_m`; `hint` is the layer to start
    /// looking from (depths asked in increasing order make the walk linear).
    pub fn to_depth(&self, depth_m: f64, hint: &mut usize) -> [f64; 3] {
        let n = self.layers.len();
        while *hint + 1 < n && depth_m > self.layers[*hint].base_m {
            *hint += 1;
        }
        while *hint > 0 && depth_m < self.layers[*hint].top_m {
            *hint -= 1;
        }
        let l = &self.layers[*hint];
        let h = (depth_m - l.top_m).max(0.0);
        let s = self.at_top[*hint];
        [
            s[0] + h * l.heat_capacity_j_m3_k,
            s[1] + h * l.heat_production_w_m3,
            s[2] + h / l.conductivity_w_m_k,
        ]
    }
}

/// The steady temperature (°C) at each of `depths_m` (increasing) through `layers`,
/// with `surface_c` at the top and `basal_heat_flow_w_m2` entering the base of the
/// sediment at `sediment_thickness_m`: heat flow grows upward by each layer's heat
/// production, and within a layer of conductivity k and production A,
/// `T(z) = T(top) + (q_top (z - top) - A (z - top)^2 / 2) / k` (docs/science-thermal.md 6).
pub(crate) fn steady_temperatures(
    layers: &[ThermalLayer],
    sediment_thickness_m: f64,
    surface_c: f64,
    basal_heat_flow_w_m2: f64,
    depths_m: &[f64],
) -> Vec<f64> {
    // Heat flow at the top of the column: the basal flow plus all production above the
    // sediment base (the basement below it adds none to what enters the sediment).
    let production_above_base: f64 = layers
        .iter()
        .map(|l| {
            let base = l.base_m.min(sediment_thickness_m);
            (base - l.top_m).max(0.0) * l.heat_production_w_m3
        })
        .sum();
    let mut out = Vec::with_capacity(depths_m.len());
    let (mut i, mut t_top, mut q_top) =
        (0, surface_c, basal_heat_flow_w_m2 + production_above_base);
    for &z in depths_m {
        while i + 1 < layers.len() && z > layers[i].base_m {
            let l = &layers[i];
            let h = l.base_m - l.top_m;
            let a = if l.top_m < sediment_thickness_m {
                l.heat_production_w_m3
            } else {
                0.0
            };
            t_top += (q_top * h - a * h * h / 2.0) / l.conductivity_w_m_k;
            q_top -= a * h;
            i += 1;
        }
        let l = &layers[i];
        let h = (z - l.top_m).max(0.0);
        let a = if l.top_m < sediment_thickness_m {
            l.heat_production_w_m3
        } else {
            0.0
        };
        out.push(t_top + (q_top * h - a * h * h / 2.0) / l.conductivity_w_m_k);
    }
    out
}
