//! Burial history: a well's column restored to the depositional surface of every
//! surface age and every erosion age, oldest first (docs/science.md 2.2, 9.1).
//!
//! Approach. Each unit's grain (solid) thickness is conserved (docs/science.md 2.1), and
//! compaction is irreversible (Wangen 2010 §5; docs/science.md 9.1): at any age a unit is as
//! thick as it would be at `max(current burial, deepest burial so far)`. A unit that lies
//! shallower today than at some past age (under an eroded section) had its present
//! thickness fixed at that deepest burial, so its solid thickness is taken from its
//! present thickness placed at that depth, not at its present depth. Restored that way,
//! a unit is never thinner than it is today.
//!
//! The burial of a unit at every age depends only on the units above it, so the column
//! is restored unit by unit, top down, across all ages at once: the deepest past burial
//! of a unit is known before its solid thickness is needed, and no iteration is required.
//! Without erosion a unit is never buried deeper than today (burial only grows as
//! sediment accumulates, docs/science.md 2.2), and this reduces to plain decompaction.

use super::ScienceError;
use super::column::{Erosion, WellColumn};
use super::decompaction::{decompacted_thickness_from, layer_density, solid_thickness};
use super::lithology::Catalogue;
use serde::Serialize;

/// A past burial this much deeper than today's (m) is reported to the user; smaller
/// differences are within the printed precision of depths (mm) and go unmentioned.
const OVER_COMPACTION_NOTICE_M: f64 = 1e-3;

/// One unit of a restored column, depths below the depositional surface.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct RestoredUnit {
    /// Unit `i` lies between surfaces `i` and `i + 1`; an eroded section with `unit = i`
    /// was laid down on surface `i` with unit `i`'s lithology.
    pub unit: usize,
    pub eroded_section: bool,
    pub top_m: f64,
    pub base_m: f64,
    pub mean_porosity: f64,
    pub density_kg_m3: f64,
}

/// A horizon's burial depth below the depositional surface at one age.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct HorizonDepth {
    /// Index into the well's horizons, surface order (`WellHistory::horizons`).
    pub horizon: usize,
    pub depth_m: f64,
}

/// Which age a restored column belongs to.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum StepKind {
    /// The age of surface `k`, which was then the depositional surface.
    Surface(usize),
    /// The age at which the section eroded from above surface `k` was thickest.
    ErodedSection(usize, Erosion),
}

/// A column restored to one age's depositional surface (depths below it, m).
#[derive(Debug, Clone, PartialEq)]
pub struct RestoredColumn {
    pub kind: StepKind,
    /// Decompacted sediment thickness S above the base of the column (m).
    pub sediment_thickness_m: f64,
    /// Mass of the column's grains and pore water per unit area (kg m^-2).
    pub sediment_mass_kg_m2: f64,
    /// Units present, top down.
    pub units: Vec<RestoredUnit>,
    /// Burial depths of the horizons present, top down.
    pub horizon_depths: Vec<HorizonDepth>,
}

/// A well's burial history, oldest first; the last column is the present day.
#[derive(Debug, Clone, PartialEq)]
pub struct BurialHistory {
    pub steps: Vec<RestoredColumn>,
    /// Lithology label of unit `i` (between surfaces `i` and `i + 1`).
    pub unit_lithologies: Vec<String>,
    /// Units whose thickness comes from a past burial deeper than today's.
    pub warnings: Vec<String>,
}

