//! Foreland (flexural) loading: the deflection of a plate under a line or distributed
//! (block) load, and the fit of that model to a section's tectonic subsidence at one age
//! or several (docs/science-flexure.md 7).
//!
//! The load stands at the hinterland end of the section: its `front` faces the foreland,
//! which lies in the direction `facing` along the section. A line load stands at the
//! front; a block of width W covers `[front - W, front]` (foreland increasing) with a
//! uniform pressure. The plate is continuous, or broken at the hinterland edge of the
//! load (the end-loaded plate of Turcotte & Schubert 3-17; a line load on the break is
//! carried half by each free end, as in their solution). The infill of the basin after
//! backstripping is water (drho = rho_m - rho_w), as for the tectonic subsidence it is
//! fitted to.
//!
//! The fit. Model subsidence `Y(x) = Y0 + F u(x; Te, front)`, where u is the deflection
//! under a unit load. Y0 (optional) and the load F >= 0 are linear and solved in closed
//! form (weighted least squares, weights 1/sigma^2); Te and the front are found by a scan
//! (Te on a logarithmic grid, the front on an even grid) then polished by the Nelder-Mead
//! simplex. Both facings are tried unless one is given.

use super::plate::ElasticPlate;
use super::simplex::nelder_mead;
use super::solver::{DeflectionProfile, PlateGeometry, PlateSolver};
use crate::{GRAVITY_M_S2, ScienceError};
use serde::{Deserialize, Serialize};

/// The shape of the load across strike.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(tag = "shape", rename_all = "kebab-case")]
pub enum LoadShape {
    /// All the load at its front.
    Line,
    /// A uniform pressure over `width_m` behind the front.
    Block { width_m: f64 },
}

impl LoadShape {
    fn width_m(self) -> f64 {
        match self {
            LoadShape::Line => 0.0,
            LoadShape::Block { width_m } => width_m,
        }
    }
}

/// The direction along the section in which the foreland lies, away from the load.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Facing {
    /// The foreland lies towards larger distances along the section.
    Increasing,
    /// The foreland lies towards smaller distances.
    Decreasing,
}

impl Facing {
    fn sign(self) -> f64 {
        match self {
            Facing::Increasing => 1.0,
            Facing::Decreasing => -1.0,
        }
    }
}

/// How the plate under the load is supported.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum ForelandPlate {
    Continuous,
    /// Broken at the hinterland edge of the load.
    BrokenAtLoad,
}

/// A foreland load.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ForelandLoad {
    pub shape: LoadShape,
    /// Distance along the section of the load's foreland edge (m).
    pub front_m: f64,
    /// The load per unit length along strike, V (N m^-1).
    pub force_n_per_m: f64,
    pub facing: Facing,
}

/// The whole forward model.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ForelandModel {
    pub elastic_thickness_m: f64,
    pub load: ForelandLoad,
    pub plate: ForelandPlate,
}

/// The load used for the unit response (N m^-1); any value works, this keeps numbers
/// near a kilometre.
const UNIT_FORCE_N_PER_M: f64 = 1e12;

fn hinterland_edge(load: &ForelandLoad) -> f64 {
    load.front_m - load.facing.sign() * load.shape.width_m()
}

/// Prepare the plate for a model (all but the load's size), for the region `[lo, hi]`.
fn prepare(
    model: &ForelandModel,
    plate: &ElasticPlate,
    density_contrast_kg_m3: f64,
    lo: f64,
    hi: f64,
) -> PlateSolver {
    let alpha = plate
        .with_thickness(model.elastic_thickness_m)
        .flexural_parameter_m(density_contrast_kg_m3);
    let edge = hinterland_edge(&model.load);
    let (lo, hi) = (
        lo.min(edge).min(model.load.front_m),
        hi.max(edge).max(model.load.front_m),
    );
    let geometry = match model.plate {
        ForelandPlate::Continuous => PlateGeometry::Continuous,
        ForelandPlate::BrokenAtLoad => PlateGeometry::Broken { break_m: edge },
    };
    PlateSolver::new(geometry, alpha, lo, hi)
}

