//! Finite-duration fits recover what the numerical lithosphere built: wells made at the
//! default (fine) resolution with +-20 m scatter and +-60 m ranges, fitted at the coarse
//! fit resolution with the timing known. Truth is the forward model's input, not a
//! published value; the forward model itself is checked against published values in
//! numerical_lithosphere_tests.rs.

use super::*;
use crate::fit::tests::mckenzie;
use crate::phases::subsidence_sigmas_m as sigmas;
use crate::phases::tests::numerical_well_above;

/// A well made by the plate at its default resolution, 50 m deep before the rift,
/// surfaces every 5 Myr from 200 Ma, with the phase tests' scatter and ranges.
fn well(event: StretchingEvent) -> Vec<SubsidenceObservation> {
    let ages: Vec<f64> = (0..=40).map(|i| 200.0 - 5.0 * i as f64).collect();
    numerical_well_above(&[event], &ages, 50.0)
}

#[test]
fn a_forty_million_year_uniform_rift_is_recovered() {
    let l = mckenzie();
    let truth = StretchingEvent::uniform(180.0, 140.0, 2.0);
    let data = well(truth);
    let fit = fit_finite_rift(&l, &data, &sigmas(&data), 180.0, 140.0, false).unwrap();
    assert!((fit.mantle_factor - 2.0).abs() < 0.05 * 2.0, "{fit:?}");
    assert!((fit.pre_rift_subsidence_m - 50.0).abs() < 15.0, "{fit:?}");
    // The scatter is +-20 m: the fit is as good as the data.
    assert!(fit.rms_misfit_m < 20.0, "{fit:?}");
}

#[test]
fn a_depth_dependent_rift_is_told_apart_from_a_uniform_one() {
    let l = mckenzie();
    let truth = StretchingEvent {
        onset_ma: 180.0,
        end_ma: 160.0,
        crust_factor: 1.5,
        mantle_factor: 3.0,
    };
    let data = well(truth);
    let two_layer = fit_finite_rift(&l, &data, &sigmas(&data), 180.0, 160.0, true).unwrap();
    assert!(
        (two_layer.crust_factor - 1.5).abs() < 0.05 * 1.5,
        "{two_layer:?}"
    );
    assert!(
        (two_layer.mantle_factor - 3.0).abs() < 0.05 * 3.0,
        "{two_layer:?}"
    );
    let uniform = fit_finite_rift(&l, &data, &sigmas(&data), 180.0, 160.0, false).unwrap();
    assert!(
        uniform.chi_square > 4.0 * two_layer.chi_square,
        "uniform {uniform:?} against two-layer {two_layer:?}"
    );
}

#[test]
fn a_uniform_rift_does_not_look_depth_dependent() {
    // The case the closed forms get wrong (docs/science.md 8.3): beta 1.5 over 20 Myr.
    let l = mckenzie();
    let data = well(StretchingEvent::uniform(180.0, 160.0, 1.5));
    let two_layer = fit_finite_rift(&l, &data, &sigmas(&data), 180.0, 160.0, true).unwrap();
    let uniform = fit_finite_rift(&l, &data, &sigmas(&data), 180.0, 160.0, false).unwrap();
    assert!(
        (uniform.mantle_factor - 1.5).abs() < 0.05 * 1.5,
        "{uniform:?}"
    );
    // One more parameter buys almost nothing: less than the BIC penalty ln(41) = 3.7.
    assert!(
        uniform.chi_square - two_layer.chi_square < (41f64).ln(),
        "uniform {uniform:?} against two-layer {two_layer:?}"
    );
}

/// The plate's states at `ages` after one event, at a resolution.
fn plate_states(
    l: &Lithosphere,
    event: StretchingEvent,
    ages: &[f64],
    settings: &NumericalSettings,
) -> Vec<crate::numerical_lithosphere::PlateState> {
    run_plate(
        l,
        &CrustalHeatProduction::NONE,
        &[event],
        IsostasyConvention::McKenzie,
        settings,
        ages,
        false,
    )
    .unwrap()
    .states
}

#[test]
fn the_fit_resolution_is_close_to_the_default() {
    let l = mckenzie();
    let event = StretchingEvent {
        onset_ma: 180.0,
        end_ma: 150.0,
        crust_factor: 1.8,
        mantle_factor: 2.6,
    };
    let ages: Vec<f64> = (0..=36).map(|i| 180.0 - 5.0 * i as f64).collect();
    let go = |settings: &NumericalSettings| plate_states(&l, event, &ages, settings);
    let (fine, coarse) = (go(&NumericalSettings::default()), go(&FIT_RESOLUTION));
    for (f, c) in fine.iter().zip(&coarse) {
        assert!(
            (f.subsidence_m - c.subsidence_m).abs() < 5.0,
            "at {} Ma: {} against {}",
            f.age_ma,
            f.subsidence_m,
            c.subsidence_m
        );
    }
}

#[test]
fn the_history_resolution_is_close_to_the_default() {
    let l = mckenzie();
    let ages: Vec<f64> = (0..=40).map(|i| 200.0 - 5.0 * i as f64).collect();
    // A uniform rift over 30 Myr, and a depth-dependent one over 10 Myr (steeper gradients).
    for event in [
        StretchingEvent::uniform(200.0, 170.0, 2.5),
        StretchingEvent {
            onset_ma: 200.0,
            end_ma: 190.0,
            crust_factor: 1.6,
            mantle_factor: 3.5,
        },
    ] {
        let go = |settings: &NumericalSettings| plate_states(&l, event, &ages, settings);
        let (fine, coarse) = (go(&NumericalSettings::default()), go(&HISTORY_RESOLUTION));
        for (f, c) in fine.iter().zip(&coarse) {
            assert!(
                (f.subsidence_m - c.subsidence_m).abs() < 1.0,
                "{event:?} at {} Ma: subsidence {} against {}",
                f.age_ma,
                f.subsidence_m,
                c.subsidence_m
            );
            assert!(
                (f.surface_heat_flow_mw_m2 - c.surface_heat_flow_mw_m2).abs() < 0.3,
                "{event:?} at {} Ma: heat flow {} against {}",
                f.age_ma,
                f.surface_heat_flow_mw_m2,
                c.surface_heat_flow_mw_m2
            );
        }
    }
}

#[test]
fn a_timing_outside_the_well_is_refused() {
    let l = mckenzie();
    let data = well(StretchingEvent::uniform(180.0, 160.0, 1.5));
    let e = fit_finite_rift(&l, &data, &sigmas(&data), 300.0, 160.0, false).unwrap_err();
    assert!(e.to_string().contains("within the well"), "{e}");
    let e = fit_finite_rift(&l, &data, &sigmas(&data), 150.0, 160.0, false).unwrap_err();
    assert!(e.to_string().contains("older than its end"), "{e}");
}
