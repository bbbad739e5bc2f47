use super::*;
use crate::analysis::observations;
use crate::backstrip::backstrip;
use crate::flexure::ElasticPlate;
use crate::flexure::foreland::{
    Facing, ForelandLoad, ForelandModel, LoadShape, foreland_deflection,
};
use crate::flexure::forward::{CurveSurface, well_following_curve};
use crate::lithology::Catalogue;
use crate::{LithologyMix, ModelParameters, SeaLevelCurve, WaterDepth};
use std::f64::consts::PI;

#[test]
fn the_curve_rides_the_forebulge_then_subsides_faster_as_the_load_nears() {
    // TS eq. 3-129 read in time: lifted most at s = pi (forebulge crest), zero at
    // s = 3 pi / 4, the full deflection at arrival, held after.
    let c = LoadingCurve {
        amplitude_m: 1000.0,
        time_constant_myr: 10.0,
        arrival_age_ma: 5.0,
        offset_m: 200.0,
        plate: ForelandPlate::Continuous,
    };
    assert!((c.subsidence_m(5.0 + 10.0 * 0.75 * PI) - 200.0).abs() < 1e-9);
    let crest = c.subsidence_m(5.0 + 10.0 * PI);
    assert!((crest - (200.0 - 1000.0 * (-PI).exp())).abs() < 1e-9);
    assert_eq!(c.subsidence_m(5.0), 1200.0);
    assert_eq!(c.subsidence_m(1.0), 1200.0);
    // Accelerating: each Myr nearer the arrival adds more subsidence than the one before,
    // until the last stretch (s < 1, where the curve flattens into the load).
    let rates: Vec<f64> = (0..10)
        .map(|i| {
            let age = 25.0 - i as f64;
            c.subsidence_m(age - 1.0) - c.subsidence_m(age)
        })
        .collect();
    assert!(rates.windows(2).all(|w| w[1] > w[0]), "{rates:?}");
    // alpha 54 km over tau 10 Myr: 5.4 km/Myr.
    assert!((c.approach_rate_m_per_myr(54e3) - 5.4e3).abs() < 1e-9);
    assert_eq!(c.load_distance_m(15.0, 54e3), 54e3);
}

#[test]
fn the_fit_recovers_a_foreland_well_built_from_a_migrating_block_load() {
    // A foreland well at distance 0; a block load 10 km wide of 3e12 N/m advancing
    // 5 km/Myr on a continuous plate of Te 20 km (E 70 GPa), its front reaching the well
    // at 2 Ma. The well's tectonic subsidence is the spectral plate's deflection at the
    // well under the block (not the line-load curve the fit uses); the well's tops are
    // built to follow it under Airy backstripping, then backstripped again and fitted.
    let params = ModelParameters::default();
    let drho = params.mantle_density_kg_m3 - params.water_density_kg_m3;
    let plate = ElasticPlate::default().with_thickness(20e3);
    let alpha = plate.flexural_parameter_m(drho);
    let (rate, arrival, width) = (5e3, 2.0, 10e3);
    let deflection = |age: f64| {
        let model = ForelandModel {
            elastic_thickness_m: 20e3,
            load: ForelandLoad {
                shape: LoadShape::Block { width_m: width },
                front_m: -rate * (age - arrival),
                force_n_per_m: 3e12,
                facing: Facing::Increasing,
            },
            plate: ForelandPlate::Continuous,
        };
        foreland_deflection(&model, &plate, drho, -400e3, 100e3).deflection_at(0.0)
    };
    // Surfaces every 1.5 Myr from 34 Ma (past the forebulge crest, so the subsidence only
    // grows) to 4 Ma; shale and sandstone in turn, water 40-60 m deep.
    let ages: Vec<f64> = (0..=20).map(|i| 4.0 + 1.5 * i as f64).collect();
    let surfaces: Vec<CurveSurface> = ages
        .iter()
        .enumerate()
        .map(|(i, &age)| CurveSurface {
            horizon: format!("Vale horizon {i:02}"),
            age_ma: age,
            lithology_below: (i + 1 < ages.len())
                .then(|| LithologyMix::single(if i % 2 == 0 { "shale" } else { "sandstone" })),
            water_depth: WaterDepth::new(40.0, 60.0).unwrap(),
        })
        .collect();
    let catalogue = Catalogue::published_defaults();
    let well = well_following_curve(
        "Vale-1",
        &surfaces,
        &deflection,
        &catalogue,
        &params,
        &SeaLevelCurve::default(),
    )
    .unwrap();
    let history = backstrip(&well, &catalogue, &params, &SeaLevelCurve::default()).unwrap();
    let obs = observations(&history);
    let fit =
        fit_loading_curve_to_observations(&obs, SubsidenceCurve::Best, ForelandPlate::Continuous)
            .unwrap();
    let c = fit.curve;
    let tau = alpha / rate;
    assert!(
        (c.time_constant_myr - tau).abs() < 0.1 * tau,
        "tau {} Myr, true {tau}",
        c.time_constant_myr
    );
    // The block's centre, where a line load would stand, arrives width / 2 / rate later.
    let centre_arrival = arrival - 0.5 * width / rate;
    assert!(
        (c.arrival_age_ma - centre_arrival).abs() < 1.5,
        "arrival {} Ma, block centre {centre_arrival} Ma",
        c.arrival_age_ma
    );
    assert!(fit.rms_misfit_m < 5.0, "rms {}", fit.rms_misfit_m);
    assert_eq!(fit.parameters, LOADING_CURVE_PARAMETERS);
    assert!(fit.warnings.is_empty(), "{:?}", fit.warnings);
    // The rate back from the plate's alpha.
    let v = c.approach_rate_m_per_myr(alpha);
    assert!((v - rate).abs() < 0.1 * rate, "rate {v}");
}

#[test]
fn too_few_points_or_no_time_are_refused() {
    let few = [(10.0, 1.0), (8.0, 2.0), (6.0, 3.0), (4.0, 4.0)];
    assert!(fit_loading_curve(&few, ForelandPlate::Continuous).is_err());
    let flat = [(5.0, 1.0); 6];
    assert!(fit_loading_curve(&flat, ForelandPlate::Continuous).is_err());
}