/// Solve a prepared plate for the model's load.
fn deflect(
    solver: &PlateSolver,
    load: &ForelandLoad,
    density_contrast_kg_m3: f64,
) -> DeflectionProfile {
    let area = load.force_n_per_m / (density_contrast_kg_m3 * GRAVITY_M_S2);
    match load.shape {
        LoadShape::Line => solver.solve(
            &|_, _| 0.0,
            &[super::LineLoad {
                position_m: load.front_m,
                local_area_m2: area,
            }],
        ),
        LoadShape::Block { width_m } => {
            let edge = hinterland_edge(load);
            let (a0, b0) = (edge.min(load.front_m), edge.max(load.front_m));
            let height = area / width_m;
            solver.solve(
                &|a: f64, b: f64| {
                    let overlap = (b.min(b0) - a.max(a0)).max(0.0);
                    if b > a {
                        height * overlap / (b - a)
                    } else {
                        0.0
                    }
                },
                &[],
            )
        }
    }
}

/// The plate's deflection (m, down positive) under the model's load, on a grid covering
/// `[lo_m, hi_m]` and the load (docs/science-flexure.md 7). Spectral for a continuous
/// plate, finite differences for a broken one ([`super::solver`]).
pub fn foreland_deflection(
    model: &ForelandModel,
    plate: &ElasticPlate,
    density_contrast_kg_m3: f64,
    lo_m: f64,
    hi_m: f64,
) -> DeflectionProfile {
    let solver = prepare(model, plate, density_contrast_kg_m3, lo_m, hi_m);
    deflect(&solver, &model.load, density_contrast_kg_m3)
}

/// One well's tectonic subsidence at the fitted age.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SubsidencePoint {
    pub distance_m: f64,
    pub subsidence_m: f64,
    /// Its uncertainty (m): the weights are 1/sigma^2.
    pub sigma_m: f64,
}

/// What to fit and within which bounds.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct ForelandFitSettings {
    pub shape: LoadShape,
    pub plate: ForelandPlate,
    /// `None`: both facings are tried and the better kept.
    pub facing: Option<Facing>,
    pub te_min_m: f64,
    pub te_max_m: f64,
    /// Where the front may stand; `None`: from one section length before the first well
    /// to one after the last.
    pub front_range_m: Option<(f64, f64)>,
    /// Fit a constant offset Y0 (the subsidence of the unflexed plate); otherwise Y0 = 0.
    pub free_offset: bool,
}

impl Default for ForelandFitSettings {
    fn default() -> Self {
        ForelandFitSettings {
            shape: LoadShape::Line,
            plate: ForelandPlate::Continuous,
            facing: None,
            te_min_m: 2e3,
            te_max_m: 100e3,
            front_range_m: None,
            free_offset: true,
        }
    }
}

/// The forebulge of a fitted profile.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Forebulge {
    /// Distance along the section of the crest (m).
    pub crest_m: f64,
    /// Uplift of the crest above the unflexed plate (m, positive up).
    pub height_m: f64,
    /// Where the deflection changes sign between the load and the crest: the foreland
    /// basin's outer edge (m).
    pub basin_edge_m: f64,
}

/// A fitted foreland model with its fitted profile.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ForelandFit {
    pub model: ForelandModel,
    pub flexural_parameter_m: f64,
    /// Y0 (m).
    pub offset_m: f64,
    pub rms_misfit_m: f64,
    /// `sqrt(mean((residual / sigma)^2))`: about 1 when the model fits within the data
    /// uncertainty.
    pub misfit_to_uncertainty: f64,
    pub points: usize,
    /// Parameters fitted: Te, front, load, and Y0 when free.
    pub parameters: usize,
    /// The fitted profile along the section.
    pub profile: ForelandProfile,
    pub forebulge: Option<Forebulge>,
    pub warnings: Vec<String>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ForelandProfile {
    pub distance_m: Vec<f64>,
    /// The plate's deflection under the fitted load (m, down positive).
    pub deflection_m: Vec<f64>,
    /// The fitted tectonic subsidence, `Y0 + deflection` (m).
    pub subsidence_m: Vec<f64>,
}

