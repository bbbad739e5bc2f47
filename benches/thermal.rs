//! Speed of the thermal history of one invented 60-surface well (issue target: under
//! 2 ms a well for temperature and maturity together): the plate run behind the basement
//! heat flow, the transient and the steady temperature histories, EASY%Ro of every
//! horizon, and the whole thermal part of a well's analysis.

mod common;

use criterion::{Criterion, criterion_group, criterion_main};
use sagline_science::analysis::thermal::{
    ThermalInputs, basement_heat_flow, chosen_events, unit_properties, well_thermal,
};
use sagline_science::analysis::{self, StudyInputs};
use sagline_science::input::{self, TopsOptions};
use sagline_science::lithology::Catalogue;
use sagline_science::thermal::{
    ThermalMethod, ThermalSettings, horizon_maturity, temperature_history,
};
use sagline_science::{ModelParameters, SeaLevelCurve};
use std::hint::black_box;

fn thermal(c: &mut Criterion) {
    let tops = common::invented_basin_tops(1);
    let catalogue = Catalogue::published_defaults();
    let names: Vec<String> = catalogue
        .lithologies()
        .iter()
        .map(|l| l.name.clone())
        .collect();
    let spelling = |n: &str| names.iter().find(|c| c.eq_ignore_ascii_case(n)).cloned();
    let parsed =
        input::parse_tops_with_catalogue(tops.as_bytes(), &TopsOptions::default(), &spelling)
            .expect("the invented tops file is valid");
    let well = &parsed.wells[0];
    let inputs = StudyInputs {
        params: ModelParameters::default(),
        catalogue,
        sea_level: SeaLevelCurve::default(),
        thermal: ThermalInputs::default(),
    };
    let a = analysis::analyse_well(well, &inputs, None).expect("the invented well analyses");
    let interpretation = a.interpretation.as_ref().expect("a fit");
    let events = chosen_events(interpretation);
    let flow = basement_heat_flow(&inputs.params, &inputs.thermal.crust, &events, &a.history)
        .expect("a heat flow");
    let (properties, _) = unit_properties(well, &inputs.thermal.catalogue).expect("properties");
    let steady = ThermalSettings {
        method: ThermalMethod::SteadyPerStep,
        ..ThermalSettings::default()
    };
    let transient = ThermalSettings::default();
    let history = temperature_history(&a.history, &properties, &flow, &transient).unwrap();

    let mut group = c.benchmark_group("thermal, one well of 60 surfaces");
    group.bench_function("basement heat flow (plate, 201 nodes, 0.25 Myr)", |b| {
        b.iter(|| {
            basement_heat_flow(&inputs.params, &inputs.thermal.crust, &events, &a.history).unwrap()
        })
    });
    group.bench_function("temperature history, transient", |b| {
        b.iter(|| temperature_history(&a.history, &properties, &flow, &transient).unwrap())
    });
    group.bench_function("temperature history, steady per age", |b| {
        b.iter(|| temperature_history(&a.history, &properties, &flow, &steady).unwrap())
    });
    group.bench_function("EASY%Ro of every horizon", |b| {
        b.iter(|| horizon_maturity(black_box(&history), &inputs.thermal.windows).unwrap())
    });
    group.bench_function("whole thermal part of the analysis", |b| {
        b.iter(|| {
            well_thermal(
                well,
                &a.history,
                interpretation,
                &inputs.params,
                &inputs.thermal,
            )
            .unwrap()
        })
    });
    group.finish();
}

criterion_group!(benches, thermal);
criterion_main!(benches);
