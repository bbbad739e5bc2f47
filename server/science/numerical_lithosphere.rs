//! A numerical lithosphere: the temperature of the plate through any sequence of
//! stretching events, solved by finite differences, with its isostatic subsidence and
//! heat flows.
//!
//! The closed forms of [`super::mckenzie`] and [`super::two_layer`] know one
//! instantaneous event on an equilibrated plate. This model knows what they do not:
//! rifts of finite duration (stretching at a constant strain rate over the syn-rift
//! interval), uniform or depth-dependent stretching (crust factor delta, mantle factor
//! beta over the same interval), several events in sequence, each acting on the geotherm
//! the previous ones left, and radiogenic heat in the crust, thinned with it.
//! docs/science-lithosphere.md gives the method, its defaults and its checks.
//!
//! # Method
//!
//! * Depth z below the top of the basement, 0 <= z <= a (the plate thickness), on a
//!   uniform grid of `nodes` points; T(0) = 0 °C, T(a) = T1. Before the first event the
//!   plate is in steady state, `k T'' = -A(z)`, solved on the same grid so that an
//!   unstretched plate stays exactly where it is.
//! * Heat: `dT/dt = kappa T'' + A kappa / k`, Crank–Nicolson in time, with two
//!   backward-Euler half steps after an instantaneous stretch (Rannacher's start, which
//!   damps the grid-scale oscillation Crank–Nicolson leaves on a kinked profile).
//! * Stretching: pure shear, so material at depth z rises at `w = -G z` in the crust and
//!   `w = -(Gc hc + Gm (z - hc))` below the Moho hc, with G = ln(factor) / duration
//!   (W10 eq. 7.88). Over each time step the exact displacement of this linear velocity
//!   field is applied to the temperature (a semi-Lagrangian step: T at the point each
//!   node came from, by cubic interpolation; material from below z = a is asthenosphere
//!   at T1), with heat diffusing between two half stretches (Strang splitting). An instantaneous event is the same
//!   map with the whole factor at once, exactly McKenzie's and Royden & Keen's initial
//!   geotherm.
//! * Radiogenic heat: `A = A0 exp(-zeta / D)` at the depth zeta the crustal material had
//!   before stretching, so the production layer thins with the crust and none is in the
//!   mantle. Integrated exactly over each node's control volume.
//! * Isostasy (local, Airy): the density of the column is `rho_c (1 - alpha T)` in the
//!   crust and `rho_0 (1 - alpha T)` in the mantle; compensation is below the plate. Two
//!   conventions ([`IsostasyConvention`]).
//! * Heat flow: at the top of the basement (the crust's radiogenic heat included) from a
//!   half-cell energy balance, second order; at the Moho from the interpolated gradient.
//!
//! The grid and step defaults ([`NumericalSettings::default`]) keep the subsidence within
//! 0.5 m and the heat flow within 0.05 mW m^-2 of the closed forms on the instantaneous
//! checks, as the tests measure.

use super::mckenzie::Lithosphere;
use super::{SECONDS_PER_MYR, ScienceError};
use serde::{Deserialize, Serialize};

/// Most grid points a run may use (a finer grid buys nothing measurable).
pub const MAX_NODES: usize = 20_001;
/// Most time steps a run may take (4,600 Myr at the default step is 92,000).
pub const MAX_STEPS: usize = 1_000_000;

/// How subsidence is computed from the density column.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum IsostasyConvention {
    /// Consistent with McKenzie (1978): every stretching increment moves the surface by
    /// the exact Airy change of the column, and cooling by `rho_0 alpha dI / (rho_0 -
    /// rho_fill)` with I the plate's heat content `integral T dz` (crust treated as
    /// mantle for thermal contraction, docs/science.md 4.5). An instantaneous event on
    /// an equilibrated plate reproduces the closed forms.
    McKenzie,
    /// Exact Airy balance of the whole column against the pre-rift column at every age,
    /// `S = (M - M_ref) / (rho_0 (1 - alpha T1) - rho_fill)`; about 6 % more thermal
    /// subsidence than the McKenzie convention (docs/science.md 4.5).
    Exact,
}

