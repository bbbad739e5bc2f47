//! One demo well: its planned surfaces, the subsidence curve it is built to follow,
//! and the construction (forward model, inserted hiatus and unconformity surfaces,
//! water-depth correction, noise). The method is set out in `super`'s notes.

use super::spec::{BasinSpec, FieldValues, SecondRift, WellSpec, parse_mix, water_depth};
use rand::RngExt;
use rand::rngs::StdRng;
use rand_distr::{Distribution, Normal};
use sagline_science::backstrip::{airy_tectonic_subsidence, backstrip, water_load_amplification};
use sagline_science::fit::{RiftEvent, TwoLayerFit, UniformFit};
use sagline_science::forward::{ForwardSpec, ForwardStretching, ForwardSurface, forward_well};
use sagline_science::lithology::Catalogue;
use sagline_science::mckenzie::Lithosphere;
use sagline_science::{
    Erosion, LithologyMix, ModelParameters, SeaLevelCurve, Surface, WaterDepth, WellColumn,
};

/// The stretching a well was built with.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum DesignStretching {
    /// Uniform stretching, one event (and a second one when `second_rift` is set).
    Uniform { beta: f64 },
    /// Two-layer stretching: crust delta, mantle beta.
    TwoLayer { delta: f64, beta: f64 },
    /// No rift: steady background subsidence.
    NoRift { rate_m_per_myr: f64 },
}

/// What a well was built to show, for its note and for checking the analysis.
#[derive(Debug, Clone, PartialEq)]
pub struct WellDesign {
    pub well: String,
    pub stretching: DesignStretching,
    /// The first (or only) rift event's onset and end (Ma); `None` without a rift.
    pub rift_ma: Option<(f64, f64)>,
    pub second_rift: Option<SecondRift>,
    /// (horizon, the horizon it rests on) for every hiatus.
    pub hiatuses: Vec<(String, String)>,
    /// (horizon carrying the eroded section, eroded thickness m, eroded at Ma).
    pub erosion: Option<(String, f64, f64)>,
}

/// A built well.
#[derive(Debug, Clone, PartialEq)]
pub struct BuiltWell {
    pub column: WellColumn,
    pub design: WellDesign,
}

/// Everything a well is built with.
pub struct Context<'a> {
    pub spec: &'a BasinSpec,
    pub params: ModelParameters,
    pub catalogue: Catalogue,
    pub sea_level: SeaLevelCurve,
    pub lithosphere: Lithosphere,
}

/// A subsidence curve with its value at an age (m, Y0 = 0).
#[derive(Debug, Clone, PartialEq)]
enum Curve {
    Uniform(UniformFit),
    TwoLayer(TwoLayerFit),
    /// Straight line, rising `rate` m per Myr towards the present.
    Line {
        rate_m_per_myr: f64,
    },
}

impl Curve {
    fn at(&self, lithosphere: &Lithosphere, age_ma: f64) -> f64 {
        match self {
            Curve::Uniform(f) => f.subsidence_m(lithosphere, age_ma),
            Curve::TwoLayer(f) => f.subsidence_m(lithosphere, age_ma),
            Curve::Line { rate_m_per_myr } => -rate_m_per_myr * age_ma,
        }
    }
}

/// A surface of the plan: where it comes from and what it records.
struct Planned {
    horizon: String,
    age_ma: f64,
    lithology_below: Option<LithologyMix>,
    water_depth: WaterDepth,
    /// Rests on the next older surface instead of being forward-modelled.
    inserted: bool,
}

/// Water depth (m, negative = land) as its term in the Airy balance: one-for-one under
/// water, amplified like sediment for land elevation (docs/science.md 3.1).
fn depth_term(water_depth_m: f64, amplification: f64) -> f64 {
    if water_depth_m >= 0.0 {
        water_depth_m
    } else {
        water_depth_m * amplification
    }
}

/// The water depth whose Airy term is `term` (inverse of [`depth_term`]).
fn depth_from_term(term: f64, amplification: f64) -> f64 {
    if term >= 0.0 {
        term
    } else {
        term / amplification
    }
}

