//! Least-squares fits of stretching models to a well's tectonic-subsidence series.
//!
//! Model curve of one rift event (docs/science.md 6, approach 1: instantaneous stretching
//! placed at the rift end): flat at Y0 before the rift onset, a linear ramp of the
//! initial subsidence Si from onset to end, then `Y0 + Si + S_T(t)` with t = rift end
//! age - age (Myr). Y0 is linear given the factors and is solved in closed form (the
//! mean residual); the factors are found by a scan then Brent's method in
//! u = 1 - 1/factor, which maps [1, inf) onto [0, 1). Thermal subsidence is always the
//! full series (docs/science.md 4.3).
//!
//! Two events (docs/science.md 8.2 item 4) are superposed, an approximation documented in
//! [`UniformFit`]. The analysis layer turns backstrip steps into [`SubsidenceObservation`]s.

use super::mckenzie::Lithosphere;
use super::search1d::scan_then_minimise;
use super::{Bounds, ScienceError};
use serde::{Deserialize, Serialize};
use std::f64::consts::PI;

/// Tectonic (water-loaded) subsidence at one surface age (m, positive down), oldest first.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SubsidenceObservation {
    pub age_ma: f64,
    pub tectonic_subsidence: Bounds,
}

/// Which of the min / best / max tectonic-subsidence curves a fit uses.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum SubsidenceCurve {
    Min,
    Best,
    Max,
}

impl SubsidenceCurve {
    /// This curve's value at one observation (m).
    pub fn value(self, observation: &SubsidenceObservation) -> f64 {
        let b = observation.tectonic_subsidence;
        match self {
            SubsidenceCurve::Min => b.min,
            SubsidenceCurve::Best => b.best,
            SubsidenceCurve::Max => b.max,
        }
    }
}

/// Largest stretching factor a fit may return. Beyond it the crust of any initial
/// thickness is under 4 km and the continental model no longer applies (common practice).
pub const MAX_STRETCHING_FACTOR: f64 = 20.0;

/// One instantaneous uniform-stretching event: the syn-rift ramp from onset to end,
/// then thermal subsidence from the end.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct RiftEvent {
    pub rift_onset_ma: f64,
    pub rift_end_ma: f64,
    pub beta: f64,
}

/// A uniform-stretching (McKenzie 1978) fit: one or two events, oldest first.
///
/// With two events the second acts on a plate assumed thermally re-equilibrated after
/// the first: the thermal lithosphere is back to its thickness a and only the crust stays
/// thinned, to tc / beta1. So the second event's initial subsidence is McKenzie's Si for
/// a crust of tc / beta1 stretched by beta2, and its thermal subsidence and heat-flow
/// excess are those of a single event of beta2, not scaled by 1 / beta1
/// (docs/science.md 6, "second event"; the check value 490.82 m for beta1 = beta2 = 1.5,
/// tc = 35 km is from an independent finite-difference run). The first event's thermal
/// transient is superposed unchanged. Where the second event comes before the first has
/// decayed the anomalies do not simply add; the closed form is then an approximation
/// that needs the numerical lithosphere (docs/science.md 6, 8.2 item 4).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct UniformFit {
    pub events: Vec<RiftEvent>,
    /// Y0: tectonic subsidence before the first rift onset (m).
    pub pre_rift_subsidence_m: f64,
    /// Root-mean-square misfit to the fitted curve (m).
    pub rms_misfit_m: f64,
}

impl UniformFit {
    /// Product of the events' betas (1 with no event).
    pub fn cumulative_beta(&self) -> f64 {
        self.events.iter().map(|e| e.beta).product()
    }

    /// The model's tectonic subsidence at `age_ma` (m), full thermal series.
    pub fn subsidence_m(&self, lithosphere: &Lithosphere, age_ma: f64) -> f64 {
        let mut crust_m = lithosphere.crust_thickness_m;
        let mut y = self.pre_rift_subsidence_m;
        for e in &self.events {
            let ramp = ramp(e.rift_onset_ma, e.rift_end_ma, age_ma);
            let si =
                lithosphere.initial_subsidence_limit_for_crust_m(crust_m) * (1.0 - 1.0 / e.beta);
            let st = lithosphere.thermal_subsidence_m(
                e.beta,
                e.rift_end_ma - age_ma,
                super::mckenzie::ThermalSeries::Full,
            );
            y += ramp * si + st;
            crust_m /= e.beta;
        }
        y
    }
}

