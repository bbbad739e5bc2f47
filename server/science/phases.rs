//! Phase proposal: split a tectonic-subsidence series into pre-rift, syn-rift and
//! post-rift intervals by fitting the stretching model of [`super::fit`] to every
//! candidate (rift onset, rift end) pair of surface ages and choosing by a penalised
//! misfit (docs/science.md 8.2 item 3, "model-based, recommended for software").
//!
//! Models compared, by the Bayesian information criterion measured against the data's
//! own uncertainty, `BIC = chi^2 + k ln N` with `chi^2 = sum ((y - model) / sigma)^2`
//! and sigma at each surface half the width of its tectonic-subsidence range (what the
//! water-depth range allows), at least [`MISFIT_FLOOR_M`]: no rift (a straight line in
//! age, k = 2), one rift event (onset, end, beta, Y0: k = 4) and two events (k = 7,
//! accepted only if the BIC improves; docs/science.md 8.2 item 4). So a model that fits
//! within the palaeo-water-depth uncertainty is not beaten by one that fits the noise.
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
    /// BIC of the depth-dependent event with the single event's timing.
    #[serde(default)]
    pub two_layer: Option<f64>,
    /// The chosen model's chi^2 per degree of freedom, at least 1: how many times the
    /// squared misfit exceeds what the data's uncertainty allows (1 = within it).
    #[serde(default = "one")]
    pub misfit_scale: f64,
}

fn one() -> f64 {
    1.0
}

/// chi^2 per degree of freedom of a k-parameter model, at least 1.
fn misfit_scale(chi_square: f64, n: usize, k: usize) -> f64 {
    if n > k {
        (chi_square / (n - k) as f64).max(1.0)
    } else {
        1.0
    }
}

/// Which stretching model a proposal settled on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum StretchingModel {
    /// No stretching: a steady trend.
    NoRift,
    /// One uniform (McKenzie 1978) event.
    Uniform,
    /// Two uniform events.
    TwoEvents,
    /// One depth-dependent (Royden & Keen 1980) event: crust delta, mantle beta.
    TwoLayer,
    /// One uniform event stretching over its whole syn-rift interval (numerical plate).
    FiniteUniform,
    /// One depth-dependent event over its whole syn-rift interval (numerical plate).
    FiniteTwoLayer,
    /// The well begins after its rift: thermal subsidence only, from a rift at or before
    /// its oldest surface.
    PostRiftOnly,
}

impl StretchingModel {
    /// The trade's name, for pages and warnings.
    pub fn label(self) -> &'static str {
        match self {
            StretchingModel::NoRift => "no rift",
            StretchingModel::Uniform => "one uniform event",
            StretchingModel::TwoEvents => "two uniform events",
            StretchingModel::TwoLayer => "one depth-dependent event",
            StretchingModel::FiniteUniform => "one uniform event of finite duration",
            StretchingModel::FiniteTwoLayer => "one depth-dependent event of finite duration",
            StretchingModel::PostRiftOnly => "post-rift only (the rift is older than the well)",
        }
    }

    /// Free parameters, counted for the penalty: line level and rate; onset, end, beta
    /// and Y0; twice the event's three plus Y0; onset, end, delta, beta and Y0.
    pub fn parameters(self) -> usize {
        match self {
            StretchingModel::NoRift => 2,
            StretchingModel::Uniform => 4,
            StretchingModel::TwoEvents => 7,
            StretchingModel::TwoLayer | StretchingModel::FiniteTwoLayer => 5,
            StretchingModel::FiniteUniform => 4,
            // beta, the rift's age and Y0.
            StretchingModel::PostRiftOnly => 3,
        }
    }
}

