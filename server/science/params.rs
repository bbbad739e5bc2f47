//! A study's model parameters, with documented defaults and physical ranges.

use super::ScienceError;
use serde::{Deserialize, Serialize};

/// Lithosphere, crust and fluid properties used by backstripping, stretching fits
/// and heat flow. Field names carry their units; the JSON contract uses the same names.
///
/// Defaults follow McKenzie (1978) as tabulated in docs/science.md 4.1 (mantle 3330,
/// crust 2800, water 1000 kg m^-3; a = 125 km; T1 = 1333 °C; alpha = 3.28e-5 /°C;
/// kappa = 8e-7 m^2/s), with tc = 35 km (the docs/science.md check crust) and
/// k = 3.1 W/m/K (a common round value, docs/science.md 12 item 4).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct ModelParameters {
    pub mantle_density_kg_m3: f64,
    pub crust_density_kg_m3: f64,
    /// Water density; also the pore-fluid density of decompaction.
    pub water_density_kg_m3: f64,
    pub lithosphere_thickness_m: f64,
    pub crust_thickness_m: f64,
    pub asthenosphere_temperature_c: f64,
    /// Volumetric thermal expansion coefficient (per °C).
    pub thermal_expansion_per_c: f64,
    pub thermal_diffusivity_m2_s: f64,
    pub thermal_conductivity_w_m_k: f64,
}

impl Default for ModelParameters {
    fn default() -> Self {
        ModelParameters {
            mantle_density_kg_m3: 3330.0,
            crust_density_kg_m3: 2800.0,
            water_density_kg_m3: 1000.0,
            lithosphere_thickness_m: 125_000.0,
            crust_thickness_m: 35_000.0,
            asthenosphere_temperature_c: 1333.0,
            thermal_expansion_per_c: 3.28e-5,
            thermal_diffusivity_m2_s: 8e-7,
            thermal_conductivity_w_m_k: 3.1,
        }
    }
}

/// One parameter's name, value and admissible range, for validation and forms.
#[derive(Debug, Clone, Copy)]
pub struct ParameterRange {
    pub name: &'static str,
    pub label: &'static str,
    pub unit: &'static str,
    pub min: f64,
    pub max: f64,
}

/// Physical ranges, wide enough for any Earth lithosphere and narrow enough to catch
/// unit mistakes (a density in g/cm^3, a thickness in km). Common practice, not a source.
pub const PARAMETER_RANGES: [ParameterRange; 9] = [
    ParameterRange {
        name: "mantle_density_kg_m3",
        label: "Mantle density",
        unit: "kg/m³",
        min: 3000.0,
        max: 3600.0,
    },
    ParameterRange {
        name: "crust_density_kg_m3",
        label: "Crust density",
        unit: "kg/m³",
        min: 2400.0,
        max: 3100.0,
    },
    ParameterRange {
        name: "water_density_kg_m3",
        label: "Water density",
        unit: "kg/m³",
        min: 990.0,
        max: 1200.0,
    },
    ParameterRange {
        name: "lithosphere_thickness_m",
        label: "Lithosphere thickness",
        unit: "m",
        min: 50_000.0,
        max: 300_000.0,
    },
    ParameterRange {
        name: "crust_thickness_m",
        label: "Initial crust thickness",
        unit: "m",
        min: 10_000.0,
        max: 70_000.0,
    },
    ParameterRange {
        name: "asthenosphere_temperature_c",
        label: "Asthenosphere temperature",
        unit: "°C",
        min: 1000.0,
        max: 1600.0,
    },
    ParameterRange {
        name: "thermal_expansion_per_c",
        label: "Thermal expansion",
        unit: "1/°C",
        min: 1e-5,
        max: 6e-5,
    },
    ParameterRange {
        name: "thermal_diffusivity_m2_s",
        label: "Thermal diffusivity",
        unit: "m²/s",
        min: 3e-7,
        max: 2e-6,
    },
    ParameterRange {
        name: "thermal_conductivity_w_m_k",
        label: "Thermal conductivity",
        unit: "W/(m·K)",
        min: 1.0,
        max: 6.0,
    },
];

