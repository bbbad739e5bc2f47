//! Phase proposal: split a tectonic-subsidence series into pre-rift, syn-rift and
//! post-rift intervals by fitting the stretching model of [`super::fit`] to every
//! candidate (rift onset, rift end) pair of surface ages and choosing by a penalised
//! misfit (docs/science.md 8.2 item 3, "model-based, recommended for software").
//!
//! Models compared, by the Bayesian information criterion
//! `BIC = N ln(RSS/N + s^2) + k ln N` with a misfit floor s = [`MISFIT_FLOOR_M`]:
//! no rift (a straight line in age, k = 2), one rift event (onset, end, beta, Y0: k = 4)
//! and two events (k = 7, accepted only if the BIC improves; docs/science.md 8.2 item 4).
//!
//! Search, one event: for each end surface and each beta on a grid of u = 1 - 1/beta,
//! the post-rift sums are computed once; the syn-rift sums for every onset then come
//! from prefix sums in O(1), so all N^2/2 pairs cost O(N^2 x grid). The best pairs (grid
//! minimum polished by a parabola) are refitted exactly with Brent's method. Two events
//! are searched by splitting the well at about eight surfaces: the older event on the
//! series before the split, the younger on the residual after it, then both betas are
//! refitted together (see `Search::second_event` for what that bounded search can miss).

use super::ScienceError;
use super::fit::{
    FitProblem, ModelKind, SubsidenceCurve, SubsidenceObservation, TwoLayerFit, UniformFit,
    check_observations, factor_from_u, max_u, push_decays, uniform_modes,
};
use super::mckenzie::Lithosphere;
use serde::{Deserialize, Serialize};
use std::f64::consts::PI;

/// Misfit below which a better fit is not evidence (m): the precision of depths and
/// ages in a tops file (common practice). Keeps the BIC finite for exact curves.
pub const MISFIT_FLOOR_M: f64 = 1.0;

/// Points on the u = 1 - 1/beta grid of the search.
const GRID: usize = 20;
/// Candidate pairs refitted exactly.
const REFINED: usize = 8;

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Phase {
    PreRift,
    SynRift,
    PostRift,
}

impl Phase {
    /// The trade's name, as in the JSON contract.
    pub fn label(self) -> &'static str {
        match self {
            Phase::PreRift => "pre-rift",
            Phase::SynRift => "syn-rift",
            Phase::PostRift => "post-rift",
        }
    }
}

/// One phase interval, from the older age to the younger.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct PhaseInterval {
    pub phase: Phase,
    pub from_ma: f64,
    pub to_ma: f64,
}

/// Whether the rift timing was proposed by the search or fixed by the team.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum PickOrigin {
    Proposed,
    Team,
}

/// The no-rift model: a straight line in age through the series.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct NoRiftFit {
    pub subsidence_at_oldest_m: f64,
    /// Subsidence rate, m/Myr, positive when the basement went down.
    pub rate_m_per_myr: f64,
    pub rms_misfit_m: f64,
}

/// BIC of each model tried (lower is better); `None` when not tried.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ModelScores {
    pub no_rift: f64,
    pub one_event: Option<f64>,
    pub two_events: Option<f64>,
}

/// The phases of one well and the fits behind them.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PhaseProposal {
    pub intervals: Vec<PhaseInterval>,
    /// The chosen uniform fit; `None` when no rift is chosen.
    pub uniform: Option<UniformFit>,
    /// The two-layer fit with the same timing, for single-event wells.
    pub two_layer: Option<TwoLayerFit>,
    pub no_rift: NoRiftFit,
    pub scores: ModelScores,
    pub origin: PickOrigin,
}

fn bic(rss: f64, n: usize, k: usize) -> f64 {
    let n_f = n as f64;
    n_f * (rss / n_f + MISFIT_FLOOR_M * MISFIT_FLOOR_M).ln() + k as f64 * n_f.ln()
}

fn rss_of(fit: &UniformFit, n: usize) -> f64 {
    fit.rms_misfit_m.powi(2) * n as f64
}