/// One stretching event: crust thinned by `crust_factor` (delta) and the mantle part of
/// the plate by `mantle_factor` (beta), at a constant strain rate from `onset_ma` to
/// `end_ma`; instantaneous when the two ages are equal. Uniform stretching has
/// delta = beta.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct StretchingEvent {
    pub onset_ma: f64,
    pub end_ma: f64,
    pub crust_factor: f64,
    pub mantle_factor: f64,
}

impl StretchingEvent {
    /// A uniform event (delta = beta).
    pub fn uniform(onset_ma: f64, end_ma: f64, beta: f64) -> Self {
        StretchingEvent {
            onset_ma,
            end_ma,
            crust_factor: beta,
            mantle_factor: beta,
        }
    }

    fn is_instantaneous(&self) -> bool {
        self.onset_ma == self.end_ma
    }
}

/// Radiogenic heat production in the crust: `A0 exp(-z / D)` in the unstretched crust.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct CrustalHeatProduction {
    /// A0 at the top of the basement, W m^-3.
    pub surface_production_w_m3: f64,
    /// D, the depth over which it falls by a factor e, m.
    pub decay_depth_m: f64,
}

impl CrustalHeatProduction {
    /// None: the McKenzie (1978) and Royden & Keen (1980) plate.
    pub const NONE: CrustalHeatProduction = CrustalHeatProduction {
        surface_production_w_m3: 0.0,
        decay_depth_m: 10_000.0,
    };

    /// A typical continental crust: A0 = 1.5 µW m^-3 [memory; upper-crustal granitoids
    /// give about 1-3 µW m^-3], D = 10 km (Turcotte & Schubert, Geodynamics §4-8: the
    /// depth scale hr of the heat-flow–heat-production relation is about 10 km \[memory\]).
    /// Editable defaults, not measurements.
    pub const TYPICAL_CONTINENTAL: CrustalHeatProduction = CrustalHeatProduction {
        surface_production_w_m3: 1.5e-6,
        decay_depth_m: 10_000.0,
    };

    fn check(&self) -> Result<(), ScienceError> {
        let a0 = self.surface_production_w_m3;
        if !(a0.is_finite() && (0.0..=1e-4).contains(&a0)) {
            return Err(ScienceError::OutOfRange {
                name: "crustal heat production A0",
                value: a0,
                range: "0 to 100 µW m^-3",
            });
        }
        let d = self.decay_depth_m;
        if !(d.is_finite() && (100.0..=100_000.0).contains(&d)) {
            return Err(ScienceError::OutOfRange {
                name: "heat-production decay depth D",
                value: d,
                range: "100 m to 100 km",
            });
        }
        Ok(())
    }
}

/// Grid and time step of a run.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct NumericalSettings {
    /// Grid points from the top of the basement to the base of the plate (>= 11).
    pub nodes: usize,
    /// Longest time step, Myr (steps are shortened to land on every event and output age).
    pub time_step_myr: f64,
}

impl Default for NumericalSettings {
    /// 1,001 points (125 m on a 125 km plate) and 0.05 Myr steps, the resolution the
    /// tests check against the closed forms (docs/science-lithosphere.md 3, 4).
    fn default() -> Self {
        NumericalSettings {
            nodes: 1001,
            time_step_myr: 0.05,
        }
    }
}

/// The plate at one output age.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PlateState {
    pub age_ma: f64,
    /// Water-loaded (infill-loaded) tectonic subsidence since before the first event, m.
    pub subsidence_m: f64,
    /// Heat flow out of the top of the basement, the crust's radiogenic heat included,
    /// mW m^-2 (with no heat production, McKenzie's surface heat flow).
    pub surface_heat_flow_mw_m2: f64,
    /// Heat flow from the mantle into the base of the crust, mW m^-2.
    pub mantle_heat_flow_mw_m2: f64,
    /// Thickness of the crust, m.
    pub crust_thickness_m: f64,
    /// Temperature at each grid depth (°C), top first, when asked for.
    pub geotherm_c: Option<Vec<f64>>,
}

