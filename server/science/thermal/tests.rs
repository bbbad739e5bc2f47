//! Checks of the thermal history against closed forms that share none of the model's
//! machinery: layered and radiogenic steady geotherms, the cooling of a half-space
//! (erf), and the model's own convergence; sources beside each check. Tolerances follow
//! `crate::tolerance` where a value is exact, and are stated where a discretisation
//! error is being bounded.

use super::column::ThermalLayer;
use super::*;
use crate::backstrip::backstrip;
use crate::column::{LithologyMix, SeaLevelCurve, Surface, WaterDepth, WellColumn};
use crate::lithology::{Catalogue, Lithology};
use crate::maturity::default_windows;
use crate::params::ModelParameters;

/// A surface of a test well, in water 0 m deep (the surface temperature is then the
/// settings' value, with no sea-floor correction to reason about).
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

/// Rocks with no porosity, so decompaction leaves every thickness as it is and the
/// conductivities are the matrix values (the closed forms then apply exactly).
fn tight_catalogue() -> Catalogue {
    Catalogue::new(vec![
        Lithology::new("tight upper", 0.0, 0.5, 2650.0).unwrap(),
        Lithology::new("tight lower", 0.0, 0.5, 2650.0).unwrap(),
    ])
    .unwrap()
}

fn props(k: f64, a_uw_m3: f64) -> ThermalProperties {
    ThermalProperties {
        matrix_conductivity_w_m_k: k,
        heat_production_uw_m3: a_uw_m3,
        specific_heat_j_kg_k: 850.0,
        source: "test value".into(),
    }
}

fn history_of(well: &WellColumn, catalogue: &Catalogue) -> WellHistory {
    backstrip(
        well,
        catalogue,
        &ModelParameters::default(),
        &SeaLevelCurve::default(),
    )
    .unwrap()
}

/// 1,000 m of k = 2 over 2,000 m of k = 4 W/m/K, laid down 180-160 Ma, then nothing
/// (a hiatus of 150 Myr to today, so the transient has long since decayed).
fn two_layer_well() -> WellHistory {
    let well = WellColumn::new(
        "Test layered",
        vec![
            surface("Sea floor", 0.0, 0.0, Some("tight upper")),
            surface("Hiatus", 0.0, 150.0, Some("tight upper")),
            surface("Top lower", 1000.0, 160.0, Some("tight lower")),
            surface("Base", 3000.0, 180.0, None),
        ],
    )
    .unwrap();
    history_of(&well, &tight_catalogue())
}

fn settings(method: ThermalMethod) -> ThermalSettings {
    ThermalSettings {
        method,
        ..ThermalSettings::default()
    }
}

fn profile_at(history: &ThermalHistory, depth_m: f64) -> f64 {
    history
        .present_profile
        .iter()
        .find(|p| (p.depth_m - depth_m).abs() < 1e-6)
        .unwrap_or_else(|| panic!("no profile node at {depth_m} m"))
        .temperature_c
}

fn horizon_now(history: &ThermalHistory, name: &str) -> f64 {
    let h = history.horizons.iter().find(|h| h.name == name).unwrap();
    let last = h.path.last().unwrap();
    assert_eq!(last.age_ma, 0.0);
    last.temperature_c
}