/// Propose phases for a well from its best tectonic-subsidence curve: every (onset, end)
/// pair of surface ages, no rift, and a second event, chosen by BIC. Errors: a series
/// that [`check_observations`] refuses. docs/science.md 6, 8.2.
pub fn propose_phases(
    lithosphere: &Lithosphere,
    observations: &[SubsidenceObservation],
) -> Result<PhaseProposal, ScienceError> {
    check_observations(observations)?;
    let n = observations.len();
    let y: Vec<f64> = observations
        .iter()
        .map(|o| o.tectonic_subsidence.best)
        .collect();
    let search = Search::new(lithosphere, observations);
    let no_rift = line_fit(observations);
    let no_rift_bic = bic(no_rift.rms_misfit_m.powi(2) * n as f64, n, 2);

    let one = search.refine(
        &search.candidates(&y, 0, n - 1, lithosphere.crust_thickness_m),
        &search.ages,
        &y,
    );
    let one_bic = bic(rss_of(&one, n), n, 4);
    // A second event (3 more parameters) can only win if removing all of the single
    // event's misfit would pay the penalty; otherwise it is not searched.
    let best_gain = n as f64 * (rss_of(&one, n) / n as f64 / MISFIT_FLOOR_M.powi(2) + 1.0).ln();
    let two = if n >= 8 && best_gain > 3.0 * (n as f64).ln() {
        search.second_event(&y)
    } else {
        None
    };
    let two_bic = two.as_ref().map(|f| bic(rss_of(f, n), n, 7));

    let scores = ModelScores {
        no_rift: no_rift_bic,
        one_event: Some(one_bic),
        two_events: two_bic,
    };
    let chosen = match two {
        Some(two) if two_bic.unwrap() < one_bic.min(no_rift_bic) => Some(two),
        _ if one_bic < no_rift_bic => Some(one),
        _ => None,
    };
    Ok(assemble(
        lithosphere,
        observations,
        chosen,
        no_rift,
        scores,
        PickOrigin::Proposed,
    ))
}

/// Refit with the team's rift timing, one or two `(onset_ma, end_ma)` pairs oldest first,
/// each within the series' age range. Replaces the proposal. docs/science.md 6.
pub fn phases_from_picks(
    lithosphere: &Lithosphere,
    observations: &[SubsidenceObservation],
    timings: &[(f64, f64)],
) -> Result<PhaseProposal, ScienceError> {
    check_observations(observations)?;
    let (oldest, youngest) = (
        observations[0].age_ma,
        observations[observations.len() - 1].age_ma,
    );
    if timings.iter().any(|&(o, e)| o > oldest || e < youngest) {
        return Err(ScienceError::CannotFit(format!(
            "rift picks must lie between {oldest} and {youngest} Ma"
        )));
    }
    let fit =
        super::fit::fit_uniform_events(lithosphere, observations, SubsidenceCurve::Best, timings)?;
    let n = observations.len();
    let no_rift = line_fit(observations);
    let k = if timings.len() == 1 { 4 } else { 7 };
    let scores = ModelScores {
        no_rift: bic(no_rift.rms_misfit_m.powi(2) * n as f64, n, 2),
        one_event: (k == 4).then(|| bic(rss_of(&fit, n), n, 4)),
        two_events: (k == 7).then(|| bic(rss_of(&fit, n), n, 7)),
    };
    Ok(assemble(
        lithosphere,
        observations,
        Some(fit),
        no_rift,
        scores,
        PickOrigin::Team,
    ))
}

fn assemble(
    lithosphere: &Lithosphere,
    observations: &[SubsidenceObservation],
    chosen: Option<UniformFit>,
    no_rift: NoRiftFit,
    scores: ModelScores,
    origin: PickOrigin,
) -> PhaseProposal {
    let (oldest, youngest) = (
        observations[0].age_ma,
        observations[observations.len() - 1].age_ma,
    );
    let mut intervals = Vec::new();
    let mut push = |phase, from_ma: f64, to_ma: f64| {
        if from_ma > to_ma {
            intervals.push(PhaseInterval {
                phase,
                from_ma,
                to_ma,
            });
        }
    };
    match &chosen {
        None => push(Phase::PreRift, oldest, youngest),
        Some(fit) => {
            push(Phase::PreRift, oldest, fit.events[0].rift_onset_ma);
            for (i, e) in fit.events.iter().enumerate() {
                let next = fit.events.get(i + 1).map_or(youngest, |n| n.rift_onset_ma);
                push(Phase::SynRift, e.rift_onset_ma, e.rift_end_ma);
                push(Phase::PostRift, e.rift_end_ma, next);
            }
        }
    }
    let two_layer = match &chosen {
        Some(fit) if fit.events.len() == 1 => {
            let e = fit.events[0];
            super::fit::fit_two_layer(
                lithosphere,
                observations,
                SubsidenceCurve::Best,
                e.rift_onset_ma,
                e.rift_end_ma,
            )
            .ok()
        }
        _ => None,
    };
    PhaseProposal {
        intervals,
        uniform: chosen,
        two_layer,
        no_rift,
        scores,
        origin,
    }
}

