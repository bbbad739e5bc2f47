use super::*;
use crate::backstrip::backstrip;
use crate::fit::{SubsidenceCurve, SubsidenceObservation, fit_two_layer};
use crate::phases::propose_phases;
use crate::phases::tests::surface_ages;
use crate::tolerance::assert_relative;
use crate::uncertainty::{MonteCarloSettings, stretching_uncertainty};
use crate::{MixPart, SeaLevelPoint};
use rand::rngs::StdRng;
use rand::{RngExt, SeedableRng};

/// Invented surface ages 2-8 Myr apart from `oldest` to 0 Ma, plus `must`, youngest first
/// (the order of a well's surfaces).
fn ages(oldest: f64, must: &[f64]) -> Vec<f64> {
    let mut ages = surface_ages(oldest, must);
    ages.reverse();
    ages
}

/// Shale, sandstone and a 60:40 shale-sandstone mix in turn (catalogue names of
/// docs/science.md 1.2).
fn lithology(i: usize) -> LithologyMix {
    match i % 3 {
        0 => LithologyMix::single("shale"),
        1 => LithologyMix::single("sandstone"),
        _ => LithologyMix {
            parts: vec![
                MixPart {
                    lithology: "shale".into(),
                    fraction: 0.6,
                },
                MixPart {
                    lithology: "sandstone".into(),
                    fraction: 0.4,
                },
            ],
        },
    }
}

/// A spec with water 30 m deep before the rift, deepening by 100 m through it, then
/// held; the PWD range is +-(10 m + 10 %).
fn spec(stretching: ForwardStretching, onset: f64, end: f64, ages: &[f64]) -> ForwardSpec {
    let n = ages.len();
    let surfaces = ages
        .iter()
        .enumerate()
        .map(|(i, &age)| {
            let best = 30.0 + 100.0 * crate::fit::ramp(onset, end, age);
            let half = 10.0 + 0.1 * best;
            ForwardSurface {
                horizon: format!("Wren {i}"),
                age_ma: age,
                lithology_below: (i + 1 < n).then(|| lithology(i)),
                water_depth: WaterDepth::new(best - half, best + half).unwrap(),
            }
        })
        .collect();
    ForwardSpec {
        well: "Invented-1".into(),
        stretching,
        rift_onset_ma: onset,
        rift_end_ma: end,
        surfaces,
    }
}

fn observations(well: &WellColumn, sea_level: &SeaLevelCurve) -> Vec<SubsidenceObservation> {
    let history = backstrip(
        well,
        &Catalogue::published_defaults(),
        &ModelParameters::default(),
        sea_level,
    )
    .unwrap();
    history
        .steps
        .iter()
        .map(|s| SubsidenceObservation {
            age_ma: s.age_ma,
            tectonic_subsidence: s.tectonic_subsidence,
        })
        .collect()
}

fn lithosphere() -> Lithosphere {
    Lithosphere::water_loaded(&ModelParameters::default()).unwrap()
}

#[test]
fn forward_wells_backstrip_onto_their_model_curve_and_their_rift_is_recovered() {
    // beta 1.2-3, rift durations 5-25 Myr, with a sea-level curve.
    let sea_level = SeaLevelCurve::new(vec![
        SeaLevelPoint {
            age_ma: 0.0,
            sea_level_m: 0.0,
        },
        SeaLevelPoint {
            age_ma: 90.0,
            sea_level_m: 60.0,
        },
        SeaLevelPoint {
            age_ma: 200.0,
            sea_level_m: 20.0,
        },
    ])
    .unwrap();
    let l = lithosphere();
    for (beta, onset, end) in [
        (1.2, 150.0, 145.0),
        (1.5, 160.0, 140.0),
        (2.0, 120.0, 110.0),
        (2.5, 170.0, 145.0),
        (3.0, 100.0, 90.0),
    ] {
        let s = spec(
            ForwardStretching::Uniform { beta },
            onset,
            end,
            &ages(210.0, &[onset, end]),
        );
        let well = forward_well(
            &s,
            &Catalogue::published_defaults(),
            &ModelParameters::default(),
            &sea_level,
        )
        .unwrap();
        assert_eq!(well.surfaces.len(), s.surfaces.len());
        let obs = observations(&well, &sea_level);
        // The backstripped best curve is the model curve (plus the oldest surface's level).
        let truth = UniformFit {
            events: vec![RiftEvent {
                rift_onset_ma: onset,
                rift_end_ma: end,
                beta,
            }],
            pre_rift_subsidence_m: obs[0].tectonic_subsidence.best,
            rms_misfit_m: 0.0,
        };
        for o in &obs {
            let gap = o.tectonic_subsidence.best - truth.subsidence_m(&l, o.age_ma);
            assert!(
                gap.abs() < 1e-4,
                "beta {beta} at {} Ma: off by {gap} m",
                o.age_ma
            );
        }
        let p = propose_phases(&l, &obs).unwrap();
        let fit = p.uniform.expect("a rift");
        assert_eq!(fit.events.len(), 1, "beta {beta}");
        assert_eq!(
            (fit.events[0].rift_onset_ma, fit.events[0].rift_end_ma),
            (onset, end),
            "beta {beta}"
        );
        // Brief: beta recovered within 2 %.
        assert_relative(fit.events[0].beta, beta, 0.02, "beta");
    }
}

