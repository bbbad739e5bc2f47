//! Checks of the demo data, not of the science: the files are what the basin
//! description builds, they read and backstrip cleanly, and the analysis finds the
//! rifts they were built with.

use super::*;
use sagline_science::WellColumn;
use sagline_science::analysis::{StudyInputs, analyse_well, analyse_wells};
use sagline_science::tolerance::assert_relative;

const SPEC: &str = include_str!("../../demo-db/basin.json");
const TOPS: &str = include_str!("../../demo-db/tops.csv");
const WELLS: &str = include_str!("../../demo-db/wells.csv");
const SEA_LEVEL: &str = include_str!("../../demo-db/sea_level.csv");

/// Brief for the demo: the analysis recovers each designed factor within 10 %.
const FACTOR_TOLERANCE: f64 = 0.10;

fn spec() -> BasinSpec {
    serde_json::from_str(SPEC).expect("demo-db/basin.json reads")
}

fn committed_wells() -> Vec<WellColumn> {
    let catalogue = Catalogue::published_defaults();
    input::parse_tops(TOPS.as_bytes(), &TopsOptions::default(), &|n| {
        catalogue.get(n).is_some()
    })
    .expect("demo-db/tops.csv reads")
    .wells
}

fn inputs() -> StudyInputs {
    StudyInputs {
        params: ModelParameters::default(),
        catalogue: Catalogue::published_defaults(),
        sea_level: input::parse_sea_level(SEA_LEVEL.as_bytes()).expect("sea level reads"),
        thermal: sagline_science::analysis::thermal::ThermalInputs::default(),
    }
}

#[test]
fn the_same_seed_builds_the_same_files_and_another_seed_other_noise() {
    let spec = spec();
    let first = build(&spec).unwrap();
    assert_eq!(first, build(&spec).unwrap());
    let reseeded = build(&BasinSpec {
        seed: spec.seed + 1,
        ..spec.clone()
    })
    .unwrap();
    assert_ne!(
        first.tops_csv, reseeded.tops_csv,
        "the noise follows the seed"
    );
    assert_eq!(first.sea_level_csv, reseeded.sea_level_csv);
}

#[test]
fn the_committed_demo_files_are_what_basin_json_builds() {
    let files = build(&spec()).unwrap();
    let hint = "rebuild them with `sagline build-demo` (see demo-db/README.md)";
    assert!(
        files.tops_csv == TOPS,
        "demo-db/tops.csv is out of step with basin.json: {hint}"
    );
    assert!(
        files.wells_csv == WELLS,
        "demo-db/wells.csv is out of step with basin.json: {hint}"
    );
    assert!(
        files.sea_level_csv == SEA_LEVEL,
        "demo-db/sea_level.csv is out of step with basin.json: {hint}"
    );
}

#[test]
fn on_the_trough_axis_beta_is_the_axis_value_and_the_onset_the_middle_one() {
    let spec = spec();
    let t = spec.trough;
    let at_axis = spec.field_at(t.axis_x, t.axis_y);
    assert_eq!(at_axis.beta, t.beta_axis);
    assert_eq!(at_axis.rift_end_ma, spec.rift_timing.end_axis_ma);
    let middle = 0.5 * (spec.rift_timing.onset_sw_ma + spec.rift_timing.onset_ne_ma);
    assert!(
        (at_axis.rift_onset_ma - middle).abs() <= 0.05,
        "{}",
        at_axis.rift_onset_ma
    );
    // Ten half-widths across the axis the Gaussian has died away.
    let (sin, cos) = t.azimuth_deg.to_radians().sin_cos();
    let far = 10.0 * t.half_width_m;
    let flank = spec.field_at(t.axis_x + far * cos, t.axis_y - far * sin);
    assert!((flank.beta - t.beta_flank).abs() < 1e-9, "{}", flank.beta);
    assert_eq!(flank.rift_end_ma, spec.rift_timing.end_flank_ma);
}

#[test]
fn a_spec_naming_a_missing_horizon_is_refused_with_the_well() {
    let mut spec = spec();
    spec.wells[0].hiatus = vec!["Top Nothing".into()];
    let err = build(&spec).unwrap_err();
    assert!(
        err.contains(&spec.wells[0].name) && err.contains("Top Nothing"),
        "{err}"
    );
}

