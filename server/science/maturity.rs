//! Vitrinite reflectance through a temperature-time path with the EASY%Ro kinetics
//! (Sweeney & Burnham 1990), and the age at which a horizon entered and left each
//! maturity window. Notes: docs/science-thermal.md 1-3.
//!
//! The kinetics are twenty parallel first-order reactions sharing one frequency
//! factor, with activation energies from 34 to 72 kcal/mol in steps of 2 and the
//! published stoichiometric weights. The converted fraction is
//! `F = sum_i f_i (1 - exp(-integral A exp(-E_i / R T) dt))` and
//! `%Ro = exp(-1.6 + 3.7 F)`. The weights sum to 0.85, so %Ro runs from
//! exp(-1.6) = 0.20 (nothing converted) to exp(-1.6 + 3.7 * 0.85) = 4.69 (all converted).
//!
//! The path is piecewise linear in time. Each segment is integrated exactly through the
//! exponential integral E1 (docs/science-thermal.md 2), so the result does not depend
//! on how finely the path is sampled, only on its shape.

use crate::{SECONDS_PER_MYR, ScienceError};

/// Activation energies of the EASY%Ro reactions (kcal/mol): 34 to 72 in steps of 2.
/// Sweeney & Burnham (1990), AAPG Bulletin 74, 1559-1570, table 1 \[memory\].
pub const ACTIVATION_ENERGIES_KCAL_MOL: [f64; 20] = [
    34.0, 36.0, 38.0, 40.0, 42.0, 44.0, 46.0, 48.0, 50.0, 52.0, 54.0, 56.0, 58.0, 60.0, 62.0, 64.0,
    66.0, 68.0, 70.0, 72.0,
];

/// Stoichiometric weights of the reactions, in the order of
/// [`ACTIVATION_ENERGIES_KCAL_MOL`]; they sum to 0.85.
/// Sweeney & Burnham (1990), table 1 \[memory\].
pub const STOICHIOMETRIC_WEIGHTS: [f64; 20] = [
    0.03, 0.03, 0.04, 0.04, 0.05, 0.05, 0.06, 0.04, 0.04, 0.07, 0.06, 0.06, 0.06, 0.05, 0.05, 0.04,
    0.03, 0.02, 0.02, 0.01,
];

/// Frequency factor shared by all reactions (s^-1); Sweeney & Burnham (1990) \[memory\].
pub const FREQUENCY_FACTOR_PER_S: f64 = 1.0e13;

/// Gas constant (kcal mol^-1 K^-1), CODATA value 8.314462618 J mol^-1 K^-1 / 4184.
pub const GAS_CONSTANT_KCAL_MOL_K: f64 = 8.314_462_618 / 4184.0;

/// Kelvin at 0 °C.
const KELVIN_AT_0_C: f64 = 273.15;

/// Most points a temperature-time path may hold, so no input can size the work beyond
/// a bound: 10,000 points is more than 150 times the 60 steps of a 60-surface well.
pub const MAX_PATH_POINTS: usize = 10_000;

/// Physical range accepted for a path temperature (°C): above absolute zero, below the
/// temperatures at which the kinetics mean anything (vitrinite is gone far earlier).
const TEMPERATURE_RANGE_C: (f64, f64) = (-273.0, 1000.0);

/// %Ro with nothing converted: exp(-1.6).
pub fn initial_ro_percent() -> f64 {
    ro_from_fraction(0.0)
}

/// %Ro with every reaction complete: exp(-1.6 + 3.7 * 0.85).
pub fn final_ro_percent() -> f64 {
    ro_from_fraction(STOICHIOMETRIC_WEIGHTS.iter().sum())
}

/// `%Ro = exp(-1.6 + 3.7 F)` for a converted fraction `F` (0 to 0.85);
/// Sweeney & Burnham (1990), eq. 9 \[memory\].
pub fn ro_from_fraction(converted_fraction: f64) -> f64 {
    (-1.6 + 3.7 * converted_fraction).exp()
}

/// One point of a horizon's temperature-time path.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct TimeTemperature {
    /// Age (Ma).
    pub age_ma: f64,
    /// Temperature of the horizon at that age (°C).
    pub temperature_c: f64,
}