/// A two-layer (Royden & Keen 1980) fit of one event: crust factor delta, mantle beta.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct TwoLayerFit {
    pub delta: f64,
    pub beta: f64,
    pub rift_onset_ma: f64,
    pub rift_end_ma: f64,
    pub pre_rift_subsidence_m: f64,
    pub rms_misfit_m: f64,
}

impl TwoLayerFit {
    /// The model's tectonic subsidence at `age_ma` (m), full thermal series.
    pub fn subsidence_m(&self, lithosphere: &Lithosphere, age_ma: f64) -> f64 {
        let ramp = ramp(self.rift_onset_ma, self.rift_end_ma, age_ma);
        let si = lithosphere.two_layer_initial_subsidence_m(self.delta, self.beta);
        let t = self.rift_end_ma - age_ma;
        let st = lithosphere.two_layer_thermal_subsidence_m(
            self.delta,
            self.beta,
            t,
            super::mckenzie::ThermalSeries::Full,
        );
        self.pre_rift_subsidence_m + ramp * si + st
    }
}

/// Fraction of the syn-rift ramp reached at `age_ma`: 0 before onset, 1 from the end.
pub(crate) fn ramp(onset_ma: f64, end_ma: f64, age_ma: f64) -> f64 {
    ((onset_ma - age_ma) / (onset_ma - end_ma)).clamp(0.0, 1.0)
}

/// Check a series: at least three points, ages finite and strictly decreasing
/// (oldest first), bounds finite with min <= best <= max.
pub fn check_observations(observations: &[SubsidenceObservation]) -> Result<(), ScienceError> {
    if observations.len() < 3 {
        return Err(ScienceError::CannotFit(format!(
            "{} subsidence points; a fit needs at least 3",
            observations.len()
        )));
    }
    for (i, o) in observations.iter().enumerate() {
        let b = o.tectonic_subsidence;
        let finite =
            o.age_ma.is_finite() && b.min.is_finite() && b.best.is_finite() && b.max.is_finite();
        if !finite || b.min > b.best || b.best > b.max {
            return Err(ScienceError::CannotFit(format!(
                "subsidence point at {} Ma is not finite with min <= best <= max",
                o.age_ma
            )));
        }
        if i > 0 && o.age_ma >= observations[i - 1].age_ma {
            return Err(ScienceError::CannotFit(
                "subsidence points must run from oldest to youngest".into(),
            ));
        }
    }
    Ok(())
}

fn check_timing(onset_ma: f64, end_ma: f64) -> Result<(), ScienceError> {
    if onset_ma.is_finite() && end_ma.is_finite() && onset_ma > end_ma && end_ma >= 0.0 {
        Ok(())
    } else {
        Err(ScienceError::CannotFit(format!(
            "rift onset {onset_ma} Ma must be older than rift end {end_ma} Ma (>= 0)"
        )))
    }
}

/// Fit beta and Y0 of one uniform event with the given onset and end (Ma) to one
/// curve by least squares. Errors: a bad series or timing.
/// McKenzie (1978); docs/science.md 4.2, 4.3, 6.
pub fn fit_uniform(
    lithosphere: &Lithosphere,
    observations: &[SubsidenceObservation],
    curve: SubsidenceCurve,
    onset_ma: f64,
    end_ma: f64,
) -> Result<UniformFit, ScienceError> {
    fit_uniform_events(lithosphere, observations, curve, &[(onset_ma, end_ma)])
}

/// Fit one or two uniform events with fixed timings `(onset_ma, end_ma)`, oldest first
/// and not overlapping. Two events are fitted jointly (nested 1-D minimisations).
pub fn fit_uniform_events(
    lithosphere: &Lithosphere,
    observations: &[SubsidenceObservation],
    curve: SubsidenceCurve,
    timings: &[(f64, f64)],
) -> Result<UniformFit, ScienceError> {
    check_observations(observations)?;
    if timings.is_empty() || timings.len() > 2 {
        return Err(ScienceError::CannotFit(
            "a uniform fit has one or two rift events".into(),
        ));
    }
    for (i, &(onset, end)) in timings.iter().enumerate() {
        check_timing(onset, end)?;
        if i > 0 && onset > timings[i - 1].1 {
            return Err(ScienceError::CannotFit(
                "the second rift event must start after the first ends".into(),
            ));
        }
    }
    let ages: Vec<f64> = observations.iter().map(|o| o.age_ma).collect();
    let y: Vec<f64> = observations.iter().map(|o| curve.value(o)).collect();
    let mut problem = FitProblem::new(lithosphere, &ages, timings);
    Ok(problem.fit_uniform(&y))
}

