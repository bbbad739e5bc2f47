//! The basin description (`demo-db/basin.json`) and what it says about one well:
//! its stretching factor, rift timing, surfaces, lithologies and palaeo-water depths.
//!
//! Every field is documented in `demo-db/README.md`. The fields of smooth variation
//! across the basin are simple on purpose: the stretching factor follows a Gaussian
//! across a straight trough axis, the rift onset changes linearly along the axis and
//! the rift end with the same Gaussian weight as beta.

use sagline_science::{LithologyMix, SeaLevelPoint, WaterDepth};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// The whole invented basin.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BasinSpec {
    /// The basin's invented name.
    pub basin: String,
    /// Free text for the reader of the file.
    #[serde(default)]
    pub note: String,
    /// Seed of every random draw (water-depth and depth noise).
    pub seed: u64,
    pub noise: Noise,
    pub trough: Trough,
    pub rift_timing: RiftTiming,
    /// Steady tectonic subsidence of the wells that saw no rift (m/Myr).
    pub background_subsidence_m_per_myr: f64,
    /// Horizons youngest first, with the unit below each.
    pub stratigraphy: Vec<Horizon>,
    /// Eustatic sea level above present (m) at ages (Ma).
    pub sea_level: Vec<SeaLevelPoint>,
    pub wells: Vec<WellSpec>,
}

/// The imperfections added to the modelled wells.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Noise {
    /// Standard deviation of the shift of each recorded palaeo-water-depth range (m).
    pub water_depth_sd_m: f64,
    /// Largest shift of a surface's depth (m), drawn uniformly; never more than a
    /// fifth of the thinner unit next to the surface.
    pub depth_max_m: f64,
}

/// The trough: a straight axis with a Gaussian profile of stretching across it.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Trough {
    /// A point of the axis, projected metres.
    pub axis_x: f64,
    pub axis_y: f64,
    /// Strike of the axis, degrees clockwise from grid north.
    pub azimuth_deg: f64,
    /// Standard deviation of the Gaussian across the axis (m).
    pub half_width_m: f64,
    /// Beta far from the axis and on it.
    pub beta_flank: f64,
    pub beta_axis: f64,
}

/// How the rift timing varies: the onset along the axis, the end across it.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RiftTiming {
    /// Rift onset (Ma) at the south-western and north-eastern ends of the axis.
    pub onset_sw_ma: f64,
    pub onset_ne_ma: f64,
    /// Length of axis over which the onset changes, centred on the axis point (m).
    pub axis_length_m: f64,
    /// Rift end (Ma) on the flanks and on the axis (weighted like beta).
    pub end_flank_ma: f64,
    pub end_axis_ma: f64,
}

/// Where a horizon's age comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum RiftHorizon {
    /// The well's rift onset.
    Onset,
    /// Halfway between the well's rift onset and end.
    Middle,
    /// The well's rift end.
    End,
}

/// One horizon of the stratigraphy.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Horizon {
    pub horizon: String,
    /// Age (Ma) of a horizon of the same age everywhere.
    #[serde(default)]
    pub age_ma: Option<f64>,
    /// For a horizon tied to the local rift timing instead; absent from no-rift wells.
    #[serde(default)]
    pub rift: Option<RiftHorizon>,
    /// The unit below, in the tops format (`shale` or `shale:60;sandstone:40`); absent on
    /// the deepest horizon.
    #[serde(default)]
    pub lithology: Option<String>,
    pub water_depth_m: WaterDepthField,
}

/// Palaeo-water-depth ranges `[min, max]` (m) of a horizon: on the flanks and on the
/// axis (interpolated with the beta weight), and on the no-rift platform.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct WaterDepthField {
    #[serde(default)]
    pub platform: Option<[f64; 2]>,
    pub flank: [f64; 2],
    pub axis: [f64; 2],
}

/// A later, second rift event of one well (uniform stretching).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SecondRift {
    pub onset_ma: f64,
    pub end_ma: f64,
    pub beta: f64,
}

/// An erosional unconformity: `horizon` (the deeper surface) carries the eroded section,
/// laid down on it until `eroded_at_ma`; the next younger horizon of the well rests on it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ErosionSpec {
    pub horizon: String,
    pub eroded_at_ma: f64,
}

/// One well.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct WellSpec {
    pub name: String,
    pub x: f64,
    pub y: f64,
    /// Where the well is (written to the wells file).
    #[serde(default)]
    pub note: String,
    /// A flank well beyond the rift: steady background subsidence, no rift horizons.
    #[serde(default)]
    pub no_rift: bool,
    /// Two-layer stretching: the mantle's factor; the crust's (delta) is the field's beta.
    #[serde(default)]
    pub mantle_beta: Option<f64>,
    #[serde(default)]
    pub second_rift: Option<SecondRift>,
    /// Horizons that rest directly on the next older horizon (a hiatus).
    #[serde(default)]
    pub hiatus: Vec<String>,
    #[serde(default)]
    pub erosion: Option<ErosionSpec>,
    /// Palaeo-water-depth ranges `[min, max]` that replace the field's, by horizon.
    #[serde(default)]
    pub water_depth_m: BTreeMap<String, [f64; 2]>,
}

