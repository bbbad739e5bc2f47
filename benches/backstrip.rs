//! Speed of backstripping one well: an invented 60-surface well with mixed lithologies,
//! a hiatus, an erosional unconformity, subaerial surfaces and a sea-level curve.
//! Target: under 100 microseconds on one core.

use criterion::{Criterion, criterion_group, criterion_main};
use sagline_science::backstrip::backstrip;
use sagline_science::lithology::Catalogue;
use sagline_science::{
    Erosion, LithologyMix, MixPart, ModelParameters, SeaLevelCurve, SeaLevelPoint, Surface,
    WaterDepth, WellColumn,
};
use std::hint::black_box;

/// Sixty invented surfaces, 2.5 Ma and 40-160 m apart, cycling through shale,
/// sandstone, a shale-sandstone mix, chalk and salt.
fn invented_well() -> WellColumn {
    let lithology = |i: usize| match i % 5 {
        0 => LithologyMix::single("shale"),
        1 => LithologyMix::single("sandstone"),
        2 => LithologyMix {
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
        3 => LithologyMix::single("chalk"),
        _ => LithologyMix::single("salt"),
    };
    let mut depth = 120.0;
    let surfaces = (0..60)
        .map(|i| {
            let surface = Surface {
                horizon: format!("Tern {i}"),
                depth_m: depth,
                age_ma: 2.5 * i as f64,
                lithology_below: (i < 59).then(|| lithology(i)),
                water_depth: WaterDepth::new(
                    -20.0 + (i % 7) as f64 * 30.0,
                    60.0 + (i % 7) as f64 * 40.0,
                )
                .expect("min below max"),
                erosion: (i == 30).then_some(Erosion {
                    eroded_m: 400.0,
                    eroded_at_ma: 73.0,
                }),
            };
            // A hiatus below surface 20 and the erosional unconformity between 29 and 30
            // (two surfaces at one depth each); otherwise 40-160 m per unit.
            if i != 20 && i != 29 {
                depth += 40.0 + (i * 37 % 120) as f64;
            }
            surface
        })
        .collect();
    WellColumn::new("Tern-1", surfaces).expect("a valid invented well")
}

fn bench_backstrip(c: &mut Criterion) {
    let well = invented_well();
    let catalogue = Catalogue::published_defaults();
    let params = ModelParameters::default();
    let sea_level = SeaLevelCurve::new(
        (0..16)
            .map(|i| SeaLevelPoint {
                age_ma: 10.0 * i as f64,
                sea_level_m: 80.0 * (i as f64 * 0.7).sin(),
            })
            .collect(),
    )
    .expect("distinct ages");
    c.bench_function("backstrip 60-surface well", |b| {
        b.iter(|| backstrip(black_box(&well), &catalogue, &params, &sea_level).expect("backstrips"))
    });
}

criterion_group!(benches, bench_backstrip);
criterion_main!(benches);