/// What a run returns: the plate at each output age, oldest first, and the grid.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PlateHistory {
    pub states: Vec<PlateState>,
    /// Grid spacing, m (geotherm point i is at depth i times this).
    pub node_spacing_m: f64,
}

/// Run the numerical lithosphere through `events` (oldest first, not overlapping; any
/// number) and report it at `output_ages_ma` (any order; reported oldest first). An
/// output age equal to an instantaneous event's age reports the plate just after it;
/// ask for a slightly older age for the plate just before.
///
/// The plate is in steady state before the first event (or the oldest output age if
/// older). The thermal diffusivity is `a^2 / (pi^2 tau)` from the lithosphere's time
/// constant, so a pinned tau is honoured as in the closed forms.
///
/// Errors: a factor outside [1, 20] or not finite, an event whose end is older than its
/// onset, events that overlap or are not oldest first, ages not finite or beyond
/// 4,600 Ma, heat production out of range, settings outside [11, MAX_NODES] nodes or a
/// step not positive, or a run longer than [`MAX_STEPS`] steps.
pub fn run_plate(
    lithosphere: &Lithosphere,
    production: &CrustalHeatProduction,
    events: &[StretchingEvent],
    convention: IsostasyConvention,
    settings: &NumericalSettings,
    output_ages_ma: &[f64],
    with_geotherms: bool,
) -> Result<PlateHistory, ScienceError> {
    check_inputs(production, events, settings, output_ages_ma)?;
    let mut outputs: Vec<f64> = output_ages_ma.to_vec();
    outputs.sort_by(|a, b| b.total_cmp(a));
    outputs.dedup();
    // Breakpoints: every age where something starts, ends or is reported.
    let mut breaks: Vec<f64> = outputs.clone();
    for e in events {
        breaks.push(e.onset_ma);
        breaks.push(e.end_ma);
    }
    breaks.sort_by(|a, b| b.total_cmp(a));
    breaks.dedup();
    let steps: f64 = breaks
        .windows(2)
        .map(|w| ((w[0] - w[1]) / settings.time_step_myr).ceil())
        .sum();
    if steps > MAX_STEPS as f64 {
        return Err(ScienceError::InvalidModel(format!(
            "{steps} time steps of {} Myr exceed the cap of {MAX_STEPS}; use a longer step",
            settings.time_step_myr
        )));
    }

    let mut plate = Plate::new(lithosphere, production, convention, settings.nodes);
    let mut states = Vec::with_capacity(outputs.len());
    let mut next_output = 0;
    let mut rough = false;
    for (k, &age) in breaks.iter().enumerate() {
        // Instantaneous events at this age act first: a state reported here is "just after".
        for e in events
            .iter()
            .filter(|e| e.is_instantaneous() && e.end_ma == age)
        {
            plate.stretch(e.crust_factor, e.mantle_factor);
            rough = true;
        }
        if next_output < outputs.len() && outputs[next_output] == age {
            states.push(plate.state(age, with_geotherms));
            next_output += 1;
        }
        let Some(&younger) = breaks.get(k + 1) else {
            break;
        };
        let span = age - younger;
        let n = (span / settings.time_step_myr).ceil().max(1.0) as usize;
        let h_myr = span / n as f64;
        // The finite event this interval lies in, if any (breakpoints hold every onset and end).
        let rates = events
            .iter()
            .find(|e| !e.is_instantaneous() && e.onset_ma >= age && younger >= e.end_ma)
            .map(|e| {
                let duration = e.onset_ma - e.end_ma;
                (
                    e.crust_factor.ln() / duration,
                    e.mantle_factor.ln() / duration,
                )
            });
        for _ in 0..n {
            if let Some((gc, gm)) = rates {
                // Strang splitting: half the stretch, the heat step, the other half.
                plate.stretch((gc * h_myr / 2.0).exp(), (gm * h_myr / 2.0).exp());
                plate.diffuse(h_myr, rough);
                plate.stretch((gc * h_myr / 2.0).exp(), (gm * h_myr / 2.0).exp());
            } else {
                plate.diffuse(h_myr, rough);
            }
            rough = false;
        }
    }
    Ok(PlateHistory {
        states,
        node_spacing_m: plate.dz,
    })
}