/// One model that was tried, with its score: the proposal keeps them all, best first,
/// so an analyst sees how close the call was.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Alternative {
    pub model: StretchingModel,
    /// BIC against the data's uncertainty (lower is better).
    pub bic: f64,
    /// BIC less the best model's (0 for the chosen one).
    pub bic_above_best: f64,
    pub rms_misfit_m: f64,
    /// Why it could not be chosen, when it could not (e.g. a factor at its bound).
    pub refused: Option<String>,
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
    /// The model chosen (for a team pick, the picked one).
    pub model: StretchingModel,
    /// Every model tried, best score first.
    pub alternatives: Vec<Alternative>,
    /// What an analyst must know before trusting the proposal.
    pub warnings: Vec<String>,
    /// The finite-duration fit, when one of the finite models was chosen.
    #[serde(default)]
    pub finite: Option<super::finite_fit::FiniteRiftFit>,
    /// For a post-rift-only well: the least and greatest factor among rift ages that fit
    /// equally well (the reported fit is the least).
    #[serde(default)]
    pub post_rift_factor_span: Option<(f64, f64)>,
}

/// BIC of a model with `k` parameters whose misfit is `chi_square`, for n points:
/// `-2 ln L + k ln n` with the Gaussian likelihood of the stated sigmas scaled by a
/// factor s >= 1 chosen for the model, `-2 ln L = chi^2 / s^2 + n ln s^2` at
/// `s^2 = max(1, chi^2 / n)`. Within the stated ranges this is `chi^2 + k ln n`; where a
/// model misfits beyond them it becomes `n + n ln(chi^2 / n) + k ln n`, the usual BIC of
/// an unknown variance, so ranges stated too narrow neither reward extra events nor hide
/// a much better fit.
fn bic(chi_square: f64, n: usize, k: usize) -> f64 {
    let n_f = n as f64;
    let s2 = (chi_square / n_f).max(1.0);
    chi_square / s2 + n_f * s2.ln() + k as f64 * n_f.ln()
}

/// One standard deviation of each point's tectonic subsidence (m): half the width of its
/// range, taken as one sigma (a conservative reading of a min-max range), at least
/// [`MISFIT_FLOOR_M`].
pub fn subsidence_sigmas_m(observations: &[SubsidenceObservation]) -> Vec<f64> {
    observations
        .iter()
        .map(|o| {
            let b = o.tectonic_subsidence;
            (0.5 * (b.max - b.min)).max(MISFIT_FLOOR_M)
        })
        .collect()
}

/// chi^2 of the no-rift line.
fn line_chi_square(
    observations: &[SubsidenceObservation],
    sigmas: &[f64],
    line: &NoRiftFit,
) -> f64 {
    let oldest = observations[0].age_ma;
    chi_square(observations, sigmas, |age| {
        line.subsidence_at_oldest_m + line.rate_m_per_myr * (oldest - age)
    })
}

/// chi^2 of a uniform fit.
fn uniform_chi_square(
    lithosphere: &Lithosphere,
    observations: &[SubsidenceObservation],
    sigmas: &[f64],
    fit: &UniformFit,
) -> f64 {
    chi_square(observations, sigmas, |age| {
        fit.subsidence_m(lithosphere, age)
    })
}

/// The sigmas the scores use: every point gets the well's root-mean-square sigma. The
/// closed-form fits are unweighted least squares, so a score that weighted each point by
/// its own sigma would judge them by a misfit they did not minimise (a first version did,
/// and let a steady line beat a 2 km rift on a seven-surface well because the fits had
/// spent their freedom on the loosely known points). Per-point weights come with weighted
/// fits ([`super::finite_fit`] already is one).
fn scoring_sigmas_m(observations: &[SubsidenceObservation]) -> Vec<f64> {
    let sigmas = subsidence_sigmas_m(observations);
    let rms = (sigmas.iter().map(|s| s * s).sum::<f64>() / sigmas.len() as f64).sqrt();
    vec![rms; sigmas.len()]
}