/// Least-squares straight line in age (the no-rift model).
fn line_fit(observations: &[SubsidenceObservation]) -> NoRiftFit {
    let n = observations.len() as f64;
    let oldest = observations[0].age_ma;
    // x = time since the oldest surface (Myr), so the slope is a subsidence rate.
    let xs = observations.iter().map(|o| oldest - o.age_ma);
    let ys = observations.iter().map(|o| o.tectonic_subsidence.best);
    let (mx, my) = (xs.clone().sum::<f64>() / n, ys.clone().sum::<f64>() / n);
    let sxx: f64 = xs.clone().map(|x| (x - mx).powi(2)).sum();
    let sxy: f64 = xs
        .clone()
        .zip(ys.clone())
        .map(|(x, y)| (x - mx) * (y - my))
        .sum();
    let rate = if sxx > 0.0 { sxy / sxx } else { 0.0 };
    let level = my - rate * mx;
    let rss: f64 = xs
        .zip(ys)
        .map(|(x, y)| (y - level - rate * x).powi(2))
        .sum();
    NoRiftFit {
        subsidence_at_oldest_m: level,
        rate_m_per_myr: rate,
        rms_misfit_m: (rss / n).sqrt(),
    }
}

/// A candidate (onset index, end index) with its estimated least RSS and grid u.
#[derive(Debug, Clone, Copy)]
struct Candidate {
    onset: usize,
    end: usize,
    rss: f64,
    u: f64,
}

/// What the search precomputes once per well: grid coefficients and, for each end
/// surface, the thermal decays at the younger surfaces.
struct Search<'a> {
    lithosphere: &'a Lithosphere,
    ages: Vec<f64>,
    grid_u: [f64; GRID],
    /// Row g: McKenzie modal coefficients of the grid's beta (odd n), times E0.
    grid_modes: Vec<f64>,
    modes: usize,
    /// For end index e: (offsets, decays) of the surfaces younger than e.
    decays: Vec<(Vec<usize>, Vec<f64>)>,
}

impl<'a> Search<'a> {
    fn new(lithosphere: &'a Lithosphere, observations: &[SubsidenceObservation]) -> Self {
        let ages: Vec<f64> = observations.iter().map(|o| o.age_ma).collect();
        let tau = lithosphere.time_constant_myr;
        let mut modes = 0;
        let decays: Vec<(Vec<usize>, Vec<f64>)> = (0..ages.len())
            .map(|e| {
                let (mut offsets, mut values) = (vec![0], Vec::new());
                for &age in &ages[e + 1..] {
                    // |McKenzie mode| <= 1/n^2 for any beta (see mckenzie::uniform_mode).
                    push_decays(&mut values, (ages[e] - age) / tau, 1.0);
                    modes = modes.max(values.len() - offsets[offsets.len() - 1]);
                    offsets.push(values.len());
                }
                (offsets, values)
            })
            .collect();
        let grid_u: [f64; GRID] = std::array::from_fn(|g| max_u() * g as f64 / (GRID - 1) as f64);
        let mut grid_modes = vec![0.0; GRID * modes];
        let e0 = lithosphere.thermal_amplitude_m();
        for (g, row) in grid_modes.chunks_mut(modes.max(1)).enumerate().take(GRID) {
            if modes > 0 && g > 0 {
                uniform_modes(factor_from_u(grid_u[g]), row);
                row.iter_mut().for_each(|c| *c *= e0);
            }
        }
        Search {
            lithosphere,
            ages,
            grid_u,
            grid_modes,
            modes,
            decays,
        }
    }

