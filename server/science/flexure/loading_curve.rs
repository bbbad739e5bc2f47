//! The tectonic-subsidence curve of one well as a load approaches it: a flexural-loading
//! phase (docs/science-flexure.md 8). A foreland well subsides faster and faster as the
//! thrust load nears, after riding the forebulge; no rift model has that shape.
//!
//! Model. A line load advances towards the well at a constant rate v and reaches it at
//! `arrival_age_ma`. At an older age its distance is `d = v (age - arrival)`, and the
//! well's deflection is that of the line-load solution at d (Turcotte & Schubert eqs.
//! 3-129, 3-135):
//!
//! ```text
//! Y(age) = Y0 + A f(s),   s = max(age - arrival, 0) / tau,   tau = alpha / v
//! f(s) = exp(-s) (cos s + sin s)     continuous plate
//! f(s) = exp(-s) cos s               plate broken at the load
//! ```
//!
//! A is the deflection under the load (`V0 alpha^3 / 8D`, or `/4D` broken), Y0 the
//! subsidence of the unflexed well. After arrival the well lies under the load and the
//! curve is held at `Y0 + A`. Only `tau = alpha / v` is seen by one well: the flexural
//! parameter and the rate trade off exactly, so the fit returns tau and the rate follows
//! from an alpha chosen for the plate ([`LoadingCurve::approach_rate_m_per_myr`]).
//! Four parameters: A, tau, arrival age, Y0.

use super::foreland::ForelandPlate;
use super::simplex::nelder_mead;
use crate::ScienceError;
use crate::fit::{SubsidenceCurve, SubsidenceObservation, check_observations};
use serde::{Deserialize, Serialize};

/// Parameters of the flexural-loading curve: amplitude, time constant, arrival age, offset.
pub const LOADING_CURVE_PARAMETERS: usize = 4;

/// Bounds of the time constant tau searched (Myr): an advance of one flexural parameter
/// (tens of km) in 0.3 to 300 Myr spans thrust-front rates from about 0.1 to 100 km/Myr
/// (common practice: foreland thrust fronts move a few to tens of km/Myr; memory).
pub const TIME_CONSTANT_RANGE_MYR: (f64, f64) = (0.3, 300.0);

/// A flexural-loading curve.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct LoadingCurve {
    /// A: the deflection when the load reaches the well (m).
    pub amplitude_m: f64,
    /// tau = alpha / v (Myr).
    pub time_constant_myr: f64,
    /// When the load reaches the well (Ma; may be younger than the record, even negative:
    /// the load has not arrived yet).
    pub arrival_age_ma: f64,
    /// Y0: tectonic subsidence of the unflexed well (m).
    pub offset_m: f64,
    pub plate: ForelandPlate,
}

/// The shape f(s) of the module notes.
pub fn loading_shape(plate: ForelandPlate, s: f64) -> f64 {
    let s = s.max(0.0);
    match plate {
        ForelandPlate::Continuous => (-s).exp() * (s.cos() + s.sin()),
        ForelandPlate::BrokenAtLoad => (-s).exp() * s.cos(),
    }
}

impl LoadingCurve {
    /// Tectonic subsidence (m) at `age_ma`.
    pub fn subsidence_m(&self, age_ma: f64) -> f64 {
        let s = (age_ma - self.arrival_age_ma).max(0.0) / self.time_constant_myr;
        self.offset_m + self.amplitude_m * loading_shape(self.plate, s)
    }

    /// The load's approach rate v = alpha / tau (m/Myr) for a plate of flexural
    /// parameter `alpha_m`.
    pub fn approach_rate_m_per_myr(&self, alpha_m: f64) -> f64 {
        alpha_m / self.time_constant_myr
    }

    /// Distance of the load from the well at `age_ma` for flexural parameter `alpha_m` (m).
    pub fn load_distance_m(&self, age_ma: f64, alpha_m: f64) -> f64 {
        (age_ma - self.arrival_age_ma).max(0.0) * self.approach_rate_m_per_myr(alpha_m)
    }
}

/// The least-squares fit of the curve.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LoadingCurveFit {
    pub curve: LoadingCurve,
    pub rms_misfit_m: f64,
    /// Sum of squared residuals (m^2), for a penalised score (BIC, AICc).
    pub sum_squared_residuals_m2: f64,
    pub observations: usize,
    pub parameters: usize,
    pub warnings: Vec<String>,
}

/// Least squares for `y = Y0 + A f`, A >= 0: (Y0, A, SSR).
fn linear(points: &[(f64, f64)], shape: impl Fn(f64) -> f64) -> (f64, f64, f64) {
    let n = points.len() as f64;
    let (mut sf, mut sy, mut sff, mut sfy) = (0.0, 0.0, 0.0, 0.0);
    for &(age, y) in points {
        let f = shape(age);
        sf += f;
        sy += y;
        sff += f * f;
        sfy += f * y;
    }
    let det = n * sff - sf * sf;
    let (mut y0, mut a) = if det > 1e-12 * n * sff.max(1e-300) {
        let a = (n * sfy - sf * sy) / det;
        ((sy - a * sf) / n, a)
    } else {
        (sy / n, 0.0)
    };
    if a < 0.0 {
        (y0, a) = (sy / n, 0.0);
    }
    let ssr = points
        .iter()
        .map(|&(age, y)| (y - y0 - a * shape(age)).powi(2))
        .sum();
    (y0, a, ssr)
}

