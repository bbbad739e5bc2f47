use super::*;
use crate::ModelParameters;
use crate::tolerance::{assert_printed, assert_relative};

pub(crate) fn mckenzie() -> Lithosphere {
    Lithosphere::water_loaded(&ModelParameters::default()).unwrap()
}

pub(crate) fn exact(age_ma: f64, y: f64) -> SubsidenceObservation {
    SubsidenceObservation {
        age_ma,
        tectonic_subsidence: Bounds::exact(y),
    }
}

/// docs/science.md 8.2 synthetic classifier curve, as printed: pre-rift 200-150 Ma at 0,
/// syn-rift to Si(beta 2) = 2137.134 m at 130 Ma, then Si + S_T (full series, tau 62.7085).
pub(crate) fn classifier_curve() -> Vec<SubsidenceObservation> {
    let printed = [
        (140.0, 1068.567),
        (130.0, 2137.134),
        (120.0, 2389.086),
        (110.0, 2629.113),
        (100.0, 2841.837),
        (90.0, 3025.181),
        (80.0, 3181.971),
        (70.0, 3315.762),
        (60.0, 3429.858),
        (50.0, 3527.143),
        (40.0, 3610.089),
        (30.0, 3680.809),
        (20.0, 3741.105),
        (10.0, 3792.513),
        (0.0, 3836.344),
    ];
    let mut curve: Vec<SubsidenceObservation> = [200.0, 190.0, 180.0, 170.0, 160.0, 150.0]
        .iter()
        .map(|&a| exact(a, 0.0))
        .collect();
    curve.extend(printed.iter().map(|&(a, y)| exact(a, y)));
    curve
}

#[test]
fn the_classifier_curve_fits_beta_two_with_known_timing() {
    // docs/science.md 8.2: the curve was built with beta = 2, onset 150, end 130 Ma.
    let l = mckenzie();
    let fit = fit_uniform(&l, &classifier_curve(), SubsidenceCurve::Best, 150.0, 130.0).unwrap();
    assert_eq!(fit.events.len(), 1);
    assert_relative(fit.events[0].beta, 2.0, 1e-5, "beta");
    assert!(
        fit.pre_rift_subsidence_m.abs() < 0.01,
        "Y0 {}",
        fit.pre_rift_subsidence_m
    );
    // Printed to 3 decimals, so the misfit is at the rounding level.
    assert!(fit.rms_misfit_m < 0.01, "rms {}", fit.rms_misfit_m);
    // The fitted model curve reproduces the printed table (docs/science.md 8.2).
    for o in classifier_curve() {
        assert_printed(
            fit.subsidence_m(&l, o.age_ma),
            o.tectonic_subsidence.best,
            2,
            "model curve",
        );
    }
}

#[test]
fn a_wrong_end_age_fits_worse_than_the_right_one() {
    let l = mckenzie();
    let right = fit_uniform(&l, &classifier_curve(), SubsidenceCurve::Best, 150.0, 130.0).unwrap();
    let wrong = fit_uniform(&l, &classifier_curve(), SubsidenceCurve::Best, 150.0, 120.0).unwrap();
    assert!(
        wrong.rms_misfit_m > 20.0 * right.rms_misfit_m.max(1e-3),
        "{} vs {}",
        wrong.rms_misfit_m,
        right.rms_misfit_m
    );
}

#[test]
fn min_and_max_curves_give_smaller_and_larger_beta() {
    // A deeper curve needs more stretching: Si and S_T both rise with beta (docs/science.md 4.2-4.3).
    let l = mckenzie();
    let curve: Vec<SubsidenceObservation> = classifier_curve()
        .into_iter()
        .map(|o| {
            let y = o.tectonic_subsidence.best;
            SubsidenceObservation {
                age_ma: o.age_ma,
                tectonic_subsidence: Bounds {
                    min: 0.9 * y,
                    best: y,
                    max: 1.1 * y,
                },
            }
        })
        .collect();
    let beta = |c| fit_uniform(&l, &curve, c, 150.0, 130.0).unwrap().events[0].beta;
    assert!(beta(SubsidenceCurve::Min) < 2.0 && 2.0 < beta(SubsidenceCurve::Max));
}