/// Fit delta, beta and Y0 of one two-layer event with the given onset and end (Ma).
/// Royden & Keen (1980); docs/science.md 5, 6.
pub fn fit_two_layer(
    lithosphere: &Lithosphere,
    observations: &[SubsidenceObservation],
    curve: SubsidenceCurve,
    onset_ma: f64,
    end_ma: f64,
) -> Result<TwoLayerFit, ScienceError> {
    check_observations(observations)?;
    check_timing(onset_ma, end_ma)?;
    let ages: Vec<f64> = observations.iter().map(|o| o.age_ma).collect();
    let y: Vec<f64> = observations.iter().map(|o| curve.value(o)).collect();
    let mut problem = FitProblem::new(lithosphere, &ages, &[(onset_ma, end_ma)]);
    Ok(problem.fit_two_layer(&y))
}

/// u = 1 - 1/factor for the largest admissible factor.
pub(crate) fn max_u() -> f64 {
    1.0 - 1.0 / MAX_STRETCHING_FACTOR
}

/// The stretching factor 1 / (1 - u) of a search variable u in [0, 1).
pub(crate) fn factor_from_u(u: f64) -> f64 {
    1.0 / (1.0 - u)
}

/// Precomputed pieces of one event at the observation ages: the ramp, the post-rift
/// indicator (t > 0) and the thermal decays exp(-n^2 t/tau) for odd n, enough modes
/// per point for a tail below 1e-12 E0 with any factor up to [`MAX_STRETCHING_FACTOR`].
pub(crate) struct EventBasis {
    ramp: Vec<f64>,
    post: Vec<f64>,
    offsets: Vec<usize>,
    decays: Vec<f64>,
    modes: usize,
}

impl EventBasis {
    pub(crate) fn new(lithosphere: &Lithosphere, ages: &[f64], onset_ma: f64, end_ma: f64) -> Self {
        let bound = 2.0 * MAX_STRETCHING_FACTOR + 1.0;
        let mut basis = EventBasis {
            ramp: Vec::new(),
            post: Vec::new(),
            offsets: vec![0],
            decays: Vec::new(),
            modes: 0,
        };
        for &age in ages {
            basis.ramp.push(ramp(onset_ma, end_ma, age));
            let t = end_ma - age;
            basis.post.push(if t > 0.0 { 1.0 } else { 0.0 });
            if t > 0.0 {
                push_decays(&mut basis.decays, t / lithosphere.time_constant_myr, bound);
            }
            basis.offsets.push(basis.decays.len());
            basis.modes = basis
                .modes
                .max(basis.decays.len() - basis.offsets[basis.offsets.len() - 2]);
        }
        basis
    }

    /// Add `si ramp + s_inf post - e0 sum_n coefficient_n decay_n` to `model`.
    fn add_to(&self, model: &mut [f64], si: f64, s_inf: f64, e0: f64, coefficients: &[f64]) {
        for (i, m) in model.iter_mut().enumerate() {
            let decays = &self.decays[self.offsets[i]..self.offsets[i + 1]];
            let transient: f64 = decays.iter().zip(coefficients).map(|(d, c)| d * c).sum();
            *m += si * self.ramp[i] + s_inf * self.post[i] - e0 * transient;
        }
    }
}

/// Push exp(-n^2 x) for n = 1, 3, 5, ... until `bound exp(-n^2 x)/n^2 (1 + 1/(2 n x))`
/// (a bound on the rest of the series) is below 1e-12. Uses the ratio
/// exp(-((n+2)^2 - n^2) x) = exp(-8x)^((n+1)/2) to avoid an exp per mode.
pub(crate) fn push_decays(out: &mut Vec<f64>, x: f64, bound: f64) {
    let step = (-8.0 * x).exp();
    let (mut decay, mut ratio, mut n) = ((-x).exp(), step, 1.0);
    loop {
        out.push(decay);
        if bound * decay / (n * n) * (1.0 + 1.0 / (2.0 * n * x)) < 1e-12 || n > 2e5 {
            break;
        }
        decay *= ratio;
        ratio *= step;
        n += 2.0;
    }
}

