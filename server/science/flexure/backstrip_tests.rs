use super::*;
use crate::backstrip::backstrip;
use crate::column::{LithologyMix, SeaLevelCurve, SeaLevelPoint, Surface, WaterDepth, WellColumn};
use crate::lithology::Catalogue;
use crate::tolerance::{assert_printed, assert_relative};

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

/// The synthetic well of docs/science.md 3.3 (invented names): shale 0-800 m, sandstone
/// 800-1800 m, shale 1800-3000 m below a sea floor 200 m deep; ages 0, 20, 60, 100 Ma.
fn kestrel(name: &str) -> WellColumn {
    WellColumn::new(
        name,
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

/// A well with no sediment at any age (a hiatus from 100 Ma to today) in 200 m of water:
/// no load, so its Airy tectonic subsidence is its water depth.
fn bare(name: &str) -> WellColumn {
    WellColumn::new(
        name,
        vec![
            surface("Sea floor", 200.0, 0.0, Some("shale"), 200.0),
            surface("Base", 200.0, 100.0, None, 200.0),
        ],
    )
    .unwrap()
}

/// docs/science.md 3.3: dSL(0) = 0, dSL(20) = +20, dSL(60) = +50, dSL(100) = 0 m.
fn sea_level() -> SeaLevelCurve {
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

fn histories(wells: &[(f64, WellColumn)]) -> Vec<(f64, WellHistory)> {
    wells
        .iter()
        .map(|(x, w)| {
            let h = backstrip(
                w,
                &Catalogue::published_defaults(),
                &ModelParameters::default(),
                &sea_level(),
            )
            .unwrap();
            (*x, h)
        })
        .collect()
}

fn placed(h: &[(f64, WellHistory)]) -> Vec<PlacedHistory<'_>> {
    h.iter()
        .map(|(x, history)| PlacedHistory {
            distance_m: *x,
            history,
        })
        .collect()
}

fn settings(te_m: f64, extension: LoadExtension) -> FlexuralSettings {
    FlexuralSettings {
        plate: ElasticPlate::default().with_thickness(te_m),
        extension,
        ..Default::default()
    }
}

fn well_at<'a>(run: &'a FlexuralBackstrip, age: f64, well: &str) -> &'a WellFlexure {
    let at = run.ages.iter().find(|a| a.age_ma == age).unwrap();
    at.wells.iter().find(|w| w.well == well).unwrap()
}

/// The local deflection of the continuous line-load Green's function per unit load
/// volume (1/m): Turcotte & Schubert eq. 3-129 divided by its integral, so that
/// `w(x) = integral L(xi) G(x - xi) dxi` for a load of local deflection L.
fn green(u: f64, alpha: f64) -> f64 {
    let s = u.abs() / alpha;
    (-s).exp() * (s.cos() + s.sin()) / (2.0 * alpha)
}

#[test]
fn te_zero_gives_the_airy_backstrip_to_the_last_bit_and_the_published_values() {
    // docs/science.md 3.3 (SC80 parameters, rho_m 3330): Y = 1732.652, 1333.677, 946.339,
    // 0 m at 0, 20, 60, 100 Ma. A section of such wells, one of them bare.
    let h = histories(&[
        (0.0, kestrel("Kestrel-1")),
        (15e3, bare("Bare-2")),
        (40e3, kestrel("Kestrel-3")),
    ]);
    let run = flexural_backstrip(
        &placed(&h),
        &ModelParameters::default(),
        &settings(0.0, LoadExtension::Hold),
    )
    .unwrap();
    assert_eq!(run.flexural_parameter_m, 0.0);
    for (age, y) in [
        (0.0, 1732.652),
        (20.0, 1333.677),
        (60.0, 946.339),
        (100.0, 0.0),
    ] {
        for name in ["Kestrel-1", "Bare-2", "Kestrel-3"] {
            let w = well_at(&run, age, name);
            assert_eq!(
                w.flexural_tectonic_subsidence, w.airy_tectonic_subsidence,
                "{name} {age}"
            );
        }
        let w = well_at(&run, age, "Kestrel-3");
        assert_printed(
            w.flexural_tectonic_subsidence.best,
            y,
            3,
            &format!("Y at {age} Ma"),
        );
        // The Airy values are those the crate's own per-well backstrip gives.
        let step = h[2].1.steps.iter().find(|s| s.age_ma == age).unwrap();
        assert_eq!(w.airy_tectonic_subsidence, step.tectonic_subsidence);
    }
}

#[test]
fn a_load_uniform_along_the_section_is_compensated_locally_by_any_plate() {
    // A load wide compared with alpha (here: the same well everywhere, the load held
    // beyond the ends) is carried locally (Phi(0) = 1; Turcotte & Schubert 3-17).
    let h = histories(&[
        (0.0, kestrel("K-1")),
        (30e3, kestrel("K-2")),
        (70e3, kestrel("K-3")),
    ]);
    for te_km in [5.0, 25.0, 60.0] {
        let run = flexural_backstrip(
            &placed(&h),
            &ModelParameters::default(),
            &settings(te_km * 1e3, LoadExtension::Hold),
        )
        .unwrap();
        for age in &run.ages {
            for w in &age.wells {
                let (a, f) = (
                    w.airy_tectonic_subsidence.best,
                    w.flexural_tectonic_subsidence.best,
                );
                assert!(
                    (a - f).abs() < 1e-3,
                    "Te {te_km} km, {} at {} Ma: {a} vs {f}",
                    w.well,
                    age.age_ma
                );
            }
        }
    }
}

