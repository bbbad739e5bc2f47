//! The thermal part of a well's analysis: the heat flow into the basement under the
//! chosen stretching model, the temperature of every horizon through the burial history,
//! and its EASY%Ro with the maturity windows (docs/science-thermal.md 4-6).

use super::Interpretation;
use crate::backstrip::WellHistory;
use crate::heat_flow;
use crate::maturity::{self, MaturityHistory, MaturityWindow};
use crate::mckenzie::Lithosphere;
use crate::numerical_lithosphere::{
    self as plate, CrustalHeatProduction, IsostasyConvention, NumericalSettings, StretchingEvent,
};
use crate::phases::StretchingModel;
use crate::thermal::{self, ThermalCatalogue, ThermalHistory, ThermalProperties, ThermalSettings};
use crate::{ModelParameters, ScienceError, WellColumn};
use serde::Serialize;

/// What the thermal part of every well of a study is run with.
#[derive(Debug, Clone, PartialEq)]
pub struct ThermalInputs {
    pub settings: ThermalSettings,
    pub catalogue: ThermalCatalogue,
    /// Radiogenic heat of the crust under the basin (thinned with it by stretching).
    pub crust: CrustalHeatProduction,
    pub windows: Vec<MaturityWindow>,
}

impl Default for ThermalInputs {
    /// Transient conduction, 10 °C surface \[assumed\], the default thermal catalogue,
    /// a typical continental crust (A0 1.5 µW/m³, D 10 km \[memory\]), oil and gas
    /// windows (common practice).
    fn default() -> Self {
        ThermalInputs {
            settings: ThermalSettings::default(),
            catalogue: ThermalCatalogue::published_defaults(),
            crust: CrustalHeatProduction::TYPICAL_CONTINENTAL,
            windows: maturity::default_windows(),
        }
    }
}

/// A study's (or a batch run's) own thermal settings; `None` keeps the default.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, serde::Deserialize)]
pub struct ThermalChoices {
    /// Surface (sea-floor) temperature at every age, °C (-40 to 60).
    pub surface_temperature_c: Option<f64>,
    /// Radiogenic heat production at the top of the crust, µW/m³ (0 to 20).
    pub crust_heat_production_uw_m3: Option<f64>,
    /// Depth over which it falls by a factor e, km (0.1 to 100).
    pub crust_heat_production_decay_km: Option<f64>,
}

impl ThermalChoices {
    /// The defaults with these choices applied, `source` saying where they were set
    /// (e.g. "this study").
    ///
    /// Errors: [`ScienceError::OutOfRange`] naming the first value out of its range.
    pub fn inputs(&self, source: &str) -> Result<ThermalInputs, ScienceError> {
        let mut inputs = ThermalInputs::default();
        if let Some(t) = self.surface_temperature_c {
            inputs.settings.surface = thermal::SurfaceTemperature::constant(
                t,
                format!("{t} °C at every age, set for {source}"),
            )?;
        }
        let within = |name, value: f64, lo, hi, range| {
            if value.is_finite() && (lo..=hi).contains(&value) {
                Ok(value)
            } else {
                Err(ScienceError::OutOfRange { name, value, range })
            }
        };
        if let Some(a) = self.crust_heat_production_uw_m3 {
            let a = within("crustal heat production", a, 0.0, 20.0, "0 to 20 µW/m³")?;
            inputs.crust.surface_production_w_m3 = a * 1e-6;
        }
        if let Some(d) = self.crust_heat_production_decay_km {
            let d = within(
                "heat-production decay depth",
                d,
                0.1,
                100.0,
                "0.1 to 100 km",
            )?;
            inputs.crust.decay_depth_m = d * 1e3;
        }
        Ok(inputs)
    }
}

/// Grid and step of the plate run behind the basal heat flow: 201 nodes (625 m on a
/// 125 km plate) and 0.25 Myr, as the finite-rift fits use; the heat flow it gives
/// differs from the default resolution's by under 0.5 mW/m² in the tests.
pub const HEAT_FLOW_RESOLUTION: NumericalSettings = NumericalSettings {
    nodes: 201,
    time_step_myr: 0.25,
};

/// The thermal history of one well, with what it rests on.
#[derive(Debug, Clone, PartialEq)]
pub struct WellThermal {
    pub history: ThermalHistory,
    /// EASY%Ro of each horizon along its path, in well order.
    pub maturity: Vec<MaturityHistory>,
    /// Heat flow into the top of the basement, (age Ma, mW/m²) oldest first.
    pub basement_heat_flow: Vec<(f64, f64)>,
    /// Which stretching model the heat flow follows.
    pub model: StretchingModel,
    /// Units whose lithology the thermal catalogue does not hold (generic values used).
    pub generic_units: Vec<String>,
    /// Where the surface temperatures come from.
    pub surface_temperature_source: String,
    /// The crust's radiogenic heat the run used.
    pub crust: CrustalHeatProduction,
    /// The maturity windows the passages refer to.
    pub windows: Vec<MaturityWindow>,
}

