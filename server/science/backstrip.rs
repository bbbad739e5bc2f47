//! Airy backstripping of a well: the restored column and the tectonic (water-loaded)
//! subsidence at every surface age, oldest first (docs/science.md 3; PRODUCT.md "Computation").
//!
//! The column below each surface is restored to the depositional surface by
//! decompaction ([`super::burial`]); its sediment load is then removed by Airy isostasy
//! in the Steckler & Watts (1978) form, with the palaeo-water depth range and the
//! eustatic sea level of that age.

use super::burial::{self, StepKind};
// The restored column's pieces are burial's; they are part of a history step too.
pub use super::burial::{HorizonDepth, RestoredUnit};
use super::column::{Bounds, SeaLevelCurve, WellColumn};
use super::lithology::Catalogue;
use super::{ModelParameters, ScienceError};
use serde::Serialize;

/// How much a water column (or land elevation) loads the basement when sediment is
/// replaced by water, `rho_m / (rho_m - rho_w)` (docs/science.md 3.1): 1.42918 for the default
/// mantle of 3330 kg m^-3 and water of 1000 kg m^-3.
pub fn water_load_amplification(params: &ModelParameters) -> f64 {
    params.mantle_density_kg_m3 / (params.mantle_density_kg_m3 - params.water_density_kg_m3)
}

/// Tectonic (water-loaded) subsidence Y of the base of the column, below present sea
/// level (m), by Airy isostasy:
///
/// `Y = S (rho_m - rho_s)/(rho_m - rho_w) + Wd - dSL rho_m/(rho_m - rho_w)` for a surface
/// under water (Steckler & Watts 1978, docs/science.md 3.1; identical to the expanded
/// Sclater & Christie 1980 form), and for a surface standing at elevation `E = -Wd` above
/// sea level `Y = S (rho_m - rho_s)/(rho_m - rho_w) - (E + dSL) rho_m/(rho_m - rho_w)`
/// (derived by the same Airy balance with air of density 0; docs/science.md 3.1 gives it for
/// dSL = 0, and both forms meet at Wd = 0).
///
/// Inputs: decompacted sediment thickness S (m) and its bulk density rho_s (kg m^-3; not
/// used when S = 0), palaeo-water depth Wd (m, negative for land elevation), eustatic sea
/// level dSL above present (m). Densities rho_m and rho_w come from `params`.
/// Assumes local (Airy) compensation and a water-filled reference column with its surface
/// at present sea level. A negative result means the unloaded basement would stand above
/// present sea level, where the water load it assumes would be absent (docs/science.md 3.1 edge case).
pub fn airy_tectonic_subsidence(
    sediment_thickness_m: f64,
    sediment_density_kg_m3: f64,
    water_depth_m: f64,
    sea_level_m: f64,
    params: &ModelParameters,
) -> f64 {
    let rho_m = params.mantle_density_kg_m3;
    let rho_w = params.water_density_kg_m3;
    let amplification = water_load_amplification(params);
    let sediment_term = if sediment_thickness_m > 0.0 {
        sediment_thickness_m * (rho_m - sediment_density_kg_m3) / (rho_m - rho_w)
    } else {
        0.0
    };
    let surface_term = if water_depth_m >= 0.0 {
        water_depth_m
    } else {
        water_depth_m * amplification
    };
    sediment_term + surface_term - sea_level_m * amplification
}

/// The restored history of one well: one step per surface age and per erosion age,
/// oldest first. Names are held once per well; steps and units refer to them by index,
/// so a well of N surfaces allocates O(N) strings, not O(N^2).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WellHistory {
    pub well: String,
    /// Horizon names in well order (shallowest first); `horizons[i]` is surface `i`.
    pub horizons: Vec<String>,
    /// Lithology label of unit `i`, the unit between surfaces `i` and `i + 1`.
    pub unit_lithologies: Vec<String>,
    /// Oldest first; the last step is the present-day column.
    pub steps: Vec<HistoryStep>,
    /// Things a user should know about how this well was treated.
    pub warnings: Vec<String>,
}