#[test]
fn a_load_stopping_at_the_end_well_halves_its_deflection_there() {
    // The edge of a half-infinite uniform load deflects half its local value (the strip
    // solution of TS problem 3-24 as its width grows); a taper carries it in between.
    let h = histories(&[(0.0, kestrel("K-1")), (400e3, kestrel("K-2"))]);
    let params = ModelParameters::default();
    let stop = flexural_backstrip(
        &placed(&h),
        &params,
        &settings(25e3, LoadExtension::Taper { distance_m: 0.0 }),
    )
    .unwrap();
    let w = well_at(&stop, 0.0, "K-1");
    assert_relative(
        w.flexural_load_deflection_m,
        0.5 * w.local_load_deflection_m,
        5e-3,
        "edge of the load",
    );
    let taper = flexural_backstrip(
        &placed(&h),
        &params,
        &settings(25e3, LoadExtension::Taper { distance_m: 50e3 }),
    )
    .unwrap();
    let t = well_at(&taper, 0.0, "K-1");
    assert!(t.flexural_load_deflection_m > w.flexural_load_deflection_m);
    assert!(t.flexural_load_deflection_m < t.local_load_deflection_m);
    // Airy understates the tectonic subsidence where the plate holds the load up.
    assert!(t.flexural_tectonic_subsidence.best > t.airy_tectonic_subsidence.best);
}

#[test]
fn a_narrow_basin_matches_the_superposed_line_load_solution() {
    // A basin 40 km wide (wells 2 km apart) between bare flanks, Te 25 km: the deflection
    // under the sediment load from the closed-form Green's function (TS eq. 3-129)
    // integrated over the interpolated load, a different method from the spectral solver.
    let mut wells = Vec::new();
    for i in -10..=10 {
        wells.push((i as f64 * 2e3, kestrel(&format!("Basin-{i}"))));
    }
    for i in 0..5 {
        let x = 22e3 + i as f64 * 10e3;
        wells.push((x, bare(&format!("East-{i}"))));
        wells.push((-x, bare(&format!("West-{i}"))));
    }
    let h = histories(&wells);
    let params = ModelParameters::default();
    let run =
        flexural_backstrip(&placed(&h), &params, &settings(25e3, LoadExtension::Hold)).unwrap();
    let alpha = run.flexural_parameter_m;
    let today = run.ages.last().unwrap();
    let local = well_at(&run, 0.0, "Basin-0").local_load_deflection_m;
    // The load: `local` on |x| <= 20 km, falling linearly to 0 at 22 km, 0 beyond.
    let load = |x: f64| local * ((22e3 - x.abs()) / 2e3).clamp(0.0, 1.0);
    let superposed = |x: f64| {
        let step = 10.0;
        (-6000..6000)
            .map(|i| {
                let xi = (i as f64 + 0.5) * step;
                load(xi) * green(x - xi, alpha) * step
            })
            .sum::<f64>()
    };
    for name in ["Basin-0", "Basin-7", "East-0", "West-2"] {
        let w = today.wells.iter().find(|w| w.well == name).unwrap();
        let exact = superposed(w.distance_m);
        assert!(
            (w.flexural_load_deflection_m - exact).abs() < 1e-3 * local,
            "{name}: {} vs {exact}",
            w.flexural_load_deflection_m
        );
    }
    // Airy understates the centre's tectonic subsidence and overstates the flanks'.
    let centre = well_at(&run, 0.0, "Basin-0");
    assert!(
        centre.flexural_tectonic_subsidence.best > centre.airy_tectonic_subsidence.best + 100.0
    );
    let flank = well_at(&run, 0.0, "East-0");
    assert!(flank.flexural_tectonic_subsidence.best < flank.airy_tectonic_subsidence.best - 100.0);
    // The profile agrees with the wells.
    let i = today
        .profile
        .distance_m
        .iter()
        .position(|&x| (x - 0.0).abs() < 1.0);
    if let Some(i) = i {
        assert_relative(
            today.profile.flexural_deflection_m[i],
            centre.flexural_load_deflection_m,
            1e-3,
            "profile",
        );
    }
    assert_eq!(today.profile.tectonic_subsidence_m.first(), Some(&None));

    // The sweep: Te = 0 is Airy; a stiffer plate lifts the centre's correction further.
    let sweep = te_sweep(
        &placed(&h),
        &params,
        &settings(0.0, LoadExtension::Hold),
        &[0.0, 10e3, 25e3, 50e3],
    )
    .unwrap();
    let centre_y: Vec<f64> = sweep
        .iter()
        .map(|r| well_at(r, 0.0, "Basin-0").flexural_tectonic_subsidence.best)
        .collect();
    assert_eq!(centre_y[0], centre.airy_tectonic_subsidence.best);
    assert!(centre_y.windows(2).all(|w| w[1] > w[0]), "{centre_y:?}");
    assert_eq!(sweep[2], run);
}

