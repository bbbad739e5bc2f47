//! Basal (mantle) heat-flow history of a fitted stretching model, in mW m^-2: the heat
//! flow out of the top of a plate without radiogenic heat, as the closed forms give it.
//! The surface heat flow adds the crust's (and the sediments') heat production; the
//! numerical lithosphere ([`super::numerical_lithosphere`]) gives both.
//!
//! Consistent with the subsidence model of [`super::fit`]:
//! * before the rift onset, the equilibrium `K T1 / a`;
//! * during the syn-rift interval, the excess over equilibrium rises linearly from 0 at
//!   the onset to its instantaneous value `F(0+) - K T1/a` at the rift end, mirroring the
//!   linear ramp of Si (a documented choice: the closed forms know only an
//!   instantaneous event, here placed at the rift end, docs/science.md 6 approach 1);
//! * after the rift end, the McKenzie (1978) / Royden & Keen (1980) series of
//!   docs/science.md 4.4 and 5 with t = rift end age - age.
//!
//! With two events the excesses are superposed, each that of a single event of its own
//! factor (the second is not scaled by 1/beta1: after re-equilibration only the crust
//! stays thinned, docs/science.md 6), the same approximation as the subsidence model.

use super::ScienceError;
use super::fit::{TwoLayerFit, UniformFit, ramp};
use super::mckenzie::Lithosphere;
use serde::{Deserialize, Serialize};

/// Heat flow at one age (the JSON contract's `{ "age_ma": …, "value": … }`).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct HeatFlowPoint {
    pub age_ma: f64,
    /// Basal (mantle) heat flow, mW m^-2.
    pub value: f64,
}

/// Excess heat flow of one event at `age_ma`, given its post-event flow function.
fn event_excess(
    onset_ma: f64,
    end_ma: f64,
    age_ma: f64,
    equilibrium: f64,
    after: impl Fn(f64) -> f64,
) -> f64 {
    if age_ma >= end_ma {
        ramp(onset_ma, end_ma, age_ma) * (after(0.0) - equilibrium)
    } else {
        after(end_ma - age_ma) - equilibrium
    }
}

/// Heat flow of a uniform fit at `age_ma` (mW m^-2); the equilibrium with no event.
/// McKenzie (1978); docs/science.md 4.4.
pub fn uniform_heat_flow_mw_m2(lithosphere: &Lithosphere, fit: &UniformFit, age_ma: f64) -> f64 {
    let equilibrium = lithosphere.equilibrium_heat_flow_mw_m2();
    let mut flow = equilibrium;
    for e in &fit.events {
        let after = |t: f64| lithosphere.heat_flow_mw_m2(e.beta, t);
        flow += event_excess(e.rift_onset_ma, e.rift_end_ma, age_ma, equilibrium, after);
    }
    flow
}

/// Heat flow of a two-layer fit at `age_ma` (mW m^-2). Royden & Keen (1980); docs/science.md 5.
pub fn two_layer_heat_flow_mw_m2(lithosphere: &Lithosphere, fit: &TwoLayerFit, age_ma: f64) -> f64 {
    let equilibrium = lithosphere.equilibrium_heat_flow_mw_m2();
    let after = |t: f64| lithosphere.two_layer_heat_flow_mw_m2(fit.delta, fit.beta, t);
    equilibrium
        + event_excess(
            fit.rift_onset_ma,
            fit.rift_end_ma,
            age_ma,
            equilibrium,
            after,
        )
}

/// The uniform fit's heat flow at each age (e.g. every surface age).
pub fn uniform_heat_flow_history(
    lithosphere: &Lithosphere,
    fit: &UniformFit,
    ages_ma: &[f64],
) -> Vec<HeatFlowPoint> {
    ages_ma
        .iter()
        .map(|&age_ma| HeatFlowPoint {
            age_ma,
            value: uniform_heat_flow_mw_m2(lithosphere, fit, age_ma),
        })
        .collect()
}

/// The two-layer fit's heat flow at each age.
pub fn two_layer_heat_flow_history(
    lithosphere: &Lithosphere,
    fit: &TwoLayerFit,
    ages_ma: &[f64],
) -> Vec<HeatFlowPoint> {
    ages_ma
        .iter()
        .map(|&age_ma| HeatFlowPoint {
            age_ma,
            value: two_layer_heat_flow_mw_m2(lithosphere, fit, age_ma),
        })
        .collect()
}