/// Points of the fitted profile.
const PROFILE_POINTS: usize = 301;
/// Grid of the scan: elastic thicknesses, front positions.
const TE_SCAN: usize = 15;
const FRONT_SCAN: usize = 41;

struct Linear {
    offset: f64,
    force_scale: f64,
    ssr: f64,
}

/// Weighted least squares for `y = c0 + F u` (c0 only when `free_offset`), F >= 0.
fn solve_linear(points: &[SubsidencePoint], u: &[f64], free_offset: bool) -> Linear {
    let (mut sw, mut su, mut sy, mut suu, mut suy) = (0.0, 0.0, 0.0, 0.0, 0.0);
    for (p, &ui) in points.iter().zip(u) {
        let w = 1.0 / (p.sigma_m * p.sigma_m);
        sw += w;
        su += w * ui;
        sy += w * p.subsidence_m;
        suu += w * ui * ui;
        suy += w * ui * p.subsidence_m;
    }
    let (mut c0, mut f) = if free_offset {
        let det = sw * suu - su * su;
        if det.abs() > 1e-12 * sw * suu.max(1e-300) {
            let f = (sw * suy - su * sy) / det;
            (((sy - f * su) / sw), f)
        } else {
            (sy / sw, 0.0)
        }
    } else if suu > 0.0 {
        (0.0, suy / suu)
    } else {
        (0.0, 0.0)
    };
    if f < 0.0 {
        f = 0.0;
        c0 = if free_offset { sy / sw } else { 0.0 };
    }
    let ssr = points
        .iter()
        .zip(u)
        .map(|(p, &ui)| ((p.subsidence_m - c0 - f * ui) / p.sigma_m).powi(2))
        .sum();
    Linear {
        offset: c0,
        force_scale: f,
        ssr,
    }
}

struct Problem<'a> {
    points: &'a [SubsidencePoint],
    plate: &'a ElasticPlate,
    drho: f64,
    settings: &'a ForelandFitSettings,
    lo: f64,
    hi: f64,
}

impl Problem<'_> {
    fn model(&self, te: f64, front: f64, facing: Facing, force: f64) -> ForelandModel {
        ForelandModel {
            elastic_thickness_m: te,
            load: ForelandLoad {
                shape: self.settings.shape,
                front_m: front,
                force_n_per_m: force,
                facing,
            },
            plate: self.settings.plate,
        }
    }

    fn unit_response(&self, te: f64, front: f64, facing: Facing) -> Vec<f64> {
        let model = self.model(te, front, facing, UNIT_FORCE_N_PER_M);
        let profile = foreland_deflection(&model, self.plate, self.drho, self.lo, self.hi);
        self.points
            .iter()
            .map(|p| profile.deflection_at(p.distance_m))
            .collect()
    }

    fn misfit(&self, te: f64, front: f64, facing: Facing) -> f64 {
        let u = self.unit_response(te, front, facing);
        solve_linear(self.points, &u, self.settings.free_offset).ssr
    }
}