#[test]
fn with_recorded_pwd_off_the_truth_the_true_beta_lies_in_the_range() {
    let l = lithosphere();
    let none = SeaLevelCurve::default();
    let (beta, onset, end) = (1.8, 130.0, 115.0);
    let s = spec(
        ForwardStretching::Uniform { beta },
        onset,
        end,
        &ages(190.0, &[onset, end]),
    );
    let mut well = forward_well(
        &s,
        &Catalogue::published_defaults(),
        &ModelParameters::default(),
        &none,
    )
    .unwrap();
    // The recorded PWD range keeps its width but is shifted off the true (middle) value
    // by up to 80 % of its half-width, seeded: the truth stays inside every range.
    let mut rng = StdRng::seed_from_u64(11);
    for surface in well.surfaces.iter_mut().skip(1) {
        let w = surface.water_depth;
        let shift = 0.4 * (w.max_m - w.min_m) * (2.0 * rng.random::<f64>() - 1.0);
        surface.water_depth = WaterDepth::new(w.min_m + shift, w.max_m + shift).unwrap();
    }
    let obs = observations(&well, &none);
    let p = propose_phases(&l, &obs).unwrap();
    let fit = p.uniform.expect("a rift");
    assert_eq!(fit.events.len(), 1);
    let u = stretching_uncertainty(
        &l,
        &obs,
        &fit,
        p.two_layer.as_ref(),
        MonteCarloSettings::default(),
        p.scores.misfit_scale,
    )
    .unwrap();
    assert!(
        u.beta.min() < beta && beta < u.beta.max(),
        "{beta} not in {:?}",
        u.beta
    );
}

#[test]
fn a_well_that_only_fills_with_sediment_gets_no_rift() {
    // No stretching; water shallowing from 200 m to 20 m, so sediment fills the space.
    let l = lithosphere();
    let none = SeaLevelCurve::default();
    let mut s = spec(
        ForwardStretching::Uniform { beta: 1.0 },
        100.0,
        90.0,
        &ages(160.0, &[]),
    );
    for surface in s.surfaces.iter_mut() {
        let best = 20.0 + 180.0 * surface.age_ma / 160.0;
        surface.water_depth = WaterDepth::new(best - 20.0, best + 20.0).unwrap();
    }
    let well = forward_well(
        &s,
        &Catalogue::published_defaults(),
        &ModelParameters::default(),
        &none,
    )
    .unwrap();
    assert!(
        well.base().depth_m > well.top().depth_m + 100.0,
        "the well holds sediment"
    );
    let p = propose_phases(&l, &observations(&well, &none)).unwrap();
    assert!(p.uniform.is_none(), "{:?}", p.uniform);
}

#[test]
fn a_two_layer_forward_well_gives_back_delta_and_beta() {
    let l = lithosphere();
    let none = SeaLevelCurve::default();
    let s = spec(
        ForwardStretching::TwoLayer {
            delta: 1.5,
            beta: 2.5,
        },
        120.0,
        105.0,
        &ages(170.0, &[120.0, 105.0]),
    );
    let well = forward_well(
        &s,
        &Catalogue::published_defaults(),
        &ModelParameters::default(),
        &none,
    )
    .unwrap();
    let fit = fit_two_layer(
        &l,
        &observations(&well, &none),
        SubsidenceCurve::Best,
        120.0,
        105.0,
    )
    .unwrap();
    assert_relative(fit.delta, 1.5, 1e-3, "delta");
    assert_relative(fit.beta, 2.5, 1e-3, "beta");
}

#[test]
fn impossible_or_invalid_specs_are_refused() {
    let none = SeaLevelCurve::default();
    let (catalogue, params) = (Catalogue::published_defaults(), ModelParameters::default());
    // No subsidence while the water deepens would need negative sediment.
    let mut deepening = spec(
        ForwardStretching::Uniform { beta: 1.0 },
        100.0,
        90.0,
        &ages(160.0, &[]),
    );
    for surface in deepening.surfaces.iter_mut() {
        surface.water_depth = WaterDepth::exact(300.0 - surface.age_ma);
    }
    assert!(forward_well(&deepening, &catalogue, &params, &none).is_err());
    let compressed = spec(
        ForwardStretching::Uniform { beta: 0.8 },
        100.0,
        90.0,
        &ages(160.0, &[]),
    );
    assert!(forward_well(&compressed, &catalogue, &params, &none).is_err());
    let reversed = spec(
        ForwardStretching::Uniform { beta: 2.0 },
        90.0,
        100.0,
        &ages(160.0, &[]),
    );
    assert!(forward_well(&reversed, &catalogue, &params, &none).is_err());
}