/// Restore `well` at every surface age and erosion age, oldest first (approach in the
/// module note). The present column is the well as given (depths below the present
/// depositional surface); each unit's lithology is resolved once, by `catalogue`.
/// The pores hold fluid of `pore_fluid_density_kg_m3` (docs/science.md 2.4).
///
/// Errors: an unresolvable lithology ([`Catalogue::resolve`]); a failed decompaction
/// solve (not expected for a valid column).
pub fn restore(
    well: &WellColumn,
    catalogue: &Catalogue,
    pore_fluid_density_kg_m3: f64,
) -> Result<BurialHistory, ScienceError> {
    let surfaces = &well.surfaces;
    let n = surfaces.len();
    let lithologies = surfaces[..n - 1]
        .iter()
        .map(|s| {
            let mix = s
                .lithology_below
                .as_ref()
                .expect("a valid column has a lithology below every surface but the deepest");
            catalogue.resolve(mix)
        })
        .collect::<Result<Vec<_>, _>>()?;
    let sea_floor_m = well.top().depth_m;
    let present_depth = |i: usize| surfaces[i].depth_m - sea_floor_m;

    // Ages oldest first; an erosion age lies between its surface's age and the next
    // shallower surface's age (WellColumn invariant).
    let mut steps = Vec::with_capacity(n + surfaces.iter().filter(|s| s.erosion.is_some()).count());
    let mut first_step_of_unit = vec![0; n];
    // `bases[s]`: base of the column restored so far at step `s`, i.e. the top of the next unit.
    let mut bases = Vec::with_capacity(steps.capacity());
    for k in (0..n).rev() {
        first_step_of_unit[k] = steps.len();
        let mut horizon_depths = Vec::with_capacity(n - k);
        horizon_depths.push(HorizonDepth {
            horizon: k,
            depth_m: 0.0,
        });
        steps.push(RestoredColumn {
            kind: StepKind::Surface(k),
            sediment_thickness_m: 0.0,
            sediment_mass_kg_m2: 0.0,
            units: Vec::with_capacity(n - 1 - k),
            horizon_depths,
        });
        bases.push(0.0);
        if let Some(erosion) = surfaces[k].erosion {
            // The eroded section is at the top of the column and at its thickest, so its
            // thickness is `eroded_m` as given, compacted at its own depth.
            let lithology = &lithologies[k];
            let thickness = erosion.eroded_m;
            let mean_porosity = 1.0 - solid_thickness(lithology, 0.0, thickness) / thickness;
            let density = layer_density(lithology, mean_porosity, pore_fluid_density_kg_m3);
            let mut units = Vec::with_capacity(n - k);
            units.push(RestoredUnit {
                unit: k,
                eroded_section: true,
                top_m: 0.0,
                base_m: thickness,
                mean_porosity,
                density_kg_m3: density,
            });
            let mut horizon_depths = Vec::with_capacity(n - k);
            horizon_depths.push(HorizonDepth {
                horizon: k,
                depth_m: thickness,
            });
            steps.push(RestoredColumn {
                kind: StepKind::ErodedSection(k, erosion),
                sediment_thickness_m: 0.0,
                sediment_mass_kg_m2: density * thickness,
                units,
                horizon_depths,
            });
            bases.push(thickness);
        }
    }
    let present = steps.len() - 1;

    let mut warnings = Vec::new();
    for (i, lithology) in lithologies.iter().enumerate() {
        let (top_now, base_now) = (present_depth(i), present_depth(i + 1));
        let thickness_now = base_now - top_now;
        let past = first_step_of_unit[i]..present;

        let (deepest_past_m, deepest_step) =
            past.clone()
                .map(|s| (bases[s], s))
                .fold(
                    (f64::NEG_INFINITY, present),
                    |a, b| if b.0 > a.0 { b } else { a },
                );
        let compaction_depth = top_now.max(deepest_past_m);
        let solid = solid_thickness(
            lithology,
            compaction_depth,
            compaction_depth + thickness_now,
        );
        if deepest_past_m > top_now + OVER_COMPACTION_NOTICE_M && thickness_now > 0.0 {
            let age = match steps[deepest_step].kind {
                StepKind::Surface(k) => surfaces[k].age_ma,
                StepKind::ErodedSection(_, e) => e.eroded_at_ma,
            };
            warnings.push(format!(
                "unit '{}' to '{}' ({}) lay {:.1} m below the depositional surface at {} Ma, \
                 deeper than its {:.1} m today: its thickness keeps the compaction of that \
                 burial (compaction is irreversible)",
                surfaces[i].horizon,
                surfaces[i + 1].horizon,
                lithology.name,
                deepest_past_m,
                age,
                top_now
            ));
        }

        let mut deepest_so_far = 0.0_f64;
        // Burial only deepens the compaction depth, so the thickness at the previous age
        // bounds the next from above: a close start for the solve.
        let mut previous_thickness = f64::INFINITY;
        for s in past {
            let top = bases[s];
            deepest_so_far = deepest_so_far.max(top);
            let thickness =
                decompacted_thickness_from(lithology, deepest_so_far, solid, previous_thickness)?;
            previous_thickness = thickness;
            let mean_porosity = if thickness > 0.0 {
                1.0 - solid / thickness
            } else {
                lithology.porosity_at(deepest_so_far)
            };
            let density = layer_density(lithology, mean_porosity, pore_fluid_density_kg_m3);
            let base = top + thickness;
            push_unit(&mut steps[s], i, top, base, mean_porosity, density);
            bases[s] = base;
        }
        // Today's column is the well as measured, not a decompaction result.
        let mean_porosity = if thickness_now > 0.0 {
            1.0 - solid / thickness_now
        } else {
            lithology.porosity_at(compaction_depth)
        };
        let density = layer_density(lithology, mean_porosity, pore_fluid_density_kg_m3);
        push_unit(
            &mut steps[present],
            i,
            top_now,
            base_now,
            mean_porosity,
            density,
        );
        bases[present] = base_now;
    }
    for (step, base) in steps.iter_mut().zip(bases) {
        step.sediment_thickness_m = base;
    }

    Ok(BurialHistory {
        steps,
        unit_lithologies: lithologies.into_iter().map(|l| l.name).collect(),
        warnings,
    })
}