#[test]
fn a_flat_curve_fits_no_stretching() {
    let l = mckenzie();
    let flat: Vec<_> = (0..10)
        .map(|i| exact(100.0 - 10.0 * i as f64, 250.0))
        .collect();
    let fit = fit_uniform(&l, &flat, SubsidenceCurve::Best, 60.0, 50.0).unwrap();
    assert!(
        fit.events[0].beta < 1.0 + 1e-6,
        "beta {}",
        fit.events[0].beta
    );
    assert_relative(fit.pre_rift_subsidence_m, 250.0, 1e-9, "Y0");
}

#[test]
fn a_two_layer_curve_is_fitted_with_its_own_delta_and_beta() {
    // A curve built from the docs/science.md 5 closed forms with delta 1.5, beta 3 (row 2 of
    // the table: Si 704.911, S_T(50) 1027.689) is recovered by the two-layer fit, while
    // the uniform fit cannot match it.
    let l = mckenzie();
    let truth = TwoLayerFit {
        delta: 1.5,
        beta: 3.0,
        rift_onset_ma: 120.0,
        rift_end_ma: 105.0,
        pre_rift_subsidence_m: 100.0,
        rms_misfit_m: 0.0,
    };
    assert_printed(
        truth.subsidence_m(&l, 105.0) - 100.0,
        704.911,
        3,
        "Si row 2",
    );
    assert_printed(
        truth.subsidence_m(&l, 55.0) - 100.0,
        704.911 + 1027.689,
        3,
        "Si + S_T(50) row 2",
    );
    let ages: Vec<f64> = (0..=28).map(|i| 140.0 - 5.0 * i as f64).collect();
    let curve: Vec<_> = ages
        .iter()
        .map(|&a| exact(a, truth.subsidence_m(&l, a)))
        .collect();
    let fit = fit_two_layer(&l, &curve, SubsidenceCurve::Best, 120.0, 105.0).unwrap();
    assert_relative(fit.delta, 1.5, 1e-4, "delta");
    assert_relative(fit.beta, 3.0, 1e-4, "beta");
    assert!(fit.rms_misfit_m < 0.01, "rms {}", fit.rms_misfit_m);
    let uniform = fit_uniform(&l, &curve, SubsidenceCurve::Best, 120.0, 105.0).unwrap();
    assert!(
        uniform.rms_misfit_m > 50.0,
        "uniform rms {}",
        uniform.rms_misfit_m
    );
}

#[test]
fn two_events_are_fitted_jointly() {
    let l = mckenzie();
    let truth = UniformFit {
        events: vec![
            RiftEvent {
                rift_onset_ma: 180.0,
                rift_end_ma: 170.0,
                beta: 1.4,
            },
            RiftEvent {
                rift_onset_ma: 90.0,
                rift_end_ma: 80.0,
                beta: 1.6,
            },
        ],
        pre_rift_subsidence_m: 0.0,
        rms_misfit_m: 0.0,
    };
    // The bases' values are the crust-thinning rule of UniformFit (checked on its own in
    // `second_event_stretches_the_thinned_crust`); here only the joint fit is under test.
    let curve: Vec<_> = (0..=40)
        .map(|i| 200.0 - 5.0 * i as f64)
        .map(|a| exact(a, truth.subsidence_m(&l, a)))
        .collect();
    let fit = fit_uniform_events(
        &l,
        &curve,
        SubsidenceCurve::Best,
        &[(180.0, 170.0), (90.0, 80.0)],
    )
    .unwrap();
    assert_relative(fit.events[0].beta, 1.4, 1e-4, "beta 1");
    assert_relative(fit.events[1].beta, 1.6, 1e-4, "beta 2");
    assert_relative(fit.cumulative_beta(), 2.24, 1e-4, "cumulative beta");
}