/// Steady conduction through layers in series: the heat flow q is the same in every
/// layer without heat production, so T(z) = Ts + q sum(h_i / k_i) (Fourier's law;
/// Turcotte & Schubert, Geodynamics, 2nd ed., section 4-2 \[memory\]).
/// 10 °C + 0.060 x 1000 / 2 = 40 °C at 1,000 m; + 0.060 x 2000 / 4 = 70 °C at 3,000 m.
#[test]
fn a_layered_column_in_steady_state_follows_its_series_resistance() {
    let history = two_layer_well();
    let properties = [props(2.0, 0.0), props(2.0, 0.0), props(4.0, 0.0)];
    let flow = [(180.0, 60.0), (0.0, 60.0)];
    for method in [ThermalMethod::SteadyPerStep, ThermalMethod::Transient] {
        let thermal = temperature_history(&history, &properties, &flow, &settings(method)).unwrap();
        // Steady: exact to round-off. Transient: 150 Myr after the last burial, the
        // slab's relaxation (time constant L^2 / kappa of about 17 Myr) is complete.
        let tolerance = match method {
            ThermalMethod::SteadyPerStep => 1e-9,
            ThermalMethod::Transient => 0.05,
        };
        for (depth, expected) in [(0.0, 10.0), (1000.0, 40.0), (3000.0, 70.0)] {
            let t = profile_at(&thermal, depth);
            assert!(
                (t - expected).abs() <= tolerance,
                "{method:?}: {t} °C at {depth} m, expected {expected}"
            );
        }
        assert!((horizon_now(&thermal, "Top lower") - 40.0).abs() <= tolerance);
        assert!((horizon_now(&thermal, "Base") - 70.0).abs() <= tolerance);
        let now = thermal.snapshots.last().unwrap();
        assert!((now.surface_heat_flow_mw_m2 - 60.0).abs() < 0.05, "{now:?}");
        assert!((now.basement_top_temperature_c - 70.0).abs() <= tolerance);
    }
}

/// A layer of uniform heat production A on a basal heat flow qb: the surface heat
/// flow is qs = qb + A h, and T(y) = T0 + (qs y - A y^2 / 2) / k (Turcotte & Schubert,
/// Geodynamics, 2nd ed., eq. 4-31 \[equation number from memory\]).
/// A = 2 µW/m³, h = 3,000 m, qb = 40 mW/m², so qs = 46 mW/m²; with k = 2.5 W/m/K:
/// T(1500) = 10 + (0.046 x 1500 - 2e-6 x 1500² / 2) / 2.5 = 36.7 °C,
/// T(3000) = 10 + (0.046 x 3000 - 2e-6 x 3000² / 2) / 2.5 = 61.6 °C.
#[test]
fn a_radiogenic_layer_has_the_parabolic_steady_geotherm() {
    let well = WellColumn::new(
        "Test radiogenic",
        vec![
            surface("Sea floor", 0.0, 0.0, Some("tight upper")),
            surface("Hiatus", 0.0, 150.0, Some("tight upper")),
            surface("Base", 3000.0, 170.0, None),
        ],
    )
    .unwrap();
    let history = history_of(&well, &tight_catalogue());
    let properties = [props(2.5, 2.0), props(2.5, 2.0)];
    let flow = [(0.0, 40.0)];
    for method in [ThermalMethod::SteadyPerStep, ThermalMethod::Transient] {
        let thermal = temperature_history(&history, &properties, &flow, &settings(method)).unwrap();
        let tolerance = match method {
            ThermalMethod::SteadyPerStep => 1e-9,
            ThermalMethod::Transient => 0.05,
        };
        for (depth, expected) in [(1500.0, 36.7), (3000.0, 61.6)] {
            let t = profile_at(&thermal, depth);
            assert!(
                (t - expected).abs() <= tolerance,
                "{method:?}: {t} °C at {depth} m, expected {expected}"
            );
        }
        let now = thermal.snapshots.last().unwrap();
        // The first control volume's own production (A dz / 2 = 0.05 mW/m²) is not in
        // the transient estimate of the surface flow.
        assert!((now.surface_heat_flow_mw_m2 - 46.0).abs() < 0.06, "{now:?}");
        assert!((now.basal_heat_flow_mw_m2 - 40.0).abs() < 1e-9);
    }
}

