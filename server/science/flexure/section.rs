//! A section: a named line of two or more points in the study's map coordinates, and the
//! wells within a chosen distance of it, projected onto it and ordered by distance along
//! it (docs/science-flexure.md 5). Pure geometry in projected metres.

use crate::ScienceError;
use crate::input::WellLocation;
use serde::{Deserialize, Serialize};

/// A point in the study's projected map coordinates (m).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct MapPoint {
    pub x_m: f64,
    pub y_m: f64,
}

/// A section line: a name and two or more points, in order.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SectionLine {
    pub name: String,
    pub points: Vec<MapPoint>,
}

/// Where a map point falls on a section line.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Projection {
    /// Distance along the line from its first point to the nearest point of the line (m).
    pub distance_m: f64,
    /// Distance from the point to the line (m), positive when the point lies to the left
    /// of the line's direction (walking from its first point to its last), negative to the
    /// right.
    pub offset_m: f64,
}

impl SectionLine {
    /// A line of two or more finite points, no two consecutive ones equal, and a name.
    pub fn new(name: impl Into<String>, points: Vec<MapPoint>) -> Result<Self, ScienceError> {
        let name = name.into();
        let bad = |reason: String| Err(ScienceError::InvalidSection(reason));
        if name.trim().is_empty() {
            return bad("a section needs a name".into());
        }
        if points.len() < 2 {
            return bad(format!(
                "'{name}' has {} point(s); a section needs two or more",
                points.len()
            ));
        }
        if let Some(i) = points
            .iter()
            .position(|p| !(p.x_m.is_finite() && p.y_m.is_finite()))
        {
            return bad(format!(
                "'{name}': point {} is not a finite position",
                i + 1
            ));
        }
        if let Some(i) = points.windows(2).position(|w| w[0] == w[1]) {
            return bad(format!(
                "'{name}': points {} and {} are the same; each segment needs a length",
                i + 1,
                i + 2
            ));
        }
        Ok(SectionLine { name, points })
    }

    /// Total length of the line (m).
    pub fn length_m(&self) -> f64 {
        self.points
            .windows(2)
            .map(|w| (w[1].x_m - w[0].x_m).hypot(w[1].y_m - w[0].y_m))
            .sum()
    }

    /// The nearest point of the line to `point`: its distance along the line and the
    /// signed offset. A point beyond an end projects onto that end (the line is not
    /// extended). On a bend, the first nearest segment wins.
    pub fn project(&self, point: MapPoint) -> Projection {
        let mut along = 0.0;
        let mut best = Projection {
            distance_m: 0.0,
            offset_m: f64::INFINITY,
        };
        for w in self.points.windows(2) {
            let (ax, ay) = (w[0].x_m, w[0].y_m);
            let (dx, dy) = (w[1].x_m - ax, w[1].y_m - ay);
            let length = dx.hypot(dy);
            let (px, py) = (point.x_m - ax, point.y_m - ay);
            let t = ((px * dx + py * dy) / (length * length)).clamp(0.0, 1.0);
            let distance = (px - t * dx).hypot(py - t * dy);
            if distance < best.offset_m.abs() {
                let side = if dx * py - dy * px >= 0.0 { 1.0 } else { -1.0 };
                best = Projection {
                    distance_m: along + t * length,
                    offset_m: side * distance,
                };
            }
            along += length;
        }
        best
    }
}

/// A well on a section.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SectionMember {
    pub well: String,
    pub distance_m: f64,
    pub offset_m: f64,
}

/// The wells of a study sorted against a section line.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SectionWells {
    /// Within the chosen distance, ordered by distance along the line (then by name).
    pub members: Vec<SectionMember>,
    /// Wells farther from the line than the chosen distance, with their offset (m).
    pub too_far: Vec<SectionMember>,
    /// Wells without a projected position (x, y): they cannot be placed on the line.
    pub unplaced: Vec<String>,
}