/// The stretching events of the chosen model, oldest first, for the numerical plate:
/// each rift acts over its whole syn-rift interval (an instantaneous closed-form event
/// becomes a finite one over the same interval, which is what the rocks saw).
pub fn chosen_events(interpretation: &Interpretation) -> Vec<StretchingEvent> {
    let p = &interpretation.proposal;
    match p.model {
        StretchingModel::NoRift => Vec::new(),
        StretchingModel::FiniteUniform | StretchingModel::FiniteTwoLayer => {
            p.finite.iter().map(|f| f.event()).collect()
        }
        StretchingModel::TwoLayer => p
            .two_layer
            .iter()
            .map(|f| StretchingEvent {
                onset_ma: f.rift_onset_ma,
                end_ma: f.rift_end_ma,
                crust_factor: f.delta,
                mantle_factor: f.beta,
            })
            .collect(),
        StretchingModel::Uniform | StretchingModel::TwoEvents | StretchingModel::PostRiftOnly => p
            .uniform
            .iter()
            .flat_map(|f| f.events.iter())
            .map(|e| StretchingEvent::uniform(e.rift_onset_ma, e.rift_end_ma, e.beta))
            .collect(),
    }
}

/// The heat flow into the top of the basement on a 1 Myr grid from the oldest to the
/// youngest age of `history`, from the numerical lithosphere under `events` with the
/// crust's radiogenic heat (docs/science-thermal.md 5).
///
/// Errors: those of [`plate::run_plate`] (a factor outside 1-20, overlapping events).
pub fn basement_heat_flow(
    params: &ModelParameters,
    crust: &CrustalHeatProduction,
    events: &[StretchingEvent],
    history: &WellHistory,
) -> Result<Vec<(f64, f64)>, ScienceError> {
    let lithosphere = Lithosphere::water_loaded(params)?;
    let oldest = history.steps[0].age_ma;
    let youngest = history.steps[history.steps.len() - 1].age_ma;
    let grid = heat_flow::regular_ages(oldest, youngest, super::GRID_STEP_MYR)?;
    let run = plate::run_plate(
        &lithosphere,
        crust,
        events,
        IsostasyConvention::McKenzie,
        &HEAT_FLOW_RESOLUTION,
        &grid,
        false,
    )?;
    Ok(run
        .states
        .iter()
        .map(|s| (s.age_ma, s.surface_heat_flow_mw_m2))
        .collect())
}

/// The thermal properties of each unit of `well`, and the names of units whose
/// lithology fell back to generic values.
pub fn unit_properties(
    well: &WellColumn,
    catalogue: &ThermalCatalogue,
) -> Result<(Vec<ThermalProperties>, Vec<String>), ScienceError> {
    let mut properties = Vec::with_capacity(well.surfaces.len().saturating_sub(1));
    let mut generic = Vec::new();
    for s in &well.surfaces[..well.surfaces.len().saturating_sub(1)] {
        let mix = s.lithology_below.as_ref().ok_or_else(|| {
            ScienceError::InvalidModel(format!("unit below {} has no lithology", s.horizon))
        })?;
        let (p, used_generic) = catalogue.resolve(mix)?;
        if used_generic {
            generic.push(format!("below {} ({})", s.horizon, mix.label()));
        }
        properties.push(p);
    }
    Ok((properties, generic))
}

/// The thermal history of a well under its interpretation (no stretching when the
/// interpretation found no rift).
///
/// Errors: as [`basement_heat_flow`], [`unit_properties`] and
/// [`thermal::temperature_history`].
pub fn well_thermal(
    well: &WellColumn,
    history: &WellHistory,
    interpretation: &Interpretation,
    params: &ModelParameters,
    inputs: &ThermalInputs,
) -> Result<WellThermal, ScienceError> {
    let events = chosen_events(interpretation);
    let basement_heat_flow = basement_heat_flow(params, &inputs.crust, &events, history)?;
    let (properties, generic_units) = unit_properties(well, &inputs.catalogue)?;
    let thermal =
        thermal::temperature_history(history, &properties, &basement_heat_flow, &inputs.settings)?;
    let maturity = thermal::horizon_maturity(&thermal, &inputs.windows)?;
    Ok(WellThermal {
        history: thermal,
        maturity,
        basement_heat_flow,
        model: interpretation.proposal.model,
        generic_units,
        surface_temperature_source: inputs.settings.surface.source.clone(),
        crust: inputs.crust,
        windows: inputs.windows.clone(),
    })
}

