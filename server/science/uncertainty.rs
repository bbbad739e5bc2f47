//! Ranges on the stretching factors from the palaeo-water-depth (PWD) uncertainty.
//!
//! Two measures, both with the rift timing held fixed:
//! * the factors fitted to the min and to the max tectonic-subsidence curves (every
//!   point at the shallow, or the deep, end of its PWD range at once);
//! * a seeded Monte-Carlo draw: each point's tectonic subsidence drawn uniformly in
//!   [min, max], independently, the factors refitted per draw, and the 5th and 95th
//!   percentiles reported (PRODUCT.md "Computation" 4; docs/science.md 9.1: PWD bounds pass
//!   into Y one-for-one).
//!
//! And, for the uniform beta, two further sources (docs/science.md 8.4):
//! * the lithosphere parameters: plate and crust thickness, T1, densities and thermal
//!   expansion drawn uniformly within [`PARAMETER_HALF_WIDTHS`] about the study's values,
//!   beta refitted to the best curve per draw (5th-95th percentiles);
//! * the misfit: when the model misfits beyond what the ranges allow (misfit scale s^2 > 1
//!   from the model choice), both half-widths are multiplied by s.
//!
//! The combined range adds the two half-widths in quadrature on each side of the fitted
//! beta (independent sources), then inflates; the larger source is named as dominant.
//!
//! The same seed gives the same draws on every machine (rand's `StdRng`).

use super::ScienceError;
use super::fit::{
    FitProblem, ModelKind, SubsidenceCurve, SubsidenceObservation, TwoLayerFit, UniformFit,
    check_observations, fit_two_layer, fit_uniform_events,
};
use super::mckenzie::Lithosphere;
use rand::rngs::StdRng;
use rand::{RngExt, SeedableRng};
use serde::{Deserialize, Serialize};

/// How many Monte-Carlo draws, from which seed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct MonteCarloSettings {
    pub draws: usize,
    pub seed: u64,
}

impl Default for MonteCarloSettings {
    /// 200 draws (PRODUCT.md), seed 1.
    fn default() -> Self {
        MonteCarloSettings {
            draws: 200,
            seed: 1,
        }
    }
}

/// The spread of one stretching factor.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct FactorSpread {
    /// Factor fitted to the min tectonic-subsidence curve (the smaller of the two fits).
    pub curve_min: f64,
    /// Factor fitted to the max curve (the larger of the two fits).
    pub curve_max: f64,
    /// 5th percentile of the Monte-Carlo draws.
    pub p05: f64,
    /// 95th percentile of the Monte-Carlo draws.
    pub p95: f64,
}

impl FactorSpread {
    /// Lower end of the reported range: the smaller of `curve_min` and `p05`.
    pub fn min(&self) -> f64 {
        self.curve_min.min(self.p05)
    }

    /// Upper end of the reported range: the larger of `curve_max` and `p95`.
    pub fn max(&self) -> f64 {
        self.curve_max.max(self.p95)
    }
}

/// Half-widths of the uniform draws of the lithosphere parameters: plate thickness
/// ±10 km (Parsons & Sclater 1977: 125 ± 10 km [confirmed, SCIENCE 7]); crust ±3 km,
/// T1 ±100 °C, mantle density ±20, crust density ±50 kg m^-3, thermal expansion ±10 %
/// (common practice for a regional study \[memory\]).
pub const PARAMETER_HALF_WIDTHS: ParameterHalfWidths = ParameterHalfWidths {
    lithosphere_thickness_m: 10_000.0,
    crust_thickness_m: 3_000.0,
    asthenosphere_temperature_c: 100.0,
    mantle_density_kg_m3: 20.0,
    crust_density_kg_m3: 50.0,
    thermal_expansion_share: 0.10,
};

/// See [`PARAMETER_HALF_WIDTHS`].
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ParameterHalfWidths {
    pub lithosphere_thickness_m: f64,
    pub crust_thickness_m: f64,
    pub asthenosphere_temperature_c: f64,
    pub mantle_density_kg_m3: f64,
    pub crust_density_kg_m3: f64,
    /// As a share of the value.
    pub thermal_expansion_share: f64,
}

/// Which source moves beta most.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum UncertaintySource {
    WaterDepth,
    LithosphereParameters,
}

impl UncertaintySource {
    pub fn label(self) -> &'static str {
        match self {
            UncertaintySource::WaterDepth => "water depth",
            UncertaintySource::LithosphereParameters => "lithosphere parameters",
        }
    }
}

