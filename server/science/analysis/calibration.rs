//! A well's thermal model against its measured temperatures, vitrinite reflectance and
//! surface heat flow, and the basal heat-flow offset that fits them best
//! (docs/science-thermal.md 7).

use super::thermal::{ThermalInputs, WellThermal, unit_properties};
use crate::backstrip::WellHistory;
use crate::input::{CalibrationKind, CalibrationPoint};
use crate::search1d;
use crate::thermal::{self, ThermalHistory};
use crate::{ScienceError, WellColumn};
use serde::Serialize;

/// Offsets searched, mW/m² (wide enough for any basin's departure from a plate model,
/// narrow enough that the search stays on physical heat flows).
pub const OFFSET_SEARCH_MW_M2: (f64, f64) = (-60.0, 100.0);

/// One measured point beside the model.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CalibrationResidual {
    /// Line of the calibration file.
    pub line: usize,
    pub kind: CalibrationKind,
    /// Depth on the tops' datum, m.
    pub depth_m: f64,
    pub measured: f64,
    pub uncertainty: f64,
    /// The model's value at the point, when the model reaches it.
    pub modelled: Option<f64>,
    /// (modelled - measured) / uncertainty.
    pub normalised_residual: Option<f64>,
    /// Why there is no modelled value, or the file's note.
    pub note: String,
}

/// How well a model fits a well's points.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CalibrationMisfit {
    pub residuals: Vec<CalibrationResidual>,
    /// Points the model reaches.
    pub points_used: usize,
    /// Sum of squared normalised residuals.
    pub chi_square: f64,
    /// chi-square per point used (about 1 for a model that fits within the uncertainties).
    pub reduced_chi_square: Option<f64>,
}

/// The basal heat-flow offset that fits the points best: a proposal for the team.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct HeatFlowProposal {
    /// Added to the stretching model's basement heat flow at every age, mW/m².
    pub offset_mw_m2: f64,
    /// Offsets within one standard deviation (chi-square + 1, times the reduced
    /// chi-square when the points scatter more than their uncertainties say).
    pub offset_min_mw_m2: f64,
    pub offset_max_mw_m2: f64,
    /// The basement heat flow today with the offset, mW/m².
    pub basement_heat_flow_today_mw_m2: f64,
    /// The misfit with the offset.
    pub fitted: CalibrationMisfit,
    /// What the analyst should know (few points, a range hitting the search bounds).
    pub warnings: Vec<String>,
}

/// The calibration of one well.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WellCalibration {
    /// The model as it stands.
    pub current: CalibrationMisfit,
    /// The offset fit; `None` when no point is reached by the model.
    pub proposal: Option<HeatFlowProposal>,
}

/// The model's value at each point (docs/science-thermal.md 7): temperature from
/// today's profile (linear between nodes), %Ro between the horizons' present values
/// (linear in ln %Ro with depth, the usual near-exponential growth), surface heat flow
/// today. Depths are on the tops' datum; the column starts at `top_depth_m`.
pub fn misfit(
    points: &[&CalibrationPoint],
    thermal: &ThermalHistory,
    maturity_today: &[(f64, f64)],
    top_depth_m: f64,
) -> CalibrationMisfit {
    let profile = &thermal.present_profile;
    let mut residuals = Vec::with_capacity(points.len());
    let (mut chi_square, mut used) = (0.0, 0);
    for p in points {
        let z = p.depth_m - top_depth_m;
        let modelled: Result<f64, &str> = match p.kind {
            CalibrationKind::SurfaceHeatFlow => thermal
                .snapshots
                .last()
                .map(|s| s.surface_heat_flow_mw_m2)
                .ok_or("no model today"),
            _ if z < 0.0 => Err("above the top of the column"),
            CalibrationKind::Temperature => {
                interpolate(profile.iter().map(|d| (d.depth_m, d.temperature_c)), z)
                    .ok_or("below the modelled column")
            }
            CalibrationKind::VitriniteReflectance => {
                interpolate(maturity_today.iter().map(|&(d, ro)| (d, ro.ln())), z)
                    .map(f64::exp)
                    .ok_or("below the deepest horizon")
            }
        };
        let (modelled, normalised, note) = match modelled {
            Ok(m) => {
                let r = (m - p.value) / p.uncertainty;
                chi_square += r * r;
                used += 1;
                (Some(m), Some(r), p.note.clone())
            }
            Err(why) => (None, None, format!("not compared: {why}")),
        };
        residuals.push(CalibrationResidual {
            line: p.line,
            kind: p.kind,
            depth_m: p.depth_m,
            measured: p.value,
            uncertainty: p.uncertainty,
            modelled,
            normalised_residual: normalised,
            note,
        });
    }
    CalibrationMisfit {
        residuals,
        points_used: used,
        chi_square,
        reduced_chi_square: (used > 0).then(|| chi_square / used as f64),
    }
}

