//! Speed of the stretching analysis of one well: phase search and fits (uniform and
//! two-layer) of an invented 60-surface tectonic-subsidence series, alone (target
//! under 2 ms; the target for the whole model choice is 10 ms) and with the
//! 200-draw Monte-Carlo range (target under 50 ms); and one run of the numerical
//! lithosphere through a 20 Myr rift and 200 Myr of cooling at the default resolution.

use criterion::{Criterion, criterion_group, criterion_main};
use sagline_science::fit::{RiftEvent, SubsidenceObservation, UniformFit};
use sagline_science::mckenzie::Lithosphere;
use sagline_science::phases::propose_phases;
use sagline_science::uncertainty::{MonteCarloSettings, stretching_uncertainty};
use sagline_science::{Bounds, ModelParameters};
use std::hint::black_box;

/// Sixty invented surfaces 2.5-4.5 Myr apart, on a beta 1.8 rift from 121 to 104 Ma,
/// with up to 8 m of deterministic scatter (so the two-event search runs, as it would on
/// real data) and a PWD range that widens with depth.
fn invented_series(lithosphere: &Lithosphere) -> Vec<SubsidenceObservation> {
    let truth = UniformFit {
        events: vec![RiftEvent {
            rift_onset_ma: 121.0,
            rift_end_ma: 104.0,
            beta: 1.8,
        }],
        pre_rift_subsidence_m: 80.0,
        rms_misfit_m: 0.0,
    };
    let mut age = 0.0;
    let mut series: Vec<SubsidenceObservation> = (0..60)
        .map(|i| {
            let here = age;
            age += 2.5 + (i % 5) as f64 * 0.5;
            let y =
                truth.subsidence_m(lithosphere, here) + 8.0 * (((i * 37) % 11) as f64 / 5.0 - 1.0);
            let half = 10.0 + 0.05 * y;
            SubsidenceObservation {
                age_ma: here,
                tectonic_subsidence: Bounds {
                    min: y - half,
                    best: y,
                    max: y + half,
                },
            }
        })
        .collect();
    series.reverse();
    series
}

fn stretching(c: &mut Criterion) {
    let lithosphere = Lithosphere::water_loaded(&ModelParameters::default()).unwrap();
    let series = invented_series(&lithosphere);
    c.bench_function("phase search + fits, 60 surfaces", |b| {
        b.iter(|| propose_phases(black_box(&lithosphere), black_box(&series)).unwrap())
    });
    c.bench_function(
        "phase search + fits + 200 Monte-Carlo draws, 60 surfaces",
        |b| {
            b.iter(|| {
                let proposal = propose_phases(black_box(&lithosphere), black_box(&series)).unwrap();
                let uniform = proposal
                    .uniform
                    .as_ref()
                    .expect("the invented well has a rift");
                stretching_uncertainty(
                    &lithosphere,
                    &series,
                    uniform,
                    proposal.two_layer.as_ref(),
                    MonteCarloSettings::default(),
                    proposal.scores.misfit_scale,
                )
                .unwrap()
            })
        },
    );
}

fn numerical_plate(c: &mut Criterion) {
    use sagline_science::numerical_lithosphere::*;
    let lithosphere = Lithosphere::water_loaded(&ModelParameters::default()).unwrap();
    let ages: Vec<f64> = (0..=60).map(|i| 220.0 - 220.0 * i as f64 / 60.0).collect();
    let events = [StretchingEvent {
        onset_ma: 200.0,
        end_ma: 180.0,
        crust_factor: 1.6,
        mantle_factor: 2.4,
    }];
    c.bench_function(
        "numerical lithosphere, 220 Myr, 1,001 points, 0.05 Myr steps",
        |b| {
            b.iter(|| {
                run_plate(
                    black_box(&lithosphere),
                    &CrustalHeatProduction::TYPICAL_CONTINENTAL,
                    black_box(&events),
                    IsostasyConvention::Exact,
                    &NumericalSettings::default(),
                    &ages,
                    false,
                )
                .unwrap()
            })
        },
    );
}

criterion_group!(benches, stretching, numerical_plate);
criterion_main!(benches);
