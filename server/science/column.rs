//! The validated description of one well: its surfaces (formation tops), the unit
//! below each, palaeo-water depths and erosion, plus the study's sea-level curve.
//!
//! These types are what the CSV parser (`crate::input`) produces and what the
//! science core consumes. Constructors check the invariants the science relies on,
//! so a `WellColumn` that exists can be analysed.

use super::ScienceError;
use serde::{Deserialize, Serialize};

/// A value with its lower bound, best estimate and upper bound.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Bounds {
    pub min: f64,
    pub best: f64,
    pub max: f64,
}

impl Bounds {
    /// All three equal.
    pub fn exact(value: f64) -> Self {
        Bounds {
            min: value,
            best: value,
            max: value,
        }
    }
}

/// Palaeo-water depth range when a surface was the depositional surface (m).
/// Negative values are land elevation above sea level. `best` is the middle.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct WaterDepth {
    pub min_m: f64,
    pub max_m: f64,
}

impl WaterDepth {
    pub fn new(min_m: f64, max_m: f64) -> Result<Self, ScienceError> {
        if !min_m.is_finite() || !max_m.is_finite() || min_m > max_m {
            return Err(ScienceError::OutOfRange {
                name: "water depth range",
                value: min_m,
                range: "finite, with min <= max",
            });
        }
        Ok(WaterDepth { min_m, max_m })
    }

    pub fn exact(depth_m: f64) -> Self {
        WaterDepth {
            min_m: depth_m,
            max_m: depth_m,
        }
    }

    /// The best estimate: the middle of the range (PRODUCT.md).
    pub fn best_m(&self) -> f64 {
        0.5 * (self.min_m + self.max_m)
    }

    pub fn bounds(&self) -> Bounds {
        Bounds {
            min: self.min_m,
            best: self.best_m(),
            max: self.max_m,
        }
    }
}

/// One part of a lithology mix: a catalogue name and its fraction (0..=1).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct MixPart {
    pub lithology: String,
    pub fraction: f64,
}

/// The lithology of a unit: one catalogue name, or a mix such as `shale:60;sandstone:40`.
/// Names are resolved against the study's catalogue at analysis time.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LithologyMix {
    pub parts: Vec<MixPart>,
}

impl LithologyMix {
    pub fn single(name: impl Into<String>) -> Self {
        LithologyMix {
            parts: vec![MixPart {
                lithology: name.into(),
                fraction: 1.0,
            }],
        }
    }

    /// The text form used in the tops CSV and in the store: `shale` or
    /// `shale:60;sandstone:40` (the same as `to_string()`; read back with `parse()`).
    pub fn label(&self) -> String {
        self.to_string()
    }
}

impl std::fmt::Display for LithologyMix {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        if let [only] = self.parts.as_slice() {
            return f.write_str(&only.lithology);
        }
        for (i, p) in self.parts.iter().enumerate() {
            if i > 0 {
                f.write_str(";")?;
            }
            write!(f, "{}:{}", p.lithology, trim_number(p.fraction * 100.0))?;
        }
        Ok(())
    }
}

/// How far a mix's percentages may sum from 100 (percentage points).
pub const MIX_SUM_TOLERANCE_PERCENT: f64 = 0.01;

/// Why a lithology text is not a mix, in words that say how to write one.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{0}")]
pub struct MixSyntaxError(pub String);

/// The one reader of the lithology text form: one name (`shale`), or parts
/// `name:percent` separated by `;` (a `%` after the number is allowed) whose
/// percentages sum to 100 within [`MIX_SUM_TOLERANCE_PERCENT`]. Names are kept as
/// written (matching them to a catalogue is the caller's business); fractions are
/// the percentages divided by their sum, so they sum to 1.
impl std::str::FromStr for LithologyMix {
    type Err = MixSyntaxError;

