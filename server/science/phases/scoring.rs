//! Scores, refusals and warnings of the model choice: chi-square against the data's
//! uncertainty, the BIC with a fitted error scale, and what an analyst must be told.

use super::*;

/// chi^2 per degree of freedom of a k-parameter model, at least 1.
pub(super) fn misfit_scale(chi_square: f64, n: usize, k: usize) -> f64 {
    if n > k {
        (chi_square / (n - k) as f64).max(1.0)
    } else {
        1.0
    }
}

/// BIC of a model with `k` parameters whose misfit is `chi_square`, for n points:
/// `-2 ln L + k ln n` with the Gaussian likelihood of the stated sigmas scaled by a
/// factor s >= 1 chosen for the model, `-2 ln L = chi^2 / s^2 + n ln s^2` at
/// `s^2 = max(1, chi^2 / n)`. Within the stated ranges this is `chi^2 + k ln n`; where a
/// model misfits beyond them it becomes `n + n ln(chi^2 / n) + k ln n`, the usual BIC of
/// an unknown variance, so ranges stated too narrow neither reward extra events nor hide
/// a much better fit.
pub(super) fn bic(chi_square: f64, n: usize, k: usize) -> f64 {
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
pub(super) fn line_chi_square(
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
pub(super) fn uniform_chi_square(
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
/// fits ([`crate::finite_fit`] already is one).
pub(super) fn scoring_sigmas_m(observations: &[SubsidenceObservation]) -> Vec<f64> {
    let sigmas = subsidence_sigmas_m(observations);
    let rms = (sigmas.iter().map(|s| s * s).sum::<f64>() / sigmas.len() as f64).sqrt();
    vec![rms; sigmas.len()]
}

/// sum ((best - model(age)) / sigma)^2 over the observations.
pub(super) fn chi_square(
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

/// A factor within this of [`crate::fit::MAX_STRETCHING_FACTOR`] is at its bound.
pub(super) const AT_BOUND: f64 = crate::fit::MAX_STRETCHING_FACTOR * (1.0 - 1e-6);

pub(super) const FACTOR_AT_BOUND: &str = "a stretching factor at its bound";

pub(super) const NO_RIFT_TOO_FAST: &str =
    "subsides faster than a basin without stretching or loading usually does";

pub(super) const TWO_LAYER_NOT_AUTOMATIC: &str = "not chosen: with the whole stretch at the rift end, a uniform rift of finite duration can look depth-dependent (the finite-duration fits decide)";

/// BIC difference that counts as positive evidence for a model (Kass & Raftery 1995: 2-6
/// "positive" \[memory\]).
pub const BIC_EVIDENCE: f64 = 2.0;

/// Pre-rift rate above which "pre-rift" is doubtful, m/Myr (docs/science.md 8.1: slow
/// subsidence before a rift is a few m/Myr; common practice).
pub const PRE_RIFT_RATE_LIMIT_M_PER_MYR: f64 = 10.0;

/// Misfit scale above which the model is said to fit worse than the data allow.
pub const POOR_FIT_SCALE: f64 = 4.0;

/// The warnings of a proposal: a misfit well beyond the data's uncertainty, a refused
/// factor at its bound, tectonic uplift, a fast "pre-rift" and too few surfaces.
pub(super) fn proposal_warnings(
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
                crate::fit::MAX_STRETCHING_FACTOR
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
