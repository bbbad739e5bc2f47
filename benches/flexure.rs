//! Speed of flexural backstripping along a section: 50 invented wells 4 km apart, each
//! of 60 surfaces (2.5 Ma apart, shale, sandstone and chalk in turn), thickest in the
//! middle of the section. Targets: one flexural backstrip, and a Te sweep of 10 values,
//! each under 1 s on this 2-core machine.

use criterion::{Criterion, criterion_group, criterion_main};
use sagline_science::backstrip::{WellHistory, backstrip};
use sagline_science::flexure::backstrip::{
    FlexuralSettings, PlacedHistory, flexural_backstrip, te_sweep,
};
use sagline_science::flexure::{ElasticPlate, PlateGeometry};
use sagline_science::lithology::Catalogue;
use sagline_science::{
    LithologyMix, ModelParameters, SeaLevelCurve, Surface, WaterDepth, WellColumn,
};
use std::hint::black_box;

fn invented_well(i: usize) -> WellColumn {
    // Thickness scale: a basin 200 km wide, deepest in the middle.
    let scale = 0.3 + 0.7 * (std::f64::consts::PI * (i as f64 + 0.5) / 50.0).sin();
    let lithology = |k: usize| match k % 3 {
        0 => "shale",
        1 => "sandstone",
        _ => "chalk",
    };
    let mut depth = 100.0;
    let surfaces = (0..60)
        .map(|k| {
            let s = Surface {
                horizon: format!("Mire {k}"),
                depth_m: depth,
                age_ma: 2.5 * k as f64,
                lithology_below: (k < 59).then(|| LithologyMix::single(lithology(k))),
                water_depth: WaterDepth::new(50.0, 100.0 + (k % 5) as f64 * 20.0).unwrap(),
                erosion: None,
            };
            depth += scale * (40.0 + (k * 37 % 90) as f64);
            s
        })
        .collect();
    WellColumn::new(format!("Mire-{i:02}"), surfaces).unwrap()
}

fn histories() -> Vec<WellHistory> {
    let catalogue = Catalogue::published_defaults();
    let params = ModelParameters::default();
    (0..50)
        .map(|i| {
            backstrip(
                &invented_well(i),
                &catalogue,
                &params,
                &SeaLevelCurve::default(),
            )
            .unwrap()
        })
        .collect()
}

fn bench_flexure(c: &mut Criterion) {
    let histories = histories();
    let placed: Vec<PlacedHistory> = histories
        .iter()
        .enumerate()
        .map(|(i, history)| PlacedHistory {
            distance_m: 4e3 * i as f64,
            history,
        })
        .collect();
    let params = ModelParameters::default();
    let settings = FlexuralSettings {
        plate: ElasticPlate::default().with_thickness(20e3),
        ..Default::default()
    };
    let mut group = c.benchmark_group("flexure");
    group.sample_size(10);
    group.bench_function(
        "flexural backstrip, 50 wells x 60 surfaces, Te 20 km",
        |b| b.iter(|| flexural_backstrip(black_box(&placed), &params, &settings).unwrap()),
    );
    let broken = FlexuralSettings {
        geometry: PlateGeometry::Broken { break_m: 100e3 },
        ..settings
    };
    group.bench_function("flexural backstrip, broken plate", |b| {
        b.iter(|| flexural_backstrip(black_box(&placed), &params, &broken).unwrap())
    });
    let sweep: Vec<f64> = [0.0, 2.0, 5.0, 10.0, 15.0, 20.0, 30.0, 40.0, 60.0, 80.0]
        .iter()
        .map(|t| t * 1e3)
        .collect();
    group.bench_function("Te sweep of 10 values, 50 wells x 60 surfaces", |b| {
        b.iter(|| te_sweep(black_box(&placed), &params, &settings, &sweep).unwrap())
    });
    group.finish();
}

criterion_group!(benches, bench_flexure);
criterion_main!(benches);
