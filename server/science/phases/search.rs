//! The search of every (onset, end) pair of surface ages for one uniform event, and the
//! bounded search for a second event (see the module notes of [`super`]).

use super::*;

/// Points on the u = 1 - 1/beta grid of the search.
pub(super) const GRID: usize = 20;

/// Candidate pairs refitted exactly.
pub(super) const REFINED: usize = 8;

/// A candidate (onset index, end index) with its estimated least RSS and grid u.
#[derive(Debug, Clone, Copy)]
pub(super) struct Candidate {
    onset: usize,
    end: usize,
    rss: f64,
    u: f64,
}

/// What the search precomputes once per well: grid coefficients and, for each end
/// surface, the thermal decays at the younger surfaces.
pub(super) struct Search<'a> {
    lithosphere: &'a Lithosphere,
    pub(super) ages: Vec<f64>,
    grid_u: [f64; GRID],
    /// Row g: McKenzie modal coefficients of the grid's beta (odd n), times E0.
    grid_modes: Vec<f64>,
    modes: usize,
    /// For end index e: (offsets, decays) of the surfaces younger than e.
    decays: Vec<(Vec<usize>, Vec<f64>)>,
}

impl<'a> Search<'a> {
    pub(super) fn new(
        lithosphere: &'a Lithosphere,
        observations: &[SubsidenceObservation],
    ) -> Self {
        let ages: Vec<f64> = observations.iter().map(|o| o.age_ma).collect();
        let tau = lithosphere.time_constant_myr;
        let mut modes = 0;
        let decays: Vec<(Vec<usize>, Vec<f64>)> = (0..ages.len())
            .map(|e| {
                let (mut offsets, mut values) = (vec![0], Vec::new());
                for &age in &ages[e + 1..] {
                    // |McKenzie mode| <= 1/n^2 for any beta (see mckenzie::uniform_mode).
                    push_decays(&mut values, (ages[e] - age) / tau, 1.0);
                    modes = modes.max(values.len() - offsets[offsets.len() - 1]);
                    offsets.push(values.len());
                }
                (offsets, values)
            })
            .collect();
        let grid_u: [f64; GRID] = std::array::from_fn(|g| max_u() * g as f64 / (GRID - 1) as f64);
        let mut grid_modes = vec![0.0; GRID * modes];
        let e0 = lithosphere.thermal_amplitude_m();
        for (g, row) in grid_modes.chunks_mut(modes.max(1)).enumerate().take(GRID) {
            if modes > 0 && g > 0 {
                uniform_modes(factor_from_u(grid_u[g]), row);
                row.iter_mut().for_each(|c| *c *= e0);
            }
        }
        Search {
            lithosphere,
            ages,
            grid_u,
            grid_modes,
            modes,
            decays,
        }
    }

    /// The [`REFINED`] best (onset, end) pairs with onset >= `lo`, end <= `hi`, for `y`,
    /// stretching a crust `crust_m` thick (the parameters' tc, or what an earlier event
    /// left of it, see [`UniformFit`]).
    pub(super) fn candidates(
        &self,
        y: &[f64],
        lo: usize,
        hi: usize,
        crust_m: f64,
    ) -> Vec<Candidate> {
        let n = y.len();
        let a = &self.ages;
        let mean = y.iter().sum::<f64>() / n as f64;
        // Prefix sums of the centred curve: sum a, a^2, y, a y over indices < i.
        let mut prefix = vec![[0.0f64; 4]; n + 1];
        for i in 0..n {
            let yc = y[i] - mean;
            let p = prefix[i];
            prefix[i + 1] = [p[0] + a[i], p[1] + a[i] * a[i], p[2] + yc, p[3] + a[i] * yc];
        }
        let syy: f64 = y.iter().map(|v| (v - mean).powi(2)).sum();
        let l = self.lithosphere;
        let (si_inf, st_inf) = (
            l.initial_subsidence_limit_for_crust_m(crust_m),
            l.thermal_amplitude_m() * PI * PI / 8.0,
        );
        let mut best: Vec<Candidate> = Vec::with_capacity(REFINED + 1);
        // Per end surface, RSS(u_g) = fixed_g + u_g a + (u_g S_T,g) b + u_g^2 c, where
        // fixed_g and S_T,g hold the post-rift sums and a, b, c depend on the onset.
        let mut fixed = [0.0f64; GRID];
        let mut u_thermal = [0.0f64; GRID];
        let mut rss = [0.0f64; GRID];
        let n_f = n as f64;
        for e in (lo + 1)..=hi {
            let posts = (n - 1 - e) as f64;
            let y_post = prefix[n][2] - prefix[e + 1][2];
            let (offsets, decays) = &self.decays[e];
            for g in 0..GRID {
                let row = &self.grid_modes[g * self.modes..(g + 1) * self.modes];
                let (mut st, mut stt, mut syt) = (0.0, 0.0, 0.0);
                for (k, i) in (e + 1..n).enumerate() {
                    let d = &decays[offsets[k]..offsets[k + 1]];
                    let t: f64 = d.iter().zip(row).map(|(d, c)| d * c).sum();
                    st += t;
                    stt += t * t;
                    syt += (y[i] - mean) * t;
                }
                fixed[g] = syy + 2.0 * syt + stt - st * st / n_f;
                u_thermal[g] = self.grid_u[g] * st;
            }
            for o in lo..e {
                let (ao, span) = (a[o], a[o] - a[e]);
                let s: [f64; 4] = std::array::from_fn(|j| prefix[e + 1][j] - prefix[o][j]);
                let count = (e + 1 - o) as f64;
                let r1 = (count * ao - s[0]) / span + posts;
                let r2 = (count * ao * ao - 2.0 * ao * s[0] + s[1]) / (span * span) + posts;
                let yr = (ao * s[2] - s[3]) / span + y_post;
                let sb = si_inf * r1 + st_inf * posts;
                let sbb = si_inf * si_inf * r2 + (2.0 * si_inf * st_inf + st_inf * st_inf) * posts;
                let syb = si_inf * yr + st_inf * y_post;
                // Expanding sum (y - Y0 - u B + T)^2 with Y0 the mean residual.
                let (lin, cross, quad) = (
                    -2.0 * syb,
                    2.0 * sb / n_f - 2.0 * (si_inf + st_inf),
                    sbb - sb * sb / n_f,
                );
                for g in 0..GRID {
                    let u = self.grid_u[g];
                    rss[g] = fixed[g] + u * lin + u_thermal[g] * cross + u * u * quad;
                }
                let (u, rss) = grid_minimum(&rss, &self.grid_u);
                let candidate = Candidate {
                    onset: o,
                    end: e,
                    rss,
                    u,
                };
                if best.len() < REFINED || candidate.rss < best[best.len() - 1].rss {
                    let at = best.partition_point(|c| c.rss <= candidate.rss);
                    best.insert(at, candidate);
                    best.truncate(REFINED);
                }
            }
        }
        best
    }