/// Project `wells` onto `line` and keep those within `max_offset_m` (inclusive) of it.
///
/// Errors: a negative or non-finite `max_offset_m`.
pub fn wells_on_section(
    line: &SectionLine,
    wells: &[WellLocation],
    max_offset_m: f64,
) -> Result<SectionWells, ScienceError> {
    if !(max_offset_m.is_finite() && max_offset_m >= 0.0) {
        return Err(ScienceError::InvalidSection(format!(
            "the distance from the line must be a non-negative number of metres, not {max_offset_m}"
        )));
    }
    let mut result = SectionWells {
        members: Vec::new(),
        too_far: Vec::new(),
        unplaced: Vec::new(),
    };
    for w in wells {
        let (Some(x_m), Some(y_m)) = (w.x, w.y) else {
            result.unplaced.push(w.name.clone());
            continue;
        };
        let p = line.project(MapPoint { x_m, y_m });
        let member = SectionMember {
            well: w.name.clone(),
            distance_m: p.distance_m,
            offset_m: p.offset_m,
        };
        if p.offset_m.abs() <= max_offset_m {
            result.members.push(member);
        } else {
            result.too_far.push(member);
        }
    }
    let order = |a: &SectionMember, b: &SectionMember| {
        a.distance_m
            .total_cmp(&b.distance_m)
            .then_with(|| a.well.cmp(&b.well))
    };
    result.members.sort_by(order);
    result.too_far.sort_by(order);
    Ok(result)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn at(x_m: f64, y_m: f64) -> MapPoint {
        MapPoint { x_m, y_m }
    }

    fn well(name: &str, x: Option<f64>, y: Option<f64>) -> WellLocation {
        WellLocation {
            name: name.into(),
            x,
            y,
            lat: None,
            lon: None,
            notes: String::new(),
        }
    }

    #[test]
    fn a_bent_line_projects_wells_by_distance_along_it() {
        // An L: 3-4-5 geometry by hand. East 30 km, then north 40 km.
        let line = SectionLine::new(
            "Brae line",
            vec![at(0.0, 0.0), at(30e3, 0.0), at(30e3, 40e3)],
        )
        .unwrap();
        assert_eq!(line.length_m(), 70e3);
        let p = line.project(at(10e3, 2e3));
        assert_eq!((p.distance_m, p.offset_m), (10e3, 2e3));
        // Right of the northward leg (east of it): 20 km up it, 30 km along the first.
        let p = line.project(at(31e3, 20e3));
        assert_eq!((p.distance_m, p.offset_m), (50e3, -1e3));
        // Beyond the start: onto the first point, at its straight-line distance.
        let p = line.project(at(-3e3, 4e3));
        assert_eq!((p.distance_m, p.offset_m), (0.0, 5e3));
    }

    #[test]
    fn wells_are_kept_within_the_distance_ordered_and_the_others_listed() {
        let line = SectionLine::new("Tay line", vec![at(0.0, 0.0), at(100e3, 0.0)]).unwrap();
        let wells = [
            well("Far-1", Some(50e3), Some(9e3)),
            well("Mid-2", Some(50e3), Some(-5e3)),
            well("East-3", Some(80e3), Some(1e3)),
            well("Mid-1", Some(50e3), Some(5e3)),
            well("West-4", Some(5e3), Some(0.0)),
            well("Geo-5", None, None),
        ];
        let s = wells_on_section(&line, &wells, 5e3).unwrap();
        let names: Vec<&str> = s.members.iter().map(|m| m.well.as_str()).collect();
        assert_eq!(names, ["West-4", "Mid-1", "Mid-2", "East-3"]);
        assert_eq!(s.members[2].offset_m, -5e3);
        assert_eq!(s.too_far.len(), 1);
        assert_eq!(s.too_far[0].well, "Far-1");
        assert_eq!(s.unplaced, ["Geo-5"]);
        assert!(wells_on_section(&line, &wells, -1.0).is_err());
    }

    #[test]
    fn a_line_needs_two_distinct_points_and_a_name() {
        assert!(SectionLine::new("One", vec![at(0.0, 0.0)]).is_err());
        assert!(SectionLine::new("Same", vec![at(1.0, 1.0), at(1.0, 1.0)]).is_err());
        assert!(SectionLine::new(" ", vec![at(0.0, 0.0), at(1.0, 0.0)]).is_err());
        assert!(SectionLine::new("Nan", vec![at(0.0, f64::NAN), at(1.0, 0.0)]).is_err());
    }
}