/// Linear interpolation in (x, y) points of increasing x; `None` outside them.
fn interpolate(points: impl Iterator<Item = (f64, f64)>, x: f64) -> Option<f64> {
    let pts: Vec<(f64, f64)> = points.collect();
    let first = pts.first()?;
    if x < first.0 {
        return None;
    }
    if pts.len() == 1 {
        return (x == first.0).then_some(first.1);
    }
    let i = pts.partition_point(|p| p.0 < x);
    if i == 0 {
        return Some(first.1);
    }
    let (a, b) = (pts[i - 1], *pts.get(i)?);
    if b.0 == a.0 {
        return Some(b.1);
    }
    Some(a.1 + (x - a.0) * (b.1 - a.1) / (b.0 - a.0))
}

/// Each horizon's (depth below the top of the column today, %Ro today), by depth.
fn maturity_today(t: &WellThermal, history: &WellHistory) -> Vec<(f64, f64)> {
    let today = &history.steps[history.steps.len() - 1];
    let mut out: Vec<(f64, f64)> = t
        .history
        .horizons
        .iter()
        .zip(&t.maturity)
        .filter_map(|(h, m)| {
            Some((
                today.horizon_depth_m(h.horizon)?,
                m.points.last()?.ro_percent,
            ))
        })
        .collect();
    out.sort_by(|a, b| a.0.total_cmp(&b.0));
    out
}