/// The well at one age: its column restored to that age's depositional surface, and
/// the subsidence of the base of the column.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct HistoryStep {
    pub age_ma: f64,
    /// The surface that was the depositional surface at this age, or
    /// `"<horizon> (eroded section)"` at the age an eroded section was thickest.
    pub depositional_horizon: String,
    /// Thickness of the eroded section at the top of the column at this age, if any.
    pub eroded_section_m: Option<f64>,
    /// Decompacted sediment thickness S (m) above the base of the column.
    pub sediment_thickness_m: f64,
    /// Bulk density of the sediment column (kg m^-3); `None` when S = 0.
    pub sediment_density_kg_m3: Option<f64>,
    /// Palaeo-water depth range (m; negative = land elevation). 0 at an erosion age.
    pub water_depth: Bounds,
    /// Eustatic sea level above present (m).
    pub sea_level_m: f64,
    /// Tectonic (water-loaded) subsidence of the base of the column (m), from the water
    /// depth range: min, best (middle of the range), max.
    pub tectonic_subsidence: Bounds,
    /// Depth of the base of the column below present sea level under its sediment and
    /// water, `S + Wd - dSL` with the best water depth (m).
    pub total_subsidence_m: f64,
    /// The units present, top down (the eroded section first when there is one).
    pub units: Vec<RestoredUnit>,
    /// Burial depth below the depositional surface of every horizon present (m), top down.
    pub horizon_depths: Vec<HorizonDepth>,
}

impl HistoryStep {
    /// Burial depth (m) below the depositional surface of horizon `horizon` (an index
    /// into [`WellHistory::horizons`]), if it existed at this age.
    pub fn horizon_depth_m(&self, horizon: usize) -> Option<f64> {
        self.horizon_depths
            .iter()
            .find(|h| h.horizon == horizon)
            .map(|h| h.depth_m)
    }
}

impl WellHistory {
    /// Name of horizon `index` (surface `index` of the well).
    pub fn horizon(&self, index: usize) -> &str {
        &self.horizons[index]
    }

    /// The lithology label of a restored unit.
    pub fn lithology(&self, unit: &RestoredUnit) -> &str {
        &self.unit_lithologies[unit.unit]
    }

    /// The horizon at the top of a restored unit; `None` for an eroded section, whose
    /// top is the depositional surface of its age and is no horizon of the well.
    pub fn top_horizon(&self, unit: &RestoredUnit) -> Option<&str> {
        (!unit.eroded_section).then(|| self.horizon(unit.unit))
    }

    /// The horizon at the base of a restored unit.
    pub fn base_horizon(&self, unit: &RestoredUnit) -> &str {
        self.horizon(if unit.eroded_section {
            unit.unit
        } else {
            unit.unit + 1
        })
    }
}