/// Fit the foreland model to tectonic subsidence along a section at one age (method in the
/// module notes; docs/science-flexure.md 7). `plate` gives E and nu (its Te is not used);
/// `density_contrast_kg_m3` is rho_m - rho_w.
///
/// Errors: fewer points than parameters + 1; a non-finite point or a sigma not positive;
/// an invalid Te range, block width or front range.
pub fn fit_foreland(
    points: &[SubsidencePoint],
    plate: &ElasticPlate,
    density_contrast_kg_m3: f64,
    settings: &ForelandFitSettings,
) -> Result<ForelandFit, ScienceError> {
    let parameters = 3 + usize::from(settings.free_offset);
    if points.len() <= parameters {
        return Err(ScienceError::CannotFit(format!(
            "a foreland fit of {parameters} parameters needs at least {} wells, not {}",
            parameters + 1,
            points.len()
        )));
    }
    if points.iter().any(|p| {
        !(p.distance_m.is_finite() && p.subsidence_m.is_finite() && p.sigma_m.is_finite())
            || p.sigma_m <= 0.0
    }) {
        return Err(ScienceError::CannotFit(
            "every point needs a finite distance and subsidence and a positive uncertainty".into(),
        ));
    }
    let (te_lo, te_hi) = (settings.te_min_m, settings.te_max_m);
    if !(te_lo.is_finite() && te_hi.is_finite() && te_lo > 0.0 && te_hi > te_lo)
        || te_hi > super::plate::MAX_ELASTIC_THICKNESS_M
    {
        return Err(ScienceError::CannotFit(format!(
            "the elastic thickness range {te_lo} to {te_hi} m is not a range within 0 to 200 km"
        )));
    }
    if let LoadShape::Block { width_m } = settings.shape
        && !(width_m.is_finite() && width_m > 0.0)
    {
        return Err(ScienceError::CannotFit(format!(
            "a block load needs a positive width, not {width_m} m"
        )));
    }
    let first = points
        .iter()
        .map(|p| p.distance_m)
        .fold(f64::INFINITY, f64::min);
    let last = points
        .iter()
        .map(|p| p.distance_m)
        .fold(f64::NEG_INFINITY, f64::max);
    let span = (last - first).max(10e3);
    let (front_lo, front_hi) = settings
        .front_range_m
        .unwrap_or((first - span, last + span));
    if !(front_lo.is_finite() && front_hi.is_finite() && front_hi > front_lo) {
        return Err(ScienceError::CannotFit(format!(
            "the load front range {front_lo} to {front_hi} m is not a range"
        )));
    }
    let width = settings.shape.width_m();
    let problem = Problem {
        points,
        plate,
        drho: density_contrast_kg_m3,
        settings,
        lo: first.min(front_lo - width),
        hi: last.max(front_hi + width),
    };
    // On a continuous plate, and for a line load on a broken one, the deflection is
    // symmetric about the load: the facing changes nothing but the name of the load's
    // edge, so one facing is fitted and the foreland named afterwards from the wells.
    let symmetric = settings.plate == ForelandPlate::Continuous || width == 0.0;
    let facings = match settings.facing {
        Some(f) => vec![f],
        None if symmetric => vec![Facing::Increasing],
        None => vec![Facing::Increasing, Facing::Decreasing],
    };
    let (ln_lo, ln_hi) = (te_lo.ln(), te_hi.ln());
    let ln_step = (ln_hi - ln_lo) / (TE_SCAN - 1) as f64;
    let front_step = (front_hi - front_lo) / (FRONT_SCAN - 1) as f64;

    let mut best: Option<(f64, f64, f64, Facing)> = None;
    for facing in facings {
        // Scan.
        let (mut ln_te, mut front, mut ssr) = (ln_lo, front_lo, f64::INFINITY);
        for i in 0..TE_SCAN {
            let l = ln_lo + ln_step * i as f64;
            for j in 0..FRONT_SCAN {
                let f = front_lo + front_step * j as f64;
                let m = problem.misfit(l.exp(), f, facing);
                if m < ssr {
                    (ln_te, front, ssr) = (l, f, m);
                }
            }
        }
        // Polish: Nelder-Mead in (ln Te, front in scan steps), within the ranges.
        let clamp = |p: &[f64; 2]| {
            (
                p[0].clamp(ln_lo, ln_hi),
                (front_lo + p[1] * front_step).clamp(front_lo, front_hi),
            )
        };
        let (p, m) = nelder_mead(
            |p: &[f64; 2]| {
                let (l, f) = clamp(p);
                problem.misfit(l.exp(), f, facing)
            },
            [ln_te, (front - front_lo) / front_step],
            [0.5 * ln_step, 0.5],
            1e-9 * ssr.max(1e-9),
            400,
        );
        if m <= ssr {
            ((ln_te, front), ssr) = (clamp(&p), m);
        }
        if best.is_none_or(|b| ssr < b.2) {
            best = Some((ln_te.exp(), front, ssr, facing));
        }
    }
    let (te, mut front, _, mut facing) = best.expect("at least one facing is tried");
    if symmetric && settings.facing.is_none() {
        // The foreland is where most wells are, seen from the load's centre.
        let centre = front - facing.sign() * 0.5 * width;
        let beyond = points.iter().filter(|p| p.distance_m >= centre).count();
        if 2 * beyond < points.len() {
            facing = Facing::Decreasing;
            front -= width;
        }
    }
    let u = problem.unit_response(te, front, facing);
    let linear = solve_linear(points, &u, settings.free_offset);
    let force = linear.force_scale * UNIT_FORCE_N_PER_M;
    let model = problem.model(te, front, facing, force);
    let alpha = plate
        .with_thickness(te)
        .flexural_parameter_m(density_contrast_kg_m3);

    // The fitted profile, over the wells and the load.
    let deflection = foreland_deflection(
        &model,
        plate,
        density_contrast_kg_m3,
        problem.lo,
        problem.hi,
    );
    let edge = hinterland_edge(&model.load);
    let (p_lo, p_hi) = (first.min(edge).min(front), last.max(edge).max(front));
    let margin = 0.05 * (p_hi - p_lo).max(1.0);
    let xs: Vec<f64> = (0..PROFILE_POINTS)
        .map(|i| {
            p_lo - margin + (p_hi - p_lo + 2.0 * margin) * i as f64 / (PROFILE_POINTS - 1) as f64
        })
        .collect();
    let w: Vec<f64> = xs.iter().map(|&x| deflection.deflection_at(x)).collect();
    let residuals: Vec<(f64, f64)> = points
        .iter()
        .map(|p| {
            let r = p.subsidence_m - linear.offset - deflection.deflection_at(p.distance_m);
            (r, r / p.sigma_m)
        })
        .collect();
    let n = points.len() as f64;
    let rms = (residuals.iter().map(|r| r.0 * r.0).sum::<f64>() / n).sqrt();
    let normalised = (residuals.iter().map(|r| r.1 * r.1).sum::<f64>() / n).sqrt();

    let mut warnings = Vec::new();
    let near = |a: f64, b: f64, scale: f64| (a - b).abs() <= 0.02 * scale;
    if near(te, te_lo, te_lo) || near(te, te_hi, te_hi) {
        warnings.push(format!(
            "the elastic thickness {:.1} km lies at a bound of the range searched ({:.1} to {:.1} km): the data do not pin it down within that range",
            te / 1e3,
            te_lo / 1e3,
            te_hi / 1e3
        ));
    }
    if near(front, front_lo, front_hi - front_lo) || near(front, front_hi, front_hi - front_lo) {
        warnings.push(format!(
            "the load front {:.1} km lies at a bound of the range searched: the load is not located by the data",
            front / 1e3
        ));
    }
    if linear.force_scale == 0.0 {
        warnings.push(
            "no downward load improves the fit: the subsidence shows no flexural (foreland) loading"
                .into(),
        );
    }
    if normalised > 2.0 {
        warnings.push(format!(
            "the model misfits the data by {normalised:.1} times their uncertainty: the flexural loading model does not explain this section well"
        ));
    }
    let forebulge = find_forebulge(&deflection, front, facing);
    Ok(ForelandFit {
        model,
        flexural_parameter_m: alpha,
        offset_m: linear.offset,
        rms_misfit_m: rms,
        misfit_to_uncertainty: normalised,
        points: points.len(),
        parameters,
        profile: ForelandProfile {
            subsidence_m: w.iter().map(|d| d + linear.offset).collect(),
            distance_m: xs,
            deflection_m: w,
        },
        forebulge,
        warnings,
    })
}