/// The steady geotherm of the unstretched plate with this heat production (°C at each
/// grid depth, top first), the state every run starts from.
pub fn steady_geotherm(
    lithosphere: &Lithosphere,
    production: &CrustalHeatProduction,
    nodes: usize,
) -> Result<Vec<f64>, ScienceError> {
    check_inputs(
        production,
        &[],
        &NumericalSettings {
            nodes,
            time_step_myr: 1.0,
        },
        &[],
    )?;
    Ok(Plate::new(lithosphere, production, IsostasyConvention::Exact, nodes).t)
}

/// Largest age any input may carry (the age of the Earth, Ma).
const OLDEST_MA: f64 = 4600.0;

fn check_inputs(
    production: &CrustalHeatProduction,
    events: &[StretchingEvent],
    settings: &NumericalSettings,
    output_ages_ma: &[f64],
) -> Result<(), ScienceError> {
    production.check()?;
    if !(11..=MAX_NODES).contains(&settings.nodes) {
        return Err(ScienceError::InvalidModel(format!(
            "{} grid points; use 11 to {MAX_NODES}",
            settings.nodes
        )));
    }
    let step = settings.time_step_myr;
    if !(step.is_finite() && step > 0.0) {
        return Err(ScienceError::InvalidModel(format!(
            "time step {step} Myr must be positive"
        )));
    }
    let age_ok = |a: f64| a.is_finite() && a.abs() <= OLDEST_MA;
    if let Some(a) = output_ages_ma.iter().find(|a| !age_ok(**a)) {
        return Err(ScienceError::InvalidModel(format!(
            "output age {a} Ma is not within ±{OLDEST_MA} Ma"
        )));
    }
    for (i, e) in events.iter().enumerate() {
        for (name, f) in [
            ("crust stretching factor", e.crust_factor),
            ("mantle stretching factor", e.mantle_factor),
        ] {
            super::mckenzie::check_stretching_factor(name, f)?;
        }
        if !(age_ok(e.onset_ma) && age_ok(e.end_ma) && e.onset_ma >= e.end_ma) {
            return Err(ScienceError::InvalidModel(format!(
                "event {}: onset {} Ma must be finite, within {OLDEST_MA} Ma and not younger than its end {} Ma",
                i + 1,
                e.onset_ma,
                e.end_ma
            )));
        }
        if i > 0 && e.onset_ma > events[i - 1].end_ma {
            return Err(ScienceError::InvalidModel(format!(
                "event {} (onset {} Ma) must start after event {} ends ({} Ma)",
                i + 1,
                e.onset_ma,
                i,
                events[i - 1].end_ma
            )));
        }
    }
    Ok(())
}

/// The plate's state while a run goes on.
struct Plate {
    dz: f64,
    t: Vec<f64>,
    /// kappa in m^2 per Myr.
    kappa: f64,
    conductivity: f64,
    t1: f64,
    alpha: f64,
    rho0: f64,
    rhoc: f64,
    rho_fill: f64,
    production: CrustalHeatProduction,
    convention: IsostasyConvention,
    /// Present crust thickness and the crust's cumulative stretching factor.
    crust_m: f64,
    crust_stretch: f64,
    /// Source A kappa / k per node (K per Myr), for the present crust.
    source: Vec<f64>,
    reference_mass: f64,
    subsidence_m: f64,
    /// dT/dt at the first interior node in the last step (K per Myr), for the surface flux.
    surface_rate: f64,
    scratch: Vec<f64>,
    previous: Vec<f64>,
    /// The factored heat-step matrix of the last step length used.
    factored: Option<Factored>,
}

