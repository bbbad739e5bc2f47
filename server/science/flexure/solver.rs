//! One entry point for the plate's deflection under any load along a line: the grid, its
//! padding, and the choice of method (docs/science-flexure.md 3, 4).
//!
//! - Continuous plate: the spectral solution ([`super::spectral`]) on a regular grid.
//! - Broken plate at `break_m`: two independent semi-infinite pieces, each free at the
//!   break, solved by finite differences ([`super::finite_difference`]). A load left of the
//!   break bends the left piece only, a load right of it the right piece only, and a line
//!   load standing exactly on the break is carried half by each free end (the setting of
//!   Turcotte & Schubert's broken-plate solution, docs/science-flexure.md 2).
//! - Te = 0 (alpha = 0): local compensation, the load's own local deflection.
//!
//! Grid. The region of interest `[lo, hi]` (the wells and the loads that matter) is padded
//! by [`PAD_ALPHAS`] flexural parameters on each side; the load function is sampled there
//! too, so how a load continues beyond the wells is the caller's choice. The step is
//! `alpha / STEPS_PER_ALPHA` (at most [`MAX_NODES`] nodes, coarser if needed). Each node
//! carries the mean of the load over its cell, so a load edge moving across a cell changes
//! the solution smoothly (as a fit needs). A line load is shared between its two nearest
//! nodes in proportion to its distance from each.

use super::finite_difference::FreeEndPlate;
use super::spectral::SpectralPlate;
use serde::{Deserialize, Serialize};

/// Padding beyond the region of interest, in flexural parameters. The plate's response to a
/// load decays as `exp(-x/alpha)`, so loads and images beyond it change the deflection
/// inside by less than `exp(-8)` = 0.03 % (spectral images lie twice as far: `exp(-16)`).
pub const PAD_ALPHAS: f64 = 8.0;
/// Grid steps per flexural parameter (the tests show 0.1 % agreement with the closed forms).
pub const STEPS_PER_ALPHA: f64 = 40.0;
/// Largest grid (nodes per piece).
pub const MAX_NODES: usize = 1 << 16;
/// Nodes of the grid used when the plate has no strength (Te = 0).
const LOCAL_NODES: usize = 2001;

/// How the plate is supported along the line.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
pub enum PlateGeometry {
    /// An unbroken plate.
    Continuous,
    /// A plate broken at `break_m` (distance along the line): two free ends there.
    Broken { break_m: f64 },
}

/// A line load: force per unit length along strike V (N m^-1) given as its local
/// "volume" `V/(drho g)` (m^2), at `position_m` along the line.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct LineLoad {
    pub position_m: f64,
    pub local_area_m2: f64,
}

/// The plate's deflection along the line: distances increasing (a broken plate repeats
/// the break, left piece first), the load's local deflection and the plate's deflection.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DeflectionProfile {
    pub distance_m: Vec<f64>,
    /// The load as the deflection it would cause if compensated locally, `q/(drho g)` (m).
    pub local_deflection_m: Vec<f64>,
    /// The plate's deflection (m, down positive).
    pub deflection_m: Vec<f64>,
}

impl DeflectionProfile {
    /// The plate's deflection at `x_m`, linearly interpolated between nodes (held beyond
    /// the grid). At a break, the right piece's value.
    pub fn deflection_at(&self, x_m: f64) -> f64 {
        interpolate(&self.distance_m, &self.deflection_m, x_m)
    }

    /// The load's local deflection at `x_m`, interpolated the same way.
    pub fn local_deflection_at(&self, x_m: f64) -> f64 {
        interpolate(&self.distance_m, &self.local_deflection_m, x_m)
    }
}

/// Linear interpolation in a table of increasing `xs` (repeats allowed), held at the ends.
pub(crate) fn interpolate(xs: &[f64], ys: &[f64], x: f64) -> f64 {
    let i = xs.partition_point(|&d| d <= x);
    if i == 0 {
        return ys[0];
    }
    if i == xs.len() {
        return ys[xs.len() - 1];
    }
    let (x0, x1) = (xs[i - 1], xs[i]);
    if x1 <= x0 {
        return ys[i];
    }
    let t = (x - x0) / (x1 - x0);
    ys[i - 1] + t * (ys[i] - ys[i - 1])
}

enum Method {
    Local,
    Spectral(SpectralPlate),
    FreeEnd(FreeEndPlate),
}

/// One regular piece of grid: node `i` at `origin + direction * i * step`.
struct Piece {
    origin_m: f64,
    step_m: f64,
    nodes: usize,
    /// +1 for a piece running right from its origin, -1 for one running left.
    direction: f64,
    /// Whether the end nodes carry half a cell (finite-difference pieces).
    half_end_cells: bool,
    method: Method,
}