fn shifted(w: WaterDepth, by_m: f64) -> WaterDepth {
    WaterDepth {
        min_m: w.min_m + by_m,
        max_m: w.max_m + by_m,
    }
}

impl Context<'_> {
    /// Build one well (method in `super`'s notes). Draws from `rng` in a fixed order.
    pub fn build_well(&self, well: &WellSpec, rng: &mut StdRng) -> Result<BuiltWell, String> {
        let err = |reason: String| format!("well '{}': {reason}", well.name);
        let field = self.spec.field_at(well.x, well.y);
        let plan = self.plan(well, &field).map_err(err)?;
        let (target, forward, mut design) = self.curves(well, &field);
        let l = &self.lithosphere;
        let oldest = &plan[plan.len() - 1];
        let start = airy_tectonic_subsidence(
            0.0,
            0.0,
            oldest.water_depth.best_m(),
            self.sea_level.at(oldest.age_ma),
            &self.params,
        );
        let target_at = |age: f64| start + target.at(l, age) - target.at(l, oldest.age_ma);

        let mut column = self.forward(well, &plan, &target, &forward).map_err(err)?;
        for (k, p) in plan.iter().enumerate().filter(|(_, p)| p.inserted) {
            design
                .hiatuses
                .push((p.horizon.clone(), plan[k + 1].horizon.clone()));
        }
        if let Some(e) = &well.erosion {
            let k = column
                .iter()
                .position(|s| s.horizon == e.horizon)
                .expect("planned");
            let eroded_m = self
                .eroded_thickness(&well.name, &column, k, e.eroded_at_ma, &target_at)
                .map_err(err)?;
            column[k].erosion = Some(Erosion {
                eroded_m,
                eroded_at_ma: e.eroded_at_ma,
            });
            // The horizon above an erosion surface is an unconformity, not a hiatus.
            design.hiatuses.retain(|(_, below)| below != &e.horizon);
            design.erosion = Some((e.horizon.clone(), eroded_m, e.eroded_at_ma));
        }
        self.correct_water_depths(&well.name, &mut column, &target_at)
            .map_err(err)?;
        self.add_noise(&mut column, rng);
        round_for_the_file(&mut column, &mut design);
        if let Some(s) = column.iter().find(|s| s.erosion.is_some()) {
            let burial = s.depth_m - column[0].depth_m;
            let eroded = s.erosion.map(|e| e.eroded_m).unwrap_or(0.0);
            if eroded >= burial {
                return Err(err(format!(
                    "the {eroded} m eroded from '{}' exceed its present burial of {burial:.1} m; the units below would be over-compacted today, which this builder does not model",
                    s.horizon
                )));
            }
        }
        let column = WellColumn::new(well.name.clone(), column).map_err(|e| e.to_string())?;
        Ok(BuiltWell { column, design })
    }

    /// The well's surfaces, youngest first, with their ages, units and water depths.
    fn plan(&self, well: &WellSpec, field: &FieldValues) -> Result<Vec<Planned>, String> {
        let mut plan = Vec::new();
        for h in &self.spec.stratigraphy {
            let Some(age_ma) = field.age_of(h, well.no_rift)? else {
                continue;
            };
            let water_depth = match well.water_depth_m.get(&h.horizon) {
                Some(&[min, max]) => water_depth(min, max, &h.horizon)?,
                None => field.water_depth(h, well.no_rift)?,
            };
            plan.push(Planned {
                horizon: h.horizon.clone(),
                age_ma,
                lithology_below: h.lithology.as_deref().map(parse_mix).transpose()?,
                water_depth,
                inserted: well.hiatus.contains(&h.horizon),
            });
        }
        if let Some(last) = plan.last_mut() {
            last.lithology_below = None;
        }
        if plan.len() < 3 || plan.windows(2).any(|w| w[0].age_ma >= w[1].age_ma) {
            return Err("needs three or more horizons with ages increasing downwards".into());
        }
        let position = |name: &str| plan.iter().position(|p| p.horizon == name);
        for name in well.water_depth_m.keys().chain(&well.hiatus) {
            position(name).ok_or_else(|| format!("has no horizon '{name}'"))?;
        }
        if let Some(e) = &well.erosion {
            let k =
                position(&e.horizon).ok_or_else(|| format!("has no horizon '{}'", e.horizon))?;
            if k < 2 || k + 1 == plan.len() {
                return Err(format!(
                    "erosion at '{}': needs a horizon below it and two above it",
                    e.horizon
                ));
            }
            if !(plan[k - 1].age_ma < e.eroded_at_ma && e.eroded_at_ma < plan[k].age_ma) {
                return Err(format!(
                    "erosion at '{}': eroded_at_ma must lie between {} and {} Ma",
                    e.horizon,
                    plan[k - 1].age_ma,
                    plan[k].age_ma
                ));
            }
            plan[k - 1].inserted = true;
        }
        if plan[0].inserted || plan[plan.len() - 1].inserted {
            return Err("the shallowest and deepest horizons cannot rest on another".into());
        }
        Ok(plan)
    }

    /// The curve the well follows, the part of it the forward model can follow itself
    /// (one uniform or two-layer event; a flat line without a rift), and the design.
    fn curves(&self, well: &WellSpec, field: &FieldValues) -> (Curve, Curve, WellDesign) {
        let uniform = |events: Vec<RiftEvent>| {
            Curve::Uniform(UniformFit {
                events,
                pre_rift_subsidence_m: 0.0,
                rms_misfit_m: 0.0,
            })
        };
        let first = RiftEvent {
            rift_onset_ma: field.rift_onset_ma,
            rift_end_ma: field.rift_end_ma,
            beta: field.beta,
        };
        let mut design = WellDesign {
            well: well.name.clone(),
            stretching: DesignStretching::Uniform { beta: field.beta },
            rift_ma: Some((field.rift_onset_ma, field.rift_end_ma)),
            second_rift: None,
            hiatuses: Vec::new(),
            erosion: None,
        };
        if well.no_rift {
            let rate_m_per_myr = self.spec.background_subsidence_m_per_myr;
            design.stretching = DesignStretching::NoRift { rate_m_per_myr };
            design.rift_ma = None;
            return (Curve::Line { rate_m_per_myr }, uniform(Vec::new()), design);
        }
        if let Some(mantle_beta) = well.mantle_beta {
            design.stretching = DesignStretching::TwoLayer {
                delta: field.beta,
                beta: mantle_beta,
            };
            let fit = Curve::TwoLayer(TwoLayerFit {
                delta: field.beta,
                beta: mantle_beta,
                rift_onset_ma: field.rift_onset_ma,
                rift_end_ma: field.rift_end_ma,
                pre_rift_subsidence_m: 0.0,
                rms_misfit_m: 0.0,
            });
            return (fit.clone(), fit, design);
        }
        let mut events = vec![first];
        if let Some(s) = well.second_rift {
            design.second_rift = Some(s);
            events.push(RiftEvent {
                rift_onset_ma: s.onset_ma,
                rift_end_ma: s.end_ma,
                beta: s.beta,
            });
        }
        (uniform(events), uniform(vec![first]), design)
    }

    /// Forward-model the modelled surfaces, then place the inserted ones; surfaces
    /// youngest first, with the plan's water-depth ranges.
    fn forward(
        &self,
        well: &WellSpec,
        plan: &[Planned],
        target: &Curve,
        forward: &Curve,
    ) -> Result<Vec<Surface>, String> {
        let l = &self.lithosphere;
        let amplification = water_load_amplification(&self.params);
        let oldest_ma = plan[plan.len() - 1].age_ma;
        // The part of the target the forward model cannot follow is carried, while it
        // builds the well, by a water depth shallower by that much (in Airy terms).
        let carried = |age: f64| {
            (target.at(l, age) - target.at(l, oldest_ma))
                - (forward.at(l, age) - forward.at(l, oldest_ma))
        };
        let modelled: Vec<&Planned> = plan.iter().filter(|p| !p.inserted).collect();
        let surfaces = modelled
            .iter()
            .enumerate()
            .map(|(i, p)| {
                let best = p.water_depth.best_m();
                let term = depth_term(best, amplification) - carried(p.age_ma);
                ForwardSurface {
                    horizon: p.horizon.clone(),
                    age_ma: p.age_ma,
                    lithology_below: if i + 1 < modelled.len() {
                        p.lithology_below.clone()
                    } else {
                        None
                    },
                    water_depth: WaterDepth::exact(depth_from_term(term, amplification)),
                }
            })
            .collect::<Vec<_>>();
        let (stretching, rift_onset_ma, rift_end_ma) = match forward {
            Curve::Uniform(f) if f.events.len() == 1 => {
                let e = f.events[0];
                (
                    ForwardStretching::Uniform { beta: e.beta },
                    e.rift_onset_ma,
                    e.rift_end_ma,
                )
            }
            Curve::TwoLayer(f) => (
                ForwardStretching::TwoLayer {
                    delta: f.delta,
                    beta: f.beta,
                },
                f.rift_onset_ma,
                f.rift_end_ma,
            ),
            // No stretching: the timing is not used.
            _ => (
                ForwardStretching::Uniform { beta: 1.0 },
                oldest_ma,
                plan[0].age_ma,
            ),
        };
        let top_forward_depth = surfaces[0].water_depth.best_m();
        let spec = ForwardSpec {
            well: well.name.clone(),
            stretching,
            rift_onset_ma,
            rift_end_ma,
            surfaces,
        };
        let built = forward_well(&spec, &self.catalogue, &self.params, &self.sea_level)
            .map_err(|e| e.to_string())?;
        // The well hangs from its present sea floor, at the plan's water depth.
        let shift = plan[0].water_depth.best_m() - top_forward_depth;
        let mut modelled_depths = built.surfaces.iter().map(|s| s.depth_m + shift).rev();
        let mut column: Vec<Surface> = Vec::with_capacity(plan.len());
        let mut depth = f64::NAN;
        for p in plan.iter().rev() {
            if !p.inserted {
                depth = modelled_depths
                    .next()
                    .expect("one depth per modelled surface");
            }
            column.push(Surface {
                horizon: p.horizon.clone(),
                depth_m: depth,
                age_ma: p.age_ma,
                lithology_below: p.lithology_below.clone(),
                water_depth: p.water_depth,
                erosion: None,
            });
        }
        column.reverse();
        Ok(column)
    }

    /// The thickness of the section eroded from surface `k` that puts the tectonic
    /// subsidence at `eroded_at_ma` on the target curve, by bisection.
    fn eroded_thickness(
        &self,
        name: &str,
        column: &[Surface],
        k: usize,
        eroded_at_ma: f64,
        target_at: &dyn Fn(f64) -> f64,
    ) -> Result<f64, String> {
        let mut trial = column.to_vec();
        let mut misfit = |eroded_m: f64| -> Result<f64, String> {
            trial[k].erosion = Some(Erosion {
                eroded_m,
                eroded_at_ma,
            });
            let well = WellColumn::new(name, trial.clone()).map_err(|e| e.to_string())?;
            let history = backstrip(&well, &self.catalogue, &self.params, &self.sea_level)
                .map_err(|e| e.to_string())?;
            let step = history
                .steps
                .iter()
                .find(|s| s.eroded_section_m.is_some())
                .expect("an erosion step");
            Ok(step.tectonic_subsidence.best - target_at(eroded_at_ma))
        };
        let (mut low, mut high) = (1.0, 5000.0);
        if misfit(low)? > 0.0 || misfit(high)? < 0.0 {
            return Err(format!(
                "no eroded thickness of 1-5000 m puts the subsidence at {eroded_at_ma} Ma on the curve; \
                 the water before the erosion is too shallow or too deep"
            ));
        }
        while high - low > 1e-6 {
            let mid = 0.5 * (low + high);
            if misfit(mid)? < 0.0 {
                low = mid
            } else {
                high = mid
            }
        }
        Ok(0.5 * (low + high))
    }

    /// Set every surface's water depth so that its backstripped best tectonic subsidence
    /// lies on the target curve: exact, as an error in water depth passes into the
    /// subsidence one-for-one (docs/science.md 3, 9.1). Needed where the forward model was
    /// left: inserted surfaces, and units over-compacted under an eroded section.
    fn correct_water_depths(
        &self,
        name: &str,
        column: &mut [Surface],
        target_at: &dyn Fn(f64) -> f64,
    ) -> Result<(), String> {
        let amplification = water_load_amplification(&self.params);
        let history = |column: &[Surface]| {
            let well = WellColumn::new(name, column.to_vec()).map_err(|e| e.to_string())?;
            backstrip(&well, &self.catalogue, &self.params, &self.sea_level)
                .map_err(|e| e.to_string())
        };
        for step in history(column)?
            .steps
            .iter()
            .filter(|s| s.eroded_section_m.is_none())
        {
            let k = column
                .iter()
                .position(|s| s.age_ma == step.age_ma)
                .expect("a surface age");
            let old = column[k].water_depth.best_m();
            let term = depth_term(old, amplification) + target_at(step.age_ma)
                - step.tectonic_subsidence.best;
            let change = depth_from_term(term, amplification) - old;
            column[k].water_depth = shifted(column[k].water_depth, change);
            if k == 0 {
                column.iter_mut().for_each(|s| s.depth_m += change);
            }
        }
        let worst = history(column)?
            .steps
            .iter()
            .map(|s| (s.tectonic_subsidence.best - target_at(s.age_ma)).abs())
            .fold(0.0, f64::max);
        if worst > 1e-3 {
            return Err(format!("backstrips {worst:.4} m off its design curve"));
        }
        Ok(())
    }

    /// Shift each recorded water-depth range (not the sea floor's, which is measured)
    /// and each surface depth below the sea floor by a small seeded amount.
    fn add_noise(&self, column: &mut [Surface], rng: &mut StdRng) {
        let noise = self.spec.noise;
        let normal = Normal::new(0.0, noise.water_depth_sd_m).expect("checked by BasinSpec::check");
        for s in column.iter_mut().skip(1) {
            // A range that was marine stays marine: land would be another story.
            let mut w = shifted(s.water_depth, normal.sample(rng));
            w.min_m = w.min_m.max(0.0_f64.min(s.water_depth.min_m));
            w.max_m = w.max_m.max(w.min_m);
            s.water_depth = w;
        }
        // Surfaces at one depth (hiatus, unconformity) move together.
        let mut k = 1;
        while k < column.len() {
            let group_end = (k..column.len())
                .find(|&j| column[j].depth_m != column[k].depth_m)
                .unwrap_or(column.len());
            let above = column[k].depth_m - column[k - 1].depth_m;
            let below = column
                .get(group_end)
                .map_or(f64::INFINITY, |s| s.depth_m - column[k].depth_m);
            let limit = noise.depth_max_m.min(0.2 * above.min(below));
            let shift = if limit > 0.0 {
                rng.random_range(-limit..limit)
            } else {
                0.0
            };
            column[k..group_end]
                .iter_mut()
                .for_each(|s| s.depth_m += shift);
            k = group_end;
        }
    }
}

/// Depths to 0.1 m, water depths and eroded thicknesses to 1 m, as a tops file carries them.
fn round_for_the_file(column: &mut [Surface], design: &mut WellDesign) {
    // Dividing the rounded integer gives the same double as reading the printed decimal.
    let round = |x: f64, per_unit: f64| (x * per_unit).round() / per_unit + 0.0;
    for s in column.iter_mut() {
        s.depth_m = round(s.depth_m, 10.0);
        s.water_depth = WaterDepth {
            min_m: round(s.water_depth.min_m, 1.0),
            max_m: round(s.water_depth.max_m, 1.0),
        };
        if let Some(e) = s.erosion.as_mut() {
            e.eroded_m = round(e.eroded_m, 1.0);
        }
    }
    if let Some((horizon, eroded_m, _)) = design.erosion.as_mut() {
        *eroded_m = column
            .iter()
            .find(|s| &s.horizon == horizon)
            .and_then(|s| s.erosion)
            .map_or(*eroded_m, |e| e.eroded_m);
    }
}