impl Plate {
    fn new(
        l: &Lithosphere,
        production: &CrustalHeatProduction,
        convention: IsostasyConvention,
        nodes: usize,
    ) -> Self {
        let a = l.lithosphere_thickness_m;
        let kappa_m2_s =
            a * a / (std::f64::consts::PI.powi(2) * l.time_constant_myr * SECONDS_PER_MYR);
        let mut plate = Plate {
            dz: a / (nodes - 1) as f64,
            t: vec![0.0; nodes],
            kappa: kappa_m2_s * SECONDS_PER_MYR,
            conductivity: l.thermal_conductivity_w_m_k,
            t1: l.asthenosphere_temperature_c,
            alpha: l.thermal_expansion_per_c,
            rho0: l.mantle_density_kg_m3,
            rhoc: l.crust_density_kg_m3,
            rho_fill: l.infill_density_kg_m3,
            production: *production,
            convention,
            crust_m: l.crust_thickness_m,
            crust_stretch: 1.0,
            source: vec![0.0; nodes],
            reference_mass: 0.0,
            subsidence_m: 0.0,
            surface_rate: 0.0,
            scratch: vec![0.0; nodes],
            previous: vec![0.0; nodes],
            factored: None,
        };
        plate.update_source();
        plate.solve_steady();
        plate.reference_mass = plate.column_mass();
        plate
    }

    fn nodes(&self) -> usize {
        self.t.len()
    }

    /// Node control-volume averages of A kappa / k for the present crust: A0
    /// exp(-z delta / D) for z < hc, integrated exactly.
    fn update_source(&mut self) {
        let (a0, d) = (
            self.production.surface_production_w_m3,
            self.production.decay_depth_m / self.crust_stretch,
        );
        let scale = self.kappa / self.conductivity;
        let (dz, hc) = (self.dz, self.crust_m);
        let n = self.nodes();
        for (i, s) in self.source.iter_mut().enumerate() {
            let lo = ((i as f64 - 0.5) * dz).max(0.0);
            let hi = ((i as f64 + 0.5) * dz).min((n - 1) as f64 * dz).min(hc);
            *s = if a0 > 0.0 && hi > lo {
                let width = if i == 0 || i == n - 1 { dz / 2.0 } else { dz };
                scale * a0 * d * ((-lo / d).exp() - (-hi / d).exp()) / width
            } else {
                0.0
            };
        }
    }

    /// Heat produced between the surface and z (W m^-2) in the present crust.
    fn production_above(&self, z: f64) -> f64 {
        let (a0, d) = (
            self.production.surface_production_w_m3,
            self.production.decay_depth_m / self.crust_stretch,
        );
        a0 * d * (1.0 - (-z.min(self.crust_m) / d).exp())
    }

    /// Steady state of the discrete operator: T'' = -source / kappa, T(0) = 0, T(a) = T1.
    fn solve_steady(&mut self) {
        let n = self.nodes();
        let dz2 = self.dz * self.dz;
        let rhs: Vec<f64> = (0..n)
            .map(|i| match i {
                0 => 0.0,
                i if i == n - 1 => self.t1,
                i => self.source[i] * dz2 / self.kappa,
            })
            .collect();
        // -T[i-1] + 2 T[i] - T[i+1] = rhs[i] on interior nodes.
        self.t = solve_tridiagonal(-1.0, 2.0, -1.0, &rhs, &mut self.scratch);
    }

    /// Density-weighted column mass integral of rho(z) (1 - alpha T) over the plate (kg m^-2).
    fn column_mass(&self) -> f64 {
        let dz = self.dz;
        let hc = self.crust_m;
        let mut mass = 0.0;
        for i in 0..self.nodes() - 1 {
            let (z0, z1) = (i as f64 * dz, (i + 1) as f64 * dz);
            let (t0, t1) = (self.t[i], self.t[i + 1]);
            let piece = |rho: f64, ta: f64, tb: f64, len: f64| {
                rho * (1.0 - self.alpha * (ta + tb) / 2.0) * len
            };
            mass += if z1 <= hc {
                piece(self.rhoc, t0, t1, dz)
            } else if z0 >= hc {
                piece(self.rho0, t0, t1, dz)
            } else {
                let tm = t0 + (t1 - t0) * (hc - z0) / dz;
                piece(self.rhoc, t0, tm, hc - z0) + piece(self.rho0, tm, t1, z1 - hc)
            };
        }
        mass
    }

    /// Heat content integral of T dz (K m), trapezoid.
    fn heat_content(&self) -> f64 {
        let n = self.nodes();
        self.dz * (self.t.iter().sum::<f64>() - (self.t[0] + self.t[n - 1]) / 2.0)
    }