#[test]
fn a_broken_plate_keeps_a_load_on_its_own_side() {
    // Loaded wells west of a break, bare wells east: the east piece carries no load, so
    // its wells keep their Airy subsidence; on a continuous plate they are pulled down.
    let mut wells = Vec::new();
    for i in 0..5 {
        wells.push((i as f64 * 10e3, kestrel(&format!("West-{i}"))));
        wells.push((50e3 + i as f64 * 10e3, bare(&format!("East-{i}"))));
    }
    let h = histories(&wells);
    let params = ModelParameters::default();
    let mut broken = settings(20e3, LoadExtension::Hold);
    // The break at East-0: the load falling from West-4 to East-0 lies on the west piece.
    broken.geometry = PlateGeometry::Broken { break_m: 50e3 };
    let run = flexural_backstrip(&placed(&h), &params, &broken).unwrap();
    for name in ["East-0", "East-1"] {
        let east = well_at(&run, 0.0, name);
        assert!(east.flexural_load_deflection_m.abs() < 1e-6, "{name}");
        assert!(
            (east.flexural_tectonic_subsidence.best - east.airy_tectonic_subsidence.best).abs()
                < 1e-6
        );
    }
    let continuous =
        flexural_backstrip(&placed(&h), &params, &settings(20e3, LoadExtension::Hold)).unwrap();
    let east = well_at(&continuous, 0.0, "East-0");
    assert!(east.flexural_load_deflection_m > 100.0);
    // The loaded free end sags more than the same place on an unbroken plate.
    let (b, c) = (
        well_at(&run, 0.0, "West-4"),
        well_at(&continuous, 0.0, "West-4"),
    );
    assert!(b.flexural_load_deflection_m > c.flexural_load_deflection_m);
}

#[test]
fn wells_of_different_ages_are_interpolated_in_age_and_absent_before_their_record() {
    let young = WellColumn::new(
        "Young-2",
        vec![
            surface("Sea floor", 200.0, 0.0, Some("shale"), 200.0),
            surface("Base", 900.0, 30.0, None, 100.0),
        ],
    )
    .unwrap();
    let h = histories(&[(0.0, kestrel("K-1")), (20e3, young)]);
    let run = flexural_backstrip(
        &placed(&h),
        &ModelParameters::default(),
        &settings(10e3, LoadExtension::Hold),
    )
    .unwrap();
    let ages: Vec<f64> = run.ages.iter().map(|a| a.age_ma).collect();
    assert_eq!(ages, [100.0, 60.0, 30.0, 20.0, 0.0]);
    let at_60 = &run.ages[1];
    assert_eq!(at_60.wells.len(), 1, "Young-2 has no record at 60 Ma");
    let k = well_at(&run, 30.0, "K-1");
    assert!(k.interpolated_in_age);
    // Linear in age between its 60 and 20 Ma steps (docs/science.md 3.3 values).
    let expected = 946.339 + (1333.677 - 946.339) * (60.0 - 30.0) / 40.0;
    assert_printed(
        k.airy_tectonic_subsidence.best,
        expected,
        3,
        "interpolated Airy Y",
    );
    assert!(!well_at(&run, 30.0, "Young-2").interpolated_in_age);
}

#[test]
fn the_restored_section_places_horizons_below_present_sea_level() {
    let h = histories(&[(5e3, kestrel("K-1"))]);
    let restored = restored_section(&placed(&h));
    let at_20 = restored.iter().find(|a| a.age_ma == 20.0).unwrap();
    let w = &at_20.wells[0];
    // docs/science.md 3.3 at 20 Ma: water 100 m, sea level +20 m, Top Lark shale 1131.89 m
    // below the sea floor, the column 2444.554 m thick.
    assert_eq!(w.surface_m, 80.0);
    let lark = w
        .horizons
        .iter()
        .find(|h| h.horizon == "Top Lark shale")
        .unwrap();
    assert_printed(lark.depth_m, 80.0 + 1131.89, 2, "Top Lark shale");
    assert_printed(w.base_m, 80.0 + 2444.554, 3, "base of the column");
}

#[test]
fn bad_sections_are_refused() {
    let params = ModelParameters::default();
    assert!(flexural_backstrip(&[], &params, &FlexuralSettings::default()).is_err());
    let h = histories(&[(0.0, kestrel("K-1"))]);
    let bad = settings(10e3, LoadExtension::Taper { distance_m: -1.0 });
    assert!(flexural_backstrip(&placed(&h), &params, &bad).is_err());
    let thick = settings(1e9, LoadExtension::Hold);
    assert!(flexural_backstrip(&placed(&h), &params, &thick).is_err());
}