/// %Ro of a horizon at one point of its path.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct ReflectancePoint {
    /// Age (Ma).
    pub age_ma: f64,
    /// Temperature of the horizon (°C), as given in the path.
    pub temperature_c: f64,
    /// EASY%Ro converted fraction F (0 to 0.85).
    pub converted_fraction: f64,
    /// Modelled vitrinite reflectance, EASY%Ro (%Ro): an estimate from a model, not a
    /// measurement.
    pub ro_percent: f64,
}

/// A maturity window in %Ro, entered when %Ro reaches `ro_min` and left when it reaches
/// `ro_max`.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct MaturityWindow {
    /// Plain name of the window, e.g. "oil".
    pub name: String,
    /// %Ro at which the window starts.
    pub ro_min: f64,
    /// %Ro at which the window ends.
    pub ro_max: f64,
}

/// The usual windows, common practice (editable by the study): oil 0.55-1.3 %Ro,
/// gas 1.3-2.0 %Ro.
pub fn default_windows() -> Vec<MaturityWindow> {
    vec![
        MaturityWindow {
            name: "oil".into(),
            ro_min: 0.55,
            ro_max: 1.3,
        },
        MaturityWindow {
            name: "gas".into(),
            ro_min: 1.3,
            ro_max: 2.0,
        },
    ]
}

/// When a horizon passed through one window.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct WindowPassage {
    /// Name of the window.
    pub name: String,
    /// Age (Ma) at which %Ro reached the window's lower bound; `None` if it never did.
    pub entered_ma: Option<f64>,
    /// Age (Ma) at which %Ro reached the window's upper bound; `None` if it is still in
    /// the window (or never entered it) at the end of the path.
    pub left_ma: Option<f64>,
}

/// %Ro history of one horizon and its passage through the windows.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct MaturityHistory {
    /// %Ro at each point of the path, oldest first.
    pub points: Vec<ReflectancePoint>,
    /// One passage per window, in the order the windows were given.
    pub windows: Vec<WindowPassage>,
}

/// EASY%Ro through a piecewise-linear temperature-time path (docs/science-thermal.md 1-3).
///
/// `path` is ordered oldest first (ages in Ma, non-increasing; equal ages make a
/// zero-length step); the horizon is taken as fresh (%Ro 0.20) at the first point.
/// Each linear segment is integrated exactly through E1 (section 2), so the %Ro values are
/// correct to about 1e-12 relative whatever the step length. Window ages are found
/// inside the segment where %Ro crosses a bound by bisection on the same exact integral,
/// to 1e-9 of the segment's length.
///
/// Errors: [`ScienceError::OutOfRange`] for an empty path, more than [`MAX_PATH_POINTS`]
/// points, a non-finite age, an age older than the one before it, a temperature outside
/// -273 to 1000 °C, or a window whose bounds are not 0 < ro_min < ro_max.
///
/// Reference: Sweeney, J.J. & Burnham, A.K. (1990), Evaluation of a simple model of
/// vitrinite reflectance based on chemical kinetics, AAPG Bulletin 74(10), 1559-1570.
pub fn easy_ro_history(
    path: &[TimeTemperature],
    windows: &[MaturityWindow],
) -> Result<MaturityHistory, ScienceError> {
    check_path(path)?;
    check_windows(windows)?;

    // The reaction integrals at every point, kept so a window crossing starts from the
    // integral at the start of its segment instead of integrating the path again.
    let mut integrals = Vec::with_capacity(path.len());
    let mut reaction_integral = [0.0_f64; 20];
    integrals.push(reaction_integral);
    // J(T) of every reaction at a point serves the segments on both sides of it.
    let mut j_from = temperature_integrals(path[0]);
    for pair in path.windows(2) {
        let j_to = temperature_integrals(pair[1]);
        add_whole_segment(&mut reaction_integral, pair[0], pair[1], &j_from, &j_to);
        integrals.push(reaction_integral);
        j_from = j_to;
    }
    let points: Vec<ReflectancePoint> = path
        .iter()
        .zip(&integrals)
        .map(|(p, integral)| point_at(*p, integral))
        .collect();

    let windows = windows
        .iter()
        .map(|w| WindowPassage {
            name: w.name.clone(),
            entered_ma: age_reaching(path, &points, &integrals, w.ro_min),
            left_ma: age_reaching(path, &points, &integrals, w.ro_max),
        })
        .collect();
    Ok(MaturityHistory { points, windows })
}