/// Compare a well's thermal model with its points, and fit a basal heat-flow offset
/// (one parameter, added to the basement heat flow at every age) by Brent's method on
/// chi-square over [`OFFSET_SEARCH_MW_M2`]; each trial reruns the temperature history
/// (and the maturity when there are %Ro points).
///
/// Errors: those of the thermal history (not expected for a well that already has one).
pub fn calibrate_well(
    well: &WellColumn,
    history: &WellHistory,
    thermal: &WellThermal,
    inputs: &ThermalInputs,
    points: &[CalibrationPoint],
) -> Result<WellCalibration, ScienceError> {
    let mine: Vec<&CalibrationPoint> = points.iter().filter(|p| p.well == well.name).collect();
    let top = well.surfaces[0].depth_m;
    let current = misfit(
        &mine,
        &thermal.history,
        &maturity_today(thermal, history),
        top,
    );
    if current.points_used == 0 {
        return Ok(WellCalibration {
            current,
            proposal: None,
        });
    }
    let (properties, _) = unit_properties(well, &inputs.catalogue)?;
    let wants_maturity = mine
        .iter()
        .any(|p| p.kind == CalibrationKind::VitriniteReflectance);
    let lowest = thermal
        .basement_heat_flow
        .iter()
        .map(|f| f.1)
        .fold(f64::INFINITY, f64::min);
    // Keep every heat flow positive.
    let lo = OFFSET_SEARCH_MW_M2.0.max(1.0 - lowest);
    let hi = OFFSET_SEARCH_MW_M2.1;
    let run = |offset: f64| -> Result<CalibrationMisfit, ScienceError> {
        let flow: Vec<(f64, f64)> = thermal
            .basement_heat_flow
            .iter()
            .map(|&(a, q)| (a, q + offset))
            .collect();
        let h = thermal::temperature_history(history, &properties, &flow, &inputs.settings)?;
        let maturity = if wants_maturity {
            thermal::horizon_maturity(&h, &inputs.windows)?
        } else {
            Vec::new()
        };
        let trial = WellThermal {
            history: h,
            maturity,
            basement_heat_flow: flow,
            ..thermal.clone()
        };
        Ok(misfit(
            &mine,
            &trial.history,
            &maturity_today(&trial, history),
            top,
        ))
    };
    let chi2 = |offset: f64| run(offset).map_or(f64::INFINITY, |m| m.chi_square);
    let (best, best_chi2) = search1d::scan_then_minimise(chi2, lo, hi, 17, 0.05);
    let fitted = run(best)?;
    // One standard deviation: chi-square rises by 1 (scaled by the reduced chi-square
    // when the points scatter more than their uncertainties allow).
    let scale = fitted
        .reduced_chi_square
        .filter(|&r| r > 1.0 && fitted.points_used > 1)
        .unwrap_or(1.0);
    let target = best_chi2 + scale;
    let bound = |edge: f64| {
        search1d::bisect_root(|x| chi2(x) - target, best.min(edge), best.max(edge), 0.05)
    };
    let mut warnings = Vec::new();
    let offset_min = bound(lo).unwrap_or_else(|| {
        warnings.push(format!(
            "the low end of the heat-flow range reaches the search bound ({lo:.0} mW/m²): the points do not constrain it"
        ));
        lo
    });
    let offset_max = bound(hi).unwrap_or_else(|| {
        warnings.push(format!(
            "the high end of the heat-flow range reaches the search bound ({hi:.0} mW/m²): the points do not constrain it"
        ));
        hi
    });
    if fitted.points_used < 3 {
        warnings.push(format!(
            "only {} point(s) constrain the fit: treat the offset as a first guess",
            fitted.points_used
        ));
    }
    if let Some(r) = fitted.reduced_chi_square
        && r > 4.0
    {
        warnings.push(format!(
            "even the best offset misfits the points (reduced chi-square {r:.1}): the heat-flow history or the conductivities may be wrong in shape, not only in level"
        ));
    }
    let today = thermal.basement_heat_flow.last().map_or(f64::NAN, |f| f.1);
    Ok(WellCalibration {
        current,
        proposal: Some(HeatFlowProposal {
            offset_mw_m2: best,
            offset_min_mw_m2: offset_min,
            offset_max_mw_m2: offset_max,
            basement_heat_flow_today_mw_m2: today + best,
            fitted,
            warnings,
        }),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ModelParameters;
    use crate::analysis::thermal::{WellThermal, basement_heat_flow};
    use crate::backstrip::backstrip;
    use crate::column::{LithologyMix, SeaLevelCurve, Surface, WaterDepth};
    use crate::lithology::{Catalogue, Lithology};
    use crate::numerical_lithosphere::CrustalHeatProduction;
    use crate::phases::StretchingModel;
    use crate::thermal::{ThermalCatalogue, ThermalProperties};

    fn surface(horizon: &str, depth_m: f64, age_ma: f64, below: Option<&str>) -> Surface {
        Surface {
            horizon: horizon.into(),
            depth_m,
            age_ma,
            lithology_below: below.map(LithologyMix::single),
            water_depth: WaterDepth::exact(0.0),
            erosion: None,
        }
    }

    /// A column of a non-porous rock (k = 2.5 W/m/K, no heat production) laid down
    /// 200-180 Ma and quiet since, so today it is in steady state.
    fn quiet_well() -> (WellColumn, WellHistory, ThermalInputs) {
        let well = WellColumn::new(
            "Test calibration",
            vec![
                surface("Sea floor", 0.0, 0.0, Some("tight")),
                surface("Hiatus", 0.0, 180.0, Some("tight")),
                surface("Base", 4000.0, 200.0, None),
            ],
        )
        .unwrap();
        let catalogue =
            Catalogue::new(vec![Lithology::new("tight", 0.0, 0.5, 2650.0).unwrap()]).unwrap();
        let history = backstrip(
            &well,
            &catalogue,
            &ModelParameters::default(),
            &SeaLevelCurve::default(),
        )
        .unwrap();
        let inputs = ThermalInputs {
            catalogue: ThermalCatalogue::new(vec![(
                "tight".into(),
                ThermalProperties {
                    matrix_conductivity_w_m_k: 2.5,
                    heat_production_uw_m3: 0.0,
                    specific_heat_j_kg_k: 850.0,
                    source: "test value".into(),
                },
            )])
            .unwrap(),
            ..ThermalInputs::default()
        };
        (well, history, inputs)
    }

    fn thermal_of(well: &WellColumn, history: &WellHistory, inputs: &ThermalInputs) -> WellThermal {
        let flow = basement_heat_flow(
            &ModelParameters::default(),
            &CrustalHeatProduction::TYPICAL_CONTINENTAL,
            &[],
            history,
        )
        .unwrap();
        let (props, generic_units) = unit_properties(well, &inputs.catalogue).unwrap();
        let h = thermal::temperature_history(history, &props, &flow, &inputs.settings).unwrap();
        let maturity = thermal::horizon_maturity(&h, &inputs.windows).unwrap();
        WellThermal {
            history: h,
            maturity,
            basement_heat_flow: flow,
            model: StretchingModel::NoRift,
            generic_units,
            surface_temperature_source: inputs.settings.surface.source.clone(),
            crust: inputs.crust,
            windows: inputs.windows.clone(),
        }
    }

    fn point(
        depth_m: f64,
        kind: CalibrationKind,
        value: f64,
        uncertainty: f64,
    ) -> CalibrationPoint {
        CalibrationPoint {
            well: "Test calibration".into(),
            depth_m,
            kind,
            value,
            uncertainty,
            note: String::new(),
            line: 2,
        }
    }

    /// Temperatures measured in a steady column with a true basal heat flow of
    /// 70 mW/m² follow T = 10 + 0.070 z / 2.5 (Fourier's law; the truth is this closed
    /// form, not the model), here with a fixed scatter of up to 1.5 °C (sigma 2 °C).
    /// The plate model alone gives about 48 mW/m²; the fitted offset must bring it to
    /// 70 within its stated range.
    #[test]
    fn the_offset_fit_recovers_a_known_heat_flow_within_its_range() {
        let (well, history, inputs) = quiet_well();
        let thermal = thermal_of(&well, &history, &inputs);
        let truth = 70.0;
        let scatter = [1.2, -0.8, 1.5, -1.4, 0.3];
        let points: Vec<CalibrationPoint> = [800.0, 1600.0, 2400.0, 3200.0, 3900.0]
            .iter()
            .zip(scatter)
            .map(|(&z, e)| {
                point(
                    z,
                    CalibrationKind::Temperature,
                    10.0 + truth * 1e-3 * z / 2.5 + e,
                    2.0,
                )
            })
            .collect();
        let c = calibrate_well(&well, &history, &thermal, &inputs, &points).unwrap();
        assert_eq!(c.current.points_used, 5);
        assert!(
            c.current.reduced_chi_square.unwrap() > 10.0,
            "the uncalibrated model should misfit: {:?}",
            c.current.reduced_chi_square
        );
        let p = c.proposal.expect("a proposal");
        let today = thermal.basement_heat_flow.last().unwrap().1;
        let (low, high) = (today + p.offset_min_mw_m2, today + p.offset_max_mw_m2);
        assert!(
            low <= truth && truth <= high,
            "truth {truth} outside the fitted range {low:.2}-{high:.2} (best {:.2})",
            p.basement_heat_flow_today_mw_m2
        );
        assert!((p.basement_heat_flow_today_mw_m2 - truth).abs() < 1.5);
        assert!(
            high - low < 3.0,
            "a range of {:.2} mW/m² is too loose",
            high - low
        );
        assert!(p.fitted.reduced_chi_square.unwrap() < 1.0);
        assert!(p.warnings.is_empty(), "{:?}", p.warnings);
    }

    #[test]
    fn points_the_model_does_not_reach_are_listed_with_the_reason() {
        let (well, history, inputs) = quiet_well();
        let thermal = thermal_of(&well, &history, &inputs);
        let points = [
            point(-50.0, CalibrationKind::Temperature, 12.0, 2.0),
            point(9000.0, CalibrationKind::VitriniteReflectance, 2.0, 0.2),
        ];
        let c = calibrate_well(&well, &history, &thermal, &inputs, &points).unwrap();
        assert_eq!(c.current.points_used, 0);
        assert!(c.proposal.is_none());
        assert!(c.current.residuals[0].note.contains("above the top"));
        assert!(
            c.current.residuals[1]
                .note
                .contains("below the deepest horizon")
        );
    }

    #[test]
    fn a_single_heat_flow_point_gives_a_warned_proposal() {
        let (well, history, inputs) = quiet_well();
        let thermal = thermal_of(&well, &history, &inputs);
        let points = [point(0.0, CalibrationKind::SurfaceHeatFlow, 60.0, 5.0)];
        let c = calibrate_well(&well, &history, &thermal, &inputs, &points).unwrap();
        let p = c.proposal.unwrap();
        // In steady state with no heat production the surface flow is the basal flow.
        assert!(
            (p.basement_heat_flow_today_mw_m2 - 60.0).abs() < 0.5,
            "{p:?}"
        );
        assert!(p.warnings.iter().any(|w| w.contains("only 1 point")));
    }

    #[test]
    fn interpolation_stays_inside_its_points() {
        let pts = [(0.0, 0.0), (10.0, 100.0)];
        assert_eq!(interpolate(pts.into_iter(), 2.5), Some(25.0));
        assert_eq!(interpolate(pts.into_iter(), 10.0), Some(100.0));
        assert_eq!(interpolate(pts.into_iter(), 11.0), None);
        assert_eq!(interpolate(pts.into_iter(), -1.0), None);
    }
}