#[test]
fn bad_series_and_timings_are_refused() {
    let l = mckenzie();
    let curve = classifier_curve();
    assert!(fit_uniform(&l, &curve[..2], SubsidenceCurve::Best, 150.0, 130.0).is_err());
    assert!(fit_uniform(&l, &curve, SubsidenceCurve::Best, 130.0, 150.0).is_err());
    let mut reversed = curve.clone();
    reversed.reverse();
    assert!(fit_uniform(&l, &reversed, SubsidenceCurve::Best, 150.0, 130.0).is_err());
    assert!(
        fit_uniform_events(
            &l,
            &curve,
            SubsidenceCurve::Best,
            &[(150.0, 100.0), (120.0, 90.0)]
        )
        .is_err()
    );
}

#[test]
fn the_recurrence_sines_and_the_mode_basis_match_direct_evaluation() {
    let mut s = [0.0; 40];
    odd_sines(0.3, &mut s);
    for (j, v) in s.iter().enumerate() {
        assert!((v - ((2 * j + 1) as f64 * 0.3).sin()).abs() < 1e-12);
    }
    let mut d = Vec::new();
    push_decays(&mut d, 0.05, 41.0);
    for (j, v) in d.iter().enumerate() {
        let n = (2 * j + 1) as f64;
        assert_relative(*v, (-n * n * 0.05).exp(), 1e-10, "decay");
    }
}

/// The corrected second-event rule (docs/science.md 6, "second event"): on a
/// re-equilibrated plate only the crust stays thinned, to tc / beta1, so the second jump
/// is McKenzie's Si for a 23.33 km crust stretched by beta2.
/// Check values: 490.82 m from the independent finite-difference run quoted in
/// ../shared/SCIENCE.md 6; Si(1.5) = 1424.756 m and S_T(inf, 1.5) = 1301.820 m from the
/// published tables of SCIENCE 4.2 and 4.3.
#[test]
fn second_event_stretches_the_thinned_crust() {
    let l = mckenzie();
    let event = |onset: f64, beta: f64| RiftEvent {
        rift_onset_ma: onset,
        rift_end_ma: onset - 1e-6,
        beta,
    };
    let fit = UniformFit {
        events: vec![event(1000.0, 1.5), event(100.0, 1.5)],
        pre_rift_subsidence_m: 0.0,
        rms_misfit_m: 0.0,
    };
    // 900 Myr after the first event its transient is gone (exp(-900/62.7) ~ 6e-7).
    let jump = fit.subsidence_m(&l, 100.0 - 1e-6) - fit.subsidence_m(&l, 100.0);
    assert_printed(jump, 490.82, 2, "second-event jump, beta1 = beta2 = 1.5");
    let single_first = l.initial_subsidence_m(1.5);
    assert_printed(single_first, 1424.756, 3, "first-event Si, beta 1.5");
    // Long after both: Si1 + S_T(inf, 1.5) + Si2 + S_T(inf, 1.5), each event its own
    // thermal anomaly (not scaled by 1/beta1).
    let expected_total = 1424.756 + 1301.820 + 490.82 + 1301.820;
    assert_printed(
        fit.subsidence_m(&l, -5000.0),
        expected_total,
        2,
        "total after both events",
    );
    // Heat flow: the second event's excess just after it is that of a single beta 1.5
    // event, not 1/beta1 of it. The first's excess has decayed to nothing by then.
    let equilibrium = l.equilibrium_heat_flow_mw_m2();
    let after_second = crate::heat_flow::uniform_heat_flow_mw_m2(&l, &fit, 100.0 - 1e-6);
    let single = UniformFit {
        events: vec![event(100.0, 1.5)],
        pre_rift_subsidence_m: 0.0,
        rms_misfit_m: 0.0,
    };
    let single_flow = crate::heat_flow::uniform_heat_flow_mw_m2(&l, &single, 100.0 - 1e-6);
    assert_relative(
        after_second - equilibrium,
        single_flow - equilibrium,
        1e-4,
        "second-event heat-flow excess",
    );
}
