//! The candidate models beyond the closed-form search: post-rift only, and rifts of
//! finite duration fitted with the numerical lithosphere.

use super::*;

/// The post-rift-only model: thermal subsidence from an instantaneous uniform rift at
/// age t0 at or before the oldest surface, `Y(age) = Y0 + S_T(beta, t0 - age)`, beta and
/// Y0 fitted for each t0 on a grid reaching [`POST_RIFT_LOOKBACK_MYR`] before the oldest
/// surface. The curve hardly tells an old strong rift from a young weak one (beta 1.5 to
/// 8 within the noise on a test well), so of the rift ages whose chi^2 is within
/// [`BIC_EVIDENCE`] of the best, the youngest (the least factor) is reported, with the
/// span of factors they give. Returned as a uniform fit whose event ends at t0 (its
/// initial subsidence folded into Y0), so curves, heat flow and ranges follow from it.
/// None for a series too short or a fit that fails.
pub(super) fn post_rift_only(
    lithosphere: &Lithosphere,
    observations: &[SubsidenceObservation],
    sigmas: &[f64],
) -> Option<(UniformFit, (f64, f64))> {
    let oldest = observations[0].age_ma;
    let fits: Vec<(UniformFit, f64)> = (0..POST_RIFT_GRID)
        .filter_map(|i| {
            let t0 = oldest + POST_RIFT_LOOKBACK_MYR * i as f64 / (POST_RIFT_GRID - 1) as f64;
            // A rift 1 kyr long ending at t0: all of the well is post-rift.
            let fit = crate::fit::fit_uniform(
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

pub(super) const POST_RIFT_GRID: usize = 13;

/// The finite-duration candidates around the closed-form event: a uniform event with the
/// same onset and the end moved surface by surface while the fit improves (the closed
/// forms misdate the end of a long rift), and the best depth-dependent event at the
/// closed-form timing, the walked one or the first of a two-event fit. None when the event is too short to differ from an instantaneous one
/// (under [`MIN_FINITE_DURATION_MYR`]) or a fit fails.
pub(super) fn finite_candidates(
    lithosphere: &Lithosphere,
    observations: &[SubsidenceObservation],
    sigmas: &[f64],
    ages: &[f64],
    event: &crate::fit::RiftEvent,
    first_of_two: Option<&crate::fit::RiftEvent>,
) -> (
    Option<crate::finite_fit::FiniteRiftFit>,
    Option<crate::finite_fit::FiniteRiftFit>,
) {
    use crate::finite_fit::{FiniteRiftFit, fit_finite_rift, fit_finite_rift_near};
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
        |f: &Option<crate::finite_fit::FiniteRiftFit>| f.map_or(f64::INFINITY, |f| f.chi_square);
    let (mut o, mut e) = (start, end);
    let mut best = admissible(o, e)
        .then(|| fit_finite_rift(lithosphere, observations, sigmas, ages[o], ages[e], false).ok())
        .flatten();
    // Timings already fitted on this walk (a step back to where it came from, or to a
    // neighbour it looked at before, is not fitted again).
    let mut fitted: std::collections::HashMap<(usize, usize), Option<FiniteRiftFit>> =
        std::collections::HashMap::new();
    fitted.insert((o, e), best);
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
            .map(|(no, ne)| {
                let fit = *fitted
                    .entry((no, ne))
                    .or_insert_with(|| fit_near(no, ne, &current, false));
                ((no, ne), fit)
            })
            .collect::<Vec<_>>()
            .into_iter()
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
    let mut fitted: std::collections::HashMap<(usize, usize), Option<FiniteRiftFit>> =
        std::collections::HashMap::new();
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
        .filter_map(|(no, ne)| {
            *fitted
                .entry((no, ne))
                .or_insert_with(|| fit_near(no, ne, &current, true))
        })
        .collect::<Vec<_>>()
        .into_iter()
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
pub(super) const TWO_LAYER_STEPS: usize = 2;

/// Most steps (one surface of onset or end each) of the finite-duration timing search.
pub(super) const MAX_END_STEPS: usize = 8;

/// Shortest syn-rift interval fitted with finite duration (Myr): below it an
/// instantaneous event is indistinguishable at the precision of a well (docs/science.md 6,
/// the Jarvis & McKenzie criteria; common practice).
pub const MIN_FINITE_DURATION_MYR: f64 = 5.0;