    fn from_str(text: &str) -> Result<Self, Self::Err> {
        let err = |m: String| Err(MixSyntaxError(m));
        let text = text.trim();
        if !text.contains([':', ';']) {
            if text.is_empty() {
                return err("the lithology is empty".into());
            }
            return Ok(LithologyMix::single(text));
        }
        let shape = "write name:percent parts separated by ';', e.g. shale:60;sandstone:40";
        let mut parts: Vec<(&str, f64)> = Vec::new();
        for part in text.split(';').map(str::trim).filter(|p| !p.is_empty()) {
            let Some((name, percent)) = part.split_once(':') else {
                return err(format!(
                    "\"{text}\": the part \"{part}\" has no percentage; {shape}"
                ));
            };
            let name = name.trim();
            if name.is_empty() {
                return err(format!(
                    "\"{text}\": the part \"{part}\" has no lithology name; {shape}"
                ));
            }
            let percent_text = percent.trim().trim_end_matches('%').trim_end();
            let percent = match percent_text.parse::<f64>() {
                Ok(p) if p.is_finite() && p > 0.0 && p <= 100.0 => p,
                _ => {
                    return err(format!(
                        "\"{text}\": the percentage of {name} must be a number above 0 and at most 100, not \"{}\"",
                        percent.trim()
                    ));
                }
            };
            if parts.iter().any(|(n, _)| n.eq_ignore_ascii_case(name)) {
                return err(format!("\"{text}\": {name} appears twice in the mix"));
            }
            parts.push((name, percent));
        }
        if parts.is_empty() {
            return err(format!("\"{text}\" names no lithology; {shape}"));
        }
        let sum: f64 = parts.iter().map(|(_, p)| p).sum();
        // The slack keeps a sum that is off by exactly the tolerance as printed
        // (33.33 x 3 = 99.99) from failing on binary rounding.
        if (sum - 100.0).abs() > MIX_SUM_TOLERANCE_PERCENT + 1e-9 {
            return err(format!(
                "the mix percentages in \"{text}\" sum to {}, not 100",
                trim_number(sum)
            ));
        }
        Ok(LithologyMix {
            parts: parts
                .into_iter()
                .map(|(name, percent)| MixPart {
                    lithology: name.to_string(),
                    fraction: percent / sum,
                })
                .collect(),
        })
    }
}

fn trim_number(x: f64) -> String {
    let s = format!("{x:.4}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// An erosional unconformity recorded on the surface just below it (PRODUCT.md):
/// a section of the unit-below's lithology was laid down on this surface from its
/// age until `eroded_at_ma`, reaching `eroded_m`, then removed before the next
/// shallower surface's age.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Erosion {
    pub eroded_m: f64,
    pub eroded_at_ma: f64,
}

/// One formation top.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Surface {
    pub horizon: String,
    /// Depth below present sea level, positive down (m). Negative = above sea level.
    pub depth_m: f64,
    /// Age in Ma.
    pub age_ma: f64,
    /// The unit between this surface and the next deeper one; `None` on the deepest.
    pub lithology_below: Option<LithologyMix>,
    /// Palaeo-water depth when this surface was the depositional surface.
    pub water_depth: WaterDepth,
    pub erosion: Option<Erosion>,
}

/// A well's column of surfaces, shallowest (youngest) first.
///
/// Invariants (checked by [`WellColumn::new`]): at least two surfaces; depths
/// non-decreasing and ages strictly increasing downwards; unique horizon names;
/// every surface but the deepest has a lithology below it; all numbers finite;
/// erosion thickness positive and `eroded_at_ma` between this surface's age and
/// the next shallower surface's age.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct WellColumn {
    pub name: String,
    pub surfaces: Vec<Surface>,
}