/// The forebulge on the foreland side of `front`: the greatest uplift, and the zero
/// crossing before it. `None` when the plate is nowhere lifted.
pub fn find_forebulge(
    profile: &DeflectionProfile,
    front_m: f64,
    facing: Facing,
) -> Option<Forebulge> {
    let s = facing.sign();
    let mut nodes: Vec<(f64, f64)> = profile
        .distance_m
        .iter()
        .zip(&profile.deflection_m)
        .filter(|(x, _)| (**x - front_m) * s >= 0.0)
        .map(|(x, w)| (*x, *w))
        .collect();
    if s < 0.0 {
        nodes.reverse();
    }
    let (crest_i, crest) = nodes
        .iter()
        .enumerate()
        .min_by(|a, b| a.1.1.total_cmp(&b.1.1))?;
    if crest.1 >= 0.0 {
        return None;
    }
    let edge = nodes[..=crest_i]
        .windows(2)
        .find(|p| p[0].1 > 0.0 && p[1].1 <= 0.0)
        .map(|p| p[0].0 + (p[1].0 - p[0].0) * p[0].1 / (p[0].1 - p[1].1))
        .unwrap_or(front_m);
    Some(Forebulge {
        crest_m: crest.0,
        height_m: -crest.1,
        basin_edge_m: edge,
    })
}

