//! Sagline's chart palette: series colours, lithology fills and the sequential
//! colour scale for values such as the stretching factor.
//!
//! The colours are our own picks, chosen to stay apart from each other on white and
//! under the common forms of colour-blindness where it matters (the sequential scale).

use plotters::style::{RGBAColor, RGBColor};

/// Text, axes and outlines.
pub(crate) const INK: RGBColor = RGBColor(36, 41, 51);
/// Secondary text (notes, messages).
pub(crate) const INK_SOFT: RGBColor = RGBColor(96, 104, 116);
/// Grid lines.
pub(crate) const GRID: RGBColor = RGBColor(226, 229, 234);
pub(crate) const PAPER: RGBColor = RGBColor(255, 255, 255);

/// Total subsidence (basement depth).
pub(crate) const TOTAL: RGBColor = RGBColor(28, 74, 112);
/// Tectonic subsidence, best estimate; its water-depth range uses the same hue, light.
pub(crate) const TECTONIC: RGBColor = RGBColor(200, 82, 30);
/// A fitted model curve.
pub(crate) const MODEL: RGBColor = RGBColor(104, 52, 150);
/// Heat flow through time.
pub(crate) const HEAT: RGBColor = RGBColor(178, 34, 52);
/// Reference lines (equilibrium values).
pub(crate) const REFERENCE: RGBColor = RGBColor(110, 118, 128);
/// The water column in the burial chart.
pub(crate) const WATER: RGBColor = RGBColor(92, 156, 214);
/// Rift-interval bars.
pub(crate) const RIFT_BAR: RGBColor = RGBColor(200, 82, 30);
/// Outline of wells without a stretching fit (drawn hollow).
pub(crate) const NO_FIT: RGBColor = RGBColor(70, 76, 86);

/// Dash pattern (SVG `stroke-dasharray`) for model and reference lines.
pub(crate) const DASH: &str = "9 5";

/// Opacity of filled bands that sit under lines.
pub(crate) const BAND_OPACITY: f64 = 0.28;

/// Fill of a rift-phase band: pre-, syn- and post-rift have fixed colours, any other
/// name takes one of the spare colours by its position.
pub(crate) fn phase_colour(name: &str, position: usize) -> RGBAColor {
    let key = name.to_ascii_lowercase();
    let rgb = if key.starts_with("pre") {
        RGBColor(186, 194, 206)
    } else if key.starts_with("syn") {
        RGBColor(246, 190, 150)
    } else if key.starts_with("post") {
        RGBColor(170, 214, 196)
    } else {
        const SPARE: [RGBColor; 3] = [
            RGBColor(214, 200, 234),
            RGBColor(236, 222, 160),
            RGBColor(200, 222, 238),
        ];
        SPARE[position % SPARE.len()]
    };
    with_alpha(rgb, 0.45)
}

pub(crate) fn with_alpha(c: RGBColor, alpha: f64) -> RGBAColor {
    RGBAColor(c.0, c.1, c.2, alpha)
}

/// Fill of one catalogue lithology (lower-case name). Names outside our list get a
/// stable colour from a spare set, picked by a hash of the name.
fn single_lithology_colour(name: &str) -> RGBColor {
    match name.trim().to_ascii_lowercase().as_str() {
        "sandstone" | "sand" => RGBColor(238, 208, 112),
        "shaly sandstone" => RGBColor(214, 196, 128),
        "siltstone" | "silt" => RGBColor(196, 186, 150),
        "shale" | "mudstone" | "claystone" => RGBColor(136, 158, 130),
        "chalk" => RGBColor(236, 238, 222),
        "limestone" => RGBColor(146, 188, 214),
        "dolomite" => RGBColor(178, 164, 206),
        "salt" | "halite" => RGBColor(236, 178, 196),
        "anhydrite" => RGBColor(204, 156, 204),
        "coal" => RGBColor(64, 62, 60),
        "basement" => RGBColor(168, 118, 104),
        other => {
            const SPARE: [RGBColor; 6] = [
                RGBColor(160, 196, 170),
                RGBColor(214, 170, 130),
                RGBColor(170, 170, 204),
                RGBColor(200, 200, 150),
                RGBColor(150, 186, 196),
                RGBColor(206, 160, 160),
            ];
            // FNV-1a: stable across runs and platforms, unlike the std hasher.
            let hash = other.bytes().fold(0xcbf2_9ce4_8422_2325_u64, |h, b| {
                (h ^ u64::from(b)).wrapping_mul(0x0100_0000_01b3)
            });
            SPARE[(hash % SPARE.len() as u64) as usize]
        }
    }
}

/// Fill of a lithology label as the analysis writes it: one name (`shale`) or a mix
/// (`shale:60;sandstone:40`). A mix gets the blend of its parts' colours weighted
/// by their percentages, so a sandy shale reads between the two.
pub(crate) fn lithology_colour(label: &str) -> RGBColor {
    let parts: Vec<(&str, f64)> = label
        .split(';')
        .map(str::trim)
        .filter(|p| !p.is_empty())
        .map(|p| match p.split_once(':') {
            Some((name, pct)) => (
                name,
                pct.trim()
                    .trim_end_matches('%')
                    .trim()
                    .parse::<f64>()
                    .unwrap_or(0.0),
            ),
            None => (p, 100.0),
        })
        .filter(|(_, w)| w.is_finite() && *w > 0.0)
        .collect();
    let total: f64 = parts.iter().map(|(_, w)| w).sum();
    if parts.is_empty() || total <= 0.0 {
        return single_lithology_colour(label);
    }
    let mut rgb = [0.0; 3];
    for (name, weight) in &parts {
        let c = single_lithology_colour(name);
        for (acc, channel) in rgb.iter_mut().zip([c.0, c.1, c.2]) {
            *acc += f64::from(channel) * weight / total;
        }
    }
    RGBColor(channel(rgb[0]), channel(rgb[1]), channel(rgb[2]))
}