impl WellColumn {
    pub fn new(name: impl Into<String>, surfaces: Vec<Surface>) -> Result<Self, ScienceError> {
        let name = name.into();
        let bad = |reason: String| ScienceError::InvalidColumn {
            well: name.clone(),
            reason,
        };
        if surfaces.len() < 2 {
            return Err(bad(format!(
                "has {} surface(s); at least two are needed to define a unit",
                surfaces.len()
            )));
        }
        for (i, s) in surfaces.iter().enumerate() {
            if !s.depth_m.is_finite() || !s.age_ma.is_finite() || s.age_ma < 0.0 {
                return Err(bad(format!(
                    "surface '{}' needs a finite depth and a non-negative age",
                    s.horizon
                )));
            }
            if surfaces[..i].iter().any(|o| o.horizon == s.horizon) {
                return Err(bad(format!("horizon '{}' appears twice", s.horizon)));
            }
            let deepest = i + 1 == surfaces.len();
            if !deepest && s.lithology_below.is_none() {
                return Err(bad(format!(
                    "surface '{}' needs the lithology of the unit below it",
                    s.horizon
                )));
            }
            if i > 0 {
                let above = &surfaces[i - 1];
                if s.depth_m < above.depth_m {
                    return Err(bad(format!(
                        "surface '{}' ({} m) is shallower than '{}' above it ({} m)",
                        s.horizon, s.depth_m, above.horizon, above.depth_m
                    )));
                }
                if s.age_ma <= above.age_ma {
                    return Err(bad(format!(
                        "surface '{}' ({} Ma) is not older than '{}' above it ({} Ma)",
                        s.horizon, s.age_ma, above.horizon, above.age_ma
                    )));
                }
            }
            if let Some(e) = s.erosion {
                if !(e.eroded_m.is_finite() && e.eroded_m > 0.0) {
                    return Err(bad(format!(
                        "surface '{}': eroded thickness must be positive",
                        s.horizon
                    )));
                }
                if i == 0 {
                    return Err(bad(format!(
                        "surface '{}' is the present surface and cannot lie below an unconformity",
                        s.horizon
                    )));
                }
                if deepest {
                    return Err(bad(format!(
                        "surface '{}' is the deepest; the eroded section needs the lithology of a unit below it",
                        s.horizon
                    )));
                }
                if s.depth_m != surfaces[i - 1].depth_m {
                    return Err(bad(format!(
                        "surface '{}' carries an erosion but lies at {} m, not at the depth of the surface above it ('{}', {} m): an erosional unconformity is two surfaces at one depth",
                        s.horizon,
                        s.depth_m,
                        surfaces[i - 1].horizon,
                        surfaces[i - 1].depth_m
                    )));
                }
                let above_age = surfaces[i - 1].age_ma;
                if !(e.eroded_at_ma < s.age_ma && e.eroded_at_ma > above_age) {
                    return Err(bad(format!(
                        "surface '{}': eroded_at_ma {} must lie between its age {} Ma and the age of the surface above, {} Ma",
                        s.horizon, e.eroded_at_ma, s.age_ma, above_age
                    )));
                }
            }
        }
        Ok(WellColumn { name, surfaces })
    }

    /// The present depositional surface (sea floor, or ground if negative depth).
    pub fn top(&self) -> &Surface {
        &self.surfaces[0]
    }

    /// The deepest surface: the base of the analysed column.
    pub fn base(&self) -> &Surface {
        self.surfaces
            .last()
            .expect("a column has at least two surfaces")
    }
}

/// A point of the eustatic sea-level curve: sea level above present (m) at an age.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SeaLevelPoint {
    pub age_ma: f64,
    pub sea_level_m: f64,
}

/// The study's eustatic sea-level curve, linearly interpolated between points and
/// held at the end values outside them. An empty curve means sea level 0 throughout.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct SeaLevelCurve {
    points: Vec<SeaLevelPoint>,
}

impl SeaLevelCurve {
    /// Points in any order; ages must be distinct and all values finite.
    pub fn new(mut points: Vec<SeaLevelPoint>) -> Result<Self, ScienceError> {
        if points
            .iter()
            .any(|p| !p.age_ma.is_finite() || !p.sea_level_m.is_finite())
        {
            return Err(ScienceError::OutOfRange {
                name: "sea level point",
                value: f64::NAN,
                range: "finite age and sea level",
            });
        }
        points.sort_by(|a, b| a.age_ma.total_cmp(&b.age_ma));
        if points.windows(2).any(|w| w[0].age_ma == w[1].age_ma) {
            return Err(ScienceError::CannotFit(
                "sea-level curve has two points at one age".into(),
            ));
        }
        Ok(SeaLevelCurve { points })
    }

    pub fn points(&self) -> &[SeaLevelPoint] {
        &self.points
    }

