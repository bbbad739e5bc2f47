//! Lithologies and the study's lithology catalogue: the parameters of the exponential
//! porosity–depth law (Athy 1930) and the grain density of each rock type.
//!
//! The defaults are the Sclater & Christie (1980) North Sea table and common-practice
//! values for other rock types (docs/science.md 1.2 and 1.3). Every default carries a
//! `source` note saying where its numbers come from and how sure we are of them, so a
//! study can see which values it should check before relying on them.

use super::ScienceError;
use super::column::LithologyMix;
use serde::{Deserialize, Serialize};

/// Fractions of a lithology mix must sum to 1 within this (PRODUCT.md: percentages sum to 100).
pub const MIX_FRACTION_TOLERANCE: f64 = 1e-6;

/// One rock type and the parameters of its porosity–depth law
/// `phi(z) = phi0 exp(-c z)`, z below the sediment surface (Athy 1930; docs/science.md 1.1).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Lithology {
    /// Catalogue name, matched case-insensitively.
    pub name: String,
    /// Porosity at the sediment surface, phi0 (fraction, 0 <= phi0 < 1).
    pub surface_porosity: f64,
    /// Compaction coefficient c (per km), as tables quote it.
    pub compaction_per_km: f64,
    /// Density of the grains (kg m^-3).
    pub grain_density_kg_m3: f64,
    /// Where the numbers come from, and whether they were \[confirmed\] or are from \[memory\].
    #[serde(default)]
    pub source: String,
}

impl Lithology {
    /// A lithology with checked parameters: 0 <= phi0 < 1, c >= 0 (per km), grain density
    /// 1000..=4000 kg m^-3. The range for grain density spans coal to heavy minerals and
    /// catches a density typed in g/cm^3 (common practice, not a source).
    ///
    /// Errors: [`ScienceError::OutOfRange`] naming the first parameter out of range.
    pub fn new(
        name: impl Into<String>,
        surface_porosity: f64,
        compaction_per_km: f64,
        grain_density_kg_m3: f64,
    ) -> Result<Self, ScienceError> {
        let lithology = Lithology {
            name: name.into(),
            surface_porosity,
            compaction_per_km,
            grain_density_kg_m3,
            source: "defined by the study".into(),
        };
        lithology.check()?;
        Ok(lithology)
    }

    /// The same lithology with a note on where its numbers come from.
    pub fn with_source(mut self, source: impl Into<String>) -> Self {
        self.source = source.into();
        self
    }

    /// Check the parameter ranges of [`Lithology::new`] (for lithologies read from storage).
    pub fn check(&self) -> Result<(), ScienceError> {
        if !(self.surface_porosity.is_finite()
            && self.surface_porosity >= 0.0
            && self.surface_porosity < 1.0)
        {
            return Err(ScienceError::OutOfRange {
                name: "surface_porosity",
                value: self.surface_porosity,
                range: "0 to less than 1 (a fraction)",
            });
        }
        if !(self.compaction_per_km.is_finite() && self.compaction_per_km >= 0.0) {
            return Err(ScienceError::OutOfRange {
                name: "compaction_per_km",
                value: self.compaction_per_km,
                range: "0 or more per km",
            });
        }
        if !(self.grain_density_kg_m3.is_finite()
            && (1000.0..=4000.0).contains(&self.grain_density_kg_m3))
        {
            return Err(ScienceError::OutOfRange {
                name: "grain_density_kg_m3",
                value: self.grain_density_kg_m3,
                range: "1000 to 4000 kg/m³",
            });
        }
        Ok(())
    }

    /// Compaction coefficient c in m^-1 (the tables quote km^-1).
    pub fn compaction_per_m(&self) -> f64 {
        self.compaction_per_km * 1e-3
    }

    /// `true` when the thickness of a unit of this lithology changes with burial:
    /// it has pore space (phi0 > 0) that closes with depth (c > 0). Salt, anhydrite,
    /// coal and basement are non-compacting (docs/science.md 1.3).
    pub fn is_compacting(&self) -> bool {
        self.surface_porosity > 0.0 && self.compaction_per_km > 0.0
    }

