use super::*;
use crate::flexure::plate::{
    broken_line_load_deflection, broken_line_load_peak_m, continuous_line_load_deflection,
    continuous_line_load_peak_m,
};
use std::f64::consts::PI;

/// drho = rho_m - rho_w for the default parameters (3330 - 1000).
const DRHO: f64 = 2330.0;

fn plate(te_m: f64) -> ElasticPlate {
    ElasticPlate::default().with_thickness(te_m)
}

/// Reproducible noise, uniform with standard deviation `sigma` (xorshift64).
struct Noise(u64);

impl Noise {
    fn next(&mut self, sigma: f64) -> f64 {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        let u = (self.0 >> 11) as f64 / (1u64 << 53) as f64;
        (2.0 * u - 1.0) * 3f64.sqrt() * sigma
    }
}

/// A block load on a continuous plate by the closed-form line-load solution
/// (Turcotte & Schubert eq. 3-129) superposed over 600 slices: a different method from
/// the spectral solver the fit uses.
fn superposed_block(x: f64, te_m: f64, front: f64, width: f64, force: f64) -> f64 {
    let p = plate(te_m);
    let (d, alpha) = (p.rigidity_n_m(), p.flexural_parameter_m(DRHO));
    let slices = 600;
    let slice = force / slices as f64;
    (0..slices)
        .map(|i| {
            let xi = front - width * (i as f64 + 0.5) / slices as f64;
            continuous_line_load_deflection(
                x - xi,
                continuous_line_load_peak_m(slice, d, alpha),
                alpha,
            )
        })
        .sum()
}

#[test]
fn the_fit_recovers_te_and_the_load_of_a_superposed_block_load_section() {
    // Known Te 30 km, a 30 km block with its front 15 km before the first well, wells every
    // 15 km, 10 m noise, an unflexed plate 150 m deep.
    let (te, front, width, force) = (30e3, -15e3, 30e3, 4e12);
    let spacing = 15e3;
    let mut noise = Noise(0x5eed_f1e7);
    let points: Vec<SubsidencePoint> = (0..23)
        .map(|i| {
            let x = i as f64 * spacing;
            SubsidencePoint {
                distance_m: x,
                subsidence_m: 150.0
                    + superposed_block(x, te, front, width, force)
                    + noise.next(10.0),
                sigma_m: 10.0,
            }
        })
        .collect();
    let settings = ForelandFitSettings {
        shape: LoadShape::Block { width_m: width },
        ..Default::default()
    };
    let fit = fit_foreland(&points, &plate(0.0), DRHO, &settings).unwrap();
    let got = fit.model;
    assert_eq!(got.load.facing, Facing::Increasing);
    assert!(
        (got.elastic_thickness_m - te).abs() < 0.1 * te,
        "Te {} km, true {} km",
        got.elastic_thickness_m / 1e3,
        te / 1e3
    );
    assert!(
        (got.load.front_m - front).abs() < spacing,
        "front {} km, true {} km",
        got.load.front_m / 1e3,
        front / 1e3
    );
    assert!(
        (got.load.force_n_per_m - force).abs() < 0.15 * force,
        "{}",
        got.load.force_n_per_m
    );
    assert!(
        fit.misfit_to_uncertainty < 1.5,
        "{}",
        fit.misfit_to_uncertainty
    );
    assert!(fit.warnings.is_empty(), "{:?}", fit.warnings);
    // The forebulge stands about pi alpha beyond the load's centre and lifts the plate
    // by about exp(-pi) of the peak (TS eq. 3-131; a block 30 km wide moves both a little).
    let bulge = fit.forebulge.unwrap();
    let alpha = plate(te).flexural_parameter_m(DRHO);
    let centre = front - 0.5 * width;
    assert!(
        (bulge.crest_m - (centre + PI * alpha)).abs() < 0.15 * PI * alpha,
        "{bulge:?}"
    );
    assert!((bulge.basin_edge_m - (centre + 0.75 * PI * alpha)).abs() < 0.15 * PI * alpha);
    let peak = superposed_block(front - 0.5 * width, te, front, width, force);
    assert!(
        bulge.height_m > 0.02 * peak && bulge.height_m < 0.06 * peak,
        "{bulge:?}"
    );
}