    fn exact_subsidence(&self) -> f64 {
        (self.column_mass() - self.reference_mass)
            / (self.rho0 * (1.0 - self.alpha * self.t1) - self.rho_fill)
    }

    /// Thin the crust by `fc` and the mantle part by `fm` at once (pure shear): each node
    /// takes the temperature of the point it came from.
    fn stretch(&mut self, fc: f64, fm: f64) {
        if fc == 1.0 && fm == 1.0 {
            return;
        }
        let before = self.column_mass();
        let (dz, n) = (self.dz, self.nodes());
        let a = (n - 1) as f64 * dz;
        let hc_new = self.crust_m / fc;
        self.previous.copy_from_slice(&self.t);
        for i in 1..n - 1 {
            let z = i as f64 * dz;
            let origin = if z < hc_new {
                z * fc
            } else {
                self.crust_m + (z - hc_new) * fm
            };
            self.t[i] = if origin >= a {
                self.t1
            } else {
                interpolate(&self.previous, origin / dz)
            };
        }
        self.crust_m = hc_new;
        self.crust_stretch *= fc;
        self.update_source();
        if self.convention == IsostasyConvention::McKenzie {
            self.subsidence_m += (self.column_mass() - before)
                / (self.rho0 * (1.0 - self.alpha * self.t1) - self.rho_fill);
        }
    }

    /// One heat step of `h_myr`: Crank–Nicolson, or two backward-Euler half steps when
    /// `rough` (just after an instantaneous stretch).
    fn diffuse(&mut self, h_myr: f64, rough: bool) {
        let heat_before = self.heat_content();
        let t_node1 = self.t[1];
        if rough {
            self.implicit_step(h_myr / 2.0, 1.0);
            self.implicit_step(h_myr / 2.0, 1.0);
        } else {
            self.implicit_step(h_myr, 0.5);
        }
        self.surface_rate = (self.t[1] - t_node1) / h_myr;
        if self.convention == IsostasyConvention::McKenzie {
            self.subsidence_m += self.rho0 * self.alpha * (heat_before - self.heat_content())
                / (self.rho0 - self.rho_fill);
        }
    }

    /// theta-method step: theta = 1/2 Crank–Nicolson, 1 backward Euler.
    fn implicit_step(&mut self, h: f64, theta: f64) {
        let n = self.nodes();
        let r = self.kappa * h / (self.dz * self.dz);
        let off = -theta * r;
        // The matrix is the same for every step of one length: factor it once (the
        // Thomas sweep's multipliers), then each step is two passes without a division.
        if self.factored.as_ref().is_none_or(|f| f.off != off) {
            self.factored = Some(Factored::new(off, 1.0 + 2.0 * theta * r, n));
        }
        let f = self.factored.as_ref().expect("factored above");
        // Right-hand side into `previous` (free between stretches), then solved into `t`.
        let rhs = &mut self.previous;
        rhs[0] = 0.0;
        rhs[n - 1] = self.t1;
        for (i, value) in rhs.iter_mut().enumerate().take(n - 1).skip(1) {
            let lap = self.t[i - 1] - 2.0 * self.t[i] + self.t[i + 1];
            *value = self.t[i] + (1.0 - theta) * r * lap + h * self.source[i];
        }
        f.solve(rhs, &mut self.t);
    }

    fn state(&self, age_ma: f64, with_geotherm: bool) -> PlateState {
        let subsidence_m = match self.convention {
            IsostasyConvention::McKenzie => self.subsidence_m,
            IsostasyConvention::Exact => self.exact_subsidence(),
        };
        let k = self.conductivity;
        let dz = self.dz;
        // Half-cell balance over [0, dz/2]: what leaves the top is what enters from
        // below, plus what is produced, less what is stored.
        let rho_c = k / (self.kappa / SECONDS_PER_MYR);
        let surface = k * (self.t[1] - self.t[0]) / dz + self.production_above(dz / 2.0)
            - rho_c * dz / 8.0 * self.surface_rate / SECONDS_PER_MYR;
        // Gradient at the Moho, interpolated between cell-centre gradients.
        let x = (self.crust_m / dz - 0.5).clamp(0.0, (self.nodes() - 2) as f64);
        let j = (x.floor() as usize).min(self.nodes() - 3);
        let w = x - j as f64;
        let g = |i: usize| (self.t[i + 1] - self.t[i]) / dz;
        let moho_gradient = g(j) * (1.0 - w) + g(j + 1) * w;
        PlateState {
            age_ma,
            subsidence_m,
            surface_heat_flow_mw_m2: 1e3 * surface,
            mantle_heat_flow_mw_m2: 1e3 * k * moho_gradient,
            crust_thickness_m: self.crust_m,
            geotherm_c: with_geotherm.then(|| self.t.clone()),
        }
    }
}