/// The caution that goes with every temperature and maturity output.
pub const THERMAL_CAUTION: &str = "Temperatures and %Ro are estimates from a model, not measurements; they support, and do not replace, qualified judgement and local rules.";

/// What the contract's thermal heat flows are.
pub const THERMAL_HEAT_FLOW_BASIS: &str = "basement_heat_flow_mw_m2: heat flow into the top of the basement from the numerical lithosphere stretched as the chosen model says, the crust's radiogenic heat included; surface_heat_flow_mw_m2: out of the top of the sediment, adding the sediments' heat production less the heat that warms newly buried rock";

/// Extension of the contract: a well's temperatures and maturity.
#[derive(Debug, Clone, Serialize)]
pub struct ThermalOut {
    pub method: &'static str,
    /// The chosen stretching model's key, and its name in words.
    pub stretching_model: &'static str,
    pub stretching_model_label: &'static str,
    pub heat_flow_basis: &'static str,
    pub surface_temperature_source: String,
    pub crust_heat_production_uw_m3: f64,
    pub crust_heat_production_decay_km: f64,
    pub time_step_myr: f64,
    /// Units whose lithology had no thermal properties (generic values used).
    pub generic_units: Vec<String>,
    /// The maturity windows (%Ro bounds) the horizons' passages refer to.
    pub windows: Vec<MaturityWindow>,
    pub ages: Vec<ThermalAgeOut>,
    pub present_profile: Vec<thermal::DepthTemperature>,
    pub horizons: Vec<HorizonThermalOut>,
    pub caution: &'static str,
}

/// The column at one restored age.
#[derive(Debug, Clone, Serialize)]
pub struct ThermalAgeOut {
    pub age_ma: f64,
    pub surface_temperature_c: f64,
    pub basement_heat_flow_mw_m2: f64,
    pub surface_heat_flow_mw_m2: f64,
    pub basement_top_temperature_c: f64,
}

/// One horizon's temperature and %Ro, at most one point a million years (and at every
/// restored age), with its passage through the windows.
#[derive(Debug, Clone, Serialize)]
pub struct HorizonThermalOut {
    pub horizon: String,
    /// Depth below the sea floor (or land surface) today, m.
    pub present_depth_m: Option<f64>,
    pub present_temperature_c: f64,
    pub present_ro_percent: f64,
    pub windows: Vec<maturity::WindowPassage>,
    pub path: Vec<PathPointOut>,
}

#[derive(Debug, Clone, Copy, Serialize)]
pub struct PathPointOut {
    pub age_ma: f64,
    pub temperature_c: f64,
    pub ro_percent: f64,
}

/// The thermal part of the contract for one well.
pub fn thermal_out(t: &WellThermal, well: &WellHistory) -> ThermalOut {
    let restored_ages: Vec<f64> = well.steps.iter().map(|s| s.age_ma).collect();
    let today = &well.steps[well.steps.len() - 1];
    ThermalOut {
        method: t.history.method.label(),
        stretching_model: super::model_key(t.model),
        stretching_model_label: t.model.label(),
        heat_flow_basis: THERMAL_HEAT_FLOW_BASIS,
        surface_temperature_source: t.surface_temperature_source.clone(),
        crust_heat_production_uw_m3: t.crust.surface_production_w_m3 * 1e6,
        crust_heat_production_decay_km: t.crust.decay_depth_m / 1e3,
        time_step_myr: t.history.step_myr,
        generic_units: t.generic_units.clone(),
        windows: t.windows.clone(),
        ages: t
            .history
            .snapshots
            .iter()
            .map(|s| ThermalAgeOut {
                age_ma: s.age_ma,
                surface_temperature_c: s.surface_temperature_c,
                basement_heat_flow_mw_m2: s.basal_heat_flow_mw_m2,
                surface_heat_flow_mw_m2: s.surface_heat_flow_mw_m2,
                basement_top_temperature_c: s.basement_top_temperature_c,
            })
            .collect(),
        present_profile: t.history.present_profile.clone(),
        horizons: t
            .history
            .horizons
            .iter()
            .zip(&t.maturity)
            .map(|(h, m)| {
                let last = m.points.last();
                HorizonThermalOut {
                    horizon: h.name.clone(),
                    present_depth_m: today.horizon_depth_m(h.horizon),
                    present_temperature_c: last.map_or(f64::NAN, |p| p.temperature_c),
                    present_ro_percent: last.map_or(f64::NAN, |p| p.ro_percent),
                    windows: m.windows.clone(),
                    path: thinned(m, &restored_ages),
                }
            })
            .collect(),
        caution: THERMAL_CAUTION,
    }
}

