//! Royden & Keen (1980) depth-dependent (two-layer) stretching: the crust thins by
//! delta, the mantle lithosphere below it by beta (docs/science.md 5).
//!
//! All of McKenzie's assumptions are kept (instantaneous stretching, fixed plate base
//! at T1, temperatures carried with the material, the simplified thermal isostasy of
//! docs/science.md 4.5). The closed forms are the ones derived in docs/science.md 5 (flagged
//! \[derived\] there: checked numerically, not against the paper's printed equations);
//! every one reduces to McKenzie's when delta = beta. Methods live on
//! [`Lithosphere`], beside the uniform ones.

use super::mckenzie::{Lithosphere, ThermalSeries, all_mode_decay_sum, odd_mode_decay_sum};
use std::f64::consts::PI;

impl Lithosphere {
    /// Depth of the stretched plate's base, `zL = tc/delta + (a - tc)/beta` (m).
    fn two_layer_base_m(&self, delta: f64, beta: f64) -> f64 {
        let (a, tc) = (self.lithosphere_thickness_m, self.crust_thickness_m);
        tc / delta + (a - tc) / beta
    }

    /// The bound C with |two-layer mode n| <= C / n^2 (|sin x| <= |x|).
    pub(crate) fn two_layer_mode_bound(&self, delta: f64, beta: f64) -> f64 {
        let (a, tc) = (self.lithosphere_thickness_m, self.crust_thickness_m);
        beta * self.two_layer_base_m(delta, beta) / a + (delta - beta).abs() * tc / (a * delta)
    }

    /// Modal coefficient `[beta sin(n pi zL/a) + (delta - beta) sin(n pi tc/(a delta))] / (pi n^3)`,
    /// the two-layer counterpart of McKenzie's `(beta/pi) sin(n pi/beta)/n^3`.
    pub(crate) fn two_layer_mode(&self, delta: f64, beta: f64, n: f64) -> f64 {
        let (a, tc) = (self.lithosphere_thickness_m, self.crust_thickness_m);
        let z_base = self.two_layer_base_m(delta, beta);
        (beta * (n * PI * z_base / a).sin() + (delta - beta) * (n * PI * tc / (a * delta)).sin())
            / (PI * n * n * n)
    }

    /// Two-layer initial subsidence in m, positive down (negative = uplift):
    ///
    /// `Si = {(1 - 1/delta) tc [(rho_0 - rho_c) - alpha T1 (rho_0 - rho_c tc/(2a))]
    ///        - (1 - 1/beta) rho_0 alpha T1 (a - tc)^2/(2a)} / (rho_0 (1 - alpha T1) - rho_fill)`
    ///
    /// delta, beta >= 1. Royden & Keen (1980); docs/science.md 5 \[derived\].
    pub fn two_layer_initial_subsidence_m(&self, delta: f64, beta: f64) -> f64 {
        let (a, tc) = (self.lithosphere_thickness_m, self.crust_thickness_m);
        let (rho0, rhoc) = (self.mantle_density_kg_m3, self.crust_density_kg_m3);
        let at1 = self.thermal_expansion_per_c * self.asthenosphere_temperature_c;
        let crust =
            (1.0 - 1.0 / delta) * tc * ((rho0 - rhoc) - at1 * (rho0 - rhoc * tc / (2.0 * a)));
        let mantle = (1.0 - 1.0 / beta) * rho0 * at1 * (a - tc).powi(2) / (2.0 * a);
        (crust - mantle) / self.hot_isostatic_contrast()
    }