/// Fits at several ages and how the load and the forebulge moved.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ForelandHistory {
    /// Oldest first.
    pub fits: Vec<ForelandAgeFit>,
    /// Rate of the front's motion along the section as time passes (m/Myr; positive
    /// towards larger distances), by least squares over the ages; `None` with fewer than
    /// two ages or when the facings disagree.
    pub front_migration_m_per_myr: Option<f64>,
    pub forebulge_migration_m_per_myr: Option<f64>,
    pub warnings: Vec<String>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ForelandAgeFit {
    pub age_ma: f64,
    pub fit: ForelandFit,
}

/// Least-squares slope of `position` against time (time = -age), m/Myr.
fn migration_rate(samples: &[(f64, f64)]) -> Option<f64> {
    if samples.len() < 2 {
        return None;
    }
    let n = samples.len() as f64;
    let mt = samples.iter().map(|s| -s.0).sum::<f64>() / n;
    let mx = samples.iter().map(|s| s.1).sum::<f64>() / n;
    let stt: f64 = samples.iter().map(|s| (-s.0 - mt).powi(2)).sum();
    let stx: f64 = samples.iter().map(|s| (-s.0 - mt) * (s.1 - mx)).sum();
    (stt > 0.0).then(|| stx / stt)
}

/// Fit the foreland model at each age of `ages` ((age, points) pairs, any order) and
/// measure the migration of the load front and the forebulge (docs/science-flexure.md 7).
pub fn fit_foreland_through_time(
    ages: &[(f64, Vec<SubsidencePoint>)],
    plate: &ElasticPlate,
    density_contrast_kg_m3: f64,
    settings: &ForelandFitSettings,
) -> Result<ForelandHistory, ScienceError> {
    let mut fits = ages
        .iter()
        .map(|(age, points)| {
            fit_foreland(points, plate, density_contrast_kg_m3, settings)
                .map(|fit| ForelandAgeFit { age_ma: *age, fit })
        })
        .collect::<Result<Vec<_>, _>>()?;
    fits.sort_by(|a, b| b.age_ma.total_cmp(&a.age_ma));
    let mut warnings = Vec::new();
    let one_facing = fits
        .windows(2)
        .all(|w| w[0].fit.model.load.facing == w[1].fit.model.load.facing);
    if !one_facing {
        warnings.push(
            "the foreland lies on different sides at different ages: no migration is measured; give the facing to fit all ages alike".into(),
        );
    }
    let front: Vec<(f64, f64)> = fits
        .iter()
        .map(|f| (f.age_ma, f.fit.model.load.front_m))
        .collect();
    let bulge: Vec<(f64, f64)> = fits
        .iter()
        .filter_map(|f| f.fit.forebulge.map(|b| (f.age_ma, b.crest_m)))
        .collect();
    Ok(ForelandHistory {
        front_migration_m_per_myr: one_facing.then(|| migration_rate(&front)).flatten(),
        forebulge_migration_m_per_myr: one_facing.then(|| migration_rate(&bulge)).flatten(),
        fits,
        warnings,
    })
}

#[cfg(test)]
#[path = "foreland_tests.rs"]
mod tests;