/// sum ((best - model(age)) / sigma)^2 over the observations.
fn chi_square(
    observations: &[SubsidenceObservation],
    sigmas: &[f64],
    model: impl Fn(f64) -> f64,
) -> f64 {
    observations
        .iter()
        .zip(sigmas)
        .map(|(o, s)| ((o.tectonic_subsidence.best - model(o.age_ma)) / s).powi(2))
        .sum()
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
    let sigmas = scoring_sigmas_m(observations);
    let uniform_chi2 =
        |fit: &UniformFit| uniform_chi_square(lithosphere, observations, &sigmas, fit);
    let line_chi2 = line_chi_square(observations, &sigmas, &no_rift);

    let one = search.refine(
        &search.candidates(&y, 0, n - 1, lithosphere.crust_thickness_m),
        &search.ages,
        &y,
    );
    let one_chi2 = uniform_chi2(&one);
    // A second event (3 more parameters) can only win if removing all of the single
    // event's misfit would pay the penalty; otherwise it is not searched.
    let two = if n >= 8
        && bic(one_chi2, n, StretchingModel::Uniform.parameters())
            > bic(0.0, n, StretchingModel::TwoEvents.parameters())
    {
        search.second_event(&y)
    } else {
        None
    };
    let two_chi2 = two.as_ref().map(uniform_chi2);
    let post_rift_fit = post_rift_only(lithosphere, observations, &sigmas);
    let post_rift = post_rift_fit.as_ref().map(|p| p.0.clone());
    let post_rift_chi2 = post_rift.as_ref().map(uniform_chi2);
    let first = one.events[0];
    let two_layer = super::fit::fit_two_layer(
        lithosphere,
        observations,
        SubsidenceCurve::Best,
        first.rift_onset_ma,
        first.rift_end_ma,
    )
    .ok();
    let two_layer_chi2 = two_layer.as_ref().map(|t| {
        chi_square(observations, &sigmas, |age| {
            t.subsidence_m(lithosphere, age)
        })
    });
    // A depth-dependent rift is often split by the closed forms into two events, the
    // first of which holds its timing: that timing is a candidate too.
    let (finite_uniform, finite_two_layer) = finite_candidates(
        lithosphere,
        observations,
        &sigmas,
        &search.ages,
        &first,
        two.as_ref().map(|t| &t.events[0]),
    );
    // Scores are measured against the data's uncertainty (see `bic` for misfits beyond it).
    let score = |chi2: f64, model: StretchingModel| bic(chi2, n, model.parameters());
    let mut scores = ModelScores {
        no_rift: score(line_chi2, StretchingModel::NoRift),
        one_event: Some(score(one_chi2, StretchingModel::Uniform)),
        two_events: two_chi2.map(|c| score(c, StretchingModel::TwoEvents)),
        two_layer: two_layer_chi2.map(|c| score(c, StretchingModel::TwoLayer)),
        misfit_scale: 1.0,
    };
    let at_bound = |factors: &[f64]| factors.iter().any(|&f| f >= AT_BOUND);
    // The rate check of the no-rift model: a steady trend faster than a pre-rift
    // usually subsides needs stretching (or loading) to explain it.
    let too_fast =
        (no_rift.rate_m_per_myr > PRE_RIFT_RATE_LIMIT_M_PER_MYR).then_some(NO_RIFT_TOO_FAST);
    let mut tried = vec![
        (
            StretchingModel::NoRift,
            scores.no_rift,
            no_rift.rms_misfit_m,
            too_fast,
        ),
        (
            StretchingModel::Uniform,
            scores.one_event.unwrap_or(f64::INFINITY),
            one.rms_misfit_m,
            at_bound(&[first.beta]).then_some(FACTOR_AT_BOUND),
        ),
    ];
    if let (Some(two), Some(b)) = (&two, scores.two_events) {
        let betas: Vec<f64> = two.events.iter().map(|e| e.beta).collect();
        tried.push((
            StretchingModel::TwoEvents,
            b,
            two.rms_misfit_m,
            at_bound(&betas).then_some(FACTOR_AT_BOUND),
        ));
    }
    if let (Some(t), Some(b)) = (&two_layer, scores.two_layer) {
        // delta = beta is the uniform model: only a real difference is a model of its own.
        let distinct = (t.delta - t.beta).abs() > 0.01 * t.beta.min(t.delta);
        let refused = if at_bound(&[t.delta, t.beta]) {
            Some(FACTOR_AT_BOUND)
        } else if !distinct {
            Some("the same as the uniform event")
        } else {
            // Until rifts of finite duration are fitted, a slow uniform rift can score as
            // depth-dependent (seen on numerically modelled wells): scored and shown, and
            // warned about when better, but not chosen on its own.
            Some(TWO_LAYER_NOT_AUTOMATIC)
        };
        tried.push((StretchingModel::TwoLayer, b, t.rms_misfit_m, refused));
    }
    if let (Some(p), Some(chi2)) = (&post_rift, post_rift_chi2) {
        tried.push((
            StretchingModel::PostRiftOnly,
            score(chi2, StretchingModel::PostRiftOnly),
            p.rms_misfit_m,
            at_bound(&[p.events[0].beta]).then_some(FACTOR_AT_BOUND),
        ));
    }
    if let Some(f) = &finite_uniform {
        tried.push((
            StretchingModel::FiniteUniform,
            score(f.chi_square, StretchingModel::FiniteUniform),
            f.rms_misfit_m,
            at_bound(&[f.mantle_factor]).then_some(FACTOR_AT_BOUND),
        ));
    }
    if let Some(f) = &finite_two_layer {
        let distinct =
            (f.crust_factor - f.mantle_factor).abs() > 0.01 * f.crust_factor.min(f.mantle_factor);
        let refused = if at_bound(&[f.crust_factor, f.mantle_factor]) {
            Some(FACTOR_AT_BOUND)
        } else if !distinct {
            Some("the same as the uniform event")
        } else {
            None
        };
        tried.push((
            StretchingModel::FiniteTwoLayer,
            score(f.chi_square, StretchingModel::FiniteTwoLayer),
            f.rms_misfit_m,
            refused,
        ));
    }
    tried.sort_by(|a, b| a.1.total_cmp(&b.1));
    let model = tried
        .iter()
        .find(|t| t.3.is_none())
        .map_or(StretchingModel::NoRift, |t| t.0);
    let best_bic = tried
        .iter()
        .find(|t| t.0 == model)
        .map_or(scores.no_rift, |t| t.1);
    let alternatives: Vec<Alternative> = tried
        .iter()
        .map(|&(model, bic, rms_misfit_m, refused)| Alternative {
            refused: refused.map(str::to_string),
            model,
            bic,
            bic_above_best: bic - best_bic,
            rms_misfit_m,
        })
        .collect();
    let chosen_chi2 = match model {
        StretchingModel::NoRift => Some(line_chi2),
        StretchingModel::Uniform => Some(one_chi2),
        StretchingModel::TwoEvents => two_chi2,
        StretchingModel::TwoLayer => two_layer_chi2,
        StretchingModel::FiniteUniform => finite_uniform.map(|f| f.chi_square),
        StretchingModel::PostRiftOnly => post_rift_chi2,
        StretchingModel::FiniteTwoLayer => finite_two_layer.map(|f| f.chi_square),
    };
    scores.misfit_scale = misfit_scale(chosen_chi2.unwrap_or(0.0), n, model.parameters());
    let chosen = match model {
        StretchingModel::NoRift => None,
        StretchingModel::TwoEvents => two,
        StretchingModel::Uniform | StretchingModel::TwoLayer => Some(one),
        StretchingModel::PostRiftOnly => post_rift.clone(),
        // The closed-form uniform fit at the finite event's timing carries the phases,
        // the ranges and the tables; the finite fit itself rides in `finite`.
        StretchingModel::FiniteUniform | StretchingModel::FiniteTwoLayer => {
            let f = match model {
                StretchingModel::FiniteUniform => finite_uniform,
                _ => finite_two_layer,
            };
            f.and_then(|f| {
                super::fit::fit_uniform(
                    lithosphere,
                    observations,
                    SubsidenceCurve::Best,
                    f.rift_onset_ma,
                    f.rift_end_ma,
                )
                .ok()
            })
            .or(Some(one))
        }
    };
    let mut proposal = assemble(
        lithosphere,
        observations,
        chosen,
        no_rift,
        scores,
        PickOrigin::Proposed,
    );
    // The depth-dependent fit at the single event's timing stays beside whatever was
    // chosen, so the alternative the table scores can be looked at.
    if proposal.two_layer.is_none() {
        proposal.two_layer = two_layer;
    }
    proposal.model = model;
    proposal.finite = match model {
        StretchingModel::FiniteUniform => finite_uniform,
        StretchingModel::FiniteTwoLayer => finite_two_layer,
        _ => None,
    };
    proposal.alternatives = alternatives;
    if model == StretchingModel::PostRiftOnly {
        proposal.post_rift_factor_span = post_rift_fit.map(|p| p.1);
    }
    proposal.warnings =
        proposal_warnings(&proposal, observations, &subsidence_sigmas_m(observations));
    Ok(proposal)
}