    /// Porosity `phi0 exp(-c z)` at `depth_m` below the sediment surface (fraction);
    /// Athy (1930), docs/science.md 1.1.
    pub fn porosity_at(&self, depth_m: f64) -> f64 {
        self.surface_porosity * (-self.compaction_per_m() * depth_m).exp()
    }
}

/// A study's list of lithologies, looked up by name without regard to case.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Catalogue {
    lithologies: Vec<Lithology>,
}

impl Catalogue {
    /// A catalogue of checked lithologies with distinct names (case-insensitive).
    ///
    /// Errors: the first lithology out of range ([`Lithology::check`]), or
    /// [`ScienceError::CannotFit`] naming a duplicated name.
    pub fn new(lithologies: Vec<Lithology>) -> Result<Self, ScienceError> {
        for (i, l) in lithologies.iter().enumerate() {
            l.check()?;
            if lithologies[..i]
                .iter()
                .any(|o| o.name.eq_ignore_ascii_case(&l.name))
            {
                return Err(ScienceError::CannotFit(format!(
                    "lithology '{}' appears twice in the catalogue",
                    l.name
                )));
            }
        }
        Ok(Catalogue { lithologies })
    }

    /// The published defaults: the Sclater & Christie (1980) North Sea table
    /// (docs/science.md 1.2) and common-practice values for other rock types (docs/science.md 1.3).
    /// The \[memory\] values are editable defaults; check them before relying on them.
    pub fn published_defaults() -> Self {
        const SC80: &str = "Sclater & Christie (1980) North Sea table, via Wangen (2010) \
            Table 2.1; docs/science.md 1.2";
        let entry = |name: &str, phi0: f64, c: f64, rho_g: f64, source: String| Lithology {
            name: name.into(),
            surface_porosity: phi0,
            compaction_per_km: c,
            grain_density_kg_m3: rho_g,
            source,
        };
        let lithologies = vec![
            entry(
                "shale",
                0.63,
                0.51,
                2720.0,
                format!("{SC80}: phi0 and c [confirmed]; grain density [memory]"),
            ),
            entry(
                "sandstone",
                0.49,
                0.27,
                2650.0,
                format!("{SC80}: phi0 and c [confirmed]; grain density [memory]"),
            ),
            entry(
                "chalk",
                0.70,
                0.71,
                2710.0,
                format!("{SC80}: phi0 and c [confirmed]; grain density [memory]"),
            ),
            // c = 0.39 per km is the widely quoted value [memory]. Wangen (2010) prints
            // z0 = 2464 m for this row, i.e. c = 0.406 per km, probably a typo for 2564 m;
            // unresolved (docs/science.md 12 item 1). It moves the 2.3 check from 1387.5 to 1390.7 m.
            entry(
                "shaly sandstone",
                0.56,
                0.39,
                2680.0,
                format!(
                    "{SC80}: phi0 [confirmed]; c = 0.39/km [memory] (Wangen's z0 = 2464 m \
                     would give 0.406/km, unresolved); grain density [memory]"
                ),
            ),
            entry(
                "limestone",
                0.40,
                0.60,
                2710.0,
                "docs/science.md 1.3 typical picks (phi0 0.40-0.50, c 0.4-0.7/km), calcite grains \
                 [memory]; carbonates cement early, use with care"
                    .into(),
            ),
            entry(
                "dolomite",
                0.30,
                0.30,
                2870.0,
                "docs/science.md 1.3 (phi0 ~0.3, c ~0.2-0.4/km, middle taken), dolomite grains \
                 [memory]; low confidence"
                    .into(),
            ),
            entry(
                "siltstone",
                0.56,
                0.39,
                2680.0,
                "docs/science.md 1.3 convention: the shaly sandstone parameters [memory]".into(),
            ),
            entry(
                "salt",
                0.0,
                0.0,
                2160.0,
                "docs/science.md 1.3: halite, non-compacting, grain density 2160-2170 [memory]"
                    .into(),
            ),
            entry(
                "anhydrite",
                0.0,
                0.0,
                2960.0,
                "docs/science.md 1.3: non-compacting, grain density 2960 [memory]".into(),
            ),
            entry(
                "coal",
                0.0,
                0.0,
                1400.0,
                "docs/science.md 1.3: usually treated as non-compacting, density 1300-1500 \
                 (middle taken) [memory]"
                    .into(),
            ),
            entry(
                "basement",
                0.0,
                0.0,
                2800.0,
                "docs/science.md 1.3: non-compacting, density 2700-3000 [memory]; 2800 matches \
                 McKenzie's (1978) crust (docs/science.md 3.2)"
                    .into(),
            ),
        ];
        Catalogue { lithologies }
    }