/// sin((2j+1) theta) for j = 0.., by the recurrence sin(a + 2t) = 2 cos(2t) sin(a) - sin(a - 2t).
pub(crate) fn odd_sines(theta: f64, out: &mut [f64]) {
    let two_cos = 2.0 * (2.0 * theta).cos();
    let (mut previous, mut current) = (-theta.sin(), theta.sin());
    for s in out.iter_mut() {
        *s = current;
        (previous, current) = (current, two_cos * current - previous);
    }
}

/// McKenzie modal coefficients (beta/pi) sin(n pi/beta)/n^3 for odd n into `out`.
pub(crate) fn uniform_modes(beta: f64, out: &mut [f64]) {
    odd_sines(PI / beta, out);
    for (j, c) in out.iter_mut().enumerate() {
        let n = 2.0 * j as f64 + 1.0;
        *c *= beta / PI / (n * n * n);
    }
}

/// A fit with fixed event timings: bases built once, then any curve fitted cheaply
/// (the Monte-Carlo draws reuse one problem).
pub(crate) struct FitProblem<'a> {
    lithosphere: &'a Lithosphere,
    events: Vec<EventBasis>,
    timings: Vec<(f64, f64)>,
    model: Vec<f64>,
    coefficients: Vec<f64>,
    sines: Vec<f64>,
}

impl<'a> FitProblem<'a> {
    pub(crate) fn new(lithosphere: &'a Lithosphere, ages: &[f64], timings: &[(f64, f64)]) -> Self {
        let events: Vec<EventBasis> = timings
            .iter()
            .map(|&(o, e)| EventBasis::new(lithosphere, ages, o, e))
            .collect();
        let modes = events.iter().map(|e| e.modes).max().unwrap_or(0);
        FitProblem {
            lithosphere,
            events,
            timings: timings.to_vec(),
            model: vec![0.0; ages.len()],
            coefficients: vec![0.0; modes],
            sines: vec![0.0; modes],
        }
    }

    /// Residual sum of squares and Y0 of the model already in `self.model`.
    fn misfit(&self, y: &[f64]) -> (f64, f64) {
        let n = y.len() as f64;
        let y0 = y.iter().zip(&self.model).map(|(y, m)| y - m).sum::<f64>() / n;
        let rss = y
            .iter()
            .zip(&self.model)
            .map(|(y, m)| (y - m - y0).powi(2))
            .sum();
        (rss, y0)
    }

    /// RSS and Y0 of uniform events with these betas (combined per [`UniformFit`]).
    pub(crate) fn uniform_misfit(&mut self, y: &[f64], betas: &[f64]) -> (f64, f64) {
        self.model.fill(0.0);
        let l = self.lithosphere;
        let (e0, st_inf) = (
            l.thermal_amplitude_m(),
            l.thermal_amplitude_m() * PI * PI / 8.0,
        );
        // Each event stretches the crust the earlier ones left (see UniformFit).
        let mut crust_m = l.crust_thickness_m;
        for (basis, &beta) in self.events.iter().zip(betas) {
            let u = 1.0 - 1.0 / beta;
            uniform_modes(beta, &mut self.coefficients);
            basis.add_to(
                &mut self.model,
                u * l.initial_subsidence_limit_for_crust_m(crust_m),
                u * st_inf,
                e0,
                &self.coefficients,
            );
            crust_m /= beta;
        }
        self.misfit(y)
    }