impl ModelParameters {
    /// The parameters as (range, value) pairs, in the order of [`PARAMETER_RANGES`].
    pub fn entries(&self) -> [(ParameterRange, f64); 9] {
        let v = [
            self.mantle_density_kg_m3,
            self.crust_density_kg_m3,
            self.water_density_kg_m3,
            self.lithosphere_thickness_m,
            self.crust_thickness_m,
            self.asthenosphere_temperature_c,
            self.thermal_expansion_per_c,
            self.thermal_diffusivity_m2_s,
            self.thermal_conductivity_w_m_k,
        ];
        std::array::from_fn(|i| (PARAMETER_RANGES[i], v[i]))
    }

    /// Set one parameter by its name; `false` if the name is unknown.
    pub fn set(&mut self, name: &str, value: f64) -> bool {
        let slot = match name {
            "mantle_density_kg_m3" => &mut self.mantle_density_kg_m3,
            "crust_density_kg_m3" => &mut self.crust_density_kg_m3,
            "water_density_kg_m3" => &mut self.water_density_kg_m3,
            "lithosphere_thickness_m" => &mut self.lithosphere_thickness_m,
            "crust_thickness_m" => &mut self.crust_thickness_m,
            "asthenosphere_temperature_c" => &mut self.asthenosphere_temperature_c,
            "thermal_expansion_per_c" => &mut self.thermal_expansion_per_c,
            "thermal_diffusivity_m2_s" => &mut self.thermal_diffusivity_m2_s,
            "thermal_conductivity_w_m_k" => &mut self.thermal_conductivity_w_m_k,
            _ => return false,
        };
        *slot = value;
        true
    }

    /// Every parameter within its physical range, and the crust thinner than the lithosphere.
    /// Returns all problems, not only the first.
    pub fn validate(&self) -> Result<(), Vec<ScienceError>> {
        let mut problems: Vec<ScienceError> = self
            .entries()
            .into_iter()
            .filter(|(r, v)| !(v.is_finite() && *v >= r.min && *v <= r.max))
            .map(|(r, v)| ScienceError::OutOfRange {
                name: r.name,
                value: v,
                range: range_text(r.name),
            })
            .collect();
        if self.crust_thickness_m >= self.lithosphere_thickness_m {
            problems.push(ScienceError::OutOfRange {
                name: "crust_thickness_m",
                value: self.crust_thickness_m,
                range: "less than lithosphere_thickness_m",
            });
        }
        if problems.is_empty() {
            Ok(())
        } else {
            Err(problems)
        }
    }

    /// Thermal time constant tau = a^2 / (pi^2 kappa), in Myr (docs/science.md 4.1).
    pub fn thermal_time_constant_myr(&self) -> f64 {
        let a = self.lithosphere_thickness_m;
        a * a
            / (std::f64::consts::PI.powi(2) * self.thermal_diffusivity_m2_s)
            / super::SECONDS_PER_MYR
    }
}

fn range_text(name: &str) -> &'static str {
    match name {
        "mantle_density_kg_m3" => "3000 to 3600 kg/m³",
        "crust_density_kg_m3" => "2400 to 3100 kg/m³",
        "water_density_kg_m3" => "990 to 1200 kg/m³",
        "lithosphere_thickness_m" => "50000 to 300000 m",
        "crust_thickness_m" => "10000 to 70000 m",
        "asthenosphere_temperature_c" => "1000 to 1600 °C",
        "thermal_expansion_per_c" => "1e-5 to 6e-5 per °C",
        "thermal_diffusivity_m2_s" => "3e-7 to 2e-6 m²/s",
        _ => "1 to 6 W/(m·K)",
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::tolerance::assert_printed;

    #[test]
    fn defaults_are_valid_and_give_mckenzies_time_constant() {
        let p = ModelParameters::default();
        assert!(p.validate().is_ok());
        // docs/science.md 4.1: tau = a^2/(pi^2 kappa) = 62.7085 Myr with the Julian year.
        assert_printed(p.thermal_time_constant_myr(), 62.7085, 4, "tau");
    }

    #[test]
    fn a_density_in_grams_per_cc_is_refused_with_its_range() {
        let p = ModelParameters {
            mantle_density_kg_m3: 3.33,
            ..Default::default()
        };
        let problems = p.validate().unwrap_err();
        assert_eq!(problems.len(), 1);
        assert!(
            problems[0].to_string().contains("3000 to 3600"),
            "{}",
            problems[0]
        );
    }
}