impl Piece {
    fn position(&self, i: usize) -> f64 {
        self.origin_m + self.direction * self.step_m * i as f64
    }

    /// The extent of the piece, low end first.
    fn extent(&self) -> (f64, f64) {
        let (a, b) = (self.position(0), self.position(self.nodes - 1));
        (a.min(b), a.max(b))
    }

    /// The share of a line load at `x` this piece carries: all of it inside, none
    /// outside, half of one standing exactly on a break (carried by both free ends).
    fn share_of_line_load(&self, x: f64) -> f64 {
        let (lo, hi) = self.extent();
        if !self.half_end_cells {
            return if x >= lo && x <= hi { 1.0 } else { 0.0 };
        }
        let break_m = self.origin_m;
        if x == break_m {
            0.5
        } else if x > lo && x < hi || x == self.position(self.nodes - 1) {
            1.0
        } else {
            0.0
        }
    }

    /// Node loads: the cell means of `mean_load`, plus the line loads on this piece.
    fn node_loads(&self, mean_load: &dyn Fn(f64, f64) -> f64, lines: &[LineLoad]) -> Vec<f64> {
        let h = self.step_m;
        let (lo, hi) = self.extent();
        let mut loads: Vec<f64> = (0..self.nodes)
            .map(|i| {
                let x = self.position(i);
                let (a, b) = if self.half_end_cells {
                    ((x - 0.5 * h).max(lo), (x + 0.5 * h).min(hi))
                } else {
                    (x - 0.5 * h, x + 0.5 * h)
                };
                mean_load(a, b) * (b - a) / h
            })
            .collect();
        for line in lines {
            let share = self.share_of_line_load(line.position_m);
            if share == 0.0 {
                continue;
            }
            let s = (line.position_m - self.origin_m) * self.direction / h;
            let i = (s.floor() as usize).min(self.nodes - 2);
            let frac = s - i as f64;
            let area = share * line.local_area_m2 / h;
            loads[i] += area * (1.0 - frac);
            loads[i + 1] += area * frac;
        }
        loads
    }

    fn deflect(&self, loads: &[f64]) -> Vec<f64> {
        match &self.method {
            Method::Local => loads.to_vec(),
            Method::Spectral(s) => s.deflect(loads),
            Method::FreeEnd(f) => f.deflect(loads),
        }
    }
}

/// A plate prepared for one flexural parameter and one region of interest; solving many
/// loads (every age of a section) reuses the grid, the FFT plans and the factorisation.
pub struct PlateSolver {
    pieces: Vec<Piece>,
}

impl PlateSolver {
    /// Prepare the plate (method and grid in the module notes). `alpha_m` >= 0 (0: local
    /// compensation); `lo_m <= hi_m` bound what must be resolved; a break is included in
    /// the region of interest.
    pub fn new(geometry: PlateGeometry, alpha_m: f64, lo_m: f64, hi_m: f64) -> Self {
        let (lo, hi) = match geometry {
            PlateGeometry::Continuous => (lo_m, hi_m),
            PlateGeometry::Broken { break_m } => (lo_m.min(break_m), hi_m.max(break_m)),
        };
        if alpha_m <= 0.0 {
            let span = (hi - lo).max(1.0);
            return PlateSolver {
                pieces: vec![Piece {
                    origin_m: lo,
                    step_m: span / (LOCAL_NODES - 1) as f64,
                    nodes: LOCAL_NODES,
                    direction: 1.0,
                    half_end_cells: false,
                    method: Method::Local,
                }],
            };
        }
        let pad = PAD_ALPHAS * alpha_m;
        let fine = alpha_m / STEPS_PER_ALPHA;
        match geometry {
            PlateGeometry::Continuous => {
                let length = hi - lo + 2.0 * pad;
                let step = fine.max(length / (MAX_NODES - 1) as f64);
                let intervals = ((length / step).ceil() as usize).next_power_of_two();
                // Centre the region of interest in the (possibly longer) grid.
                let origin = 0.5 * (lo + hi) - 0.5 * step * intervals as f64;
                PlateSolver {
                    pieces: vec![Piece {
                        origin_m: origin,
                        step_m: step,
                        nodes: intervals + 1,
                        direction: 1.0,
                        half_end_cells: false,
                        method: Method::Spectral(SpectralPlate::new(intervals + 1, step, alpha_m)),
                    }],
                }
            }
            PlateGeometry::Broken { break_m } => {
                let piece = |length: f64, direction: f64| {
                    let step = fine.max(length / (MAX_NODES - 1) as f64);
                    let intervals = ((length / step).ceil() as usize).max(4);
                    let step = length / intervals as f64;
                    Piece {
                        origin_m: break_m,
                        step_m: step,
                        nodes: intervals + 1,
                        direction,
                        half_end_cells: true,
                        method: Method::FreeEnd(FreeEndPlate::new(intervals + 1, step, alpha_m)),
                    }
                };
                PlateSolver {
                    pieces: vec![
                        piece(break_m - lo + pad, -1.0),
                        piece(hi - break_m + pad, 1.0),
                    ],
                }
            }
        }
    }