    /// Two-layer thermal subsidence in m, t in Myr since the rift event:
    ///
    /// `S_T = E0 sum_{n odd} [beta sin(n pi zL/a) + (delta - beta) sin(n pi tc/(a delta))]/(pi n^3)
    ///        (1 - exp(-n^2 t/tau))`
    ///
    /// summed as `S_T(inf) - E0 sum ... exp(...)` like the uniform case; one-term keeps
    /// n = 1. Zero for t <= 0. Royden & Keen (1980); docs/science.md 5 \[derived\].
    pub fn two_layer_thermal_subsidence_m(
        &self,
        delta: f64,
        beta: f64,
        t_myr: f64,
        series: ThermalSeries,
    ) -> f64 {
        if t_myr <= 0.0 {
            return 0.0;
        }
        let x = t_myr / self.time_constant_myr;
        let e0 = self.thermal_amplitude_m();
        match series {
            ThermalSeries::OneTerm => e0 * self.two_layer_mode(delta, beta, 1.0) * (-(-x).exp_m1()),
            ThermalSeries::Full => {
                let bound = self.two_layer_mode_bound(delta, beta);
                self.two_layer_final_thermal_subsidence_m(delta, beta, ThermalSeries::Full)
                    - e0 * odd_mode_decay_sum(|n| self.two_layer_mode(delta, beta, n), bound, x)
            }
        }
    }

    /// Two-layer thermal subsidence as t -> inf in m. Full series:
    /// `rho_0 alpha T1 [a/2 - (tc/delta)(1 - tc/(2a)) - (a - tc)^2/(2 a beta)] / (rho_0 - rho_fill)`;
    /// one-term: `E0` times the first modal coefficient. docs/science.md 5 \[derived\].
    pub fn two_layer_final_thermal_subsidence_m(
        &self,
        delta: f64,
        beta: f64,
        series: ThermalSeries,
    ) -> f64 {
        let (a, tc) = (self.lithosphere_thickness_m, self.crust_thickness_m);
        let rho0 = self.mantle_density_kg_m3;
        let at1 = self.thermal_expansion_per_c * self.asthenosphere_temperature_c;
        match series {
            ThermalSeries::Full => {
                rho0 * at1
                    * (a / 2.0
                        - tc / delta * (1.0 - tc / (2.0 * a))
                        - (a - tc).powi(2) / (2.0 * a * beta))
                    / (rho0 - self.infill_density_kg_m3)
            }
            ThermalSeries::OneTerm => {
                self.thermal_amplitude_m() * self.two_layer_mode(delta, beta, 1.0)
            }
        }
    }

    /// Two-layer surface heat flow in mW m^-2, t in Myr since the rift event:
    ///
    /// `F = (K T1/a) [1 + sum_{n>=1} (2/(n pi)) (beta sin(n pi zL/a) + (delta - beta) sin(n pi tc/(a delta)))
    ///      exp(-n^2 t/tau)]`
    ///
    /// with the closed value `F(0+) = delta K T1/a` (the crust's geotherm gradient sets the
    /// surface flux) and `K T1/a` before the event. docs/science.md 5 \[derived\].
    pub fn two_layer_heat_flow_mw_m2(&self, delta: f64, beta: f64, t_myr: f64) -> f64 {
        let equilibrium = self.equilibrium_heat_flow_mw_m2();
        if t_myr < 0.0 {
            return equilibrium;
        }
        if t_myr == 0.0 {
            return delta * equilibrium;
        }
        let x = t_myr / self.time_constant_myr;
        let bound = 2.0 * self.two_layer_mode_bound(delta, beta);
        equilibrium
            * (1.0
                + all_mode_decay_sum(
                    |n| 2.0 * n * n * self.two_layer_mode(delta, beta, n),
                    bound,
                    x,
                ))
    }
}

#[cfg(test)]
mod tests {
    use crate::ModelParameters;
    use crate::mckenzie::{Lithosphere, ThermalSeries};
    use crate::tolerance::{assert_printed, assert_relative};

    fn mckenzie() -> Lithosphere {
        Lithosphere::water_loaded(&ModelParameters::default()).unwrap()
    }