/// The post-rift-only model: thermal subsidence from an instantaneous uniform rift at
/// age t0 at or before the oldest surface, `Y(age) = Y0 + S_T(beta, t0 - age)`, beta and
/// Y0 fitted for each t0 on a grid reaching [`POST_RIFT_LOOKBACK_MYR`] before the oldest
/// surface. The curve hardly tells an old strong rift from a young weak one (beta 1.5 to
/// 8 within the noise on a test well), so of the rift ages whose chi^2 is within
/// [`BIC_EVIDENCE`] of the best, the youngest (the least factor) is reported, with the
/// span of factors they give. Returned as a uniform fit whose event ends at t0 (its
/// initial subsidence folded into Y0), so curves, heat flow and ranges follow from it.
/// None for a series too short or a fit that fails.
fn post_rift_only(
    lithosphere: &Lithosphere,
    observations: &[SubsidenceObservation],
    sigmas: &[f64],
) -> Option<(UniformFit, (f64, f64))> {
    let oldest = observations[0].age_ma;
    let fits: Vec<(UniformFit, f64)> = (0..POST_RIFT_GRID)
        .filter_map(|i| {
            let t0 = oldest + POST_RIFT_LOOKBACK_MYR * i as f64 / (POST_RIFT_GRID - 1) as f64;
            // A rift 1 kyr long ending at t0: all of the well is post-rift.
            let fit = super::fit::fit_uniform(
                lithosphere,
                observations,
                SubsidenceCurve::Best,
                t0 + 1e-3,
                t0,
            )
            .ok()?;
            let chi2 = uniform_chi_square(lithosphere, observations, sigmas, &fit);
            (fit.events[0].beta < AT_BOUND).then_some((fit, chi2))
        })
        .collect();
    let best = fits.iter().map(|f| f.1).fold(f64::INFINITY, f64::min);
    let equally: Vec<&(UniformFit, f64)> =
        fits.iter().filter(|f| f.1 - best <= BIC_EVIDENCE).collect();
    let betas = equally.iter().map(|f| f.0.events[0].beta);
    let span = (
        betas.clone().fold(f64::INFINITY, f64::min),
        betas.fold(f64::NEG_INFINITY, f64::max),
    );
    // Youngest rift age first on the grid.
    equally.first().map(|f| (f.0.clone(), span))
}