    /// The deflection under a distributed load, given by `mean_load(a, b)`, the mean over
    /// `[a, b]` of its local deflection `q/(drho g)` (m), and line loads.
    pub fn solve(
        &self,
        mean_load: &dyn Fn(f64, f64) -> f64,
        lines: &[LineLoad],
    ) -> DeflectionProfile {
        let mut profile = DeflectionProfile {
            distance_m: Vec::new(),
            local_deflection_m: Vec::new(),
            deflection_m: Vec::new(),
        };
        for piece in &self.pieces {
            let loads = piece.node_loads(mean_load, lines);
            let deflection = piece.deflect(&loads);
            let mut order: Vec<usize> = (0..piece.nodes).collect();
            if piece.direction < 0.0 {
                order.reverse();
            }
            for i in order {
                let x = piece.position(i);
                profile.distance_m.push(x);
                // Report the load itself (not the end nodes' half cells).
                let share = if piece.half_end_cells && (i == 0 || i + 1 == piece.nodes) {
                    2.0
                } else {
                    1.0
                };
                profile.local_deflection_m.push(loads[i] * share);
                profile.deflection_m.push(deflection[i]);
            }
        }
        profile
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::GRAVITY_M_S2;
    use crate::flexure::plate::{
        ElasticPlate, broken_line_load_deflection, broken_line_load_peak_m,
        continuous_line_load_deflection, continuous_line_load_peak_m,
        continuous_strip_load_deflection,
    };
    use crate::tolerance::assert_relative;
    use std::f64::consts::PI;

    const DRHO: f64 = 2300.0;
    const NO_LOAD: fn(f64, f64) -> f64 = |_, _| 0.0;

    fn plate(te_km: f64) -> (f64, f64) {
        let p = ElasticPlate {
            young_modulus_pa: 70e9,
            poisson_ratio: 0.25,
            elastic_thickness_m: te_km * 1e3,
        };
        (p.rigidity_n_m(), p.flexural_parameter_m(DRHO))
    }

    /// Largest misfit of a profile to a closed form, relative to the closed form's peak.
    fn worst(
        profile: &DeflectionProfile,
        xs: &[f64],
        exact: impl Fn(f64) -> f64,
        peak: f64,
    ) -> f64 {
        xs.iter()
            .map(|&x| (profile.deflection_at(x) - exact(x)).abs() / peak.abs())
            .fold(0.0, f64::max)
    }

    #[test]
    fn the_spectral_solution_matches_the_continuous_line_load_within_a_tenth_of_a_percent() {
        // Turcotte & Schubert eq. 3-129; SCIENCE.md 11: w0 = V0 alpha^3/(8D) = 683.79 m for
        // Te 10 km, E 70 GPa, V0 1e12 N/m; zero at 3 pi alpha/4; bulge at pi alpha.
        for te_km in [10.0, 25.0] {
            let (d, alpha) = plate(te_km);
            let v0 = 1e12;
            let w0 = continuous_line_load_peak_m(v0, d, alpha);
            let solver = PlateSolver::new(PlateGeometry::Continuous, alpha, -100e3, 400e3);
            let line = LineLoad {
                position_m: 37_123.0,
                local_area_m2: v0 / (DRHO * GRAVITY_M_S2),
            };
            let profile = solver.solve(&NO_LOAD, &[line]);
            let exact = |x: f64| continuous_line_load_deflection(x - line.position_m, w0, alpha);
            let xs: Vec<f64> = (-100..=400).map(|i| i as f64 * 1e3).collect();
            let misfit = worst(&profile, &xs, exact, w0);
            assert!(misfit < 1e-3, "Te {te_km} km: worst misfit {misfit} of w0");
            assert_relative(
                profile.deflection_at(line.position_m),
                w0,
                1e-3,
                "w0 under the load",
            );
            let bulge = profile.deflection_at(line.position_m + PI * alpha);
            assert_relative(bulge, -w0 * (-PI).exp(), 1e-2, "forebulge height");
            assert!(
                profile
                    .deflection_at(line.position_m + 0.75 * PI * alpha)
                    .abs()
                    < 1e-3 * w0,
                "zero crossing at 3 pi alpha / 4"
            );
        }
    }

    #[test]
    fn the_spectral_solution_matches_the_strip_load_and_a_wide_load_is_local() {
        // Hetényi strip solution (TS problem 3-24). A strip 40 alpha wide is compensated
        // locally at its centre; one alpha wide is carried regionally.
        let (_, alpha) = plate(25.0);
        for half_width in [0.5 * alpha, 3.0 * alpha, 20.0 * alpha] {
            let local = 800.0;
            let mean = |a: f64, b: f64| {
                let overlap = (b.min(half_width) - a.max(-half_width)).max(0.0);
                local * overlap / (b - a)
            };
            let solver = PlateSolver::new(
                PlateGeometry::Continuous,
                alpha,
                -half_width - 3.0 * alpha,
                half_width + 3.0 * alpha,
            );
            let profile = solver.solve(&mean, &[]);
            let exact = |x: f64| continuous_strip_load_deflection(x, half_width, local, alpha);
            let xs: Vec<f64> = (-50..=50)
                .map(|i| i as f64 * (half_width + 3.0 * alpha) / 50.0)
                .collect();
            let misfit = worst(&profile, &xs, exact, local);
            assert!(misfit < 1e-3, "half-width {half_width}: misfit {misfit}");
        }
        let half_width = 20.0 * alpha;
        let centre = continuous_strip_load_deflection(0.0, half_width, 800.0, alpha);
        assert!(
            (centre - 800.0).abs() < 1e-3,
            "local compensation: {centre}"
        );
    }

    #[test]
    fn the_finite_difference_broken_plate_matches_the_end_load_solution_within_a_tenth_of_a_percent()
     {
        // Turcotte & Schubert eq. 3-135; SCIENCE.md 11: w = w0 exp(-x/alpha) cos(x/alpha),
        // w0 = V0 alpha^3/(4D), for a line load V0 on the break, shared by the two ends.
        for te_km in [10.0, 25.0] {
            let (d, alpha) = plate(te_km);
            let v0 = 1e12;
            let w0 = broken_line_load_peak_m(v0, d, alpha);
            let break_m = 50e3;
            let solver = PlateSolver::new(PlateGeometry::Broken { break_m }, alpha, 0.0, 600e3);
            let line = LineLoad {
                position_m: break_m,
                local_area_m2: v0 / (DRHO * GRAVITY_M_S2),
            };
            let profile = solver.solve(&NO_LOAD, &[line]);
            let exact = |x: f64| broken_line_load_deflection((x - break_m).abs(), w0, alpha);
            let xs: Vec<f64> = (0..=600).map(|i| i as f64 * 1e3).collect();
            let misfit = worst(&profile, &xs, exact, w0);
            assert!(misfit < 1e-3, "Te {te_km} km: worst misfit {misfit} of w0");
            assert_relative(profile.deflection_at(break_m), w0, 1e-3, "w0 at the break");
            // The whole load on one free end (just right of the break) bends that end
            // twice as much (Hetényi 1946, semi-infinite beam: y0 = 2 P lambda / k) and
            // leaves the other piece unmoved.
            let one_end = LineLoad {
                position_m: break_m + 1e-6,
                ..line
            };
            let profile = solver.solve(&NO_LOAD, &[one_end]);
            assert_relative(profile.deflection_at(break_m), 2.0 * w0, 2e-3, "one end");
            assert!(profile.deflection_at(break_m - 1.0).abs() < 1e-9);
        }
    }

    #[test]
    fn the_broken_plate_far_from_its_break_behaves_as_a_continuous_plate() {
        // Two methods, one answer: finite differences on a plate broken 20 alpha away
        // against the spectral solution of the continuous plate.
        let (_, alpha) = plate(15.0);
        let load = |a: f64, b: f64| {
            // A triangular basin fill 0-200 km, 1 km deep in the middle.
            let f = |x: f64| (1000.0 * (1.0 - ((x - 100e3) / 100e3).abs())).max(0.0);
            (f(a) + 4.0 * f(0.5 * (a + b)) + f(b)) / 6.0
        };
        let continuous =
            PlateSolver::new(PlateGeometry::Continuous, alpha, 0.0, 200e3).solve(&load, &[]);
        let broken = PlateSolver::new(
            PlateGeometry::Broken {
                break_m: 200e3 + 20.0 * alpha,
            },
            alpha,
            0.0,
            200e3,
        )
        .solve(&load, &[]);
        for x in (0..=20).map(|i| i as f64 * 10e3) {
            let (c, b) = (continuous.deflection_at(x), broken.deflection_at(x));
            assert!((c - b).abs() < 1e-3 * 1000.0, "at {x}: {c} vs {b}");
        }
    }

    #[test]
    fn with_no_strength_the_plate_takes_the_load_locally() {
        let load = |a: f64, b: f64| 0.5 * (a + b) / 1000.0;
        let profile =
            PlateSolver::new(PlateGeometry::Continuous, 0.0, 0.0, 100e3).solve(&load, &[]);
        assert_eq!(
            profile.deflection_at(40e3),
            profile.local_deflection_at(40e3)
        );
        assert!((profile.deflection_at(40e3) - 40.0).abs() < 1e-9);
    }
}