fn check_path(path: &[TimeTemperature]) -> Result<(), ScienceError> {
    if path.is_empty() || path.len() > MAX_PATH_POINTS {
        return Err(ScienceError::OutOfRange {
            name: "number of temperature-time points",
            value: path.len() as f64,
            range: "1 to 10000",
        });
    }
    let mut previous_age = f64::INFINITY;
    for p in path {
        if !p.age_ma.is_finite() || p.age_ma > previous_age {
            return Err(ScienceError::OutOfRange {
                name: "age of a temperature-time point (Ma)",
                value: p.age_ma,
                range: "finite, and no older than the point before it (oldest first)",
            });
        }
        previous_age = p.age_ma;
        let (lo, hi) = TEMPERATURE_RANGE_C;
        if !(lo..=hi).contains(&p.temperature_c) {
            return Err(ScienceError::OutOfRange {
                name: "temperature of a temperature-time point (°C)",
                value: p.temperature_c,
                range: "-273 to 1000",
            });
        }
    }
    Ok(())
}

fn check_windows(windows: &[MaturityWindow]) -> Result<(), ScienceError> {
    for w in windows {
        if !(w.ro_min > 0.0 && w.ro_min.is_finite()) {
            return Err(ScienceError::OutOfRange {
                name: "lower bound of a maturity window (%Ro)",
                value: w.ro_min,
                range: "above 0",
            });
        }
        if !(w.ro_max > w.ro_min && w.ro_max.is_finite()) {
            return Err(ScienceError::OutOfRange {
                name: "upper bound of a maturity window (%Ro)",
                value: w.ro_max,
                range: "above the window's lower bound",
            });
        }
    }
    Ok(())
}

fn converted_fraction(reaction_integral: &[f64; 20]) -> f64 {
    STOICHIOMETRIC_WEIGHTS
        .iter()
        .zip(reaction_integral)
        .map(|(f, i)| -f * (-i).exp_m1())
        .sum()
}

fn point_at(p: TimeTemperature, reaction_integral: &[f64; 20]) -> ReflectancePoint {
    let converted_fraction = converted_fraction(reaction_integral);
    ReflectancePoint {
        age_ma: p.age_ma,
        temperature_c: p.temperature_c,
        converted_fraction,
        ro_percent: ro_from_fraction(converted_fraction),
    }
}

/// `J(T)` of every reaction at the temperature of `p`.
fn temperature_integrals(p: TimeTemperature) -> [f64; 20] {
    let t = p.temperature_c + KELVIN_AT_0_C;
    ACTIVATION_ENERGIES_KCAL_MOL.map(|e| temperature_integral(e / GAS_CONSTANT_KCAL_MOL_K, t))
}

/// [`add_segment`] over the whole segment, with `J` at its ends already known: the same
/// arithmetic as [`segment_integral`], each end's `J` computed once for two segments.
fn add_whole_segment(
    reaction_integral: &mut [f64; 20],
    from: TimeTemperature,
    to: TimeTemperature,
    j_from: &[f64; 20],
    j_to: &[f64; 20],
) {
    let duration_s = (from.age_ma - to.age_ma) * SECONDS_PER_MYR;
    if duration_s <= 0.0 {
        return;
    }
    let t1 = from.temperature_c + KELVIN_AT_0_C;
    let t2 = to.temperature_c + KELVIN_AT_0_C;
    if (t2 - t1).abs() < 1e-3 {
        add_segment(reaction_integral, from, to, 1.0);
        return;
    }
    let heating_rate = (t2 - t1) / duration_s;
    for (i, integral) in reaction_integral.iter_mut().enumerate() {
        *integral += FREQUENCY_FACTOR_PER_S * (j_to[i] - j_from[i]) / heating_rate;
    }
}