/// A well's place in the fields of the basin.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FieldValues {
    /// 1 on the trough axis, falling to 0 on the flanks (Gaussian across the axis).
    pub axis_weight: f64,
    pub beta: f64,
    pub rift_onset_ma: f64,
    pub rift_end_ma: f64,
}

/// Ages of rift horizons are given to 0.1 Myr, like a biostratigraphic pick.
fn round_age(age_ma: f64) -> f64 {
    (age_ma * 10.0).round() / 10.0
}

impl BasinSpec {
    /// Refuse values the fields cannot use (the rest is checked well by well).
    pub fn check(&self) -> Result<(), String> {
        let t = &self.trough;
        let r = &self.rift_timing;
        let checks = [
            (
                "noise.water_depth_sd_m",
                self.noise.water_depth_sd_m,
                self.noise.water_depth_sd_m >= 0.0,
            ),
            (
                "noise.depth_max_m",
                self.noise.depth_max_m,
                self.noise.depth_max_m >= 0.0,
            ),
            ("trough.half_width_m", t.half_width_m, t.half_width_m > 0.0),
            ("trough.beta_flank", t.beta_flank, t.beta_flank >= 1.0),
            ("trough.beta_axis", t.beta_axis, t.beta_axis >= 1.0),
            (
                "rift_timing.axis_length_m",
                r.axis_length_m,
                r.axis_length_m > 0.0,
            ),
            (
                "background_subsidence_m_per_myr",
                self.background_subsidence_m_per_myr,
                self.background_subsidence_m_per_myr >= 0.0,
            ),
        ];
        match checks
            .iter()
            .find(|(_, value, ok)| !(value.is_finite() && *ok))
        {
            Some((name, value, _)) => Err(format!("{name} = {value} is not usable")),
            None => Ok(()),
        }
    }

    /// Beta, the axis weight and the rift timing at a position.
    pub fn field_at(&self, x: f64, y: f64) -> FieldValues {
        let t = &self.trough;
        let (sin, cos) = t.azimuth_deg.to_radians().sin_cos();
        let (dx, dy) = (x - t.axis_x, y - t.axis_y);
        let along = dx * sin + dy * cos;
        let across = dx * cos - dy * sin;
        let axis_weight = (-0.5 * (across / t.half_width_m).powi(2)).exp();
        let r = &self.rift_timing;
        let along_fraction = (0.5 + along / r.axis_length_m).clamp(0.0, 1.0);
        FieldValues {
            axis_weight,
            beta: t.beta_flank + (t.beta_axis - t.beta_flank) * axis_weight,
            rift_onset_ma: round_age(
                r.onset_sw_ma + (r.onset_ne_ma - r.onset_sw_ma) * along_fraction,
            ),
            rift_end_ma: round_age(r.end_flank_ma + (r.end_axis_ma - r.end_flank_ma) * axis_weight),
        }
    }
}

impl FieldValues {
    /// The age of a horizon in this well; `None` for a rift horizon of a no-rift well.
    pub fn age_of(&self, horizon: &Horizon, no_rift: bool) -> Result<Option<f64>, String> {
        match (horizon.age_ma, horizon.rift) {
            (Some(age), None) => Ok(Some(age)),
            (None, Some(_)) if no_rift => Ok(None),
            (None, Some(RiftHorizon::Onset)) => Ok(Some(self.rift_onset_ma)),
            (None, Some(RiftHorizon::End)) => Ok(Some(self.rift_end_ma)),
            (None, Some(RiftHorizon::Middle)) => Ok(Some(round_age(
                0.5 * (self.rift_onset_ma + self.rift_end_ma),
            ))),
            _ => Err(format!(
                "horizon '{}' needs either an age_ma or a rift tie (onset, middle, end)",
                horizon.horizon
            )),
        }
    }

    /// The palaeo-water-depth range of a horizon in this well.
    pub fn water_depth(&self, horizon: &Horizon, no_rift: bool) -> Result<WaterDepth, String> {
        let f = &horizon.water_depth_m;
        let [min, max] = if no_rift {
            f.platform.ok_or_else(|| {
                format!(
                    "horizon '{}' needs a platform water depth for no-rift wells",
                    horizon.horizon
                )
            })?
        } else {
            let w = self.axis_weight;
            [
                f.flank[0] + w * (f.axis[0] - f.flank[0]),
                f.flank[1] + w * (f.axis[1] - f.flank[1]),
            ]
        };
        water_depth(min, max, &horizon.horizon)
    }
}

/// A checked water-depth range.
pub fn water_depth(min_m: f64, max_m: f64, horizon: &str) -> Result<WaterDepth, String> {
    WaterDepth::new(min_m, max_m).map_err(|e| format!("horizon '{horizon}': {e}"))
}

/// Read a lithology in the tops format (the mix's one parser), naming the basin file's text.
pub fn parse_mix(text: &str) -> Result<LithologyMix, String> {
    text.parse()
        .map_err(|e: sagline_science::MixSyntaxError| format!("lithology '{text}': {e}"))
}