/// A half-space at 100 °C whose surface is held at 0 °C from t = 0 cools as
/// T(z, t) = 100 erf(z / (2 sqrt(kappa t))) (Carslaw & Jaeger, Conduction of Heat in
/// Solids, 2nd ed., section 2.4 \[memory\]; Turcotte & Schubert eq. 4-113). With
/// kappa = 1e-6 m²/s and t = 1 Myr, 2 sqrt(kappa t) = 11.23 km. The error function is
/// its Taylor series (below, itself checked against tabulated values).
#[test]
fn the_solver_cools_a_half_space_as_the_error_function() {
    let nodes: Vec<f64> = (0..=1000).map(|i| i as f64 * 100.0).collect(); // 100 km
    let layers = [ThermalLayer {
        top_m: 0.0,
        base_m: 100_000.0,
        conductivity_w_m_k: 2.5,
        heat_capacity_j_m3_k: 2.5e6,
        heat_production_w_m3: 0.0,
    }];
    let c = solver::coefficients(&nodes, &layers);
    let mut t = vec![100.0; nodes.len()];
    t[0] = 0.0;
    let total_s = SECONDS_PER_MYR;
    let steps = 2000;
    for _ in 0..steps {
        t = solver::conduction_step(&c, &t, total_s / steps as f64, 0.0, 0.0);
    }
    let scale = 2.0 * (1e-6 * total_s).sqrt();
    let mut worst: f64 = 0.0;
    for (i, &z) in nodes.iter().enumerate().step_by(10).take(60) {
        let expected = 100.0 * erf(z / scale);
        worst = worst.max((t[i] - expected).abs());
    }
    eprintln!("half-space cooling: worst departure from erf {worst:.4} °C");
    // Backward Euler is first order in time: 2,000 steps leave about 0.05 °C.
    assert!(
        worst < 0.1,
        "worst departure from the erf solution {worst} °C"
    );
}

/// erf by its Taylor series, exact to round-off for |x| < 3 (enough terms).
fn erf(x: f64) -> f64 {
    if x > 5.0 {
        return 1.0;
    }
    let (mut term, mut sum) = (x, x);
    for n in 1..200 {
        term *= -x * x / n as f64;
        sum += term / (2 * n + 1) as f64;
    }
    sum * 2.0 / std::f64::consts::PI.sqrt()
}

#[test]
fn the_error_function_series_matches_tabulated_values() {
    // Abramowitz & Stegun, table 7.1: erf(0.5) = 0.5204998778, erf(1) = 0.8427007929,
    // erf(2) = 0.9953222650.
    for (x, v) in [
        (0.5, 0.520_499_877_8),
        (1.0, 0.842_700_792_9),
        (2.0, 0.995_322_265_0),
    ] {
        assert!((erf(x) - v).abs() < 1e-9, "erf({x})");
    }
}

/// 4,000 m of sand laid down in 2 Myr (102-100 Ma), then 100 Myr of quiet: the
/// conduction must heat the new column and the basement under it, so at the end of the
/// burial the column is colder than its steady geotherm (the blanketing of fast
/// sedimentation; Allen & Allen, Basin Analysis, 3rd ed., ch. 3 \[memory\]), and after the
/// quiet it is back on it.
fn fast_burial_well() -> WellHistory {
    let well = WellColumn::new(
        "Test fast burial",
        vec![
            surface("Sea floor", 0.0, 0.0, Some("sandstone")),
            surface("Top fill", 0.0, 100.0, Some("sandstone")),
            surface("Middle fill", 2000.0, 101.0, Some("sandstone")),
            surface("Base fill", 4000.0, 102.0, None),
        ],
    )
    .unwrap();
    history_of(&well, &Catalogue::published_defaults())
}

fn sand_properties(history: &WellHistory) -> Vec<ThermalProperties> {
    let catalogue = ThermalCatalogue::published_defaults();
    history
        .unit_lithologies
        .iter()
        .map(|_| catalogue.get("sandstone").unwrap().clone())
        .collect()
}

fn at_age(thermal: &ThermalHistory, name: &str, age: f64) -> f64 {
    let h = thermal.horizons.iter().find(|h| h.name == name).unwrap();
    h.path
        .iter()
        .find(|p| (p.age_ma - age).abs() < 1e-9)
        .unwrap_or_else(|| panic!("{name} has no temperature at {age} Ma"))
        .temperature_c
}

