//! The calibration file: measured temperatures, vitrinite reflectance and surface heat
//! flow in wells, against which the thermal model is compared and its heat flow fitted
//! (docs/science-thermal.md 7).

use super::bounds::{DEPTH_M, MAX_NAME_CHARS, MAX_NOTE_CHARS, PhysicalRange};
use super::columns::{ColumnMapping, Columns, FileKind};
use super::problems::{InputProblem, Problems};
use serde::{Deserialize, Serialize};

/// What a calibration point measures.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum CalibrationKind {
    /// Formation temperature, °C (e.g. a corrected bottom-hole temperature).
    Temperature,
    /// Measured vitrinite reflectance, %Ro.
    VitriniteReflectance,
    /// Surface heat flow, mW/m² (depth is where it was measured, for the record).
    SurfaceHeatFlow,
}

impl CalibrationKind {
    /// The words the file may use for each kind (any case).
    fn read(text: &str) -> Option<Self> {
        match text
            .trim()
            .to_ascii_lowercase()
            .replace(['-', ' '], "_")
            .as_str()
        {
            "temperature" | "t" => Some(CalibrationKind::Temperature),
            "vitrinite_reflectance" | "ro" | "%ro" | "vr" => {
                Some(CalibrationKind::VitriniteReflectance)
            }
            "surface_heat_flow" | "heat_flow" | "hf" => Some(CalibrationKind::SurfaceHeatFlow),
            _ => None,
        }
    }

    /// Plain name with its unit.
    pub fn label(self) -> &'static str {
        match self {
            CalibrationKind::Temperature => "temperature (°C)",
            CalibrationKind::VitriniteReflectance => "vitrinite reflectance (%Ro)",
            CalibrationKind::SurfaceHeatFlow => "surface heat flow (mW/m²)",
        }
    }

    /// The admissible values and uncertainties of this kind (common practice, the
    /// physical fact beside each).
    fn ranges(self) -> (PhysicalRange, PhysicalRange) {
        match self {
            CalibrationKind::Temperature => (
                PhysicalRange {
                    quantity: "a temperature",
                    unit: "°C",
                    min: -40.0,
                    max: 400.0,
                    min_exclusive: false,
                    why: "formation temperatures in sedimentary basins lie between frozen ground and about 400 °C",
                },
                PhysicalRange {
                    quantity: "a temperature uncertainty",
                    unit: "°C",
                    min: 0.0,
                    max: 100.0,
                    min_exclusive: true,
                    why: "an uncertainty is positive and smaller than the range of temperatures",
                },
            ),
            CalibrationKind::VitriniteReflectance => (
                PhysicalRange {
                    quantity: "a vitrinite reflectance",
                    unit: "%Ro",
                    min: 0.1,
                    max: 6.0,
                    min_exclusive: false,
                    why: "vitrinite reflectance runs from about 0.2 %Ro in fresh sediment to about 5 %Ro (a fraction instead of a percentage is caught)",
                },
                PhysicalRange {
                    quantity: "a reflectance uncertainty",
                    unit: "%Ro",
                    min: 0.0,
                    max: 3.0,
                    min_exclusive: true,
                    why: "an uncertainty is positive and smaller than the range of reflectances",
                },
            ),
            CalibrationKind::SurfaceHeatFlow => (
                PhysicalRange {
                    quantity: "a surface heat flow",
                    unit: "mW/m²",
                    min: 0.0,
                    max: 300.0,
                    min_exclusive: true,
                    why: "surface heat flows lie between 0 and a few hundred mW/m² (a value in W/m² is caught below 0.3)",
                },
                PhysicalRange {
                    quantity: "a heat-flow uncertainty",
                    unit: "mW/m²",
                    min: 0.0,
                    max: 100.0,
                    min_exclusive: true,
                    why: "an uncertainty is positive and smaller than the range of heat flows",
                },
            ),
        }
    }
}

/// One measured value in a well.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CalibrationPoint {
    pub well: String,
    /// Depth on the datum of the tops file (m below present sea level).
    pub depth_m: f64,
    pub kind: CalibrationKind,
    pub value: f64,
    /// One standard deviation, in the unit of the value.
    pub uncertainty: f64,
    pub note: String,
    /// The line of the file it was read from.
    pub line: usize,
}

