//! Fits of a rift of finite duration with the numerical lithosphere: the stretching
//! factor(s) and Y0 of one event with a given onset and end, the plate stretched at a
//! constant strain rate over the whole syn-rift interval (not placed at its end as the
//! closed forms must), uniform or depth-dependent.
//!
//! The closed-form fits of [`super::fit`] put the whole stretch at the rift end and ramp
//! the syn-rift subsidence linearly; on rifts of 20-40 Myr that misdates the rift end and
//! can make a uniform rift look depth-dependent (docs/science.md 8.3). This module is the
//! physics those fits leave out, at a coarse resolution that is accurate to about a metre
//! (the tests measure it) and fast enough to call some hundreds of times per well.
//!
//! Misfit: chi^2 against each point's sigma (half its tectonic-subsidence range, at least
//! 1 m, as [`super::phases::subsidence_sigmas_m`]); Y0 is the sigma-weighted mean
//! residual. Isostasy: the McKenzie-consistent convention, as the closed forms.

use super::ScienceError;
use super::fit::{SubsidenceObservation, check_observations, factor_from_u, max_u};
use super::mckenzie::Lithosphere;
use super::numerical_lithosphere::{
    CrustalHeatProduction, IsostasyConvention, NumericalSettings, StretchingEvent, run_plate,
};
use super::search1d::scan_then_minimise;
use serde::{Deserialize, Serialize};

/// The resolution of the fits: 201 points (625 m on a 125 km plate) and 0.25 Myr steps.
/// Against the default resolution of the numerical lithosphere it moves the subsidence
/// by under 2 m (measured in the tests), far below the tens of metres of palaeo-water-depth
/// uncertainty.
pub const FIT_RESOLUTION: NumericalSettings = NumericalSettings {
    nodes: 201,
    time_step_myr: 0.25,
};

/// One finite-duration rift event fitted to a well.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct FiniteRiftFit {
    pub rift_onset_ma: f64,
    pub rift_end_ma: f64,
    /// delta (equal to `mantle_factor` for a uniform fit).
    pub crust_factor: f64,
    /// beta.
    pub mantle_factor: f64,
    /// Y0: tectonic subsidence before the rift (m).
    pub pre_rift_subsidence_m: f64,
    pub rms_misfit_m: f64,
    pub chi_square: f64,
}

impl FiniteRiftFit {
    /// The event, for [`run_plate`].
    pub fn event(&self) -> StretchingEvent {
        StretchingEvent {
            onset_ma: self.rift_onset_ma,
            end_ma: self.rift_end_ma,
            crust_factor: self.crust_factor,
            mantle_factor: self.mantle_factor,
        }
    }
}

/// Fit one finite-duration event from `onset_ma` to `end_ma` (onset older) to the best
/// tectonic-subsidence curve; `depth_dependent` fits delta and beta apart, otherwise one
/// factor. Errors: a series [`check_observations`] refuses, or a timing outside it.
pub fn fit_finite_rift(
    lithosphere: &Lithosphere,
    observations: &[SubsidenceObservation],
    onset_ma: f64,
    end_ma: f64,
    depth_dependent: bool,
) -> Result<FiniteRiftFit, ScienceError> {
    check_observations(observations)?;
    let oldest = observations[0].age_ma;
    if !(onset_ma.is_finite() && end_ma.is_finite() && onset_ma > end_ma && onset_ma <= oldest) {
        return Err(ScienceError::CannotFit(format!(
            "a finite rift needs an onset older than its end, within the well (oldest surface {oldest} Ma); got {onset_ma} to {end_ma} Ma"
        )));
    }
    let sigmas = super::phases::subsidence_sigmas_m(observations);
    let ages: Vec<f64> = observations.iter().map(|o| o.age_ma).collect();
    // (chi^2, Y0, RSS) of the event with these factors: one run of the plate.
    let evaluate = |delta: f64, beta: f64| -> Result<(f64, f64, f64), ScienceError> {
        let event = StretchingEvent {
            onset_ma,
            end_ma,
            crust_factor: delta,
            mantle_factor: beta,
        };
        let history = run_plate(
            lithosphere,
            &CrustalHeatProduction::NONE,
            &[event],
            IsostasyConvention::McKenzie,
            &FIT_RESOLUTION,
            &ages,
            false,
        )?;
        let model = |i: usize| history.states[i].subsidence_m;
        let (chi2, y0) = chi_square_and_y0(observations, &sigmas, model);
        let rss = observations
            .iter()
            .enumerate()
            .map(|(i, o)| (o.tectonic_subsidence.best - y0 - model(i)).powi(2))
            .sum();
        Ok((chi2, y0, rss))
    };
    // Each evaluation is one run of the plate; a failure (none is expected for factors
    // within [1, 20]) scores as infinitely bad and is reported below if it wins.
    let mut failure = None;
    let mut chi2_of = |delta: f64, beta: f64| match evaluate(delta, beta) {
        Ok((chi2, _, _)) => chi2,
        Err(e) => {
            failure = Some(e);
            f64::INFINITY
        }
    };
    let (delta, beta) = if depth_dependent {
        let inner = |f: &mut dyn FnMut(f64, f64) -> f64, ud: f64| {
            scan_then_minimise(
                |ub| f(factor_from_u(ud), factor_from_u(ub)),
                0.0,
                max_u(),
                8,
                1e-5,
            )
        };
        let (ud, _) = scan_then_minimise(|ud| inner(&mut chi2_of, ud).1, 0.0, max_u(), 8, 1e-5);
        let (ub, _) = inner(&mut chi2_of, ud);
        (factor_from_u(ud), factor_from_u(ub))
    } else {
        let (u, _) = scan_then_minimise(
            |u| chi2_of(factor_from_u(u), factor_from_u(u)),
            0.0,
            max_u(),
            12,
            1e-6,
        );
        (factor_from_u(u), factor_from_u(u))
    };
    let (chi_square, y0, rss) = match evaluate(delta, beta) {
        Ok(v) => v,
        Err(e) => return Err(failure.unwrap_or(e)),
    };
    Ok(FiniteRiftFit {
        rift_onset_ma: onset_ma,
        rift_end_ma: end_ma,
        crust_factor: delta,
        mantle_factor: beta,
        pre_rift_subsidence_m: y0,
        rms_misfit_m: (rss / observations.len() as f64).sqrt(),
        chi_square,
    })
}

/// chi^2 and the sigma-weighted Y0 of a model curve given at the observation indices.
fn chi_square_and_y0(
    observations: &[SubsidenceObservation],
    sigmas: &[f64],
    model: impl Fn(usize) -> f64,
) -> (f64, f64) {
    let (mut sw, mut swr) = (0.0, 0.0);
    for (i, (o, s)) in observations.iter().zip(sigmas).enumerate() {
        let w = 1.0 / (s * s);
        sw += w;
        swr += w * (o.tectonic_subsidence.best - model(i));
    }
    let y0 = swr / sw;
    let chi2 = observations
        .iter()
        .zip(sigmas)
        .enumerate()
        .map(|(i, (o, s))| ((o.tectonic_subsidence.best - y0 - model(i)) / s).powi(2))
        .sum();
    (chi2, y0)
}

#[cfg(test)]
#[path = "finite_fit_tests.rs"]
mod tests;