/// Backstrip one well (docs/science.md 2, 3, 9.1; PRODUCT.md "Computation" 1-2).
///
/// For every surface age, and every `eroded_at_ma`, oldest first: restore the column
/// below that age's depositional surface by decompaction (solid thickness conserved,
/// compaction irreversible, see [`super::burial`]), then remove the sediment load by Airy
/// isostasy ([`airy_tectonic_subsidence`]) for the minimum, best (middle) and maximum
/// palaeo-water depth, with the eustatic sea level of that age from `sea_level`.
/// The pore fluid is water of `params.water_density_kg_m3`.
///
/// Well depths are below present sea level; the shallowest surface is the present
/// depositional surface and the deepest is the base of the analysed column. A hiatus
/// (two surfaces at one depth) leaves S and compaction unchanged, so Y changes only by
/// water depth and sea level. At an erosion age the eroded section lies on its surface,
/// `eroded_m` thick, with water depth 0 (PRODUCT.md "Input formats").
///
/// Errors: invalid `params` (the first problem of [`ModelParameters::validate`]); a unit
/// lithology the catalogue cannot resolve ([`Catalogue::resolve`]); a failed decompaction
/// solve (not expected for valid inputs).
pub fn backstrip(
    well: &WellColumn,
    catalogue: &Catalogue,
    params: &ModelParameters,
    sea_level: &SeaLevelCurve,
) -> Result<WellHistory, ScienceError> {
    if let Err(mut problems) = params.validate() {
        return Err(problems.swap_remove(0));
    }
    let burial = burial::restore(well, catalogue, params.water_density_kg_m3)?;
    let mut warnings = burial.warnings;
    let surfaces = &well.surfaces;

    let top = well.top();
    if !(top.water_depth.min_m - 0.5..=top.water_depth.max_m + 0.5).contains(&top.depth_m) {
        warnings.push(format!(
            "the present depositional surface '{}' lies {} m below sea level, but its water \
             depth is given as {} to {} m; the given water depth is used",
            top.horizon, top.depth_m, top.water_depth.min_m, top.water_depth.max_m
        ));
    }
    for s in surfaces.iter().filter(|s| s.water_depth.min_m < 0.0) {
        warnings.push(format!(
            "surface '{}' ({} Ma) stood up to {} m above sea level: treated as subaerial, \
             its elevation loading the basement like sediment above sea level",
            s.horizon, s.age_ma, -s.water_depth.min_m
        ));
    }

    let mut negative_ages = Vec::new();
    let steps: Vec<HistoryStep> = burial
        .steps
        .into_iter()
        .map(|restored| {
            let (age_ma, depositional_horizon, eroded_section_m, water_depth) = match restored.kind
            {
                StepKind::Surface(k) => (
                    surfaces[k].age_ma,
                    surfaces[k].horizon.clone(),
                    None,
                    surfaces[k].water_depth.bounds(),
                ),
                StepKind::ErodedSection(k, erosion) => (
                    erosion.eroded_at_ma,
                    format!("{} (eroded section)", surfaces[k].horizon),
                    Some(erosion.eroded_m),
                    Bounds::exact(0.0),
                ),
            };
            let s = restored.sediment_thickness_m;
            let rho_s = (s > 0.0).then(|| restored.sediment_mass_kg_m2 / s);
            let sea_level_m = sea_level.at(age_ma);
            let y = |wd: f64| {
                airy_tectonic_subsidence(s, rho_s.unwrap_or(0.0), wd, sea_level_m, params)
            };
            let tectonic_subsidence = Bounds {
                min: y(water_depth.min),
                best: y(water_depth.best),
                max: y(water_depth.max),
            };
            if tectonic_subsidence.best < 0.0 {
                negative_ages.push(age_ma);
            }
            HistoryStep {
                age_ma,
                depositional_horizon,
                eroded_section_m,
                sediment_thickness_m: s,
                sediment_density_kg_m3: rho_s,
                water_depth,
                sea_level_m,
                tectonic_subsidence,
                total_subsidence_m: s + water_depth.best - sea_level_m,
                units: restored.units,
                horizon_depths: restored.horizon_depths,
            }
        })
        .collect();
    if !negative_ages.is_empty() {
        let ages: Vec<String> = negative_ages.iter().map(|a| format!("{a} Ma")).collect();
        warnings.push(format!(
            "tectonic subsidence is negative at {}: the basement unloaded of sediment would \
             stand above present sea level, where the water load the formula assumes is absent; \
             the water-loaded value is reported",
            ages.join(", ")
        ));
    }

    Ok(WellHistory {
        well: well.name.clone(),
        horizons: surfaces.iter().map(|s| s.horizon.clone()).collect(),
        unit_lithologies: burial.unit_lithologies,
        steps,
        warnings,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::burial::tests::any_well;
    use crate::column::{Erosion, LithologyMix, SeaLevelPoint, Surface, WaterDepth};
    use crate::decompaction::solid_thickness;
    use crate::tolerance::{assert_printed, assert_relative};
    use proptest::prelude::*;

    fn surface(horizon: &str, depth_m: f64, age_ma: f64, below: Option<&str>, wd: f64) -> Surface {
        Surface {
            horizon: horizon.into(),
            depth_m,
            age_ma,
            lithology_below: below.map(LithologyMix::single),
            water_depth: WaterDepth::exact(wd),
            erosion: None,
        }
    }

    /// The synthetic well of docs/science.md 3.3 (invented names), its sea floor 200 m below
    /// sea level: shale 0-800 m (20-0 Ma), sandstone 800-1800 m (60-20 Ma), shale
    /// 1800-3000 m (100-60 Ma) below the sea floor; water depths 200, 100, 50, 0 m.
    fn synthetic_well() -> WellColumn {
        WellColumn::new(
            "Kestrel-1",
            vec![
                surface("Sea floor", 200.0, 0.0, Some("shale"), 200.0),
                surface(
                    "Top Finch sandstone",
                    1000.0,
                    20.0,
                    Some("sandstone"),
                    100.0,
                ),
                surface("Top Lark shale", 2000.0, 60.0, Some("shale"), 50.0),
                surface("Base Lark shale", 3200.0, 100.0, None, 0.0),
            ],
        )
        .unwrap()
    }

    fn synthetic_sea_level() -> SeaLevelCurve {
        // docs/science.md 3.3: dSL(0) = 0, dSL(20) = +20, dSL(60) = +50, dSL(100) = 0 m.
        let point = |age_ma, sea_level_m| SeaLevelPoint {
            age_ma,
            sea_level_m,
        };
        SeaLevelCurve::new(vec![
            point(0.0, 0.0),
            point(20.0, 20.0),
            point(60.0, 50.0),
            point(100.0, 0.0),
        ])
        .unwrap()
    }

    fn run(well: &WellColumn, sea_level: &SeaLevelCurve) -> WellHistory {
        backstrip(
            well,
            &Catalogue::published_defaults(),
            &ModelParameters::default(),
            sea_level,
        )
        .unwrap()
    }

    #[test]
    fn water_load_amplification_for_two_mantle_densities() {
        // docs/science.md 3.1: rho_m/(rho_m - rho_w) = 1.42918 for 3330 and 1.43478 for 3300.
        let mut params = ModelParameters::default();
        assert_printed(water_load_amplification(&params), 1.42918, 5, "rho_m 3330");
        params.mantle_density_kg_m3 = 3300.0;
        assert_printed(water_load_amplification(&params), 1.43478, 5, "rho_m 3300");
    }

    #[test]
    fn a_subaerial_surface_loads_with_the_amplified_elevation() {
        // docs/science.md 3.1 [derived]: S = 1000, rho_s = 2300, E = 100 gives Y = 299.142 m;
        // putting Wd = -E into the marine form would give the wrong 342.060 m.
        let params = ModelParameters::default();
        let y = airy_tectonic_subsidence(1000.0, 2300.0, -100.0, 0.0, &params);
        assert_printed(y, 299.142, 3, "subaerial Y");
        let marine_at_zero = airy_tectonic_subsidence(1000.0, 2300.0, 0.0, 0.0, &params);
        assert_printed(marine_at_zero - 100.0, 342.060, 3, "the pitfall value");
    }

    #[test]
    fn the_steckler_watts_and_sclater_christie_forms_agree() {
        // docs/science.md 3.1: the expanded SC80 form
        // Y = S(rho_m - rho_s)/(rho_m - rho_w) - dSL rho_w/(rho_m - rho_w) + (Wd - dSL)
        // is algebraically the SW78 form.
        let params = ModelParameters::default();
        let (rho_m, rho_w) = (params.mantle_density_kg_m3, params.water_density_kg_m3);
        for (s, rho_s, wd, dsl) in [
            (3000.0, 2139.64, 200.0, 0.0),
            (2444.554, 2126.89, 100.0, 20.0),
            (10.0, 1900.0, 0.0, -35.0),
        ] {
            let expanded =
                s * (rho_m - rho_s) / (rho_m - rho_w) - dsl * rho_w / (rho_m - rho_w) + (wd - dsl);
            assert_relative(
                airy_tectonic_subsidence(s, rho_s, wd, dsl, &params),
                expanded,
                1e-12,
                "SW78 vs SC80",
            );
        }
    }

    #[test]
    fn the_synthetic_well_matches_the_published_backstrip() {
        // docs/science.md 3.3 (computed with S&C 1980 parameters, rho_m 3330, rho_w 1000):
        // (age, S, rho_s, Y with sea level, Y with dSL = 0).
        let expected = [
            (100.0, 0.0, None, 0.0, 0.0),
            (60.0, 1686.958, Some(1993.293), 946.339, 1017.798),
            (20.0, 2444.554, Some(2126.890), 1333.677, 1362.261),
            (0.0, 3000.000, Some(2139.640), 1732.652, 1732.652),
        ];
        let with_sea_level = run(&synthetic_well(), &synthetic_sea_level());
        let without = run(&synthetic_well(), &SeaLevelCurve::default());
        assert_eq!(with_sea_level.steps.len(), 4);
        for (i, (age, s, rho_s, y, y_flat)) in expected.into_iter().enumerate() {
            let step = &with_sea_level.steps[i];
            let what = |q: &str| format!("{q} at {age} Ma");
            assert_eq!(step.age_ma, age);
            assert_printed(step.sediment_thickness_m, s, 3, &what("S"));
            match (step.sediment_density_kg_m3, rho_s) {
                (Some(got), Some(published)) => assert_printed(got, published, 3, &what("rho_s")),
                (got, published) => assert_eq!(got, published, "{}", what("rho_s")),
            }
            assert_printed(step.tectonic_subsidence.best, y, 3, &what("Y"));
            assert_printed(
                without.steps[i].tectonic_subsidence.best,
                y_flat,
                3,
                &what("Y, dSL = 0"),
            );
        }
        // docs/science.md 3.3: at 20 Ma the layers lie at (0, 1131.89) and (1131.89, 2444.55).
        let at_20 = &with_sea_level.steps[2];
        assert_printed(
            at_20.units[1].top_m,
            1131.89,
            2,
            "top of the sandstone at 20 Ma",
        );
        assert_printed(
            at_20.horizon_depth_m(2).unwrap(),
            1131.89,
            2,
            "Top Lark shale at 20 Ma",
        );
        assert_eq!(with_sea_level.horizon(2), "Top Lark shale");
        assert_eq!(
            with_sea_level.base_horizon(&at_20.units[1]),
            "Base Lark shale"
        );
        assert_eq!(with_sea_level.lithology(&at_20.units[1]), "shale");
        // docs/science.md 3.3 solid thicknesses: L1 386.1504, L2 653.9992, L3 974.2114 m.
        let present = with_sea_level.steps.last().unwrap();
        for (unit, solid) in present.units.iter().zip([386.1504, 653.9992, 974.2114]) {
            let thickness = unit.base_m - unit.top_m;
            assert_printed(
                thickness * (1.0 - unit.mean_porosity),
                solid,
                4,
                "solid thickness",
            );
        }
        // Total subsidence today is the base of the column below sea level.
        assert_printed(
            present.total_subsidence_m,
            3200.0,
            9,
            "total subsidence today",
        );
        assert!(
            with_sea_level.warnings.is_empty(),
            "{:?}",
            with_sea_level.warnings
        );
    }

    #[test]
    fn an_erosion_age_gets_its_own_step_at_sea_level() {
        let mut well = synthetic_well();
        // An erosional unconformity is two surfaces at one depth (PRODUCT.md): the
        // sandstone unit above is absent here.
        well.surfaces[1].depth_m = well.surfaces[2].depth_m;
        well.surfaces[2].erosion = Some(Erosion {
            eroded_m: 500.0,
            eroded_at_ma: 30.0,
        });
        let well = WellColumn::new(well.name, well.surfaces).unwrap();
        let history = run(&well, &synthetic_sea_level());
        let ages: Vec<f64> = history.steps.iter().map(|s| s.age_ma).collect();
        assert_eq!(ages, [100.0, 60.0, 30.0, 20.0, 0.0]);
        let eroded = &history.steps[2];
        assert_eq!(
            eroded.depositional_horizon,
            "Top Lark shale (eroded section)"
        );
        assert_eq!(eroded.eroded_section_m, Some(500.0));
        // PRODUCT.md: water depth at eroded_at_ma is taken as 0.
        assert_eq!(eroded.water_depth, Bounds::exact(0.0));
        let section = eroded.units[0];
        assert!(section.eroded_section);
        assert_eq!(history.top_horizon(&section), None);
        assert_eq!(history.base_horizon(&section), "Top Lark shale");
        assert_eq!(history.lithology(&section), "shale");
        assert_eq!((section.top_m, section.base_m), (0.0, 500.0));
        assert_eq!(eroded.horizon_depth_m(2), Some(500.0));
        // Under 500 m of eroded section the Lark shale is still shallower than today, so
        // it keeps its solid thickness, 974.2114 m (docs/science.md 3.3 L3), and nothing is
        // over-compacted.
        let lark = eroded.units[1];
        assert_eq!(lark.top_m, 500.0);
        let shale = Catalogue::published_defaults()
            .get("shale")
            .unwrap()
            .clone();
        assert_printed(
            solid_thickness(&shale, lark.top_m, lark.base_m),
            974.2114,
            4,
            "Lark solid",
        );
        assert_eq!(eroded.sediment_thickness_m, lark.base_m);
        assert!(history.warnings.is_empty(), "{:?}", history.warnings);
    }

    #[test]
    fn a_hiatus_changes_y_only_by_water_depth_and_sea_level() {
        // docs/science.md 9.1: across a hiatus dY = dWd - d(dSL) rho_m/(rho_m - rho_w).
        let well = WellColumn::new(
            "Plover-2",
            vec![
                surface("Sea floor", 150.0, 0.0, Some("shale"), 150.0),
                surface("Top Snipe chalk", 900.0, 30.0, Some("chalk"), 80.0),
                surface("Snipe hiatus", 900.0, 45.0, Some("chalk"), 250.0),
                surface("Base Snipe chalk", 2100.0, 70.0, None, 300.0),
            ],
        )
        .unwrap();
        let history = run(&well, &synthetic_sea_level());
        let (older, younger) = (&history.steps[1], &history.steps[2]);
        assert_eq!((older.age_ma, younger.age_ma), (45.0, 30.0));
        assert_relative(
            younger.sediment_thickness_m,
            older.sediment_thickness_m,
            1e-12,
            "S across the hiatus",
        );
        let k = water_load_amplification(&ModelParameters::default());
        let expected = (80.0 - 250.0) - (younger.sea_level_m - older.sea_level_m) * k;
        let dy = younger.tectonic_subsidence.best - older.tectonic_subsidence.best;
        assert!((dy - expected).abs() < 1e-6, "dY {dy}, expected {expected}");
    }

    #[test]
    fn users_are_told_about_subaerial_surfaces_and_an_unknown_lithology_is_refused() {
        let mut well = synthetic_well();
        well.surfaces[2].water_depth = WaterDepth::new(-40.0, 10.0).unwrap();
        let history = run(&well, &SeaLevelCurve::default());
        assert!(
            history
                .warnings
                .iter()
                .any(|w| w.contains("subaerial") && w.contains("Top Lark shale")),
            "{:?}",
            history.warnings
        );
        well.surfaces[1].lithology_below = Some(LithologyMix::single("marl"));
        let err = backstrip(
            &well,
            &Catalogue::published_defaults(),
            &ModelParameters::default(),
            &SeaLevelCurve::default(),
        )
        .unwrap_err();
        assert_eq!(err, ScienceError::UnknownLithology("marl".into()));
        let params = ModelParameters {
            water_density_kg_m3: 1.0,
            ..Default::default()
        };
        assert!(
            backstrip(
                &well,
                &Catalogue::published_defaults(),
                &params,
                &SeaLevelCurve::default()
            )
            .is_err()
        );
    }

    proptest! {
        #[test]
        fn subsidence_bounds_are_ordered_and_the_present_is_the_column(well in any_well()) {
            let history = run(&well, &synthetic_sea_level());
            let erosions = well.surfaces.iter().filter(|s| s.erosion.is_some()).count();
            prop_assert_eq!(history.steps.len(), well.surfaces.len() + erosions);
            for pair in history.steps.windows(2) {
                prop_assert!(pair[0].age_ma > pair[1].age_ma);
            }
            let grains = Catalogue::published_defaults();
            let densest = grains.lithologies().iter().map(|l| l.grain_density_kg_m3).fold(0.0, f64::max);
            for step in &history.steps {
                let y = step.tectonic_subsidence;
                prop_assert!(y.min <= y.best && y.best <= y.max);
                if let Some(rho) = step.sediment_density_kg_m3 {
                    prop_assert!(rho >= 1000.0 - 1e-9 && rho <= densest + 1e-9);
                }
            }
            let present = history.steps.last().unwrap();
            prop_assert!((present.sediment_thickness_m - (well.base().depth_m - well.top().depth_m)).abs() < 1e-9);
            // Solid thickness is conserved through restoration wherever no unit was
            // buried deeper than today (docs/science.md 2.1).
            if erosions == 0 {
                for step in &history.steps {
                    for u in &step.units {
                        let today = present.units[u.unit];
                        let lith = grains.resolve(well.surfaces[u.unit].lithology_below.as_ref().unwrap()).unwrap();
                        let solid_now = solid_thickness(&lith, today.top_m, today.base_m);
                        prop_assert!((solid_thickness(&lith, u.top_m, u.base_m) - solid_now).abs() < 1e-6);
                    }
                }
            }
        }
    }
}