/// Add unit `unit` below what is already restored in `step`, with its base horizon.
fn push_unit(
    step: &mut RestoredColumn,
    unit: usize,
    top_m: f64,
    base_m: f64,
    mean_porosity: f64,
    density_kg_m3: f64,
) {
    step.sediment_mass_kg_m2 += density_kg_m3 * (base_m - top_m);
    step.units.push(RestoredUnit {
        unit,
        eroded_section: false,
        top_m,
        base_m,
        mean_porosity,
        density_kg_m3,
    });
    step.horizon_depths.push(HorizonDepth {
        horizon: unit + 1,
        depth_m: base_m,
    });
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::column::{LithologyMix, MixPart, Surface, WaterDepth};
    use crate::tolerance::{DEPTH_SOLVE_M, assert_printed};
    use proptest::prelude::*;

    fn surface(horizon: &str, depth_m: f64, age_ma: f64, below: Option<&str>) -> Surface {
        Surface {
            horizon: horizon.into(),
            depth_m,
            age_ma,
            lithology_below: below.map(LithologyMix::single),
            water_depth: WaterDepth::exact(0.0),
            erosion: None,
        }
    }

    /// An invented well with a shale unit 0-1000 m below the ground today, which lay
    /// under 2000 m of shale that was eroded at 5 Ma.
    fn eroded_well() -> WellColumn {
        let mut unconformity = surface("Wren unconformity", 0.0, 10.0, Some("shale"));
        unconformity.erosion = Some(Erosion {
            eroded_m: 2000.0,
            eroded_at_ma: 5.0,
        });
        WellColumn::new(
            "Heron-1",
            vec![
                surface("Ground", 0.0, 0.0, Some("shale")),
                unconformity,
                surface("Base Wren shale", 1000.0, 50.0, None),
            ],
        )
        .unwrap()
    }

    #[test]
    fn a_unit_under_an_eroded_section_keeps_its_deepest_compaction() {
        let history = restore(&eroded_well(), &Catalogue::published_defaults(), 1000.0).unwrap();
        let kinds: Vec<StepKind> = history.steps.iter().map(|s| s.kind).collect();
        assert_eq!(
            kinds,
            [
                StepKind::Surface(2),
                StepKind::Surface(1),
                StepKind::ErodedSection(1, eroded_well().surfaces[1].erosion.unwrap()),
                StepKind::Surface(0),
            ]
        );
        let shale_unit = |step: usize| {
            *history.steps[step]
                .units
                .iter()
                .find(|u| u.unit == 1 && !u.eroded_section)
                .unwrap()
        };
        // At 5 Ma the unit lay at 2000-3000 m under the eroded section, so its present
        // 1000 m holds the solid of shale at 2000-3000 m: docs/science.md 2.3 (S&C 1980
        // parameters) gives a mean porosity of 0.1780 there, and 1475.197 m once restored
        // to the surface at 10 Ma, before the eroded section was laid on it.
        assert_printed(
            shale_unit(3).mean_porosity,
            0.1780,
            4,
            "present mean porosity",
        );
        let at_10_ma = shale_unit(1);
        assert_printed(
            at_10_ma.base_m - at_10_ma.top_m,
            1475.197,
            3,
            "thickness at 10 Ma",
        );
        let at_5_ma = shale_unit(2);
        assert_printed(at_5_ma.top_m, 2000.0, 9, "top under the eroded section");
        assert_printed(at_5_ma.base_m, 3000.0, 6, "base under the eroded section");
        assert_printed(
            history.steps[2].sediment_thickness_m,
            3000.0,
            6,
            "S at 5 Ma",
        );
        assert_eq!(history.steps[0].sediment_thickness_m, 0.0);
        assert_eq!(history.steps[3].sediment_thickness_m, 1000.0);
        assert_eq!(history.warnings.len(), 1, "{:?}", history.warnings);
        assert!(
            history.warnings[0].contains("irreversible"),
            "{:?}",
            history.warnings
        );
    }

    const NAMES: [&str; 6] = [
        "shale",
        "sandstone",
        "chalk",
        "salt",
        "shaly sandstone",
        "coal",
    ];

    fn any_mix() -> impl Strategy<Value = LithologyMix> {
        prop_oneof![
            (0..NAMES.len()).prop_map(|i| LithologyMix::single(NAMES[i])),
            (0..NAMES.len(), 0..NAMES.len(), 1..100u32).prop_map(|(a, b, p)| LithologyMix {
                parts: vec![
                    MixPart {
                        lithology: NAMES[a].into(),
                        fraction: f64::from(p) / 100.0
                    },
                    MixPart {
                        lithology: NAMES[b].into(),
                        fraction: f64::from(100 - p) / 100.0
                    },
                ],
            }),
        ]
    }

    /// One invented unit: thickness (0 = hiatus), age span, lithology, water depth
    /// (min, width) at its top surface, and an optional erosion on its top surface
    /// (thickness, fraction of the age span to the surface above).
    type UnitDraw = (f64, f64, LithologyMix, (f64, f64), Option<(f64, f64)>);

    fn any_unit() -> impl Strategy<Value = UnitDraw> {
        (
            prop_oneof![Just(0.0), 0.0..1500.0f64],
            0.5..30.0f64,
            any_mix(),
            (-150.0..600.0f64, 0.0..300.0f64),
            proptest::option::of((1.0..2500.0f64, 0.05..0.95f64)),
        )
    }

    /// Invented wells of 2 to 9 surfaces, with hiatuses, mixes, subaerial surfaces and
    /// erosion; shared with the backstripping tests.
    pub(crate) fn any_well() -> impl Strategy<Value = WellColumn> {
        (
            -50.0..400.0f64,
            0.0..5.0f64,
            proptest::collection::vec(any_unit(), 1..9),
        )
            .prop_map(|(top_depth, top_age, units)| {
                let mut surfaces = Vec::new();
                let (mut depth, mut age) = (top_depth, top_age);
                let mut above_age = top_age;
                let mut above_depth = top_depth;
                for (i, (thickness, span, mix, (wd_min, wd_width), erosion)) in
                    units.into_iter().enumerate()
                {
                    let mut s = surface(&format!("H{i}"), depth, age, None);
                    s.lithology_below = Some(mix);
                    s.water_depth = WaterDepth::new(wd_min, wd_min + wd_width).unwrap();
                    if i > 0
                        && let Some((eroded_m, at)) = erosion
                    {
                        s.erosion = Some(Erosion {
                            eroded_m,
                            eroded_at_ma: above_age + at * (age - above_age),
                        });
                        // An erosional unconformity is two surfaces at one depth (PRODUCT.md).
                        s.depth_m = above_depth;
                        depth = above_depth;
                    }
                    surfaces.push(s);
                    above_age = age;
                    above_depth = depth;
                    depth += thickness;
                    age += span;
                }
                surfaces.push(surface("Base", depth, age, None));
                WellColumn::new("Invented", surfaces).unwrap()
            })
    }

    proptest! {
        #[test]
        fn restored_units_are_never_thinner_than_today(well in any_well()) {
            let history = restore(&well, &Catalogue::published_defaults(), 1000.0).unwrap();
            let present = history.steps.last().unwrap();
            let today = |unit: usize| {
                let u = present.units[unit];
                u.base_m - u.top_m
            };
            for step in &history.steps {
                for u in step.units.iter().filter(|u| !u.eroded_section) {
                    // docs/science.md 9.1: compaction is irreversible, and burial only
                    // shallows a unit by erosion, so no restored unit is thinner than today.
                    prop_assert!(u.base_m - u.top_m >= today(u.unit) - 1e-6);
                }
                // Horizons go down the column in order, and the column ends at S.
                for pair in step.horizon_depths.windows(2) {
                    prop_assert!(pair[0].depth_m <= pair[1].depth_m);
                    prop_assert_eq!(pair[0].horizon + 1, pair[1].horizon);
                }
                let deepest = step.horizon_depths.last().unwrap();
                prop_assert_eq!(deepest.horizon, well.surfaces.len() - 1);
                prop_assert_eq!(deepest.depth_m, step.sediment_thickness_m);
            }
        }

        #[test]
        fn the_present_column_is_the_well_as_given(well in any_well()) {
            let history = restore(&well, &Catalogue::published_defaults(), 1000.0).unwrap();
            let present = history.steps.last().unwrap();
            prop_assert_eq!(present.kind, StepKind::Surface(0));
            let column = well.base().depth_m - well.top().depth_m;
            prop_assert!((present.sediment_thickness_m - column).abs() < 1e-9);
            for (u, pair) in present.units.iter().zip(well.surfaces.windows(2)) {
                prop_assert!((u.base_m - u.top_m - (pair[1].depth_m - pair[0].depth_m)).abs() < 1e-9);
            }
        }

        #[test]
        fn a_hiatus_leaves_the_column_unchanged(well in any_well()) {
            let history = restore(&well, &Catalogue::published_defaults(), 1000.0).unwrap();
            let step_of = |k: usize| {
                history.steps.iter().find(|s| s.kind == StepKind::Surface(k)).unwrap()
            };
            for k in 0..well.surfaces.len() - 1 {
                let (upper, lower) = (&well.surfaces[k], &well.surfaces[k + 1]);
                if upper.depth_m == lower.depth_m && lower.erosion.is_none() {
                    // docs/science.md 9.1: across a hiatus S and the compaction state are
                    // constant (to the depth-solve tolerance: today's column is measured,
                    // older ones are solved).
                    let (younger, older) = (step_of(k), step_of(k + 1));
                    let solve_slack = well.surfaces.len() as f64 * DEPTH_SOLVE_M;
                    prop_assert!(
                        (younger.sediment_thickness_m - older.sediment_thickness_m).abs() < solve_slack
                    );
                    for (a, b) in younger.units.iter().skip(1).zip(&older.units) {
                        // A thickness within the solve tolerance moves the mean porosity
                        // by far less than 1e-6.
                        prop_assert!((a.mean_porosity - b.mean_porosity).abs() < 1e-6);
                    }
                }
            }
        }
    }
}
