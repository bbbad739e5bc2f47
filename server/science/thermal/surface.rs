//! The surface (sea-floor) temperature through time (docs/science-thermal.md 5).

use crate::ScienceError;
use serde::{Deserialize, Serialize};

/// The usual mean annual surface temperature when a study has set none: 10 °C
/// (a temperate value, common practice \[assumed\]; a batch run can set its own in its parameters file).
pub const DEFAULT_SURFACE_TEMPERATURE_C: f64 = 10.0;

/// The surface (or sea-floor) temperature through time: one value, or a curve by age
/// (linear between points, constant beyond the ends).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SurfaceTemperature {
    /// (age in Ma, °C), oldest first; one point for a constant.
    points: Vec<(f64, f64)>,
    /// Where the values come from.
    pub source: String,
}

impl SurfaceTemperature {
    /// One temperature at every age.
    ///
    /// Errors: a temperature outside -40 to 60 °C or not finite.
    pub fn constant(temperature_c: f64, source: impl Into<String>) -> Result<Self, ScienceError> {
        Self::by_age(vec![(0.0, temperature_c)], source)
    }

    /// The default: [`DEFAULT_SURFACE_TEMPERATURE_C`], marked as assumed.
    pub fn default_assumed() -> Self {
        SurfaceTemperature {
            points: vec![(0.0, DEFAULT_SURFACE_TEMPERATURE_C)],
            source: "10 °C at every age, a typical value [assumed]".into(),
        }
    }

    /// A curve by age; the points are sorted oldest first.
    ///
    /// Errors: no point; an age outside 0 to 4,600 Ma; a temperature outside -40 to
    /// 60 °C (Earth's surface; a value in kelvin or °F is caught); two points at one age.
    pub fn by_age(
        mut points: Vec<(f64, f64)>,
        source: impl Into<String>,
    ) -> Result<Self, ScienceError> {
        if points.is_empty() || points.len() > 10_000 {
            return Err(ScienceError::OutOfRange {
                name: "number of surface-temperature points",
                value: points.len() as f64,
                range: "1 to 10000",
            });
        }
        for &(age, t) in &points {
            if !(age.is_finite() && (0.0..=4600.0).contains(&age)) {
                return Err(ScienceError::OutOfRange {
                    name: "age of a surface temperature (Ma)",
                    value: age,
                    range: "0 to 4600 Ma",
                });
            }
            if !(t.is_finite() && (-40.0..=60.0).contains(&t)) {
                return Err(ScienceError::OutOfRange {
                    name: "surface temperature (°C)",
                    value: t,
                    range: "-40 to 60 °C",
                });
            }
        }
        points.sort_by(|a, b| b.0.total_cmp(&a.0));
        if points.windows(2).any(|p| p[0].0 == p[1].0) {
            return Err(ScienceError::OutOfRange {
                name: "age given twice in the surface temperatures (Ma)",
                value: points.windows(2).find(|p| p[0].0 == p[1].0).unwrap()[0].0,
                range: "one temperature per age",
            });
        }
        Ok(SurfaceTemperature {
            points,
            source: source.into(),
        })
    }

    /// The points, (age Ma, °C), oldest first.
    pub fn points(&self) -> &[(f64, f64)] {
        &self.points
    }

    /// The temperature at `age_ma` (°C).
    pub fn at(&self, age_ma: f64) -> f64 {
        piecewise_linear_by_age(&self.points, age_ma)
    }
}

/// Linear interpolation in a series ordered oldest first, constant beyond its ends.
pub(super) fn piecewise_linear_by_age(points: &[(f64, f64)], age_ma: f64) -> f64 {
    let (first, last) = (points[0], points[points.len() - 1]);
    if age_ma >= first.0 {
        return first.1;
    }
    if age_ma <= last.0 {
        return last.1;
    }
    // First point younger than the age.
    let i = points.partition_point(|p| p.0 >= age_ma);
    let (older, younger) = (points[i - 1], points[i]);
    let s = (older.0 - age_ma) / (older.0 - younger.0);
    older.1 + s * (younger.1 - older.1)
}