#[test]
fn a_fast_buried_column_is_colder_than_steady_and_recovers() {
    let history = fast_burial_well();
    let properties = sand_properties(&history);
    let flow = [(0.0, 60.0)];
    let transient = temperature_history(
        &history,
        &properties,
        &flow,
        &settings(ThermalMethod::Transient),
    )
    .unwrap();
    let steady = temperature_history(
        &history,
        &properties,
        &flow,
        &settings(ThermalMethod::SteadyPerStep),
    )
    .unwrap();
    let deficit = at_age(&steady, "Base fill", 100.0) - at_age(&transient, "Base fill", 100.0);
    eprintln!("fast burial: the transient base of fill is {deficit:.1} °C below steady at 100 Ma");
    assert!(
        deficit > 10.0,
        "the base of a 4 km column buried in 2 Myr should lag its steady geotherm by more \
         than 10 °C, lags by {deficit}"
    );
    let later = (at_age(&steady, "Base fill", 0.0) - at_age(&transient, "Base fill", 0.0)).abs();
    assert!(later < 0.5, "100 Myr later the difference is {later} °C");
    // While the column warms, less heat leaves the surface than enters the base.
    let end_of_burial = transient
        .snapshots
        .iter()
        .find(|s| s.age_ma == 100.0)
        .unwrap();
    assert!(
        end_of_burial.surface_heat_flow_mw_m2 < 60.0,
        "{end_of_burial:?}"
    );
}

/// Halving the time step and the node spacing moves no horizon's temperature by more
/// than 0.5 °C at any restored age, on the fast burial well (the hardest case of the
/// suite): the claim behind the defaults of [`ThermalSettings`].
#[test]
fn the_default_resolution_is_converged_to_half_a_degree() {
    let history = fast_burial_well();
    let properties = sand_properties(&history);
    let flow = [(0.0, 60.0)];
    let coarse = settings(ThermalMethod::Transient);
    let fine = ThermalSettings {
        max_step_myr: coarse.max_step_myr / 2.0,
        sediment_node_spacing_m: coarse.sediment_node_spacing_m / 2.0,
        ..coarse.clone()
    };
    let a = temperature_history(&history, &properties, &flow, &coarse).unwrap();
    let b = temperature_history(&history, &properties, &flow, &fine).unwrap();
    let mut worst: f64 = 0.0;
    for name in ["Middle fill", "Base fill"] {
        let horizon = a.horizons.iter().find(|h| h.name == name).unwrap();
        // Every restored age at which the horizon exists.
        for step in history
            .steps
            .iter()
            .filter(|s| horizon.path.iter().any(|p| p.age_ma == s.age_ma))
        {
            let moved = at_age(&a, name, step.age_ma) - at_age(&b, name, step.age_ma);
            worst = worst.max(moved.abs());
        }
    }
    eprintln!("halving step and spacing moved a horizon by at most {worst:.3} °C");
    assert!(
        worst < 0.5,
        "halving the resolution moved a horizon by {worst} °C"
    );
}

/// Under a steady linear geotherm T = Ts + q z / k with constant-rate burial and no
/// compaction, a horizon's temperature rises linearly in time, and its EASY%Ro is that
/// of the two-point path (easy_ro_history integrates a linear path exactly).
#[test]
fn constant_rate_burial_under_a_linear_geotherm_heats_linearly() {
    let well = WellColumn::new(
        "Test constant rate",
        vec![
            surface("Sea floor", 0.0, 0.0, Some("tight upper")),
            surface("Base", 5000.0, 50.0, None),
        ],
    )
    .unwrap();
    let history = history_of(&well, &tight_catalogue());
    let properties = [props(2.5, 0.0)];
    let flow = [(0.0, 75.0)];
    let thermal = temperature_history(
        &history,
        &properties,
        &flow,
        &settings(ThermalMethod::SteadyPerStep),
    )
    .unwrap();
    let base = thermal.horizons.iter().find(|h| h.name == "Base").unwrap();
    // 100 m/Myr; 0.075 / 2.5 = 0.03 °C/m, so T = 10 + 3 (50 - age).
    assert!(
        base.path.len() > 45,
        "sampled every Myr: {}",
        base.path.len()
    );
    for p in &base.path {
        let expected = 10.0 + 3.0 * (50.0 - p.age_ma);
        assert!((p.temperature_c - expected).abs() < 1e-6, "{p:?}");
    }
    let maturity = horizon_maturity(&thermal, &default_windows()).unwrap();
    let two_points = maturity::easy_ro_history(
        &[
            TimeTemperature {
                age_ma: 50.0,
                temperature_c: 10.0,
            },
            TimeTemperature {
                age_ma: 0.0,
                temperature_c: 160.0,
            },
        ],
        &default_windows(),
    )
    .unwrap();
    let now = |m: &MaturityHistory| m.points.last().unwrap().ro_percent;
    let base_index = thermal
        .horizons
        .iter()
        .position(|h| h.name == "Base")
        .unwrap();
    assert!((now(&maturity[base_index]) - now(&two_points)).abs() < 1e-9);
    // The top of the column has just been laid down: fresh.
    assert!((now(&maturity[0]) - maturity::initial_ro_percent()).abs() < 1e-9);
}

