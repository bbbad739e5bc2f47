//! Round trip: any valid table, written as CSV in any row order, reads back as
//! the same wells.

use super::tops_tests::parse;
use crate::{Erosion, LithologyMix, MixPart, Surface, WaterDepth, WellColumn};
use proptest::prelude::*;

#[derive(Debug, Clone)]
enum GenLithology {
    Single(&'static str),
    Mix(&'static str, u32, &'static str),
}

#[derive(Debug, Clone)]
enum GenWater {
    Default,
    Single(f64),
    Range(f64, f64),
}

#[derive(Debug, Clone)]
struct GenSurface {
    depth_step: f64,
    age_step: f64,
    lithology: GenLithology,
    water: GenWater,
    /// Thickness and where between the ages above and own the erosion happened (0..1);
    /// used only on the deeper of two surfaces at one depth.
    erosion: Option<(f64, f64)>,
}

fn gen_surface() -> impl Strategy<Value = GenSurface> {
    let names = prop::sample::select(vec!["shale", "sandstone", "limestone"]);
    let lithology = prop_oneof![
        names.clone().prop_map(GenLithology::Single),
        (names.clone(), 1u32..100, names).prop_filter_map("two different names", |(a, p, b)| {
            (a != b).then_some(GenLithology::Mix(a, p, b))
        }),
    ];
    let water = prop_oneof![
        Just(GenWater::Default),
        (-200.0..3000.0f64).prop_map(GenWater::Single),
        (-200.0..3000.0f64, 0.0..500.0f64).prop_map(|(a, w)| GenWater::Range(a, a + w)),
    ];
    let depth_step = prop_oneof![Just(0.0), 0.5..2000.0f64];
    let erosion = prop::option::of((1.0..1500.0f64, 0.05..0.95f64));
    (depth_step, 0.1..60.0f64, lithology, water, erosion).prop_map(
        |(depth_step, age_step, lithology, water, erosion)| GenSurface {
            depth_step,
            age_step,
            lithology,
            water,
            erosion,
        },
    )
}

/// The expected column and the CSV rows of one generated well.
fn build(
    name: &str,
    top_depth: f64,
    top_age: f64,
    plan: &[GenSurface],
) -> (WellColumn, Vec<String>) {
    let (mut depth, mut age) = (top_depth, top_age);
    let mut surfaces = Vec::new();
    let mut rows = Vec::new();
    for (i, g) in plan.iter().enumerate() {
        let above_age = age;
        if i > 0 {
            depth += g.depth_step;
            age += g.age_step;
        }
        let deepest = i + 1 == plan.len();
        let (lithology, lith_text) = match (&g.lithology, deepest) {
            (_, true) => (None, String::new()),
            (GenLithology::Single(n), _) => (Some(LithologyMix::single(*n)), n.to_string()),
            (GenLithology::Mix(a, p, b), _) => (
                Some(LithologyMix {
                    parts: vec![
                        MixPart {
                            lithology: a.to_string(),
                            fraction: f64::from(*p) / 100.0,
                        },
                        MixPart {
                            lithology: b.to_string(),
                            fraction: f64::from(100 - p) / 100.0,
                        },
                    ],
                }),
                format!("{a}:{p};{b}:{}", 100 - p),
            ),
        };
        let (water, water_text) = match g.water {
            GenWater::Default => (
                WaterDepth::exact(if i == 0 { depth } else { 0.0 }),
                ",,".to_string(),
            ),
            GenWater::Single(w) => (WaterDepth::exact(w), format!("{w},,")),
            GenWater::Range(a, b) => (WaterDepth { min_m: a, max_m: b }, format!(",{a},{b}")),
        };
        let erosion = g
            .erosion
            .filter(|_| i > 0 && !deepest && g.depth_step == 0.0)
            .map(|(eroded_m, t)| Erosion {
                eroded_m,
                eroded_at_ma: above_age + t * (age - above_age),
            });
        let erosion_text = erosion.map_or(",".to_string(), |e| {
            format!("{},{}", e.eroded_m, e.eroded_at_ma)
        });
        let horizon = format!("H{i}");
        rows.push(format!(
            "{name},{horizon},{depth},{age},{lith_text},{water_text},{erosion_text}"
        ));
        surfaces.push(Surface {
            horizon,
            depth_m: depth,
            age_ma: age,
            lithology_below: lithology,
            water_depth: water,
            erosion,
        });
    }
    (
        WellColumn::new(name, surfaces).expect("generated wells are valid"),
        rows,
    )
}

fn gen_table() -> impl Strategy<Value = (Vec<WellColumn>, Vec<String>)> {
    let well = (
        -300.0..800.0f64,
        0.0..20.0f64,
        prop::collection::vec(gen_surface(), 2..7),
    );
    prop::collection::vec(well, 1..5).prop_flat_map(|wells| {
        let mut columns = Vec::new();
        let mut rows = Vec::new();
        for (k, (top_depth, top_age, plan)) in wells.iter().enumerate() {
            let (column, well_rows) = build(&format!("Fictive-{k}"), *top_depth, *top_age, plan);
            columns.push(column);
            rows.extend(well_rows);
        }
        (Just(columns), Just(rows).prop_shuffle())
    })
}

proptest! {
    #[test]
    fn any_valid_table_round_trips_through_csv_text((wells, rows) in gen_table()) {
        let header = "well,horizon,depth_m,age_ma,lithology,water_depth_m,water_depth_min_m,water_depth_max_m,eroded_m,eroded_at_ma";
        let text = std::iter::once(header).chain(rows.iter().map(String::as_str)).collect::<Vec<_>>().join("\n");
        let parsed = parse(&text).map_err(|p| TestCaseError::fail(format!("{p:#?}\n{text}")))?;
        // Wells come back in the order they first appear in the shuffled rows.
        let mut expected: Vec<&WellColumn> = wells.iter().collect();
        expected.sort_by_key(|w| rows.iter().position(|r| r.starts_with(&format!("{},", w.name))));
        prop_assert_eq!(parsed.wells.iter().collect::<Vec<_>>(), expected);
        prop_assert_eq!(parsed.rows, rows.len());
    }
}