    /// Sea level above present (m) at `age_ma`.
    pub fn at(&self, age_ma: f64) -> f64 {
        let p = &self.points;
        match p.len() {
            0 => 0.0,
            _ if age_ma <= p[0].age_ma => p[0].sea_level_m,
            n if age_ma >= p[n - 1].age_ma => p[n - 1].sea_level_m,
            _ => {
                let j = p.partition_point(|q| q.age_ma <= age_ma);
                let (a, b) = (p[j - 1], p[j]);
                let w = (age_ma - a.age_ma) / (b.age_ma - a.age_ma);
                a.sea_level_m + w * (b.sea_level_m - a.sea_level_m)
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn surface(h: &str, depth: f64, age: f64, lith: Option<&str>) -> Surface {
        Surface {
            horizon: h.into(),
            depth_m: depth,
            age_ma: age,
            lithology_below: lith.map(LithologyMix::single),
            water_depth: WaterDepth::exact(0.0),
            erosion: None,
        }
    }

    #[test]
    fn a_column_needs_two_surfaces_and_increasing_ages() {
        assert!(WellColumn::new("w", vec![surface("a", 0.0, 0.0, None)]).is_err());
        let err = WellColumn::new(
            "w",
            vec![
                surface("a", 0.0, 10.0, Some("shale")),
                surface("b", 100.0, 5.0, None),
            ],
        )
        .unwrap_err();
        assert!(err.to_string().contains("not older"), "{err}");
        assert!(
            WellColumn::new(
                "w",
                vec![
                    surface("a", 0.0, 0.0, Some("shale")),
                    surface("b", 100.0, 5.0, None)
                ]
            )
            .is_ok()
        );
    }

    #[test]
    fn sea_level_interpolates_linearly_and_holds_ends() {
        let c = SeaLevelCurve::new(vec![
            SeaLevelPoint {
                age_ma: 60.0,
                sea_level_m: 50.0,
            },
            SeaLevelPoint {
                age_ma: 20.0,
                sea_level_m: 20.0,
            },
        ])
        .unwrap();
        assert_eq!(c.at(40.0), 35.0);
        assert_eq!(c.at(0.0), 20.0);
        assert_eq!(c.at(100.0), 50.0);
        assert_eq!(SeaLevelCurve::default().at(10.0), 0.0);
    }

    #[test]
    fn a_mix_label_round_trips_percentages() {
        let m = LithologyMix {
            parts: vec![
                MixPart {
                    lithology: "shale".into(),
                    fraction: 0.6,
                },
                MixPart {
                    lithology: "sandstone".into(),
                    fraction: 0.4,
                },
            ],
        };
        assert_eq!(m.label(), "shale:60;sandstone:40");
    }

    #[test]
    fn the_text_form_reads_back_to_the_same_mix() {
        // Written by hand: 3 parts of one third each print as 33.3333 and must read back
        // within the sum tolerance, to fractions that sum to one.
        let m: LithologyMix = "shale:33.3333;sandstone:33.3333;limestone:33.3333"
            .parse()
            .unwrap();
        let total: f64 = m.parts.iter().map(|p| p.fraction).sum();
        assert!((total - 1.0).abs() < 1e-12, "{total}");
        let again: LithologyMix = m.to_string().parse().unwrap();
        assert_eq!(again.parts.len(), 3);
        for (a, b) in m.parts.iter().zip(&again.parts) {
            assert_eq!(a.lithology, b.lithology);
            assert!((a.fraction - b.fraction).abs() < 1e-9);
        }
        assert_eq!(
            "shale".parse::<LithologyMix>(),
            Ok(LithologyMix::single("shale"))
        );
        assert_eq!(LithologyMix::single("shale").to_string(), "shale");
    }

    #[test]
    fn a_bad_percentage_is_an_error_and_never_read_as_the_whole_unit() {
        // The store's old reader took "shale:abc" as 100 % shale.
        for text in [
            "shale:abc",
            "shale:60;sandstone",
            "shale:60;sandstone:30",
            ":40;x:60",
            "",
        ] {
            assert!(
                text.parse::<LithologyMix>().is_err(),
                "{text:?} was accepted"
            );
        }
    }
}