    /// The [`REFINED`] best (onset, end) pairs with onset >= `lo`, end <= `hi`, for `y`,
    /// stretching a crust `crust_m` thick (the parameters' tc, or what an earlier event
    /// left of it, see [`UniformFit`]).
    fn candidates(&self, y: &[f64], lo: usize, hi: usize, crust_m: f64) -> Vec<Candidate> {
        let n = y.len();
        let a = &self.ages;
        let mean = y.iter().sum::<f64>() / n as f64;
        // Prefix sums of the centred curve: sum a, a^2, y, a y over indices < i.
        let mut prefix = vec![[0.0f64; 4]; n + 1];
        for i in 0..n {
            let yc = y[i] - mean;
            let p = prefix[i];
            prefix[i + 1] = [p[0] + a[i], p[1] + a[i] * a[i], p[2] + yc, p[3] + a[i] * yc];
        }
        let syy: f64 = y.iter().map(|v| (v - mean).powi(2)).sum();
        let l = self.lithosphere;
        let (si_inf, st_inf) = (
            l.initial_subsidence_limit_for_crust_m(crust_m),
            l.thermal_amplitude_m() * PI * PI / 8.0,
        );
        let mut best: Vec<Candidate> = Vec::with_capacity(REFINED + 1);
        // Per end surface, RSS(u_g) = fixed_g + u_g a + (u_g S_T,g) b + u_g^2 c, where
        // fixed_g and S_T,g hold the post-rift sums and a, b, c depend on the onset.
        let mut fixed = [0.0f64; GRID];
        let mut u_thermal = [0.0f64; GRID];
        let mut rss = [0.0f64; GRID];
        let n_f = n as f64;
        for e in (lo + 1)..=hi {
            let posts = (n - 1 - e) as f64;
            let y_post = prefix[n][2] - prefix[e + 1][2];
            let (offsets, decays) = &self.decays[e];
            for g in 0..GRID {
                let row = &self.grid_modes[g * self.modes..(g + 1) * self.modes];
                let (mut st, mut stt, mut syt) = (0.0, 0.0, 0.0);
                for (k, i) in (e + 1..n).enumerate() {
                    let d = &decays[offsets[k]..offsets[k + 1]];
                    let t: f64 = d.iter().zip(row).map(|(d, c)| d * c).sum();
                    st += t;
                    stt += t * t;
                    syt += (y[i] - mean) * t;
                }
                fixed[g] = syy + 2.0 * syt + stt - st * st / n_f;
                u_thermal[g] = self.grid_u[g] * st;
            }
            for o in lo..e {
                let (ao, span) = (a[o], a[o] - a[e]);
                let s: [f64; 4] = std::array::from_fn(|j| prefix[e + 1][j] - prefix[o][j]);
                let count = (e + 1 - o) as f64;
                let r1 = (count * ao - s[0]) / span + posts;
                let r2 = (count * ao * ao - 2.0 * ao * s[0] + s[1]) / (span * span) + posts;
                let yr = (ao * s[2] - s[3]) / span + y_post;
                let sb = si_inf * r1 + st_inf * posts;
                let sbb = si_inf * si_inf * r2 + (2.0 * si_inf * st_inf + st_inf * st_inf) * posts;
                let syb = si_inf * yr + st_inf * y_post;
                // Expanding sum (y - Y0 - u B + T)^2 with Y0 the mean residual.
                let (lin, cross, quad) = (
                    -2.0 * syb,
                    2.0 * sb / n_f - 2.0 * (si_inf + st_inf),
                    sbb - sb * sb / n_f,
                );
                for g in 0..GRID {
                    let u = self.grid_u[g];
                    rss[g] = fixed[g] + u * lin + u_thermal[g] * cross + u * u * quad;
                }
                let (u, rss) = grid_minimum(&rss, &self.grid_u);
                let candidate = Candidate {
                    onset: o,
                    end: e,
                    rss,
                    u,
                };
                if best.len() < REFINED || candidate.rss < best[best.len() - 1].rss {
                    let at = best.partition_point(|c| c.rss <= candidate.rss);
                    best.insert(at, candidate);
                    best.truncate(REFINED);
                }
            }
        }
        best
    }