/// How far before the oldest surface a post-rift-only well's rift may lie (Myr), and the
/// grid of rift ages tried.
pub const POST_RIFT_LOOKBACK_MYR: f64 = 60.0;
const POST_RIFT_GRID: usize = 13;

/// A factor within this of [`super::fit::MAX_STRETCHING_FACTOR`] is at its bound.
const AT_BOUND: f64 = super::fit::MAX_STRETCHING_FACTOR * (1.0 - 1e-6);
const FACTOR_AT_BOUND: &str = "a stretching factor at its bound";
const NO_RIFT_TOO_FAST: &str =
    "subsides faster than a basin without stretching or loading usually does";
const TWO_LAYER_NOT_AUTOMATIC: &str = "not chosen: with the whole stretch at the rift end, a uniform rift of finite duration can look depth-dependent (the finite-duration fits decide)";

/// The finite-duration candidates around the closed-form event: a uniform event with the
/// same onset and the end moved surface by surface while the fit improves (the closed
/// forms misdate the end of a long rift), and the best depth-dependent event at the
/// closed-form timing, the walked one or the first of a two-event fit. None when the event is too short to differ from an instantaneous one
/// (under [`MIN_FINITE_DURATION_MYR`]) or a fit fails.
fn finite_candidates(
    lithosphere: &Lithosphere,
    observations: &[SubsidenceObservation],
    sigmas: &[f64],
    ages: &[f64],
    event: &super::fit::RiftEvent,
    first_of_two: Option<&super::fit::RiftEvent>,
) -> (
    Option<super::finite_fit::FiniteRiftFit>,
    Option<super::finite_fit::FiniteRiftFit>,
) {
    use super::finite_fit::{FiniteRiftFit, fit_finite_rift, fit_finite_rift_near};
    let Some(end) = ages.iter().position(|&a| a == event.rift_end_ma) else {
        return (None, None);
    };
    let Some(start) = ages.iter().position(|&a| a == event.rift_onset_ma) else {
        return (None, None);
    };
    // The closed forms misdate a long rift (seen: an end at 140 for 130 Ma, an onset one
    // surface young), so onset and end walk surface by surface, one at a time, towards
    // the better neighbour while the fit improves.
    let admissible = |o: usize, e: usize| {
        e < ages.len() && o < e && ages[o] - ages[e] >= MIN_FINITE_DURATION_MYR
    };
    let fit_near = |o: usize, e: usize, near: &FiniteRiftFit, dd: bool| {
        admissible(o, e)
            .then(|| {
                fit_finite_rift_near(
                    lithosphere,
                    observations,
                    sigmas,
                    ages[o],
                    ages[e],
                    dd,
                    near,
                )
                .ok()
            })
            .flatten()
    };
    let chi2 =
        |f: &Option<super::finite_fit::FiniteRiftFit>| f.map_or(f64::INFINITY, |f| f.chi_square);
    let (mut o, mut e) = (start, end);
    let mut best = admissible(o, e)
        .then(|| fit_finite_rift(lithosphere, observations, sigmas, ages[o], ages[e], false).ok())
        .flatten();
    for _ in 0..MAX_END_STEPS {
        let Some(current) = best else { break };
        let moves = [
            (o + 1, e),
            (o.wrapping_sub(1), e),
            (o, e + 1),
            (o, e.wrapping_sub(1)),
        ];
        let Some((next, candidate)) = moves
            .into_iter()
            .filter(|&(no, ne)| no < ages.len() && ne < ages.len())
            .map(|(no, ne)| ((no, ne), fit_near(no, ne, &current, false)))
            .min_by(|a, b| chi2(&a.1).total_cmp(&chi2(&b.1)))
        else {
            break;
        };
        if chi2(&candidate) < chi2(&best) {
            ((o, e), best) = (next, candidate);
        } else {
            break;
        }
    }
    let uniform = best;
    // The depth-dependent event at the closed-form timing and at the walked one (a
    // uniform walk can wander on a depth-dependent well, which no uniform event fits).
    let mut timings = vec![(ages[start], ages[end])];
    if let Some(u) = uniform {
        timings.push((u.rift_onset_ma, u.rift_end_ma));
    }
    if let Some(f) = first_of_two {
        timings.push((f.rift_onset_ma, f.rift_end_ma));
    }
    timings.sort_by(|a, b| b.0.total_cmp(&a.0).then(b.1.total_cmp(&a.1)));
    timings.dedup();
    let two_layer_at = |o: f64, e: f64| {
        (o - e >= MIN_FINITE_DURATION_MYR)
            .then(|| fit_finite_rift(lithosphere, observations, sigmas, o, e, true).ok())
            .flatten()
    };
    let mut two_layer = timings
        .into_iter()
        .filter_map(|(o, e)| two_layer_at(o, e))
        .min_by(|a, b| a.chi_square.total_cmp(&b.chi_square));
    // Then a short walk of its own: a surface of onset or end either way, while it helps.
    for _ in 0..TWO_LAYER_STEPS {
        let Some(current) = two_layer else { break };
        let index = |age: f64| ages.iter().position(|&a| a == age);
        let (Some(o), Some(e)) = (index(current.rift_onset_ma), index(current.rift_end_ma)) else {
            break;
        };
        let better = [
            (o + 1, e),
            (o.wrapping_sub(1), e),
            (o, e + 1),
            (o, e.wrapping_sub(1)),
        ]
        .into_iter()
        .filter(|&(no, ne)| no < ne && ne < ages.len())
        .filter_map(|(no, ne)| fit_near(no, ne, &current, true))
        .min_by(|a, b| a.chi_square.total_cmp(&b.chi_square))
        .filter(|f| f.chi_square < current.chi_square);
        match better {
            Some(f) => two_layer = Some(f),
            None => break,
        }
    }
    (uniform, two_layer)
}