    /// Exact single-event fits of the candidates (Brent's method within a grid step
    /// either side of the grid minimum); the one with the least misfit.
    pub(super) fn refine(&self, candidates: &[Candidate], ages: &[f64], y: &[f64]) -> UniformFit {
        let step = self.grid_u[1];
        candidates
            .iter()
            .map(|c| {
                let timing = [(ages[c.onset], ages[c.end])];
                let mut problem = FitProblem::new(self.lithosphere, ages, &timing);
                problem.fit_uniform_within(
                    y,
                    (c.u - 1.5 * step).max(0.0),
                    (c.u + 1.5 * step).min(max_u()),
                )
            })
            .min_by(|a, b| a.rms_misfit_m.total_cmp(&b.rms_misfit_m))
            .expect("a series of three or more points has candidates")
    }

    /// The best two-event fit: at split surfaces spread through the well (about six),
    /// the older event is searched on the series up to the split alone, the younger on
    /// the residual after the split once the older event's modelled curve (extrapolated
    /// beyond the split) is removed. The two best pairs over all splits are refitted
    /// jointly. A pair of events with fewer surfaces between them than the split spacing
    /// can be missed.
    pub(super) fn second_event(&self, y: &[f64]) -> Option<UniformFit> {
        let n = y.len();
        let stride = ((n - 5) / 6).max(1);
        // (older fit, younger candidate), best two by the residual misfit.
        let mut pairs: Vec<(UniformFit, Candidate)> = Vec::with_capacity(3);
        for split in (2..n - 2).step_by(stride) {
            let head = split + 1;
            let Some(&a) = self
                .candidates(&y[..head], 0, split, self.lithosphere.crust_thickness_m)
                .first()
            else {
                continue;
            };
            let older = self.refine(&[a], &self.ages[..head], &y[..head]);
            let alone = UniformFit {
                pre_rift_subsidence_m: 0.0,
                ..older.clone()
            };
            let residual: Vec<f64> = y
                .iter()
                .zip(&self.ages)
                .map(|(v, &age)| v - alone.subsidence_m(self.lithosphere, age))
                .collect();
            if let Some(&b) = self
                .candidates(
                    &residual,
                    split,
                    n - 1,
                    self.lithosphere.crust_thickness_m / older.events[0].beta,
                )
                .first()
            {
                let at = pairs.partition_point(|p| p.1.rss <= b.rss);
                pairs.insert(at, (older, b));
                pairs.truncate(2);
            }
        }
        pairs
            .into_iter()
            .map(|(older, b)| {
                let first = older.events[0];
                let timings = [
                    (first.rift_onset_ma, first.rift_end_ma),
                    (self.ages[b.onset], self.ages[b.end]),
                ];
                let mut problem = FitProblem::new(self.lithosphere, &self.ages, &timings);
                // The younger event's thermal part is that of its own beta2 (see
                // UniformFit), so the residual fit's u is already a good start.
                let start = [1.0 - 1.0 / first.beta, b.u.min(max_u())];
                let u = problem.refit_near(y, ModelKind::Uniform, &start);
                problem.fit_uniform_at(y, &[factor_from_u(u[0]), factor_from_u(u[1])])
            })
            .min_by(|a, b| a.rms_misfit_m.total_cmp(&b.rms_misfit_m))
    }
}

/// Least value of a misfit sampled on the grid and where it lies, polished by a
/// parabola through the lowest sample and its neighbours.
pub(super) fn grid_minimum(rss: &[f64; GRID], grid_u: &[f64; GRID]) -> (f64, f64) {
    let g = (0..GRID)
        .min_by(|&i, &j| rss[i].total_cmp(&rss[j]))
        .unwrap_or(0);
    if g == 0 || g == GRID - 1 {
        return (grid_u[g], rss[g]);
    }
    let (l, m, r) = (rss[g - 1], rss[g], rss[g + 1]);
    let curvature = l - 2.0 * m + r;
    if curvature > 0.0 {
        let shift = (l - r) / (2.0 * curvature);
        (
            grid_u[g] + shift * (grid_u[1] - grid_u[0]),
            (m - (r - l).powi(2) / (8.0 * curvature)).max(0.0),
        )
    } else {
        (grid_u[g], m)
    }
}