fn channel(v: f64) -> u8 {
    v.round().clamp(0.0, 255.0) as u8
}

/// The lithology fill as `#rrggbb`, for page elements outside the charts (table swatches).
pub fn lithology_colour_hex(label: &str) -> String {
    hex(lithology_colour(label))
}

/// Control points of the viridis scale (van der Walt & Smith's perceptually uniform,
/// colour-blind-safe map, released to the public domain), at t = 0, 1/8, …, 1.
/// Values as printed by the common 9-step listing of the scale [memory].
const VIRIDIS: [(u8, u8, u8); 9] = [
    (0x44, 0x01, 0x54),
    (0x47, 0x2d, 0x7b),
    (0x3b, 0x52, 0x8b),
    (0x2c, 0x72, 0x8e),
    (0x21, 0x90, 0x8c),
    (0x27, 0xad, 0x81),
    (0x5d, 0xc8, 0x63),
    (0xaa, 0xdc, 0x32),
    (0xfd, 0xe7, 0x25),
];

/// The sequential scale at `t` in [0, 1] (clamped; NaN reads as 0): dark purple
/// (low) through blue-green to yellow (high), linear between control points.
pub(crate) fn sequential_colour(t: f64) -> RGBColor {
    let t = if t.is_nan() { 0.0 } else { t.clamp(0.0, 1.0) };
    let scaled = t * (VIRIDIS.len() - 1) as f64;
    let i = (scaled.floor() as usize).min(VIRIDIS.len() - 2);
    let f = scaled - i as f64;
    let (a, b) = (VIRIDIS[i], VIRIDIS[i + 1]);
    let mix = |x: u8, y: u8| channel(f64::from(x) + (f64::from(y) - f64::from(x)) * f);
    RGBColor(mix(a.0, b.0), mix(a.1, b.1), mix(a.2, b.2))
}

/// The sequential scale as `#rrggbb`, for page elements outside the charts.
pub fn sequential_colour_hex(t: f64) -> String {
    hex(sequential_colour(t))
}

pub(crate) fn hex(c: RGBColor) -> String {
    format!("#{:02X}{:02X}{:02X}", c.0, c.1, c.2)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Relative luminance (sRGB, WCAG 2 definition).
    fn luminance(c: RGBColor) -> f64 {
        let lin = |v: u8| {
            let s = f64::from(v) / 255.0;
            if s <= 0.04045 {
                s / 12.92
            } else {
                ((s + 0.055) / 1.055).powf(2.4)
            }
        };
        0.2126 * lin(c.0) + 0.7152 * lin(c.1) + 0.0722 * lin(c.2)
    }

    #[test]
    fn the_sequential_scale_hits_its_control_points_and_interpolates_between() {
        assert_eq!(sequential_colour(0.0), RGBColor(0x44, 0x01, 0x54));
        assert_eq!(sequential_colour(1.0), RGBColor(0xfd, 0xe7, 0x25));
        assert_eq!(sequential_colour(0.5), RGBColor(0x21, 0x90, 0x8c));
        // Halfway between the last two control points: the channel means.
        assert_eq!(sequential_colour(15.0 / 16.0), RGBColor(212, 226, 44));
        assert_eq!(sequential_colour(-3.0), sequential_colour(0.0));
        assert_eq!(sequential_colour(f64::NAN), sequential_colour(0.0));
    }

    #[test]
    fn the_sequential_scale_gets_lighter_from_low_to_high() {
        // A sequential map must be readable in grey: luminance rises monotonically.
        let mut last = -1.0;
        for i in 0..=64 {
            let l = luminance(sequential_colour(f64::from(i) / 64.0));
            assert!(l > last, "luminance falls at step {i}");
            last = l;
        }
    }

    #[test]
    fn a_mix_blends_its_parts_by_percentage() {
        let sand = lithology_colour("sandstone");
        let shale = lithology_colour("shale");
        let mix = lithology_colour("shale:60;sandstone:40");
        let expect = |a: u8, b: u8| channel(0.6 * f64::from(a) + 0.4 * f64::from(b));
        assert_eq!(
            mix,
            RGBColor(
                expect(shale.0, sand.0),
                expect(shale.1, sand.1),
                expect(shale.2, sand.2)
            )
        );
        assert_eq!(lithology_colour("shale:100"), shale);
        assert_eq!(lithology_colour("Sandstone"), sand);
        assert_eq!(lithology_colour_hex("shale"), hex(shale));
    }

    #[test]
    fn unknown_lithologies_get_a_stable_colour() {
        assert_eq!(
            lithology_colour("volcanic tuff"),
            lithology_colour("volcanic tuff")
        );
        assert_eq!(lithology_colour(""), lithology_colour(""));
    }
}