#[test]
fn the_fit_recovers_a_line_load_on_a_broken_plate_facing_the_other_way() {
    // Known Te 15 km, a line load on the break at 320 km with the foreland towards smaller
    // distances; the truth from w = w0 exp(-x/alpha) cos(x/alpha) (TS eq. 3-135), the fit by
    // finite differences. Wells every 12.5 km, 5 m noise, no offset.
    let (te, front, force) = (15e3, 320e3, 2e12);
    let p = plate(te);
    let (d, alpha) = (p.rigidity_n_m(), p.flexural_parameter_m(DRHO));
    let w0 = broken_line_load_peak_m(force, d, alpha);
    let mut noise = Noise(42);
    let spacing = 12.5e3;
    let points: Vec<SubsidencePoint> = (0..25)
        .map(|i| {
            let x = 15e3 + i as f64 * spacing;
            SubsidencePoint {
                distance_m: x,
                subsidence_m: broken_line_load_deflection(front - x, w0, alpha) + noise.next(5.0),
                sigma_m: 5.0,
            }
        })
        .collect();
    let settings = ForelandFitSettings {
        plate: ForelandPlate::BrokenAtLoad,
        free_offset: false,
        ..Default::default()
    };
    let fit = fit_foreland(&points, &plate(0.0), DRHO, &settings).unwrap();
    assert_eq!(fit.model.load.facing, Facing::Decreasing);
    assert!(
        (fit.model.elastic_thickness_m - te).abs() < 0.1 * te,
        "{:?}",
        fit.model
    );
    assert!(
        (fit.model.load.front_m - front).abs() < spacing,
        "{:?}",
        fit.model
    );
    assert_eq!(fit.parameters, 3);
    // TS: the broken plate's forebulge crest at 3 pi alpha / 4, zero at pi alpha / 2.
    let bulge = fit.forebulge.unwrap();
    assert!(
        (bulge.crest_m - (front - 0.75 * PI * alpha)).abs() < 0.1 * alpha,
        "{bulge:?}"
    );
    assert!(
        (bulge.basin_edge_m - (front - 0.5 * PI * alpha)).abs() < 0.1 * alpha,
        "{bulge:?}"
    );
}

#[test]
fn the_migration_of_the_load_and_its_forebulge_is_measured_over_several_ages() {
    // A line load advancing 2 km/Myr towards larger distances, Te 20 km, at 20, 10, 0 Ma,
    // its front among the wells (some wells stand on the thrust sheets behind it).
    let te = 20e3;
    let p = plate(te);
    let (d, alpha) = (p.rigidity_n_m(), p.flexural_parameter_m(DRHO));
    let mut noise = Noise(7);
    let ages: Vec<(f64, Vec<SubsidencePoint>)> = [20.0, 10.0, 0.0]
        .into_iter()
        .map(|age: f64| {
            let front = 20e3 + 2e3 * (20.0 - age);
            let w0 = continuous_line_load_peak_m(1.5e12, d, alpha);
            let points = (0..25)
                .map(|i| {
                    let x = i as f64 * 12e3;
                    SubsidencePoint {
                        distance_m: x,
                        subsidence_m: continuous_line_load_deflection(x - front, w0, alpha)
                            + noise.next(5.0),
                        sigma_m: 5.0,
                    }
                })
                .collect();
            (age, points)
        })
        .collect();
    let settings = ForelandFitSettings {
        facing: Some(Facing::Increasing),
        free_offset: false,
        ..Default::default()
    };
    let history = fit_foreland_through_time(&ages, &plate(0.0), DRHO, &settings).unwrap();
    let ages_fitted: Vec<f64> = history.fits.iter().map(|f| f.age_ma).collect();
    assert_eq!(ages_fitted, [20.0, 10.0, 0.0]);
    let front = history.front_migration_m_per_myr.unwrap();
    assert!((front - 2e3).abs() < 0.2e3, "front migrates {front} m/Myr");
    let bulge = history.forebulge_migration_m_per_myr.unwrap();
    assert!(
        (bulge - 2e3).abs() < 0.3e3,
        "forebulge migrates {bulge} m/Myr"
    );
}

#[test]
fn a_section_without_flexure_says_so() {
    // Tectonic subsidence that falls steadily away from nothing: no downward load helps.
    let points: Vec<SubsidencePoint> = (0..10)
        .map(|i| SubsidencePoint {
            distance_m: i as f64 * 10e3,
            subsidence_m: 500.0 + if i % 2 == 0 { 3.0 } else { -3.0 },
            sigma_m: 10.0,
        })
        .collect();
    let fit = fit_foreland(&points, &plate(0.0), DRHO, &ForelandFitSettings::default()).unwrap();
    assert!(!fit.warnings.is_empty());
    let too_few = &points[..4];
    assert!(fit_foreland(too_few, &plate(0.0), DRHO, &ForelandFitSettings::default()).is_err());
}
