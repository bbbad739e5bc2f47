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

/// The resolution of the fits: 101 points (1.25 km on a 125 km plate) and 1 Myr steps.
/// Against the default resolution of the numerical lithosphere it moves the subsidence
/// by under 5 m (measured in the tests), well below the tens of metres of
/// palaeo-water-depth uncertainty, at an eightieth of the cost.
pub const FIT_RESOLUTION: NumericalSettings = NumericalSettings {
    nodes: 101,
    time_step_myr: 1.0,
};

/// The resolution of a chosen finite fit's curve and heat-flow history (one run per well,
/// drawn and reported): 201 points and 0.25 Myr steps, within 1 m and 0.3 mW m^-2 of the
/// default resolution (measured in the tests) at a twenty-fifth of its cost.
pub const HISTORY_RESOLUTION: NumericalSettings = NumericalSettings {
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
/// tectonic-subsidence curve, each point weighted by its `sigmas` (m; e.g.
/// [`super::phases::subsidence_sigmas_m`]); `depth_dependent` fits delta and beta apart,
/// otherwise one factor. Errors: a series [`check_observations`] refuses, sigmas not one
/// positive value per point, or a timing outside the series.
pub fn fit_finite_rift(
    lithosphere: &Lithosphere,
    observations: &[SubsidenceObservation],
    sigmas: &[f64],
    onset_ma: f64,
    end_ma: f64,
    depth_dependent: bool,
) -> Result<FiniteRiftFit, ScienceError> {
    fit_from(
        lithosphere,
        observations,
        sigmas,
        onset_ma,
        end_ma,
        depth_dependent,
        None,
    )
}

/// As [`fit_finite_rift`], starting from the factors of a fit at a nearby timing (a
/// search that moves the onset or end a surface at a time): a local search instead of
/// a scan of every factor, a third of the cost.
pub fn fit_finite_rift_near(
    lithosphere: &Lithosphere,
    observations: &[SubsidenceObservation],
    sigmas: &[f64],
    onset_ma: f64,
    end_ma: f64,
    depth_dependent: bool,
    near: &FiniteRiftFit,
) -> Result<FiniteRiftFit, ScienceError> {
    fit_from(
        lithosphere,
        observations,
        sigmas,
        onset_ma,
        end_ma,
        depth_dependent,
        Some(near),
    )
}

fn fit_from(
    lithosphere: &Lithosphere,
    observations: &[SubsidenceObservation],
    sigmas: &[f64],
    onset_ma: f64,
    end_ma: f64,
    depth_dependent: bool,
    near: Option<&FiniteRiftFit>,
) -> Result<FiniteRiftFit, ScienceError> {
    check_observations(observations)?;
    let oldest = observations[0].age_ma;
    if !(onset_ma.is_finite() && end_ma.is_finite() && onset_ma > end_ma && onset_ma <= oldest) {
        return Err(ScienceError::CannotFit(format!(
            "a finite rift needs an onset older than its end, within the well (oldest surface {oldest} Ma); got {onset_ma} to {end_ma} Ma"
        )));
    }
    if sigmas.len() != observations.len() || sigmas.iter().any(|s| !(s.is_finite() && *s > 0.0)) {
        return Err(ScienceError::CannotFit(
            "a finite rift fit needs one positive sigma per surface".into(),
        ));
    }
    // Before the onset the plate is in equilibrium (no subsidence): only the ages from
    // the onset on are run.
    let ages: Vec<f64> = observations
        .iter()
        .map(|o| o.age_ma)
        .filter(|&a| a <= onset_ma)
        .collect();
    let skipped = observations.len() - ages.len();
    // The model subsidence at every observation (0 before the onset): one run of the plate.
    let model_curve = |delta: f64, beta: f64| -> Result<Vec<f64>, ScienceError> {
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
        let mut curve = vec![0.0; skipped];
        curve.extend(history.states.iter().map(|s| s.subsidence_m));
        Ok(curve)
    };
    // (chi^2, Y0, RSS) of the event with these factors.
    let evaluate = |delta: f64, beta: f64| -> Result<(f64, f64, f64), ScienceError> {
        let curve = model_curve(delta, beta)?;
        let (chi2, y0) = chi_square_and_y0(observations, sigmas, |i| curve[i]);
        let rss = observations
            .iter()
            .zip(&curve)
            .map(|(o, m)| (o.tectonic_subsidence.best - y0 - m).powi(2))
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
    // One factor first (a scan, then Brent's method): the uniform fit, and the start of
    // the depth-dependent one.
    let u_of = |factor: f64| 1.0 - 1.0 / factor;
    let (u, _) = match near {
        // Depth-dependent from a nearby fit: straight to the 2-D search below.
        Some(n) if depth_dependent => (u_of(n.mantle_factor), 0.0),
        Some(n) => {
            let u0 = u_of(n.mantle_factor);
            super::search1d::minimise(
                |u| chi2_of(factor_from_u(u), factor_from_u(u)),
                (u0 - NEAR_BRACKET).max(0.0),
                (u0 + NEAR_BRACKET).min(max_u()),
                FACTOR_TOLERANCE_U,
            )
        }
        None => scan_then_minimise(
            |u| chi2_of(factor_from_u(u), factor_from_u(u)),
            0.0,
            max_u(),
            8,
            FACTOR_TOLERANCE_U,
        ),
    };
    let (delta, beta) = if depth_dependent {
        // Levenberg-Marquardt on (u_delta, u_beta) from delta = beta: the misfit valley is
        // long and narrow, which defeats coordinate-wise searches and costs nested scans
        // a thousand runs of the plate; this takes a few dozen.
        let residuals = |ud: f64, ub: f64| -> Option<Vec<f64>> {
            let curve = model_curve(factor_from_u(ud), factor_from_u(ub)).ok()?;
            let (_, y0) = chi_square_and_y0(observations, sigmas, |i| curve[i]);
            Some(
                observations
                    .iter()
                    .zip(sigmas)
                    .zip(&curve)
                    .map(|((o, s), m)| (o.tectonic_subsidence.best - y0 - m) / s)
                    .collect(),
            )
        };
        let start = match near {
            Some(n) => [u_of(n.crust_factor), u_of(n.mantle_factor)],
            None => [u, u],
        };
        let (ud, ub) = levenberg_marquardt(residuals, start);
        (factor_from_u(ud), factor_from_u(ub))
    } else {
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

/// Minimise the sum of squares of `residuals(u1, u2)` over [0, max_u]^2 from `start` by
/// Levenberg-Marquardt with a forward-difference Jacobian. A point where the residuals
/// cannot be computed counts as worse than any other.
fn levenberg_marquardt(
    residuals: impl Fn(f64, f64) -> Option<Vec<f64>>,
    start: [f64; 2],
) -> (f64, f64) {
    let sum_sq = |r: &[f64]| r.iter().map(|v| v * v).sum::<f64>();
    let clamp = |v: f64| v.clamp(0.0, max_u());
    let mut u = start;
    let Some(mut r) = residuals(u[0], u[1]) else {
        return (u[0], u[1]);
    };
    let mut chi2 = sum_sq(&r);
    let mut lambda = 1e-3;
    for _ in 0..MAX_LM_ITERATIONS {
        let mut columns: Vec<Vec<f64>> = Vec::with_capacity(2);
        for j in 0..2 {
            let h = if u[j] + LM_STEP <= max_u() {
                LM_STEP
            } else {
                -LM_STEP
            };
            let mut probe = u;
            probe[j] += h;
            let Some(rp) = residuals(probe[0], probe[1]) else {
                return (u[0], u[1]);
            };
            columns.push(rp.iter().zip(&r).map(|(a, b)| (a - b) / h).collect());
        }
        let dot = |a: &[f64], b: &[f64]| a.iter().zip(b).map(|(x, y)| x * y).sum::<f64>();
        let (a11, a12, a22) = (
            dot(&columns[0], &columns[0]),
            dot(&columns[0], &columns[1]),
            dot(&columns[1], &columns[1]),
        );
        let (g1, g2) = (dot(&columns[0], &r), dot(&columns[1], &r));
        let mut improved = false;
        while lambda < 1e8 {
            let (d11, d22) = (a11 * (1.0 + lambda), a22 * (1.0 + lambda));
            let det = d11 * d22 - a12 * a12;
            if !(det.is_finite() && det > 0.0) {
                lambda *= 10.0;
                continue;
            }
            let step = [(-g1 * d22 + g2 * a12) / det, (-g2 * d11 + g1 * a12) / det];
            let trial = [clamp(u[0] + step[0]), clamp(u[1] + step[1])];
            match residuals(trial[0], trial[1]) {
                Some(rt) if sum_sq(&rt) < chi2 => {
                    let new_chi2 = sum_sq(&rt);
                    let relative = (chi2 - new_chi2) / chi2.max(f64::MIN_POSITIVE);
                    (u, r, chi2) = (trial, rt, new_chi2);
                    lambda = (lambda / 3.0).max(1e-9);
                    improved = relative > LM_RELATIVE_GAIN;
                    break;
                }
                _ => lambda *= 4.0,
            }
        }
        if !improved {
            break;
        }
    }
    (u[0], u[1])
}

/// Tolerance of the one-factor search in u = 1 - 1/factor: 1e-4 is a factor change of
/// 1e-4 beta^2 (4e-4 at beta 2), far below the factor ranges the data allow.
const FACTOR_TOLERANCE_U: f64 = 1e-4;

/// Half-width (in u = 1 - 1/factor) of the bracket a search from a nearby fit keeps to.
const NEAR_BRACKET: f64 = 0.08;

/// Iterations and difference step (in u) of [`levenberg_marquardt`].
const MAX_LM_ITERATIONS: usize = 25;
const LM_STEP: f64 = 1e-4;
/// An iteration that lowers chi^2 by less than this fraction ends the search.
const LM_RELATIVE_GAIN: f64 = 1e-5;

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