/// The value of the grid function `v` at fractional index `x` (0 <= x <= len - 1): cubic
/// Lagrange interpolation through the four nearest nodes, linear in the end cells.
/// Linear interpolation everywhere would add a numerical diffusivity of about
/// dz |w| / 2 during slow stretching (2 % of kappa at the base of the plate for beta 2
/// over 10 Myr on a 125 m grid); the cubic's error is of order dz^4.
fn interpolate(v: &[f64], x: f64) -> f64 {
    let n = v.len();
    let j = (x.floor() as usize).min(n - 2);
    let w = x - j as f64;
    if j == 0 || j + 2 >= n {
        return v[j] * (1.0 - w) + v[j + 1] * w;
    }
    let (a, b, c, d) = (v[j - 1], v[j], v[j + 1], v[j + 2]);
    // Weights of nodes j-1, j, j+1, j+2 at offset w from node j.
    -a * w * (w - 1.0) * (w - 2.0) / 6.0 + b * (w + 1.0) * (w - 1.0) * (w - 2.0) / 2.0
        - c * (w + 1.0) * w * (w - 2.0) / 2.0
        + d * (w + 1.0) * w * (w - 1.0) / 6.0
}

/// A factored tridiagonal matrix with constant off-diagonals `off` and diagonal `diag`
/// on interior rows and identity rows at both ends: the Thomas sweep's upper
/// multipliers and inverse pivots.
struct Factored {
    off: f64,
    upper: Vec<f64>,
    inverse_pivot: Vec<f64>,
}

impl Factored {
    fn new(off: f64, diag: f64, n: usize) -> Self {
        let (mut upper, mut inverse_pivot) = (vec![0.0; n], vec![1.0; n]);
        for i in 1..n - 1 {
            let m = diag - off * upper[i - 1];
            inverse_pivot[i] = 1.0 / m;
            upper[i] = off / m;
        }
        Factored {
            off,
            upper,
            inverse_pivot,
        }
    }

    /// Solve for `x` with the right-hand side `rhs` (Dirichlet values at both ends).
    fn solve(&self, rhs: &[f64], x: &mut [f64]) {
        let n = rhs.len();
        x[0] = rhs[0];
        for i in 1..n - 1 {
            x[i] = (rhs[i] - self.off * x[i - 1]) * self.inverse_pivot[i];
        }
        x[n - 1] = rhs[n - 1];
        for i in (1..n - 1).rev() {
            x[i] -= self.upper[i] * x[i + 1];
        }
    }
}

/// Solve the tridiagonal system with constant off-diagonals `lower`, `upper` and
/// diagonal `diag` on interior rows, identity rows at both ends (Dirichlet values in
/// `rhs`), by the Thomas algorithm.
fn solve_tridiagonal(lower: f64, diag: f64, upper: f64, rhs: &[f64], c: &mut [f64]) -> Vec<f64> {
    let n = rhs.len();
    let mut d = rhs.to_vec();
    // Row 0 is the identity: c[0] = 0, d[0] = rhs[0].
    c[0] = 0.0;
    for i in 1..n - 1 {
        let m = diag - lower * c[i - 1];
        c[i] = upper / m;
        d[i] = (d[i] - lower * d[i - 1]) / m;
    }
    // Row n-1 is the identity.
    for i in (1..n - 1).rev() {
        d[i] -= c[i] * d[i + 1];
    }
    d
}

#[cfg(test)]
#[path = "numerical_lithosphere_tests.rs"]
mod tests;
