//! Thermal properties of the rock types: matrix conductivity, radiogenic heat
//! production and specific heat, and how a porous unit's bulk values follow from them
//! (docs/science-thermal.md 4).
//!
//! Every default is an editable, typical value recalled from the general literature on
//! sedimentary rock properties \[memory\]; measured values for the study area should
//! replace them. Each entry says so in its `source`.

use crate::ScienceError;
use crate::column::LithologyMix;
use crate::lithology::MIX_FRACTION_TOLERANCE;
use serde::{Deserialize, Serialize};

/// Conductivity of pore water at about 20 °C (W m^-1 K^-1) \[memory; handbook value of
/// water, 0.60 at 20 °C\].
pub const PORE_WATER_CONDUCTIVITY_W_M_K: f64 = 0.6;

/// Specific heat of pore water (J kg^-1 K^-1) \[memory; handbook value, 4180 near 20 °C\].
pub const PORE_WATER_SPECIFIC_HEAT_J_KG_K: f64 = 4180.0;

/// The thermal properties of one rock type's grains (its matrix).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ThermalProperties {
    /// Conductivity of the grains, W m^-1 K^-1 (0.1 to 10).
    pub matrix_conductivity_w_m_k: f64,
    /// Radiogenic heat production of the grains, µW m^-3 (0 to 20).
    pub heat_production_uw_m3: f64,
    /// Specific heat of the grains, J kg^-1 K^-1 (500 to 2000).
    pub specific_heat_j_kg_k: f64,
    /// Where the numbers come from.
    pub source: String,
}

impl ThermalProperties {
    /// Check the physical ranges in the field notes (wide enough for any sedimentary
    /// rock, narrow enough to catch a unit mistake such as mW for W; common practice).
    ///
    /// Errors: [`ScienceError::OutOfRange`] naming the first value out of range.
    pub fn check(&self) -> Result<(), ScienceError> {
        let within = |name, value: f64, lo, hi, range| {
            if value.is_finite() && (lo..=hi).contains(&value) {
                Ok(())
            } else {
                Err(ScienceError::OutOfRange { name, value, range })
            }
        };
        within(
            "matrix conductivity",
            self.matrix_conductivity_w_m_k,
            0.1,
            10.0,
            "0.1 to 10 W/m/K",
        )?;
        within(
            "radiogenic heat production",
            self.heat_production_uw_m3,
            0.0,
            20.0,
            "0 to 20 µW/m³",
        )?;
        within(
            "specific heat",
            self.specific_heat_j_kg_k,
            500.0,
            2000.0,
            "500 to 2000 J/kg/K",
        )
    }

    /// Bulk conductivity at `porosity`: the geometric mean of the matrix and the pore
    /// water, `k = k_m^(1 - phi) k_w^phi` (common practice for water-saturated rock
    /// \[memory; e.g. Allen & Allen, Basin Analysis, thermal chapter\]).
    pub fn bulk_conductivity_w_m_k(&self, porosity: f64) -> f64 {
        self.matrix_conductivity_w_m_k.powf(1.0 - porosity)
            * PORE_WATER_CONDUCTIVITY_W_M_K.powf(porosity)
    }

    /// Bulk heat production at `porosity` (W m^-3): only the grains produce heat.
    pub fn bulk_heat_production_w_m3(&self, porosity: f64) -> f64 {
        (1.0 - porosity) * self.heat_production_uw_m3 * 1e-6
    }

    /// Bulk volumetric heat capacity (J m^-3 K^-1) of grains of `grain_density` and pore
    /// water of `water_density` at `porosity`: the volume-weighted sum.
    pub fn bulk_heat_capacity_j_m3_k(
        &self,
        porosity: f64,
        grain_density_kg_m3: f64,
        water_density_kg_m3: f64,
    ) -> f64 {
        (1.0 - porosity) * grain_density_kg_m3 * self.specific_heat_j_kg_k
            + porosity * water_density_kg_m3 * PORE_WATER_SPECIFIC_HEAT_J_KG_K
    }
}

/// The study's thermal properties, by lithology name (matched like the lithology
/// catalogue: ignoring case and surrounding spaces).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ThermalCatalogue {
    entries: Vec<(String, ThermalProperties)>,
}

/// Used for a lithology the thermal catalogue does not hold (a rock type the study
/// defined itself): a middle-of-the-road clastic \[assumed\]. Results say when it was used.
pub fn generic_properties() -> ThermalProperties {
    ThermalProperties {
        matrix_conductivity_w_m_k: 2.5,
        heat_production_uw_m3: 1.0,
        specific_heat_j_kg_k: 850.0,
        source: "generic value for a lithology without thermal properties [assumed]; \
                 enter measured values"
            .into(),
    }
}