    /// RSS and Y0 of one two-layer event.
    pub(crate) fn two_layer_misfit(&mut self, y: &[f64], delta: f64, beta: f64) -> (f64, f64) {
        self.model.fill(0.0);
        let l = self.lithosphere;
        let (a, tc) = (l.lithosphere_thickness_m, l.crust_thickness_m);
        let z_base = tc / delta + (a - tc) / beta;
        odd_sines(PI * z_base / a, &mut self.coefficients);
        odd_sines(PI * tc / (a * delta), &mut self.sines);
        for (j, (c, s)) in self.coefficients.iter_mut().zip(&self.sines).enumerate() {
            let n = 2.0 * j as f64 + 1.0;
            *c = (beta * *c + (delta - beta) * s) / (PI * n * n * n);
        }
        let si = l.two_layer_initial_subsidence_m(delta, beta);
        let s_inf = l.two_layer_final_thermal_subsidence_m(
            delta,
            beta,
            super::mckenzie::ThermalSeries::Full,
        );
        self.events[0].add_to(
            &mut self.model,
            si,
            s_inf,
            l.thermal_amplitude_m(),
            &self.coefficients,
        );
        self.misfit(y)
    }

    /// Least-squares uniform fit of `y` (one or two events).
    pub(crate) fn fit_uniform(&mut self, y: &[f64]) -> UniformFit {
        let betas: Vec<f64> = if self.events.len() == 1 {
            let (u, _) = scan_then_minimise(
                |u| self.uniform_misfit(y, &[factor_from_u(u)]).0,
                0.0,
                max_u(),
                24,
                1e-10,
            );
            vec![factor_from_u(u)]
        } else {
            let (u1, u2) = minimise_2d(|u1, u2| {
                self.uniform_misfit(y, &[factor_from_u(u1), factor_from_u(u2)])
                    .0
            });
            vec![factor_from_u(u1), factor_from_u(u2)]
        };
        self.fit_uniform_at(y, &betas)
    }

    /// Single-event uniform fit with u = 1 - 1/beta searched on `[u_lo, u_hi]` only
    /// (Brent's method), for a bracket already known from a coarser search.
    pub(crate) fn fit_uniform_within(&mut self, y: &[f64], u_lo: f64, u_hi: f64) -> UniformFit {
        let (u, _) = super::search1d::minimise(
            |u| self.uniform_misfit(y, &[factor_from_u(u)]).0,
            u_lo,
            u_hi,
            1e-10,
        );
        self.fit_uniform_at(y, &[factor_from_u(u)])
    }

    /// The uniform fit with these betas (Y0 solved, misfit reported).
    pub(crate) fn fit_uniform_at(&mut self, y: &[f64], betas: &[f64]) -> UniformFit {
        let (rss, y0) = self.uniform_misfit(y, betas);
        UniformFit {
            events: self
                .timings
                .iter()
                .zip(betas)
                .map(|(&(rift_onset_ma, rift_end_ma), &beta)| RiftEvent {
                    rift_onset_ma,
                    rift_end_ma,
                    beta,
                })
                .collect(),
            pre_rift_subsidence_m: y0,
            rms_misfit_m: (rss / y.len() as f64).sqrt(),
        }
    }

    /// Least-squares two-layer fit of `y` (first event's timing).
    pub(crate) fn fit_two_layer(&mut self, y: &[f64]) -> TwoLayerFit {
        // delta = beta is the uniform model, so the robust 1-D uniform fit is a start no
        // worse than any; Gauss-Newton then moves delta and beta apart (their misfit
        // valley is long and narrow, which defeats coordinate-wise searches).
        let (u, _) = scan_then_minimise(
            |u| self.uniform_misfit(y, &[factor_from_u(u)]).0,
            0.0,
            max_u(),
            24,
            1e-10,
        );
        let solved = self.refit_near(y, ModelKind::TwoLayer, &[u, u]);
        let (ud, ub) = (solved[0], solved[1]);
        let (delta, beta) = (factor_from_u(ud), factor_from_u(ub));
        let (rss, y0) = self.two_layer_misfit(y, delta, beta);
        TwoLayerFit {
            delta,
            beta,
            rift_onset_ma: self.timings[0].0,
            rift_end_ma: self.timings[0].1,
            pre_rift_subsidence_m: y0,
            rms_misfit_m: (rss / y.len() as f64).sqrt(),
        }
    }
}

/// Which model a [`FitProblem`] evaluates in [`FitProblem::refit_near`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum ModelKind {
    /// Uniform stretching, one u per event.
    Uniform,
    /// Two-layer stretching, u of delta then u of beta.
    TwoLayer,
}

