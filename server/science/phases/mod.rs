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

mod candidates;
mod scoring;
mod search;

pub use candidates::{MIN_FINITE_DURATION_MYR, POST_RIFT_LOOKBACK_MYR};
use candidates::{finite_candidates, post_rift_only};
use scoring::*;
pub use scoring::{
    BIC_EVIDENCE, POOR_FIT_SCALE, PRE_RIFT_RATE_LIMIT_M_PER_MYR, subsidence_sigmas_m,
};
use search::Search;

/// Misfit below which a better fit is not evidence (m): the precision of depths and
/// ages in a tops file (common practice). Keeps the BIC finite for exact curves.
pub const MISFIT_FLOOR_M: f64 = 1.0;

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
            // With the whole stretch at the rift end, a slow uniform rift can score as
            // depth-dependent (seen on numerically modelled wells): scored and shown, never
            // chosen; the finite-duration fits decide between the two.
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

#[cfg(test)]
pub(crate) mod tests;