impl ThermalCatalogue {
    /// A catalogue from named entries, each checked.
    ///
    /// Errors: an entry out of range; a name given twice.
    pub fn new(entries: Vec<(String, ThermalProperties)>) -> Result<Self, ScienceError> {
        for (i, (name, props)) in entries.iter().enumerate() {
            props.check()?;
            if entries[..i]
                .iter()
                .any(|(n, _)| n.eq_ignore_ascii_case(name))
            {
                return Err(ScienceError::CannotFit(format!(
                    "lithology '{name}' has thermal properties twice"
                )));
            }
        }
        Ok(ThermalCatalogue { entries })
    }

    /// Typical values for the lithologies of the default catalogue \[memory\]: matrix
    /// conductivities at room temperature and heat productions as quoted in general
    /// texts on sedimentary-rock properties, rounded. Quartz-rich rocks conduct best,
    /// shales least among the clastics; evaporites conduct very well; coal very poorly.
    /// Shales carry the most uranium, thorium and potassium, carbonates and evaporites
    /// the least. Editable defaults; check them before relying on them.
    pub fn published_defaults() -> Self {
        const NOTE: &str = "typical value from general texts on rock properties [memory]; \
                            replace with measured values";
        let entry = |name: &str, k: f64, a: f64, c: f64| {
            (
                name.to_string(),
                ThermalProperties {
                    matrix_conductivity_w_m_k: k,
                    heat_production_uw_m3: a,
                    specific_heat_j_kg_k: c,
                    source: NOTE.into(),
                },
            )
        };
        ThermalCatalogue {
            entries: vec![
                entry("shale", 2.0, 1.5, 860.0),
                entry("sandstone", 3.5, 0.7, 850.0),
                entry("chalk", 2.9, 0.3, 850.0),
                entry("shaly sandstone", 2.6, 1.1, 855.0),
                entry("limestone", 2.8, 0.4, 850.0),
                entry("dolomite", 4.5, 0.3, 870.0),
                entry("siltstone", 2.6, 1.1, 855.0),
                entry("salt", 5.9, 0.02, 860.0),
                entry("anhydrite", 5.0, 0.1, 880.0),
                entry("coal", 0.3, 0.5, 1300.0),
                // The crust's own heat production is in the crust model (see the thermal
                // parameters); a basement unit in a well adds none, so it is not counted twice.
                (
                    "basement".into(),
                    ThermalProperties {
                        matrix_conductivity_w_m_k: 2.8,
                        heat_production_uw_m3: 0.0,
                        specific_heat_j_kg_k: 880.0,
                        source: "typical crystalline crust [memory]; heat production 0 \
                                 because the crust's is in the crust model"
                            .into(),
                    },
                ),
            ],
        }
    }

    /// The entries, in catalogue order.
    pub fn entries(&self) -> &[(String, ThermalProperties)] {
        &self.entries
    }

    /// The properties of lithology `name`, if the catalogue holds it.
    pub fn get(&self, name: &str) -> Option<&ThermalProperties> {
        let name = name.trim();
        self.entries
            .iter()
            .find(|(n, _)| n.eq_ignore_ascii_case(name))
            .map(|(_, p)| p)
    }

    /// The properties a unit of lithology `mix` behaves as, and whether any part fell
    /// back to [`generic_properties`]. Conductivity is the fraction-weighted geometric
    /// mean of the parts' (the same law as for pores); heat production and specific heat
    /// are fraction-weighted arithmetic means (common practice \[memory\]).
    ///
    /// Errors: fractions that do not sum to 1 within [`MIX_FRACTION_TOLERANCE`].
    pub fn resolve(&self, mix: &LithologyMix) -> Result<(ThermalProperties, bool), ScienceError> {
        let generic = generic_properties();
        let mut used_generic = false;
        let (mut ln_k, mut a, mut c, mut total) = (0.0, 0.0, 0.0, 0.0);
        for part in &mix.parts {
            let props = match self.get(&part.lithology) {
                Some(p) => p,
                None => {
                    used_generic = true;
                    &generic
                }
            };
            ln_k += part.fraction * props.matrix_conductivity_w_m_k.ln();
            a += part.fraction * props.heat_production_uw_m3;
            c += part.fraction * props.specific_heat_j_kg_k;
            total += part.fraction;
        }
        if (total - 1.0).abs() > MIX_FRACTION_TOLERANCE {
            return Err(ScienceError::MixNotWhole(total * 100.0));
        }
        let source = if let [only] = mix.parts.as_slice() {
            self.get(&only.lithology)
                .map_or(generic.source.clone(), |p| p.source.clone())
        } else {
            "mix of the parts' values (geometric mean conductivity) [derived]".into()
        };
        Ok((
            ThermalProperties {
                matrix_conductivity_w_m_k: ln_k.exp(),
                heat_production_uw_m3: a,
                specific_heat_j_kg_k: c,
                source,
            },
            used_generic,
        ))
    }
}