    /// All lithologies, in catalogue order.
    pub fn lithologies(&self) -> &[Lithology] {
        &self.lithologies
    }

    /// The lithology called `name`, ignoring case and surrounding spaces.
    pub fn get(&self, name: &str) -> Option<&Lithology> {
        let name = name.trim();
        self.lithologies
            .iter()
            .find(|l| l.name.eq_ignore_ascii_case(name))
    }

    /// The single lithology a unit behaves as. A mix is treated as one lithology with
    /// fraction-weighted parameters, `phi0 = sum f_i phi0_i`, `c = sum f_i c_i`,
    /// `rho_g = sum f_i rho_g_i` (common practice [memory; Allen & Allen]; docs/science.md 1.4a).
    /// A mixture of exponentials is not an exponential, so this is an approximation.
    /// The result is named by the mix label (`shale:60;sandstone:40`).
    ///
    /// Errors: [`ScienceError::UnknownLithology`] for a name not in the catalogue;
    /// [`ScienceError::OutOfRange`] for a fraction outside 0..=1;
    /// [`ScienceError::MixNotWhole`] when the fractions do not sum to 1 within
    /// [`MIX_FRACTION_TOLERANCE`].
    pub fn resolve(&self, mix: &LithologyMix) -> Result<Lithology, ScienceError> {
        if let [part] = mix.parts.as_slice()
            && part.fraction == 1.0
        {
            return self
                .get(&part.lithology)
                .cloned()
                .ok_or_else(|| ScienceError::UnknownLithology(part.lithology.clone()));
        }
        let (mut phi0, mut c, mut rho_g, mut total) = (0.0, 0.0, 0.0, 0.0);
        for part in &mix.parts {
            let lithology = self
                .get(&part.lithology)
                .ok_or_else(|| ScienceError::UnknownLithology(part.lithology.clone()))?;
            if !(part.fraction.is_finite() && (0.0..=1.0).contains(&part.fraction)) {
                return Err(ScienceError::OutOfRange {
                    name: "lithology fraction",
                    value: part.fraction,
                    range: "0 to 100 percent",
                });
            }
            phi0 += part.fraction * lithology.surface_porosity;
            c += part.fraction * lithology.compaction_per_km;
            rho_g += part.fraction * lithology.grain_density_kg_m3;
            total += part.fraction;
        }
        if (total - 1.0).abs() > MIX_FRACTION_TOLERANCE {
            return Err(ScienceError::MixNotWhole(total * 100.0));
        }
        Ok(Lithology {
            name: mix.label(),
            surface_porosity: phi0,
            compaction_per_km: c,
            grain_density_kg_m3: rho_g,
            source: "fraction-weighted mix of catalogue lithologies (docs/science.md 1.4a)".into(),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::column::MixPart;
    use crate::tolerance::assert_printed;

    fn mix(parts: &[(&str, f64)]) -> LithologyMix {
        LithologyMix {
            parts: parts
                .iter()
                .map(|&(name, fraction)| MixPart {
                    lithology: name.into(),
                    fraction,
                })
                .collect(),
        }
    }

    #[test]
    fn porosity_follows_the_sclater_christie_table() {
        // docs/science.md 1.2, porosity check values computed from Sclater & Christie (1980)
        // parameters, printed to 4 decimals, at 0, 1, 2, 3 and 4 km.
        let table: [(&str, [f64; 5]); 4] = [
            ("shale", [0.6300, 0.3783, 0.2272, 0.1364, 0.0819]),
            ("sandstone", [0.4900, 0.3741, 0.2855, 0.2180, 0.1664]),
            ("chalk", [0.7000, 0.3442, 0.1692, 0.0832, 0.0409]),
            ("shaly sandstone", [0.5600, 0.3792, 0.2567, 0.1738, 0.1177]),
        ];
        let catalogue = Catalogue::published_defaults();
        for (name, row) in table {
            let l = catalogue.get(name).unwrap();
            for (km, printed) in row.into_iter().enumerate() {
                let what = format!("{name} porosity at {km} km");
                assert_printed(l.porosity_at(km as f64 * 1000.0), printed, 4, &what);
            }
        }
    }

    #[test]
    fn defaults_are_valid_and_carry_their_sources() {
        let defaults = Catalogue::published_defaults();
        let rebuilt = Catalogue::new(defaults.lithologies().to_vec()).unwrap();
        assert_eq!(rebuilt, defaults);
        for l in defaults.lithologies() {
            assert!(
                l.source.contains("[confirmed]") || l.source.contains("[memory]"),
                "{}: {}",
                l.name,
                l.source
            );
        }
        // docs/science.md 1.3: salt, anhydrite, coal and basement are non-compacting.
        for name in ["salt", "anhydrite", "coal", "basement"] {
            let l = defaults.get(name).unwrap();
            assert!(!l.is_compacting(), "{name}");
            assert_eq!(l.surface_porosity, 0.0, "{name}");
        }
        assert!(defaults.get("shale").unwrap().is_compacting());
    }

    #[test]
    fn lookup_ignores_case() {
        let catalogue = Catalogue::published_defaults();
        assert_eq!(
            catalogue.get("Shaly Sandstone").unwrap().name,
            "shaly sandstone"
        );
        assert!(catalogue.get("marl").is_none());
    }

    #[test]
    fn the_constructor_refuses_out_of_range_parameters() {
        assert!(Lithology::new("x", 1.0, 0.5, 2700.0).is_err());
        assert!(Lithology::new("x", -0.1, 0.5, 2700.0).is_err());
        assert!(Lithology::new("x", 0.5, -0.1, 2700.0).is_err());
        // A grain density typed in g/cm^3 is refused.
        let err = Lithology::new("x", 0.5, 0.5, 2.7).unwrap_err();
        assert!(err.to_string().contains("grain_density_kg_m3"), "{err}");
        let ok = Lithology::new("marl", 0.5, 0.5, 2700.0).unwrap();
        assert_eq!(ok.compaction_per_m(), 0.0005);
    }

    #[test]
    fn a_catalogue_refuses_a_name_twice() {
        let a = Lithology::new("marl", 0.5, 0.5, 2700.0).unwrap();
        let b = Lithology::new("MARL", 0.4, 0.5, 2700.0).unwrap();
        assert!(Catalogue::new(vec![a, b]).is_err());
    }

    #[test]
    fn a_mix_takes_fraction_weighted_parameters() {
        // docs/science.md 1.4 example (a): 60 % shale, 40 % sandstone gives phi0 = 0.574,
        // c = 0.414 per km, rho_g = 2692 (from the S&C parameters of 1.2).
        let catalogue = Catalogue::published_defaults();
        let l = catalogue
            .resolve(&mix(&[("shale", 0.6), ("Sandstone", 0.4)]))
            .unwrap();
        assert_printed(l.surface_porosity, 0.574, 3, "mix phi0");
        assert_printed(l.compaction_per_km, 0.414, 3, "mix c");
        assert_printed(l.grain_density_kg_m3, 2692.0, 0, "mix grain density");
        assert_eq!(l.name, "shale:60;Sandstone:40");
        assert_eq!(
            catalogue
                .resolve(&LithologyMix::single("CHALK"))
                .unwrap()
                .name,
            "chalk"
        );
    }

    #[test]
    fn a_mix_refuses_unknown_names_and_partial_fractions() {
        let catalogue = Catalogue::published_defaults();
        assert_eq!(
            catalogue.resolve(&LithologyMix::single("marl")),
            Err(ScienceError::UnknownLithology("marl".into()))
        );
        assert!(matches!(
            catalogue.resolve(&mix(&[("shale", 0.6), ("sandstone", 0.3)])),
            Err(ScienceError::MixNotWhole(p)) if (p - 90.0).abs() < 1e-9
        ));
        assert!(matches!(
            catalogue.resolve(&mix(&[("shale", 1.2), ("sandstone", -0.2)])),
            Err(ScienceError::OutOfRange { .. })
        ));
        // Within tolerance 1e-6 the fractions count as whole.
        assert!(
            catalogue
                .resolve(&mix(&[("shale", 0.6), ("sandstone", 0.4000005)]))
                .is_ok()
        );
    }
}
