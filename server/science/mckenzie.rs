//! McKenzie (1978) uniform lithospheric stretching: initial (syn-rift) subsidence,
//! post-rift thermal subsidence and surface heat flow (docs/science.md 4).
//!
//! The lithosphere of thickness `a` and its crust of thickness `tc` are thinned by
//! the same factor beta, instantaneously; temperatures are excess over the surface,
//! the base of the plate is held at T1, radiogenic heat is ignored. Subsidence is
//! water-loaded unless the infill density says otherwise. Times `t_myr` are Myr
//! since the (instantaneous) rift event.

use super::search1d::bisect_root;
use super::{ModelParameters, ScienceError};
use serde::{Deserialize, Serialize};
use std::f64::consts::PI;

/// Which form of the post-rift thermal-subsidence series to evaluate.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum ThermalSeries {
    /// The full Fourier series, summed until the remaining terms are below 1e-14 of E0.
    Full,
    /// Only the first mode, `E0 r(beta) (1 - exp(-t/tau))`: the common hand-calculation
    /// form, up to 18 % off at 10 Myr (docs/science.md 4.3, 12 item 6). Labelled, never the default.
    OneTerm,
}

/// The thermal and density structure of the lithosphere before rifting, with the
/// infill density, as used by every stretching formula (docs/science.md 4.1).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Lithosphere {
    pub lithosphere_thickness_m: f64,
    pub crust_thickness_m: f64,
    pub mantle_density_kg_m3: f64,
    pub crust_density_kg_m3: f64,
    /// Density of what fills the basin: water for tectonic (water-loaded) subsidence.
    pub infill_density_kg_m3: f64,
    pub thermal_expansion_per_c: f64,
    pub asthenosphere_temperature_c: f64,
    pub thermal_conductivity_w_m_k: f64,
    /// tau = a^2 / (pi^2 kappa), from the parameters unless pinned.
    pub time_constant_myr: f64,
}

impl Lithosphere {
    /// The water-loaded lithosphere of a study's parameters; tau from
    /// [`ModelParameters::thermal_time_constant_myr`]. Errors: the first parameter
    /// outside its physical range.
    pub fn water_loaded(p: &ModelParameters) -> Result<Self, ScienceError> {
        Self::infilled(p, p.water_density_kg_m3)
    }

    /// The same lithosphere under an infill of `infill_density_kg_m3` (docs/science.md 4.2:
    /// "for a sediment-filled basin, replace rho_w by the infill density"). The infill
    /// must be lighter than the hot mantle, or the basin could not be filled isostatically.
    pub fn infilled(p: &ModelParameters, infill_density_kg_m3: f64) -> Result<Self, ScienceError> {
        p.validate().map_err(|mut problems| problems.remove(0))?;
        let hot_mantle = p.mantle_density_kg_m3
            * (1.0 - p.thermal_expansion_per_c * p.asthenosphere_temperature_c);
        if !(infill_density_kg_m3.is_finite()
            && infill_density_kg_m3 > 0.0
            && infill_density_kg_m3 < hot_mantle)
        {
            return Err(ScienceError::OutOfRange {
                name: "infill density",
                value: infill_density_kg_m3,
                range: "positive and lighter than the mantle at T1",
            });
        }
        Ok(Lithosphere {
            lithosphere_thickness_m: p.lithosphere_thickness_m,
            crust_thickness_m: p.crust_thickness_m,
            mantle_density_kg_m3: p.mantle_density_kg_m3,
            crust_density_kg_m3: p.crust_density_kg_m3,
            infill_density_kg_m3,
            thermal_expansion_per_c: p.thermal_expansion_per_c,
            asthenosphere_temperature_c: p.asthenosphere_temperature_c,
            thermal_conductivity_w_m_k: p.thermal_conductivity_w_m_k,
            time_constant_myr: p.thermal_time_constant_myr(),
        })
    }

    /// The same lithosphere with tau pinned, e.g. to McKenzie's quoted 62.8 Myr
    /// (docs/science.md 12 item 3). Only for reproducing published tables.
    pub fn with_time_constant_myr(self, time_constant_myr: f64) -> Self {
        Lithosphere {
            time_constant_myr,
            ..self
        }
    }