/// The points of a %Ro history at least 1 Myr apart, plus every restored age and the
/// last point, so a file stays small whatever the time step.
fn thinned(m: &MaturityHistory, restored_ages: &[f64]) -> Vec<PathPointOut> {
    let mut out: Vec<PathPointOut> = Vec::new();
    let n = m.points.len();
    for (i, p) in m.points.iter().enumerate() {
        let keep = i == 0
            || i + 1 == n
            || restored_ages.contains(&p.age_ma)
            || out
                .last()
                .is_some_and(|l| l.age_ma - p.age_ma >= super::GRID_STEP_MYR - 1e-9);
        if keep {
            out.push(PathPointOut {
                age_ma: p.age_ma,
                temperature_c: p.temperature_c,
                ro_percent: p.ro_percent,
            });
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::{StudyInputs, analyse_well, well_out};
    use crate::column::{LithologyMix, SeaLevelCurve, Surface, WaterDepth};
    use crate::lithology::Catalogue;

    /// A plate in steady state with crustal heat production A(z) = A0 exp(-z / D) for
    /// z < tc, 0 °C on top and T1 at its base a: integrating K T'' = -A twice gives the
    /// heat flow out of its top, q0 = K T1 / a + (1 / a) integral_0^tc (a - z) A(z) dz
    /// (the steady conduction equation with sources, Turcotte & Schubert, Geodynamics,
    /// 2nd ed., section 4-6 \[memory\]); the integral by the `quadrature` crate.
    #[test]
    fn the_unstretched_basement_heat_flow_is_the_steady_plate_with_its_radiogenic_crust() {
        let params = ModelParameters::default();
        let lithosphere = Lithosphere::water_loaded(&params).unwrap();
        let crust = CrustalHeatProduction::TYPICAL_CONTINENTAL;
        let (a, tc) = (
            lithosphere.lithosphere_thickness_m,
            lithosphere.crust_thickness_m,
        );
        let k = lithosphere.thermal_conductivity_w_m_k;
        let integral = quadrature::double_exponential::integrate(
            |z| (a - z) * crust.surface_production_w_m3 * (-z / crust.decay_depth_m).exp(),
            0.0,
            tc,
            1e-12,
        )
        .integral;
        let expected_mw = (k * lithosphere.asthenosphere_temperature_c / a + integral / a) * 1e3;
        let history = quiet_history();
        let flow = basement_heat_flow(&params, &crust, &[], &history).unwrap();
        for (age, q) in &flow {
            assert!(
                (q - expected_mw).abs() < 0.05,
                "{q} mW/m² at {age} Ma, expected {expected_mw}"
            );
        }
        assert_eq!(flow.first().unwrap().0, 100.0);
        assert_eq!(flow.last().unwrap().0, 0.0);
    }

    /// The plate behind the basal heat flow runs coarser than the default plate
    /// resolution; through and after a beta 2 rift the two differ by under 0.5 mW/m²
    /// (the claim of [`HEAT_FLOW_RESOLUTION`]).
    #[test]
    fn the_coarse_plate_gives_the_heat_flow_of_the_fine_one() {
        let params = ModelParameters::default();
        let lithosphere = Lithosphere::water_loaded(&params).unwrap();
        let crust = CrustalHeatProduction::TYPICAL_CONTINENTAL;
        let event = [StretchingEvent::uniform(100.0, 90.0, 2.0)];
        let ages: Vec<f64> = (0..=100).rev().map(f64::from).collect();
        let run = |settings: &NumericalSettings| {
            plate::run_plate(
                &lithosphere,
                &crust,
                &event,
                IsostasyConvention::McKenzie,
                settings,
                &ages,
                false,
            )
            .unwrap()
        };
        let coarse = run(&HEAT_FLOW_RESOLUTION);
        let fine = run(&NumericalSettings::default());
        let worst = coarse
            .states
            .iter()
            .zip(&fine.states)
            .map(|(c, f)| (c.surface_heat_flow_mw_m2 - f.surface_heat_flow_mw_m2).abs())
            .fold(0.0, f64::max);
        assert!(
            worst < 0.5,
            "coarse and fine plates differ by {worst} mW/m²"
        );
        // The rift heats the basin: heat flow at the rift's end well above the start.
        let at = |age: f64| {
            fine.states
                .iter()
                .find(|s| s.age_ma == age)
                .unwrap()
                .surface_heat_flow_mw_m2
        };
        assert!(at(90.0) > at(100.0) + 10.0);
    }

    fn surface(horizon: &str, depth_m: f64, age_ma: f64, below: Option<&str>, wd: f64) -> Surface {
        Surface {
            horizon: horizon.into(),
            depth_m,
            age_ma,
            lithology_below: below.map(LithologyMix::single),
            water_depth: WaterDepth::exact(wd),
            erosion: None,
        }
    }

    fn quiet_well() -> WellColumn {
        WellColumn::new(
            "Test quiet",
            vec![
                surface("Sea floor", 100.0, 0.0, Some("shale"), 100.0),
                surface("Base", 1100.0, 100.0, None, 100.0),
            ],
        )
        .unwrap()
    }

    fn quiet_history() -> WellHistory {
        crate::backstrip::backstrip(
            &quiet_well(),
            &Catalogue::published_defaults(),
            &ModelParameters::default(),
            &SeaLevelCurve::default(),
        )
        .unwrap()
    }

    /// An invented rift-basin well: fast syn-rift fill 150-130 Ma, slow post-rift.
    fn rift_well() -> WellColumn {
        WellColumn::new(
            "Test rift",
            vec![
                surface("Sea floor", 300.0, 0.0, Some("shale"), 300.0),
                surface("Top chalk", 1200.0, 30.0, Some("chalk"), 250.0),
                surface("Top post-rift", 1900.0, 70.0, Some("shale"), 200.0),
                surface("Top syn-rift", 2500.0, 110.0, Some("sandstone"), 150.0),
                surface("Mid syn-rift", 3600.0, 130.0, Some("shale"), 80.0),
                surface("Base syn-rift", 4400.0, 150.0, Some("sandstone"), 20.0),
                surface("Top basement", 4700.0, 170.0, None, 0.0),
            ],
        )
        .unwrap()
    }

    fn inputs() -> StudyInputs {
        StudyInputs {
            params: ModelParameters::default(),
            catalogue: Catalogue::published_defaults(),
            sea_level: SeaLevelCurve::default(),
            thermal: ThermalInputs::default(),
        }
    }

    #[test]
    fn a_rift_well_gets_temperatures_and_maturity_that_grow_with_depth() {
        let well = rift_well();
        let a = analyse_well(&well, &inputs(), None).unwrap();
        let thermal = a.thermal.as_ref().expect("a thermal history");
        let now: Vec<(f64, f64)> = thermal
            .maturity
            .iter()
            .map(|m| {
                let p = m.points.last().unwrap();
                (p.temperature_c, p.ro_percent)
            })
            .collect();
        assert_eq!(now.len(), well.surfaces.len());
        assert!(
            now.windows(2).all(|w| w[1].0 > w[0].0 && w[1].1 >= w[0].1),
            "temperature and %Ro grow with depth: {now:?}"
        );
        // The sea floor is at the surface temperature and fresh.
        assert!((now[0].0 - 10.0).abs() < 1e-9);
        assert!((now[0].1 - maturity::initial_ro_percent()).abs() < 1e-9);
        // The heat flow follows the chosen model: a rift raises it above the end state.
        let flow = &thermal.basement_heat_flow;
        let max = flow.iter().map(|f| f.1).fold(0.0, f64::max);
        assert!(max > flow.last().unwrap().1 + 5.0, "{flow:?}");

        let out = well_out(&a);
        let t = out
            .thermal
            .as_ref()
            .expect("the contract has the thermal part");
        assert!(t.caution.contains("not measurements"));
        assert_eq!(t.horizons.len(), well.surfaces.len());
        assert!(out.thermal_note.is_none());
        // At most one path point a million years, plus the restored ages and the ends.
        let deepest = t.horizons.last().unwrap();
        assert!(deepest.path.len() <= 170 + 7 + 2, "{}", deepest.path.len());
        assert_eq!(deepest.path.last().unwrap().age_ma, 0.0);
        let json = serde_json::to_value(&out).unwrap();
        assert!(json["thermal"]["horizons"][6]["windows"][0]["name"] == "oil");
    }

    #[test]
    fn a_well_without_a_fit_says_why_it_has_no_thermal_history() {
        let results = crate::analysis::backstrip_wells(&[rift_well()], &inputs(), &|| {});
        let out = well_out(results[0].as_ref().unwrap());
        assert!(out.thermal.is_none());
        assert!(out.thermal_note.is_some());
    }
}