/// Adds to each reaction's integral `A exp(-E/RT) dt` over the first `share` (0 to 1)
/// of the linear segment from `from` to `to` (docs/science-thermal.md 2).
fn add_segment(
    reaction_integral: &mut [f64; 20],
    from: TimeTemperature,
    to: TimeTemperature,
    share: f64,
) {
    let duration_s = (from.age_ma - to.age_ma) * share * SECONDS_PER_MYR;
    if duration_s <= 0.0 {
        return;
    }
    let t1 = from.temperature_c + KELVIN_AT_0_C;
    let t2 = t1 + (to.temperature_c - from.temperature_c) * share;
    for (integral, e) in reaction_integral
        .iter_mut()
        .zip(ACTIVATION_ENERGIES_KCAL_MOL)
    {
        let e_over_r = e / GAS_CONSTANT_KCAL_MOL_K;
        *integral += FREQUENCY_FACTOR_PER_S * segment_integral(e_over_r, t1, t2, duration_s);
    }
}

/// `integral exp(-e_over_r / T(t)) dt` over `duration_s` with T linear from `t1` to `t2`
/// (K). With heating rate H = (t2 - t1)/duration, it is (J(t2) - J(t1)) / H where
/// `J(T) = integral_0^T exp(-e_over_r/T') dT' = T e^-x (1 - x e^x E1(x))`, x = e_over_r/T.
/// Below 1e-3 K of change the difference loses digits, and the midpoint rule is exact to
/// about 1e-9 relative, so it is used instead.
fn segment_integral(e_over_r: f64, t1: f64, t2: f64, duration_s: f64) -> f64 {
    if (t2 - t1).abs() < 1e-3 {
        let t_mid = 0.5 * (t1 + t2);
        return (-e_over_r / t_mid).exp() * duration_s;
    }
    let heating_rate = (t2 - t1) / duration_s;
    (temperature_integral(e_over_r, t2) - temperature_integral(e_over_r, t1)) / heating_rate
}

/// `J(T) = integral_0^T exp(-e_over_r/T') dT'` (K), docs/science-thermal.md 2.
fn temperature_integral(e_over_r: f64, t: f64) -> f64 {
    let x = e_over_r / t;
    t * (-x).exp() * (1.0 - scaled_e1(x))
}

/// `x e^x E1(x)` for x >= 1 by the continued fraction of E1 (modified Lentz), with a
/// fixed cap of 200 terms; for the EASY%Ro energies x lies between about 20 and 1e5
/// (34 kcal/mol at 1000 °C to 72 kcal/mol at 0 °C is 13 to 130; colder raises it), where
/// it converges to 1e-16 in under 30 terms. Press et al., Numerical Recipes, section 6.3.
fn scaled_e1(x: f64) -> f64 {
    // E1(x) = e^-x / (x + 1 - 1^2/(x + 3 - 2^2/(x + 5 - ...)))
    let tiny = 1e-300;
    let mut b = x + 1.0;
    let mut c = 1.0 / tiny;
    let mut d = 1.0 / b;
    let mut h = d;
    for i in 1..200 {
        let a = -((i * i) as f64);
        b += 2.0;
        d = 1.0 / (a * d + b);
        c = b + a / c;
        let delta = c * d;
        h *= delta;
        if (delta - 1.0).abs() < 1e-16 {
            break;
        }
    }
    x * h
}

/// First age at which %Ro reaches `ro`, found inside the segment where it is crossed.
fn age_reaching(
    path: &[TimeTemperature],
    points: &[ReflectancePoint],
    integrals: &[[f64; 20]],
    ro: f64,
) -> Option<f64> {
    if points[0].ro_percent >= ro {
        return Some(points[0].age_ma);
    }
    let k = points.iter().position(|p| p.ro_percent >= ro)?;
    let (from, to) = (path[k - 1], path[k]);
    let start = integrals[k - 1];
    let ro_after = |share: f64| {
        let mut integral = start;
        add_segment(&mut integral, from, to, share);
        ro_from_fraction(converted_fraction(&integral))
    };
    // %Ro never falls along a segment, so bisection on the share of it brackets the age.
    let (mut lo, mut hi) = (0.0_f64, 1.0_f64);
    for _ in 0..30 {
        let mid = 0.5 * (lo + hi);
        if ro_after(mid) >= ro {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    let share = 0.5 * (lo + hi);
    Some(from.age_ma - share * (from.age_ma - to.age_ma))
}

#[cfg(test)]
#[path = "maturity_tests.rs"]
mod tests;