    /// alpha T1 (dimensionless thermal strain across the plate).
    fn alpha_t1(&self) -> f64 {
        self.thermal_expansion_per_c * self.asthenosphere_temperature_c
    }

    /// Denominator of the exact Airy balance, `rho_0 (1 - alpha T1) - rho_fill` (kg m^-3).
    pub(crate) fn hot_isostatic_contrast(&self) -> f64 {
        self.mantle_density_kg_m3 * (1.0 - self.alpha_t1()) - self.infill_density_kg_m3
    }

    /// E0 = 4 a rho_0 alpha T1 / (pi^2 (rho_0 - rho_fill)) in m; 3165.648 m for the
    /// McKenzie (1978) parameters under water (docs/science.md 4.1).
    pub fn thermal_amplitude_m(&self) -> f64 {
        4.0 * self.lithosphere_thickness_m * self.mantle_density_kg_m3 * self.alpha_t1()
            / (PI * PI * (self.mantle_density_kg_m3 - self.infill_density_kg_m3))
    }

    /// Equilibrium surface heat flow K T1 / a in mW m^-2 (docs/science.md 4.4).
    pub fn equilibrium_heat_flow_mw_m2(&self) -> f64 {
        1e3 * self.thermal_conductivity_w_m_k * self.asthenosphere_temperature_c
            / self.lithosphere_thickness_m
    }

    /// Initial subsidence for infinite stretching, Si(beta -> inf) in m; Si(beta) is
    /// this times (1 - 1/beta). McKenzie (1978); W10 eq. 7.28; docs/science.md 4.2.
    pub fn initial_subsidence_limit_m(&self) -> f64 {
        self.initial_subsidence_limit_for_crust_m(self.crust_thickness_m)
    }

    /// Si(beta -> inf) of this lithosphere with its crust `crust_thickness_m` thick
    /// instead of the parameters' tc, in m: the same formula with tc replaced. Used for a
    /// later rift event, whose crust an earlier event left thinned to tc / beta1 on a
    /// thermally re-equilibrated plate (docs/science.md 6, "second event").
    pub fn initial_subsidence_limit_for_crust_m(&self, crust_thickness_m: f64) -> f64 {
        let (a, tc) = (self.lithosphere_thickness_m, crust_thickness_m);
        let (rho0, rhoc) = (self.mantle_density_kg_m3, self.crust_density_kg_m3);
        let at1 = self.alpha_t1();
        a * ((rho0 - rhoc) * (tc / a) * (1.0 - at1 * tc / (2.0 * a)) - at1 * rho0 / 2.0)
            / self.hot_isostatic_contrast()
    }

    /// Initial (syn-rift) subsidence Si(beta) in m, positive down:
    ///
    /// `Si = a [(rho_0 - rho_c)(tc/a)(1 - alpha T1 tc/(2a)) - alpha T1 rho_0/2] (1 - 1/beta)
    ///       / (rho_0 (1 - alpha T1) - rho_fill)`
    ///
    /// beta >= 1 (callers validate with [`check_stretching_factor`]); beta = inf is the
    /// limit. Negative (uplift) when the crust is thinner than about 17 km.
    /// McKenzie (1978); W10 eq. 7.28; docs/science.md 4.2.
    pub fn initial_subsidence_m(&self, beta: f64) -> f64 {
        self.initial_subsidence_limit_m() * (1.0 - 1.0 / beta)
    }

    /// The beta that gives an initial subsidence `initial_subsidence_m`, by the linear
    /// relation in 1/beta: `beta = 1 / (1 - Si / Si(inf))` (docs/science.md 4.2). Errors:
    /// a crust too thin for subsidence, or Si outside [0, Si(inf)).
    pub fn beta_from_initial_subsidence(
        &self,
        initial_subsidence_m: f64,
    ) -> Result<f64, ScienceError> {
        let limit = self.initial_subsidence_limit_m();
        let ratio = initial_subsidence_m / limit;
        if !(limit > 0.0 && (0.0..1.0).contains(&ratio)) {
            return Err(ScienceError::CannotFit(format!(
                "an initial subsidence of {initial_subsidence_m} m needs 0 <= Si < {limit:.1} m"
            )));
        }
        Ok(1.0 / (1.0 - ratio))
    }