/// Ranges on the uniform (cumulative) beta and, for a single-event well, on the
/// two-layer delta and beta.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct StretchingUncertainty {
    /// From the palaeo-water-depth ranges alone.
    pub beta: FactorSpread,
    pub two_layer_delta: Option<FactorSpread>,
    pub two_layer_beta: Option<FactorSpread>,
    pub settings: MonteCarloSettings,
    /// Beta from the lithosphere-parameter draws (5th-95th percentiles in p05/p95 and
    /// curve_min/curve_max alike).
    pub parameter_beta: FactorSpread,
    /// s >= 1: the factor the half-widths were multiplied by for the misfit.
    pub misfit_inflation: f64,
    /// The combined range on the uniform beta.
    pub combined_min: f64,
    pub combined_max: f64,
    pub dominant: UncertaintySource,
}

/// Ranges for a fitted well. `uniform` is the chosen fit (one or two events) and
/// `two_layer` its two-layer companion; their timings are held. `misfit_scale` is the
/// model choice's chi^2 per degree of freedom (1 when the model fits within the ranges).
/// Errors: a fit without a rift event, zero draws, or a series that
/// [`check_observations`] refuses.
pub fn stretching_uncertainty(
    lithosphere: &Lithosphere,
    observations: &[SubsidenceObservation],
    uniform: &UniformFit,
    two_layer: Option<&TwoLayerFit>,
    settings: MonteCarloSettings,
    misfit_scale: f64,
) -> Result<StretchingUncertainty, ScienceError> {
    check_observations(observations)?;
    if uniform.events.is_empty() {
        return Err(ScienceError::CannotFit(
            "no rift event to put a range on".into(),
        ));
    }
    if settings.draws == 0 {
        return Err(ScienceError::CannotFit(
            "the Monte-Carlo draw needs at least one draw".into(),
        ));
    }
    let timings: Vec<(f64, f64)> = uniform
        .events
        .iter()
        .map(|e| (e.rift_onset_ma, e.rift_end_ma))
        .collect();
    let curve_beta =
        |c| fit_uniform_events(lithosphere, observations, c, &timings).map(|f| f.cumulative_beta());
    let (b_lo, b_hi) = (
        curve_beta(SubsidenceCurve::Min)?,
        curve_beta(SubsidenceCurve::Max)?,
    );

    let ages: Vec<f64> = observations.iter().map(|o| o.age_ma).collect();
    let mut uniform_problem = FitProblem::new(lithosphere, &ages, &timings);
    let uniform_start: Vec<f64> = uniform.events.iter().map(|e| 1.0 - 1.0 / e.beta).collect();
    let mut two_layer_problem = two_layer.map(|t| {
        let start = [1.0 - 1.0 / t.delta, 1.0 - 1.0 / t.beta];
        (
            FitProblem::new(lithosphere, &ages, &[(t.rift_onset_ma, t.rift_end_ma)]),
            start,
        )
    });

    let mut rng = StdRng::seed_from_u64(settings.seed);
    let mut y = vec![0.0; observations.len()];
    let (mut betas, mut deltas, mut mantle) = (Vec::new(), Vec::new(), Vec::new());
    for _ in 0..settings.draws {
        for (v, o) in y.iter_mut().zip(observations) {
            let b = o.tectonic_subsidence;
            *v = b.min + (b.max - b.min) * rng.random::<f64>();
        }
        let u = uniform_problem.refit_near(&y, ModelKind::Uniform, &uniform_start);
        betas.push(u.iter().map(|u| 1.0 / (1.0 - u)).product());
        if let Some((problem, start)) = two_layer_problem.as_mut() {
            let u = problem.refit_near(&y, ModelKind::TwoLayer, start.as_slice());
            deltas.push(1.0 / (1.0 - u[0]));
            mantle.push(1.0 / (1.0 - u[1]));
        }
    }

    let spread = |lo: f64, hi: f64, draws: &mut Vec<f64>| {
        draws.sort_by(f64::total_cmp);
        FactorSpread {
            curve_min: lo.min(hi),
            curve_max: lo.max(hi),
            p05: percentile(draws, 0.05),
            p95: percentile(draws, 0.95),
        }
    };
    let beta = spread(b_lo, b_hi, &mut betas);
    let (two_layer_delta, two_layer_beta) = match two_layer {
        Some(t) => {
            let lo = fit_two_layer(
                lithosphere,
                observations,
                SubsidenceCurve::Min,
                t.rift_onset_ma,
                t.rift_end_ma,
            )?;
            let hi = fit_two_layer(
                lithosphere,
                observations,
                SubsidenceCurve::Max,
                t.rift_onset_ma,
                t.rift_end_ma,
            )?;
            (
                Some(spread(lo.delta, hi.delta, &mut deltas)),
                Some(spread(lo.beta, hi.beta, &mut mantle)),
            )
        }
        None => (None, None),
    };
    // Lithosphere-parameter draws: beta refitted to the best curve on each drawn plate.
    let best: Vec<f64> = observations
        .iter()
        .map(|o| o.tectonic_subsidence.best)
        .collect();
    let h = PARAMETER_HALF_WIDTHS;
    let mut parameter_betas = Vec::with_capacity(settings.draws);
    for _ in 0..settings.draws {
        let mut draw = |half: f64| half * (2.0 * rng.random::<f64>() - 1.0);
        let l = lithosphere;
        let a = l.lithosphere_thickness_m + draw(h.lithosphere_thickness_m);
        let plate = Lithosphere {
            lithosphere_thickness_m: a,
            crust_thickness_m: l.crust_thickness_m + draw(h.crust_thickness_m),
            asthenosphere_temperature_c: l.asthenosphere_temperature_c
                + draw(h.asthenosphere_temperature_c),
            mantle_density_kg_m3: l.mantle_density_kg_m3 + draw(h.mantle_density_kg_m3),
            crust_density_kg_m3: l.crust_density_kg_m3 + draw(h.crust_density_kg_m3),
            thermal_expansion_per_c: l.thermal_expansion_per_c
                * (1.0 + draw(h.thermal_expansion_share)),
            // tau = a^2 / (pi^2 kappa): the diffusivity stays, the time constant follows a.
            time_constant_myr: l.time_constant_myr * (a / l.lithosphere_thickness_m).powi(2),
            ..*l
        };
        let mut problem = FitProblem::new(&plate, &ages, &timings);
        let u = problem.refit_near(&best, ModelKind::Uniform, &uniform_start);
        parameter_betas.push(u.iter().map(|u| 1.0 / (1.0 - u)).product());
    }
    parameter_betas.sort_by(f64::total_cmp);
    let (p05, p95) = (
        percentile(&parameter_betas, 0.05),
        percentile(&parameter_betas, 0.95),
    );
    let parameter_beta = FactorSpread {
        curve_min: p05,
        curve_max: p95,
        p05,
        p95,
    };
    let fitted = uniform.cumulative_beta();
    let misfit_inflation = misfit_scale.max(1.0).sqrt();
    let below = |s: &FactorSpread| (fitted - s.min()).max(0.0);
    let above = |s: &FactorSpread| (s.max() - fitted).max(0.0);
    let combined_min =
        (fitted - misfit_inflation * below(&beta).hypot(below(&parameter_beta))).max(1.0);
    let combined_max = fitted + misfit_inflation * above(&beta).hypot(above(&parameter_beta));
    let width = |s: &FactorSpread| s.max() - s.min();
    let dominant = if width(&parameter_beta) > width(&beta) {
        UncertaintySource::LithosphereParameters
    } else {
        UncertaintySource::WaterDepth
    };
    Ok(StretchingUncertainty {
        beta,
        two_layer_delta,
        two_layer_beta,
        settings,
        parameter_beta,
        misfit_inflation,
        combined_min,
        combined_max,
        dominant,
    })
}