    #[test]
    fn all_six_rows_of_the_two_layer_table() {
        // docs/science.md 5 table (tc 35 km, tau computed, k 3.1, water-loaded):
        // (delta, beta, Si, S_T(50), S_T(inf), F(0+), F(20)).
        let rows = [
            (2.0, 2.0, 2137.134, 1044.837, 1952.731, 66.117, 62.863),
            (1.5, 3.0, 704.911, 1027.689, 1976.684, 49.588, 63.285),
            (2.0, 4.0, 1597.250, 1312.290, 2458.878, 66.117, 77.065),
            (1.5, 1.0, 2144.601, 370.094, 626.957, 49.588, 41.927),
            (1.0, 2.0, -1079.767, 540.579, 1012.296, 33.058, 41.227),
            (3.0, 1.5, 3569.356, 1068.986, 1928.777, 99.175, 62.597),
        ];
        let l = mckenzie();
        for (delta, beta, si, st50, st_inf, f0, f20) in rows {
            let what = |q: &str| format!("{q} delta={delta} beta={beta}");
            assert_printed(
                l.two_layer_initial_subsidence_m(delta, beta),
                si,
                3,
                &what("Si"),
            );
            assert_printed(
                l.two_layer_thermal_subsidence_m(delta, beta, 50.0, ThermalSeries::Full),
                st50,
                3,
                &what("S_T(50)"),
            );
            assert_printed(
                l.two_layer_final_thermal_subsidence_m(delta, beta, ThermalSeries::Full),
                st_inf,
                3,
                &what("S_T(inf)"),
            );
            assert_printed(
                l.two_layer_heat_flow_mw_m2(delta, beta, 0.0),
                f0,
                3,
                &what("F(0+)"),
            );
            assert_printed(
                l.two_layer_heat_flow_mw_m2(delta, beta, 20.0),
                f20,
                3,
                &what("F(20)"),
            );
        }
    }

    #[test]
    fn equal_factors_reduce_exactly_to_mckenzie() {
        // docs/science.md 5: every two-layer form equals McKenzie (1978) when delta = beta.
        // Absolute slack of 1e-9 (m or mW/m^2) because beta = 1 gives exact zeros.
        let close = |a: f64, b: f64, what: &str| {
            assert!(
                (a - b).abs() <= 1e-9 * b.abs().max(1.0),
                "{what}: {a} vs {b}"
            );
        };
        let l = mckenzie();
        for beta in [1.0, 1.2, 2.0, 3.3, 7.0] {
            close(
                l.two_layer_initial_subsidence_m(beta, beta),
                l.initial_subsidence_m(beta),
                "Si",
            );
            for series in [ThermalSeries::Full, ThermalSeries::OneTerm] {
                let two_layer = l.two_layer_final_thermal_subsidence_m(beta, beta, series);
                close(
                    two_layer,
                    l.final_thermal_subsidence_m(beta, series),
                    "S_T(inf)",
                );
                for t in [0.3, 5.0, 40.0, 150.0] {
                    let two_layer = l.two_layer_thermal_subsidence_m(beta, beta, t, series);
                    close(two_layer, l.thermal_subsidence_m(beta, t, series), "S_T");
                    close(
                        l.two_layer_heat_flow_mw_m2(beta, beta, t),
                        l.heat_flow_mw_m2(beta, t),
                        "F",
                    );
                }
            }
        }
    }

    #[test]
    fn the_series_starts_from_zero_and_its_sum_matches_the_closed_final_value() {
        // S_T(inf) closed form (docs/science.md 5) equals E0 sum_{n odd} mode(n) (series at t -> inf),
        // so S_T(0+) -> 0: checked by summing the modes directly.
        let l = mckenzie();
        let e0 = l.thermal_amplitude_m();
        for (delta, beta) in [(1.5, 3.0), (3.0, 1.5), (1.0, 2.0)] {
            let direct: f64 = (0..200_000)
                .map(|m| l.two_layer_mode(delta, beta, 2.0 * m as f64 + 1.0))
                .sum();
            let closed = l.two_layer_final_thermal_subsidence_m(delta, beta, ThermalSeries::Full);
            assert_relative(e0 * direct, closed, 1e-6, "sum of modes");
            assert!(
                l.two_layer_thermal_subsidence_m(delta, beta, 1e-8, ThermalSeries::Full)
                    .abs()
                    < 0.5
            );
        }
    }
}