    /// Exact single-event fits of the candidates (Brent's method within a grid step
    /// either side of the grid minimum); the one with the least misfit.
    fn refine(&self, candidates: &[Candidate], ages: &[f64], y: &[f64]) -> UniformFit {
        let step = self.grid_u[1];
        candidates
            .iter()
            .map(|c| {
                let timing = [(ages[c.onset], ages[c.end])];
                let mut problem = FitProblem::new(self.lithosphere, ages, &timing);
                problem.fit_uniform_within(
                    y,
                    (c.u - 1.5 * step).max(0.0),
                    (c.u + 1.5 * step).min(max_u()),
                )
            })
            .min_by(|a, b| a.rms_misfit_m.total_cmp(&b.rms_misfit_m))
            .expect("a series of three or more points has candidates")
    }

    /// The best two-event fit: at split surfaces spread through the well (about six),
    /// the older event is searched on the series up to the split alone, the younger on
    /// the residual after the split once the older event's modelled curve (extrapolated
    /// beyond the split) is removed. The two best pairs over all splits are refitted
    /// jointly. A pair of events with fewer surfaces between them than the split spacing
    /// can be missed.
    fn second_event(&self, y: &[f64]) -> Option<UniformFit> {
        let n = y.len();
        let stride = ((n - 5) / 6).max(1);
        // (older fit, younger candidate), best two by the residual misfit.
        let mut pairs: Vec<(UniformFit, Candidate)> = Vec::with_capacity(3);
        for split in (2..n - 2).step_by(stride) {
            let head = split + 1;
            let Some(&a) = self
                .candidates(&y[..head], 0, split, self.lithosphere.crust_thickness_m)
                .first()
            else {
                continue;
            };
            let older = self.refine(&[a], &self.ages[..head], &y[..head]);
            let alone = UniformFit {
                pre_rift_subsidence_m: 0.0,
                ..older.clone()
            };
            let residual: Vec<f64> = y
                .iter()
                .zip(&self.ages)
                .map(|(v, &age)| v - alone.subsidence_m(self.lithosphere, age))
                .collect();
            if let Some(&b) = self
                .candidates(
                    &residual,
                    split,
                    n - 1,
                    self.lithosphere.crust_thickness_m / older.events[0].beta,
                )
                .first()
            {
                let at = pairs.partition_point(|p| p.1.rss <= b.rss);
                pairs.insert(at, (older, b));
                pairs.truncate(2);
            }
        }
        pairs
            .into_iter()
            .map(|(older, b)| {
                let first = older.events[0];
                let timings = [
                    (first.rift_onset_ma, first.rift_end_ma),
                    (self.ages[b.onset], self.ages[b.end]),
                ];
                let mut problem = FitProblem::new(self.lithosphere, &self.ages, &timings);
                // The younger event's thermal part is that of its own beta2 (see
                // UniformFit), so the residual fit's u is already a good start.
                let start = [1.0 - 1.0 / first.beta, b.u.min(max_u())];
                let u = problem.refit_near(y, ModelKind::Uniform, &start);
                problem.fit_uniform_at(y, &[factor_from_u(u[0]), factor_from_u(u[1])])
            })
            .min_by(|a, b| a.rms_misfit_m.total_cmp(&b.rms_misfit_m))
    }
}

/// Least value of a misfit sampled on the grid and where it lies, polished by a
/// parabola through the lowest sample and its neighbours.
fn grid_minimum(rss: &[f64; GRID], grid_u: &[f64; GRID]) -> (f64, f64) {
    let g = (0..GRID)
        .min_by(|&i, &j| rss[i].total_cmp(&rss[j]))
        .unwrap_or(0);
    if g == 0 || g == GRID - 1 {
        return (grid_u[g], rss[g]);
    }
    let (l, m, r) = (rss[g - 1], rss[g], rss[g + 1]);
    let curvature = l - 2.0 * m + r;
    if curvature > 0.0 {
        let shift = (l - r) / (2.0 * curvature);
        (
            grid_u[g] + shift * (grid_u[1] - grid_u[0]),
            (m - (r - l).powi(2) / (8.0 * curvature)).max(0.0),
        )
    } else {
        (grid_u[g], m)
    }
}

#[cfg(test)]
#[path = "phases_tests.rs"]
pub(crate) mod tests;