/// Most steps of the depth-dependent event's own timing walk (each tries four 2-D fits).
const TWO_LAYER_STEPS: usize = 2;

/// Most steps (one surface of onset or end each) of the finite-duration timing search.
const MAX_END_STEPS: usize = 8;

/// Shortest syn-rift interval fitted with finite duration (Myr): below it an
/// instantaneous event is indistinguishable at the precision of a well (docs/science.md 6,
/// the Jarvis & McKenzie criteria; common practice).
pub const MIN_FINITE_DURATION_MYR: f64 = 5.0;
/// BIC difference that counts as positive evidence for a model (Kass & Raftery 1995: 2-6
/// "positive" [memory]).
pub const BIC_EVIDENCE: f64 = 2.0;

/// Pre-rift rate above which "pre-rift" is doubtful, m/Myr (docs/science.md 8.1: slow
/// subsidence before a rift is a few m/Myr; common practice).
pub const PRE_RIFT_RATE_LIMIT_M_PER_MYR: f64 = 10.0;
/// Misfit scale above which the model is said to fit worse than the data allow.
pub const POOR_FIT_SCALE: f64 = 4.0;

/// The warnings of a proposal: a misfit well beyond the data's uncertainty, a refused
/// factor at its bound, tectonic uplift, a fast "pre-rift" and too few surfaces.
fn proposal_warnings(
    proposal: &PhaseProposal,
    observations: &[SubsidenceObservation],
    sigmas: &[f64],
) -> Vec<String> {
    let mut warnings = Vec::new();
    let scale = proposal.scores.misfit_scale;
    if scale > POOR_FIT_SCALE {
        warnings.push(format!(
            "the best model ({}) misfits the data {:.1} times more than their water-depth ranges allow: check the tops and ranges, or treat the interpretation as doubtful",
            proposal.model.label(),
            scale.sqrt()
        ));
    }
    if let Some(reason) = proposal
        .alternatives
        .iter()
        .find(|a| a.model == proposal.model)
        .and_then(|a| a.refused.as_deref())
    {
        warnings.push(format!(
            "no model fits without objection; shown: {} ({reason})",
            proposal.model.label()
        ));
    }
    for a in &proposal.alternatives {
        if a.refused.as_deref() == Some(FACTOR_AT_BOUND) && a.bic_above_best < 0.0 {
            warnings.push(format!(
                "{} would score better but needs {FACTOR_AT_BOUND} ({}): not proposed",
                a.model.label(),
                super::fit::MAX_STRETCHING_FACTOR
            ));
        }
    }
    let finite_tried = proposal
        .alternatives
        .iter()
        .any(|a| a.model == StretchingModel::FiniteTwoLayer);
    for a in &proposal.alternatives {
        if !finite_tried
            && a.refused.as_deref() == Some(TWO_LAYER_NOT_AUTOMATIC)
            && a.bic_above_best < -BIC_EVIDENCE
        {
            warnings.push(format!(
                "a depth-dependent event (crust and mantle stretched differently) scores better than {} by {:.1}: compare the two-layer fit before agreeing",
                proposal.model.label(),
                -a.bic_above_best
            ));
        }
    }
    // Uplift: tectonic subsidence going up by more than the two surfaces' uncertainty.
    for (i, w) in observations.windows(2).enumerate() {
        let rise = w[0].tectonic_subsidence.best - w[1].tectonic_subsidence.best;
        if rise > sigmas[i] + sigmas[i + 1] {
            warnings.push(format!(
                "uplift or inversion between {} and {} Ma: tectonic subsidence goes up by {:.0} m",
                w[0].age_ma, w[1].age_ma, rise
            ));
        }
    }
    if let Some(fit) = &proposal.uniform {
        let onset = fit.events[0].rift_onset_ma;
        let before: Vec<&SubsidenceObservation> =
            observations.iter().filter(|o| o.age_ma >= onset).collect();
        if before.len() >= 2 {
            let (a, b) = (before[0], before[before.len() - 1]);
            let rate =
                (b.tectonic_subsidence.best - a.tectonic_subsidence.best) / (a.age_ma - b.age_ma);
            if rate > PRE_RIFT_RATE_LIMIT_M_PER_MYR {
                warnings.push(format!(
                    "the pre-rift interval subsides at {rate:.0} m/Myr, faster than a pre-rift usually does (about {PRE_RIFT_RATE_LIMIT_M_PER_MYR} m/Myr at most): the rift may start earlier than the oldest surface"
                ));
            }
        }
    }
    if let Some((low, high)) = proposal.post_rift_factor_span {
        warnings.push(format!(
            "post-rift only: the well begins after its rift, whose age the well cannot date; factors from {low:.2} (rift at the oldest surface, shown) to {high:.2} (rift up to {POST_RIFT_LOOKBACK_MYR:.0} Myr earlier) fit equally well"
        ));
    }
    if observations.len() < 2 * proposal.model.parameters() {
        warnings.push(format!(
            "{} surfaces for a model of {} parameters: the fit is poorly constrained",
            observations.len(),
            proposal.model.parameters()
        ));
    }
    warnings
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
    let sigmas = scoring_sigmas_m(observations);
    let fit_chi2 = uniform_chi_square(lithosphere, observations, &sigmas, &fit);
    let scale = misfit_scale(fit_chi2, n, k);
    let fit_bic = bic(fit_chi2, n, k);
    let scores = ModelScores {
        no_rift: bic(line_chi_square(observations, &sigmas, &no_rift), n, 2),
        one_event: (k == 4).then_some(fit_bic),
        two_events: (k == 7).then_some(fit_bic),
        two_layer: None,
        misfit_scale: scale,
    };
    let model = if k == 4 {
        StretchingModel::Uniform
    } else {
        StretchingModel::TwoEvents
    };
    let rms_misfit_m = fit.rms_misfit_m;
    let mut proposal = assemble(
        lithosphere,
        observations,
        Some(fit),
        no_rift,
        scores,
        PickOrigin::Team,
    );
    proposal.model = model;
    let mut alternatives = vec![
        Alternative {
            model,
            bic: fit_bic,
            bic_above_best: 0.0,
            rms_misfit_m,
            refused: None,
        },
        Alternative {
            model: StretchingModel::NoRift,
            bic: scores.no_rift,
            bic_above_best: scores.no_rift - fit_bic,
            rms_misfit_m: no_rift.rms_misfit_m,
            refused: None,
        },
    ];
    alternatives.sort_by(|a, b| a.bic.total_cmp(&b.bic));
    proposal.alternatives = alternatives;
    proposal.warnings =
        proposal_warnings(&proposal, observations, &subsidence_sigmas_m(observations));
    Ok(proposal)
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
    // Intervals are clipped to the well: a post-rift-only well's rift lies before its
    // oldest surface.
    let mut push = |phase, from_ma: f64, to_ma: f64| {
        let (from_ma, to_ma) = (from_ma.min(oldest), to_ma.max(youngest));
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
    let model = match chosen.as_ref().map(|f| f.events.len()) {
        None => StretchingModel::NoRift,
        Some(1) => StretchingModel::Uniform,
        Some(_) => StretchingModel::TwoEvents,
    };
    PhaseProposal {
        intervals,
        uniform: chosen,
        two_layer,
        no_rift,
        scores,
        origin,
        model,
        alternatives: Vec::new(),
        warnings: Vec::new(),
        finite: None,
        post_rift_factor_span: None,
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