/// Read a calibration file: `well`, `depth_m`, `kind` (temperature, vitrinite
/// reflectance or surface heat flow), `value`, `uncertainty` and optionally `note`;
/// every value within the physical range of its kind, names and notes bounded. Nothing
/// is returned when any row has a problem; every problem is reported with its line,
/// column and reason.
pub fn parse_calibration(bytes: &[u8]) -> Result<Vec<CalibrationPoint>, Vec<InputProblem>> {
    let (table, columns, mut problems) = Columns::open(
        bytes,
        FileKind::Calibration,
        &ColumnMapping::new(),
        Problems::new(FileKind::Calibration.default_file_name()),
    )?;
    let (well, depth, kind, value, uncertainty, note) = (
        columns.field("well"),
        columns.field("depth_m"),
        columns.field("kind"),
        columns.field("value"),
        columns.field("uncertainty"),
        columns.field("note"),
    );
    let mut points = Vec::with_capacity(table.rows.len());
    for row in table.rows.iter().filter(|r| r.complete) {
        let name = well
            .required_text(row, &mut problems)
            .and_then(|_| well.bounded_text(row, &mut problems, "the well name", MAX_NAME_CHARS));
        let depth_m = depth
            .required_number(row, &mut problems)
            .and_then(|d| depth.within(row, &mut problems, d, &DEPTH_M, None));
        let what = kind.required_text(row, &mut problems).and_then(|t| {
            let k = CalibrationKind::read(t);
            if k.is_none() {
                kind.problem(
                    row,
                    &mut problems,
                    format!("\"{t}\" is not a kind of calibration data: use temperature, vitrinite_reflectance or surface_heat_flow"),
                );
            }
            k
        });
        let text = if note.is_present() {
            note.bounded_text(row, &mut problems, "the note", MAX_NOTE_CHARS)
                .unwrap_or_default()
        } else {
            ""
        };
        let Some(what) = what else { continue };
        let (value_range, sigma_range) = what.ranges();
        let v = value
            .required_number(row, &mut problems)
            .and_then(|v| value.within(row, &mut problems, v, &value_range, None));
        let s = uncertainty
            .required_number(row, &mut problems)
            .and_then(|s| uncertainty.within(row, &mut problems, s, &sigma_range, None));
        if let (Some(name), Some(depth_m), Some(v), Some(s)) = (name, depth_m, v, s) {
            points.push(CalibrationPoint {
                well: name.to_string(),
                depth_m,
                kind: what,
                value: v,
                uncertainty: s,
                note: text.to_string(),
                line: row.line,
            });
        }
    }
    problems.result(points)
}

#[cfg(test)]
mod tests {
    use super::*;

    const GOOD: &str = "well,depth_m,kind,value,uncertainty,note\n\
        Test-1,2500,temperature,95,3,corrected BHT\n\
        Test-1,3000,vitrinite_reflectance,0.8,0.08,\n\
        Test-1,0,surface_heat_flow,62,6,probe\n";

    #[test]
    fn a_sound_file_reads_every_point_with_its_kind() {
        let points = parse_calibration(GOOD.as_bytes()).unwrap();
        assert_eq!(points.len(), 3);
        assert_eq!(points[0].kind, CalibrationKind::Temperature);
        assert_eq!(points[0].note, "corrected BHT");
        assert_eq!(points[1].kind, CalibrationKind::VitriniteReflectance);
        assert_eq!(points[2].line, 4);
    }

    #[test]
    fn impossible_values_are_refused_with_line_column_and_reason() {
        let bad = "well,depth_m,kind,value,uncertainty\n\
            Test-1,2500,temperature,368,3\n\
            Test-1,2500,temperature,95,0\n\
            Test-1,3000,vitrinite_reflectance,0.008,0.001\n\
            Test-1,3000,porosity,0.2,0.01\n\
            Test-1,1e9,temperature,95,3\n";
        let problems = parse_calibration(bad.as_bytes()).unwrap_err();
        let text: Vec<String> = problems.iter().map(|p| p.to_string()).collect();
        // A temperature of 368 °C is possible (below 400): only the others are refused.
        assert!(!text.iter().any(|t| t.contains("line 2")), "{text:?}");
        for (line, column, words) in [
            (3, "uncertainty", "uncertainty"),
            (4, "value", "reflectance"),
            (5, "kind", "porosity"),
            (6, "depth_m", "depth"),
        ] {
            assert!(
                problems.iter().any(|p| p.line == Some(line)
                    && p.column.as_deref() == Some(column)
                    && p.reason.contains(words)),
                "line {line} {column}: {text:?}"
            );
        }
    }

    #[test]
    fn a_missing_column_is_named() {
        let problems = parse_calibration(b"well,depth_m,value\nTest-1,100,20\n").unwrap_err();
        assert!(
            problems.iter().any(|p| p.reason.contains("kind")),
            "{problems:?}"
        );
    }
}