impl FitProblem<'_> {
    fn evaluate(&mut self, y: &[f64], kind: ModelKind, u: &[f64]) -> f64 {
        match kind {
            ModelKind::Uniform => {
                let betas: Vec<f64> = u.iter().map(|&u| factor_from_u(u)).collect();
                self.uniform_misfit(y, &betas).0
            }
            ModelKind::TwoLayer => {
                self.two_layer_misfit(y, factor_from_u(u[0]), factor_from_u(u[1]))
                    .0
            }
        }
    }

    /// Least-squares refit of `y` from a nearby solution `start` (u values), by
    /// Gauss-Newton with a forward-difference Jacobian, Y0 eliminated by centring, and
    /// step halving; u stays in [0, max_u]. For curves close to one already fitted
    /// (the Monte-Carlo draws), where it needs a handful of model evaluations.
    pub(crate) fn refit_near(&mut self, y: &[f64], kind: ModelKind, start: &[f64]) -> Vec<f64> {
        let centre = |v: &mut Vec<f64>| {
            let mean = v.iter().sum::<f64>() / v.len() as f64;
            v.iter_mut().for_each(|x| *x -= mean);
        };
        let k = start.len();
        let mut u = start.to_vec();
        let mut rss = self.evaluate(y, kind, &u);
        for _ in 0..30 {
            let base = self.model.clone();
            let mut residual: Vec<f64> = y.iter().zip(&base).map(|(y, m)| y - m).collect();
            centre(&mut residual);
            let mut columns = Vec::with_capacity(k);
            for j in 0..k {
                let h = if u[j] + 1e-6 <= max_u() { 1e-6 } else { -1e-6 };
                let mut probe = u.clone();
                probe[j] += h;
                self.evaluate(y, kind, &probe);
                let mut column: Vec<f64> = self
                    .model
                    .iter()
                    .zip(&base)
                    .map(|(m, b)| (m - b) / h)
                    .collect();
                centre(&mut column);
                columns.push(column);
            }
            let dot = |a: &[f64], b: &[f64]| a.iter().zip(b).map(|(x, y)| x * y).sum::<f64>();
            let step: Vec<f64> = if k == 1 {
                let jj = dot(&columns[0], &columns[0]);
                vec![if jj > 0.0 {
                    dot(&columns[0], &residual) / jj
                } else {
                    0.0
                }]
            } else {
                let (a, b, d) = (
                    dot(&columns[0], &columns[0]),
                    dot(&columns[0], &columns[1]),
                    dot(&columns[1], &columns[1]),
                );
                let (g0, g1) = (dot(&columns[0], &residual), dot(&columns[1], &residual));
                let det = a * d - b * b;
                if det.abs() <= 1e-12 * a * d {
                    vec![0.0, 0.0]
                } else {
                    vec![(d * g0 - b * g1) / det, (a * g1 - b * g0) / det]
                }
            };
            let mut scale = 1.0;
            let mut moved = false;
            while scale > 1e-4 {
                let trial: Vec<f64> = u
                    .iter()
                    .zip(&step)
                    .map(|(u, s)| (u + scale * s).clamp(0.0, max_u()))
                    .collect();
                let trial_rss = self.evaluate(y, kind, &trial);
                if trial_rss < rss {
                    let change: f64 = trial.iter().zip(&u).map(|(a, b)| (a - b).abs()).sum();
                    (u, rss, moved) = (trial, trial_rss, change > 1e-11);
                    break;
                }
                scale /= 2.0;
            }
            if !moved {
                break;
            }
        }
        u
    }
}

/// Nested minimisation over two u variables on [0, max_u]: for each outer value the
/// inner one is minimised; each level scans then polishes with Brent's method.
fn minimise_2d(mut f: impl FnMut(f64, f64) -> f64) -> (f64, f64) {
    let inner = |f: &mut dyn FnMut(f64, f64) -> f64, u1: f64| {
        scan_then_minimise(|u2| f(u1, u2), 0.0, max_u(), 12, 1e-8)
    };
    let (u1, _) = scan_then_minimise(|u1| inner(&mut f, u1).1, 0.0, max_u(), 12, 1e-8);
    let (u2, _) = inner(&mut f, u1);
    (u1, u2)
}

#[cfg(test)]
#[path = "fit_tests.rs"]
pub(crate) mod tests;