    /// Post-rift thermal subsidence S_T(beta, t) in m, t in Myr since the rift event:
    ///
    /// `S_T = E0 sum_{m>=0} (beta/pi) sin((2m+1) pi/beta) / (2m+1)^3 (1 - exp(-(2m+1)^2 t/tau))`
    ///
    /// evaluated as `S_T(inf) - E0 sum ... exp(...)`, whose terms die off like a Gaussian
    /// instead of 1/n^3, summed until the tail is below 1e-14 E0; [`ThermalSeries::OneTerm`]
    /// keeps the first mode only. Zero for t <= 0. The denominator rho_0 - rho_fill and
    /// the crust treated as mantle are McKenzie's simplifications (docs/science.md 4.5).
    /// McKenzie (1978); W10 eq. 7.70; docs/science.md 4.3.
    pub fn thermal_subsidence_m(&self, beta: f64, t_myr: f64, series: ThermalSeries) -> f64 {
        if t_myr <= 0.0 {
            return 0.0;
        }
        let x = t_myr / self.time_constant_myr;
        match series {
            ThermalSeries::OneTerm => {
                self.thermal_amplitude_m() * one_term_factor(beta) * (-(-x).exp_m1())
            }
            ThermalSeries::Full => {
                let e0 = self.thermal_amplitude_m();
                self.final_thermal_subsidence_m(beta, ThermalSeries::Full)
                    - e0 * odd_mode_decay_sum(|n| uniform_mode(beta, n), 1.0, x)
            }
        }
    }

    /// Thermal subsidence as t -> inf in m: `E0 (pi^2/8)(1 - 1/beta)` for the full series
    /// (W10 eq. 7.33; docs/science.md 4.3), `E0 r(beta)` for the one-term form.
    pub fn final_thermal_subsidence_m(&self, beta: f64, series: ThermalSeries) -> f64 {
        let e0 = self.thermal_amplitude_m();
        match series {
            ThermalSeries::Full => e0 * PI * PI / 8.0 * (1.0 - 1.0 / beta),
            ThermalSeries::OneTerm => e0 * one_term_factor(beta),
        }
    }

    /// Rate of thermal subsidence just after the rift event, m/Myr. Full series:
    /// `E0 beta / (4 tau)`, from the square-wave sum `sum_{k odd} sin(k theta)/k = pi/4`
    /// (0 < theta < pi), which gives exactly E0/(2 tau) for beta = 2 (docs/science.md 4.3).
    /// One-term: `E0 r(beta) / tau`.
    pub fn initial_thermal_rate_m_per_myr(&self, beta: f64, series: ThermalSeries) -> f64 {
        let e0 = self.thermal_amplitude_m();
        match series {
            ThermalSeries::Full if beta > 1.0 => e0 * beta / (4.0 * self.time_constant_myr),
            ThermalSeries::Full => 0.0,
            ThermalSeries::OneTerm => e0 * one_term_factor(beta) / self.time_constant_myr,
        }
    }

    /// The beta whose thermal subsidence after `t_myr` is `thermal_subsidence_m`, by
    /// bisection (S_T rises monotonically with beta; docs/science.md 4.3 inversion checks).
    /// Errors: t <= 0, or a value outside what beta in [1, 1e6] can give.
    pub fn beta_from_thermal_subsidence(
        &self,
        thermal_subsidence_m: f64,
        t_myr: f64,
        series: ThermalSeries,
    ) -> Result<f64, ScienceError> {
        let refuse = || {
            ScienceError::CannotFit(format!(
                "no stretching factor gives {thermal_subsidence_m} m of thermal subsidence after {t_myr} Myr"
            ))
        };
        if !(t_myr > 0.0 && thermal_subsidence_m.is_finite()) {
            return Err(refuse());
        }
        // Bisection in u = 1 - 1/beta keeps the whole range of beta on a finite interval.
        let misfit = |u: f64| {
            self.thermal_subsidence_m(1.0 / (1.0 - u), t_myr, series) - thermal_subsidence_m
        };
        let u = bisect_root(misfit, 0.0, 1.0 - 1e-6, 1e-13).ok_or_else(refuse)?;
        Ok(1.0 / (1.0 - u))
    }