/// Fit the flexural-loading curve to `(age Ma, tectonic subsidence m)` points, any order
/// (method in the module notes): tau on a logarithmic grid within
/// [`TIME_CONSTANT_RANGE_MYR`] and the arrival age on an even grid from one record length
/// after the youngest point to the oldest, A and Y0 in closed form, then a Nelder-Mead
/// polish. Unweighted, like the stretching fits.
///
/// Errors: fewer than [`LOADING_CURVE_PARAMETERS`] + 1 points, non-finite values, or all
/// points at one age.
pub fn fit_loading_curve(
    points: &[(f64, f64)],
    plate: ForelandPlate,
) -> Result<LoadingCurveFit, ScienceError> {
    if points.len() <= LOADING_CURVE_PARAMETERS {
        return Err(ScienceError::CannotFit(format!(
            "{} subsidence points; the flexural-loading curve has {LOADING_CURVE_PARAMETERS} parameters and needs at least {}",
            points.len(),
            LOADING_CURVE_PARAMETERS + 1
        )));
    }
    if points.iter().any(|p| !(p.0.is_finite() && p.1.is_finite())) {
        return Err(ScienceError::CannotFit(
            "subsidence points must be finite".into(),
        ));
    }
    let oldest = points.iter().map(|p| p.0).fold(f64::NEG_INFINITY, f64::max);
    let youngest = points.iter().map(|p| p.0).fold(f64::INFINITY, f64::min);
    let span = oldest - youngest;
    if span <= 0.0 {
        return Err(ScienceError::CannotFit(
            "the subsidence points span no time".into(),
        ));
    }
    let (tau_lo, tau_hi) = TIME_CONSTANT_RANGE_MYR;
    let (ln_lo, ln_hi) = (tau_lo.ln(), tau_hi.ln());
    let (arr_lo, arr_hi) = (youngest - span, oldest);
    let misfit = |ln_tau: f64, arrival: f64| {
        let tau = ln_tau.exp();
        linear(points, |age| {
            loading_shape(plate, (age - arrival).max(0.0) / tau)
        })
        .2
    };
    const TAU_SCAN: usize = 36;
    const ARRIVAL_SCAN: usize = 61;
    let ln_step = (ln_hi - ln_lo) / (TAU_SCAN - 1) as f64;
    let arr_step = (arr_hi - arr_lo) / (ARRIVAL_SCAN - 1) as f64;
    let mut best = (ln_lo, arr_lo, f64::INFINITY);
    for i in 0..TAU_SCAN {
        let l = ln_lo + ln_step * i as f64;
        for j in 0..ARRIVAL_SCAN {
            let a = arr_lo + arr_step * j as f64;
            let m = misfit(l, a);
            if m < best.2 {
                best = (l, a, m);
            }
        }
    }
    let clamp = |p: &[f64; 2]| (p[0].clamp(ln_lo, ln_hi), p[1].clamp(arr_lo, arr_hi));
    let (p, m) = nelder_mead(
        |p: &[f64; 2]| {
            let (l, a) = clamp(p);
            misfit(l, a)
        },
        [best.0, best.1],
        [0.5 * ln_step, 0.5 * arr_step],
        1e-12 * best.2.max(1e-6),
        600,
    );
    let (ln_tau, arrival) = if m <= best.2 {
        clamp(&p)
    } else {
        (best.0, best.1)
    };
    let tau = ln_tau.exp();
    let (y0, a, ssr) = linear(points, |age| {
        loading_shape(plate, (age - arrival).max(0.0) / tau)
    });
    let mut warnings = Vec::new();
    let near = |x: f64, b: f64, scale: f64| (x - b).abs() <= 0.01 * scale;
    if near(ln_tau, ln_lo, 1.0) || near(ln_tau, ln_hi, 1.0) {
        warnings.push(format!(
            "the loading time constant {tau:.2} Myr lies at a bound of the range searched"
        ));
    }
    if near(arrival, arr_lo, span) {
        warnings.push(format!(
            "the load's arrival ({arrival:.1} Ma) lies at the young bound searched: the record shows little of the approach"
        ));
    }
    if a == 0.0 {
        warnings.push(
            "no approaching load improves the fit: the curve shows no flexural loading".into(),
        );
    }
    Ok(LoadingCurveFit {
        curve: LoadingCurve {
            amplitude_m: a,
            time_constant_myr: tau,
            arrival_age_ma: arrival,
            offset_m: y0,
            plate,
        },
        rms_misfit_m: (ssr / points.len() as f64).sqrt(),
        sum_squared_residuals_m2: ssr,
        observations: points.len(),
        parameters: LOADING_CURVE_PARAMETERS,
        warnings,
    })
}

/// [`fit_loading_curve`] on one curve (min, best or max) of a well's tectonic-subsidence
/// series, as the interpretation engine holds it. Errors: those of
/// [`check_observations`] and of [`fit_loading_curve`].
pub fn fit_loading_curve_to_observations(
    observations: &[SubsidenceObservation],
    curve: SubsidenceCurve,
    plate: ForelandPlate,
) -> Result<LoadingCurveFit, ScienceError> {
    check_observations(observations)?;
    let points: Vec<(f64, f64)> = observations
        .iter()
        .map(|o| (o.age_ma, curve.value(o)))
        .collect();
    fit_loading_curve(&points, plate)
}

#[cfg(test)]
#[path = "loading_curve_tests.rs"]
mod tests;