#[test]
fn every_demo_well_reads_back_and_backstrips_without_warnings() {
    let wells = committed_wells();
    let designs = build(&spec()).unwrap().designs;
    assert!((18..=22).contains(&wells.len()), "{} wells", wells.len());
    let inputs = inputs();
    for (well, design) in wells.iter().zip(&designs) {
        assert_eq!(well.name, design.well);
        let history =
            backstrip(well, &inputs.catalogue, &inputs.params, &inputs.sea_level).unwrap();
        assert!(
            history.warnings.is_empty(),
            "{}: {:?}",
            well.name,
            history.warnings
        );
        let depth = |h: &str| {
            well.surfaces
                .iter()
                .find(|s| s.horizon == h)
                .unwrap()
                .depth_m
        };
        for (horizon, below) in &design.hiatuses {
            assert_eq!(
                depth(horizon),
                depth(below),
                "{}: hiatus {horizon}",
                well.name
            );
        }
        if let Some((horizon, eroded_m, at)) = &design.erosion {
            let k = well
                .surfaces
                .iter()
                .position(|s| &s.horizon == horizon)
                .unwrap();
            let s = &well.surfaces[k];
            assert_eq!(
                s.erosion.map(|e| (e.eroded_m, e.eroded_at_ma)),
                Some((*eroded_m, *at))
            );
            assert_eq!(
                s.depth_m,
                well.surfaces[k - 1].depth_m,
                "{}: unconformity",
                well.name
            );
        }
    }
    // Every feature the demo is meant to show is there.
    let count = |f: &dyn Fn(&WellDesign) -> bool| designs.iter().filter(|d| f(d)).count();
    assert!(count(&|d| !d.hiatuses.is_empty()) >= 2, "hiatus wells");
    assert!(count(&|d| d.erosion.is_some()) >= 1, "erosion wells");
    assert!(count(&|d| d.second_rift.is_some()) >= 1, "two-rift wells");
    assert!(
        count(&|d| matches!(d.stretching, DesignStretching::NoRift { .. })) >= 1,
        "no-rift wells"
    );
    assert!(
        count(&|d| matches!(d.stretching, DesignStretching::TwoLayer { .. })) >= 1,
        "two-layer wells"
    );
}

#[test]
fn the_analysis_finds_the_rifts_the_demo_was_built_with() {
    let wells = committed_wells();
    let designs = build(&spec()).unwrap().designs;
    let inputs = inputs();
    let results = analyse_wells(&wells, &inputs, &|_| None, &|| {});
    for ((well, design), result) in wells.iter().zip(&designs).zip(results) {
        let name = &well.name;
        let proposal = result.unwrap().interpretation.unwrap().proposal;
        let Some((onset, end)) = design.rift_ma else {
            assert!(
                proposal.uniform.is_none(),
                "{name}: no rift was built, one was found"
            );
            continue;
        };
        let fit = proposal
            .uniform
            .unwrap_or_else(|| panic!("{name}: no rift found"));
        let first = fit.events[0];
        // The rift horizons lie at the rift ages, and the search tries every surface age.
        assert_eq!(
            (first.rift_onset_ma, first.rift_end_ma),
            (onset, end),
            "{name}"
        );
        match design.stretching {
            DesignStretching::Uniform { beta } => {
                let events = 1 + usize::from(design.second_rift.is_some());
                assert_eq!(fit.events.len(), events, "{name}");
                assert_relative(first.beta, beta, FACTOR_TOLERANCE, &format!("{name} beta"));
                if let Some(second) = design.second_rift {
                    let found = fit.events[1];
                    assert_eq!(
                        (found.rift_onset_ma, found.rift_end_ma),
                        (second.onset_ma, second.end_ma)
                    );
                    assert_relative(
                        found.beta,
                        second.beta,
                        FACTOR_TOLERANCE,
                        &format!("{name} beta 2"),
                    );
                }
            }
            DesignStretching::TwoLayer { delta, beta } => {
                // The search compares uniform models only; with the rift picked, the
                // two-layer fit recovers both factors and beats the uniform one.
                let picked = analyse_well(well, &inputs, Some(&[(onset, end)])).unwrap();
                let p = picked.interpretation.unwrap().proposal;
                let two = p
                    .two_layer
                    .unwrap_or_else(|| panic!("{name}: no two-layer fit"));
                assert_relative(two.delta, delta, FACTOR_TOLERANCE, &format!("{name} delta"));
                assert_relative(
                    two.beta,
                    beta,
                    FACTOR_TOLERANCE,
                    &format!("{name} mantle beta"),
                );
                assert!(two.rms_misfit_m < p.uniform.unwrap().rms_misfit_m, "{name}");
            }
            DesignStretching::NoRift { .. } => unreachable!("a no-rift design has no rift ages"),
        }
    }
}