/// The `p` quantile of sorted values, linearly interpolated between order statistics.
fn percentile(sorted: &[f64], p: f64) -> f64 {
    let position = p * (sorted.len() - 1) as f64;
    let (below, above) = (position.floor() as usize, position.ceil() as usize);
    sorted[below] + (sorted[above] - sorted[below]) * (position - below as f64)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::Bounds;
    use crate::fit::tests::{classifier_curve, mckenzie};
    use crate::fit::{RiftEvent, fit_uniform};
    use crate::tolerance::assert_relative;

    /// The docs/science.md 8.2 classifier curve (beta 2) with a PWD range of +-(5 m + `share`
    /// of the subsidence): deeper water is less certain, so the range widens as the basin
    /// deepens (Y inherits the PWD bounds one-for-one, docs/science.md 9.1). A range of one
    /// width everywhere would only move Y0.
    fn ranged(share: f64) -> Vec<SubsidenceObservation> {
        classifier_curve()
            .into_iter()
            .map(|o| {
                let y = o.tectonic_subsidence.best;
                let half = if share > 0.0 { 5.0 + share * y } else { 0.0 };
                SubsidenceObservation {
                    tectonic_subsidence: Bounds {
                        min: y - half,
                        best: y,
                        max: y + half,
                    },
                    ..o
                }
            })
            .collect()
    }

    #[test]
    fn the_true_beta_lies_inside_both_ranges_and_the_draws_are_narrower() {
        let l = mckenzie();
        let obs = ranged(0.05);
        let fit = fit_uniform(&l, &obs, SubsidenceCurve::Best, 150.0, 130.0).unwrap();
        let two = fit_two_layer(&l, &obs, SubsidenceCurve::Best, 150.0, 130.0).unwrap();
        let u = stretching_uncertainty(
            &l,
            &obs,
            &fit,
            Some(&two),
            MonteCarloSettings::default(),
            1.0,
        )
        .unwrap();
        // The curve was built with beta = 2 (docs/science.md 8.2).
        let b = u.beta;
        assert!(b.curve_min < 2.0 && 2.0 < b.curve_max, "{b:?}");
        assert!(b.p05 < 2.0 && 2.0 < b.p95, "{b:?}");
        // Shifting every point by the full range moves beta more than independent draws do
        // (independent errors partly cancel in a least-squares fit).
        assert!(b.curve_min < b.p05 && b.p95 < b.curve_max, "{b:?}");
        let (d, m) = (u.two_layer_delta.unwrap(), u.two_layer_beta.unwrap());
        assert!(d.min() < 2.0 && 2.0 < d.max(), "{d:?}");
        assert!(m.min() < 2.0 && 2.0 < m.max(), "{m:?}");
    }

    #[test]
    fn the_same_seed_gives_the_same_range_and_a_wider_pwd_range_a_wider_one() {
        let l = mckenzie();
        let narrow = ranged(0.02);
        let fit = fit_uniform(&l, &narrow, SubsidenceCurve::Best, 150.0, 130.0).unwrap();
        let settings = MonteCarloSettings { draws: 50, seed: 7 };
        let a = stretching_uncertainty(&l, &narrow, &fit, None, settings, 1.0).unwrap();
        let b = stretching_uncertainty(&l, &narrow, &fit, None, settings, 1.0).unwrap();
        assert_eq!(a, b);
        let wide = stretching_uncertainty(&l, &ranged(0.08), &fit, None, settings, 1.0).unwrap();
        assert!(wide.beta.max() - wide.beta.min() > a.beta.max() - a.beta.min());
    }

    #[test]
    fn exact_points_give_a_point_range_and_no_rift_is_refused() {
        let l = mckenzie();
        let obs = ranged(0.0);
        let fit = fit_uniform(&l, &obs, SubsidenceCurve::Best, 150.0, 130.0).unwrap();
        let u = stretching_uncertainty(
            &l,
            &obs,
            &fit,
            None,
            MonteCarloSettings { draws: 10, seed: 3 },
            1.0,
        )
        .unwrap();
        assert!(u.beta.max() - u.beta.min() < 1e-5, "{:?}", u.beta);
        let none = UniformFit {
            events: Vec::<RiftEvent>::new(),
            ..fit
        };
        assert!(
            stretching_uncertainty(&l, &obs, &none, None, MonteCarloSettings::default(), 1.0)
                .is_err()
        );
    }

    /// The lithosphere parameters move beta too (the issue measured 8-16 % on wells
    /// modelled with other parameters; here the check is only that the draws are wide
    /// enough to matter and hold the true value), the combined range holds both sources,
    /// and a misfit beyond the ranges widens it by sqrt(misfit scale).
    #[test]
    fn lithosphere_parameters_and_the_misfit_widen_the_range() {
        let l = mckenzie();
        let obs = ranged(0.02);
        let fit = fit_uniform(&l, &obs, SubsidenceCurve::Best, 150.0, 130.0).unwrap();
        let settings = MonteCarloSettings {
            draws: 100,
            seed: 5,
        };
        let u = stretching_uncertainty(&l, &obs, &fit, None, settings, 1.0).unwrap();
        let p = u.parameter_beta;
        assert!(p.p05 < 2.0 && 2.0 < p.p95, "{p:?}");
        assert!(
            p.p95 - p.p05 > 0.05,
            "parameters move beta by more than 2.5 %: {p:?}"
        );
        assert!(u.combined_min <= u.beta.min().min(p.p05) + 1e-12, "{u:?}");
        assert!(u.combined_max >= u.beta.max().max(p.p95) - 1e-12, "{u:?}");
        assert_eq!(
            u.dominant,
            UncertaintySource::LithosphereParameters,
            "{u:?}"
        );
        let poor = stretching_uncertainty(&l, &obs, &fit, None, settings, 9.0).unwrap();
        assert_eq!(poor.misfit_inflation, 3.0);
        let b = fit.cumulative_beta();
        assert_relative(
            poor.combined_max - b,
            3.0 * (u.combined_max - b),
            1e-9,
            "inflated upper half-width",
        );
    }

    #[test]
    fn percentiles_interpolate_between_order_statistics() {
        let v: Vec<f64> = (0..=100).map(f64::from).collect();
        assert_eq!(percentile(&v, 0.05), 5.0);
        assert_eq!(percentile(&[1.0, 2.0], 0.5), 1.5);
    }
}