#[test]
fn surface_temperatures_in_kelvin_or_out_of_order_are_handled() {
    assert!(SurfaceTemperature::constant(283.0, "typed in kelvin").is_err());
    assert!(SurfaceTemperature::by_age(vec![(5000.0, 10.0)], "too old").is_err());
    assert!(SurfaceTemperature::by_age(vec![(10.0, 5.0), (10.0, 6.0)], "twice").is_err());
    let curve = SurfaceTemperature::by_age(vec![(0.0, 10.0), (50.0, 20.0)], "test").unwrap();
    assert_eq!(curve.points()[0], (50.0, 20.0), "sorted oldest first");
    assert!((curve.at(25.0) - 15.0).abs() < 1e-12);
    assert_eq!(curve.at(80.0), 20.0);
    assert_eq!(curve.at(0.0), 10.0);
}

/// Geometric-mean mixing: a 50/50 shale (2.0) and sandstone (3.5) matrix conducts
/// sqrt(2.0 x 3.5) = 2.6458 W/m/K; at 30 % porosity a 3.0 W/m/K matrix with water
/// (0.6) gives 3.0^0.7 x 0.6^0.3 = 1.8511 W/m/K (the geometric-mean law, e.g. Allen &
/// Allen, Basin Analysis, ch. 3 \[memory\]).
#[test]
fn conductivities_mix_by_the_geometric_mean() {
    let catalogue = ThermalCatalogue::published_defaults();
    let mix = "shale:50;sandstone:50".parse::<LithologyMix>().unwrap();
    let (p, generic) = catalogue.resolve(&mix).unwrap();
    assert!(!generic);
    assert!((p.matrix_conductivity_w_m_k - 2.645_751).abs() < 1e-6);
    assert!((p.heat_production_uw_m3 - 1.1).abs() < 1e-12);
    assert!((props(3.0, 0.0).bulk_conductivity_w_m_k(0.3) - 1.851_1).abs() < 1e-4);
    let (_, generic) = catalogue
        .resolve(&LithologyMix::single("unheard-of rock"))
        .unwrap();
    assert!(
        generic,
        "an unknown lithology is flagged as using generic values"
    );
}

#[test]
fn inputs_that_do_not_fit_the_history_are_refused_with_their_reason() {
    let history = two_layer_well();
    let three = [props(2.0, 0.0), props(2.0, 0.0), props(4.0, 0.0)];
    let s = settings(ThermalMethod::Transient);
    let err = temperature_history(&history, &three[..2], &[(0.0, 60.0)], &s).unwrap_err();
    assert!(err.to_string().contains("thermal properties"), "{err}");
    let err = temperature_history(&history, &three, &[(0.0, 600.0)], &s).unwrap_err();
    assert!(err.to_string().contains("heat flow"), "{err}");
    let err = temperature_history(&history, &three, &[], &s).unwrap_err();
    assert!(err.to_string().contains("heat flow"), "{err}");
    let bad = ThermalSettings {
        max_step_myr: 0.0,
        ..s
    };
    assert!(temperature_history(&history, &three, &[(0.0, 60.0)], &bad).is_err());
}