/// Ages from `oldest_ma` down to `youngest_ma` every `step_myr`, both ends included (the
/// last step may be shorter). Errors: a step that is not positive, or oldest < youngest.
pub fn regular_ages(
    oldest_ma: f64,
    youngest_ma: f64,
    step_myr: f64,
) -> Result<Vec<f64>, ScienceError> {
    if !(step_myr > 0.0
        && oldest_ma.is_finite()
        && youngest_ma.is_finite()
        && oldest_ma >= youngest_ma)
    {
        return Err(ScienceError::OutOfRange {
            name: "age grid step",
            value: step_myr,
            range: "positive, from an older to a younger age",
        });
    }
    let steps = ((oldest_ma - youngest_ma) / step_myr * (1.0 - 1e-12)).ceil() as usize;
    let mut ages: Vec<f64> = (0..steps)
        .map(|i| oldest_ma - step_myr * i as f64)
        .collect();
    ages.push(youngest_ma);
    Ok(ages)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::RiftEvent;
    use crate::fit::tests::mckenzie;
    use crate::tolerance::assert_printed;

    fn beta_two() -> UniformFit {
        UniformFit {
            events: vec![RiftEvent {
                rift_onset_ma: 150.0,
                rift_end_ma: 130.0,
                beta: 2.0,
            }],
            pre_rift_subsidence_m: 0.0,
            rms_misfit_m: 0.0,
        }
    }

    #[test]
    fn uniform_history_before_during_and_after_the_rift() {
        // docs/science.md 4.4, beta = 2, k = 3.1, tau computed: equilibrium 33.0584, F(0+) 66.1168,
        // F(20) 62.8632, F(60) 49.2238 mW/m^2.
        let l = mckenzie();
        let fit = beta_two();
        let history =
            uniform_heat_flow_history(&l, &fit, &[170.0, 150.0, 140.0, 130.0, 110.0, 70.0]);
        let values: Vec<f64> = history.iter().map(|p| p.value).collect();
        assert_printed(values[0], 33.0584, 4, "pre-rift");
        assert_printed(values[1], 33.0584, 4, "at onset");
        // Halfway through the syn-rift ramp: halfway between equilibrium and F(0+).
        assert_printed(values[2], (33.0584 + 66.1168) / 2.0, 4, "mid syn-rift");
        assert_printed(values[3], 66.1168, 4, "rift end, F(0+)");
        assert_printed(values[4], 62.8632, 4, "20 Myr after");
        assert_printed(values[5], 49.2238, 4, "60 Myr after");
        assert_eq!(history[4].age_ma, 110.0);
    }

    #[test]
    fn two_layer_history_uses_delta_at_the_rift_end() {
        // docs/science.md 5, delta 1.5 / beta 3 row: F(0+) 49.588, F(20) 63.285 mW/m^2.
        let l = mckenzie();
        let fit = TwoLayerFit {
            delta: 1.5,
            beta: 3.0,
            rift_onset_ma: 100.0,
            rift_end_ma: 90.0,
            pre_rift_subsidence_m: 0.0,
            rms_misfit_m: 0.0,
        };
        let history = two_layer_heat_flow_history(&l, &fit, &[120.0, 90.0, 70.0]);
        assert_printed(history[0].value, 33.058, 3, "equilibrium");
        assert_printed(history[1].value, 49.588, 3, "F(0+)");
        assert_printed(history[2].value, 63.285, 3, "F(20)");
    }

    #[test]
    fn a_well_without_a_rift_stays_at_equilibrium_and_grids_are_regular() {
        let l = mckenzie();
        let none = UniformFit {
            events: vec![],
            ..beta_two()
        };
        assert_printed(
            uniform_heat_flow_mw_m2(&l, &none, 50.0),
            33.0584,
            4,
            "no rift",
        );
        let ages = regular_ages(200.0, 0.0, 1.0).unwrap();
        assert_eq!(ages.len(), 201);
        assert_eq!((ages[0], ages[200]), (200.0, 0.0));
        assert_eq!(
            regular_ages(10.0, 0.0, 4.0).unwrap(),
            vec![10.0, 6.0, 2.0, 0.0]
        );
        assert!(regular_ages(10.0, 0.0, 0.0).is_err());
    }
}