    /// Surface heat flow F(beta, t) in mW m^-2, t in Myr since the rift event:
    ///
    /// `F = (K T1/a) [1 + 2 sum_{n>=1} (beta/(n pi)) sin(n pi/beta) exp(-n^2 t/tau)]`
    ///
    /// with the closed value `F(0+) = beta K T1/a` at t = 0, where the series converges
    /// only conditionally, and `K T1/a` before the event (t < 0). Radiogenic heat ignored.
    /// McKenzie (1978); W10 eqs. 7.62, 7.67, 7.68; docs/science.md 4.4.
    pub fn heat_flow_mw_m2(&self, beta: f64, t_myr: f64) -> f64 {
        let equilibrium = self.equilibrium_heat_flow_mw_m2();
        if t_myr < 0.0 {
            return equilibrium;
        }
        if t_myr == 0.0 {
            return beta * equilibrium;
        }
        let x = t_myr / self.time_constant_myr;
        let sum = all_mode_decay_sum(|n| 2.0 * uniform_mode(beta, n) * n * n, 2.0, x);
        equilibrium * (1.0 + sum)
    }
}

/// r(beta) = (beta/pi) sin(pi/beta): the one-term amplitude, rising from 0 at beta = 1
/// to 1 as beta -> inf (docs/science.md 4.3).
pub fn one_term_factor(beta: f64) -> f64 {
    uniform_mode(beta, 1.0)
}

/// Refuse a stretching factor below 1 (compression is not a rift) or not finite.
pub fn check_stretching_factor(name: &'static str, value: f64) -> Result<f64, ScienceError> {
    if value.is_finite() && value >= 1.0 {
        Ok(value)
    } else {
        Err(ScienceError::OutOfRange {
            name,
            value,
            range: "a finite stretching factor of at least 1",
        })
    }
}

/// McKenzie's modal coefficient `(beta/pi) sin(n pi/beta) / n^3`; its magnitude is at
/// most 1/n^2 (|sin x| <= x), and it tends to 1/n^2 as beta -> inf (the plate-model limit,
/// docs/science.md 7).
pub(crate) fn uniform_mode(beta: f64, n: f64) -> f64 {
    if beta.is_infinite() {
        return 1.0 / (n * n);
    }
    beta / PI * (n * PI / beta).sin() / (n * n * n)
}

/// Relative size below which the tail of a modal sum is dropped.
const SERIES_TAIL: f64 = 1e-14;

/// `sum_{n odd} coefficient(n) exp(-n^2 x)` for x > 0, where |coefficient(n)| <=
/// `bound / n^2`. Stops once the tail, at most `bound exp(-n^2 x)/n^2 (1 + 1/(2 n x))`
/// (an integral bound), is below [`SERIES_TAIL`].
pub(crate) fn odd_mode_decay_sum(coefficient: impl Fn(f64) -> f64, bound: f64, x: f64) -> f64 {
    let mut sum = 0.0;
    let mut n = 1.0;
    while n < 2e6 {
        let decay = (-n * n * x).exp();
        sum += coefficient(n) * decay;
        if bound * decay / (n * n) * (1.0 + 1.0 / (2.0 * n * x)) < SERIES_TAIL {
            break;
        }
        n += 2.0;
    }
    sum
}

/// `sum_{n>=1} coefficient(n) exp(-n^2 x)` for x > 0, with |coefficient(n)| <= `bound`.
pub(crate) fn all_mode_decay_sum(coefficient: impl Fn(f64) -> f64, bound: f64, x: f64) -> f64 {
    let mut sum = 0.0;
    let mut n = 1.0;
    while n < 2e6 {
        let decay = (-n * n * x).exp();
        sum += coefficient(n) * decay;
        if bound * decay * (1.0 + 1.0 / (2.0 * n * x)) < SERIES_TAIL {
            break;
        }
        n += 1.0;
    }
    sum
}

#[cfg(test)]
#[path = "mckenzie_tests.rs"]
mod tests;