/// Sampling the paths every 1 Myr instead of at every 0.25 Myr step changes no
/// horizon's present %Ro by more than 0.005 %Ro on the fast burial well: EASY%Ro is
/// exact on each linear segment, and the paths are smooth between restored ages.
#[test]
fn sampling_the_paths_every_million_years_keeps_the_maturity() {
    let history = fast_burial_well();
    let properties = sand_properties(&history);
    let flow = [(0.0, 60.0)];
    let every_step = ThermalSettings {
        path_sample_myr: 1e-3,
        ..settings(ThermalMethod::Transient)
    };
    let coarse = settings(ThermalMethod::Transient);
    let ro_now = |s: &ThermalSettings| -> Vec<f64> {
        let t = temperature_history(&history, &properties, &flow, s).unwrap();
        horizon_maturity(&t, &default_windows())
            .unwrap()
            .iter()
            .map(|m| m.points.last().unwrap().ro_percent)
            .collect()
    };
    let (a, b) = (ro_now(&every_step), ro_now(&coarse));
    for (x, y) in a.iter().zip(&b) {
        assert!((x - y).abs() < 0.005, "{a:?} vs {b:?}");
    }
}

/// The one-walk remap of the burial step gives what the point-by-point one gives, on
/// every node of a column with an eroded section, a hiatus and growing units.
#[test]
fn the_walk_down_the_column_matches_the_point_by_point_remap() {
    let history = fast_burial_well();
    let layered = two_layer_well();
    let eroded = eroded_well();
    for h in [&history, &layered, &eroded] {
        for k in 1..h.steps.len() {
            let interval = super::column::Interval::new(&h.steps[k - 1], &h.steps[k]);
            let depths: Vec<f64> = (0..200).map(|i| i as f64 * 30.0).collect();
            for (s_new, s_old) in [(0.5, 0.25), (1.0, 0.75), (0.1, 0.0)] {
                let walked = interval.depths_before(&depths, s_new, s_old);
                for (z, w) in depths.iter().zip(&walked) {
                    let one = interval.depth_before(*z, s_new, s_old);
                    assert!((one - w).abs() < 1e-9, "at {z} m: {one} vs {w}");
                }
            }
        }
    }
}

/// An invented well with an unconformity at 1,000 m: 800 m laid down on the surface of
/// 50 Ma were eroded before deposition resumed at 20 Ma.
fn eroded_well() -> WellHistory {
    let mut unconformity = surface("Below unconformity", 1000.0, 50.0, Some("sandstone"));
    unconformity.erosion = Some(crate::column::Erosion {
        eroded_m: 800.0,
        eroded_at_ma: 40.0,
    });
    let well = WellColumn::new(
        "Test eroded",
        vec![
            surface("Sea floor", 0.0, 0.0, Some("shale")),
            surface("Above unconformity", 1000.0, 20.0, Some("sandstone")),
            unconformity,
            surface("Base", 3000.0, 100.0, None),
        ],
    )
    .unwrap();
    history_of(&well, &Catalogue::published_defaults())
}

#[test]
fn an_eroded_section_cools_its_horizons_and_the_history_runs() {
    let history = eroded_well();
    assert!(
        history.steps.iter().any(|s| s.eroded_section_m.is_some()),
        "the test well has an eroded section"
    );
    let properties: Vec<ThermalProperties> = history
        .unit_lithologies
        .iter()
        .map(|_| props(2.5, 1.0))
        .collect();
    let thermal = temperature_history(
        &history,
        &properties,
        &[(0.0, 60.0)],
        &settings(ThermalMethod::Transient),
    )
    .unwrap();
    // The base was deepest when the eroded section was thickest (40 Ma), and cooled as
    // it was removed (to 20 Ma).
    let at_40 = at_age(&thermal, "Base", 40.0);
    let at_20 = at_age(&thermal, "Base", 20.0);
    assert!(
        at_40 > at_20 + 5.0,
        "{at_40} °C at 40 Ma, {at_20} °C at 20 Ma"
    );
}
