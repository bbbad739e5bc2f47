//! Sagline's chart palette: series colours, lithology fills and the sequential
//! colour scale for values such as the stretching factor.
//!
//! The colours are our own picks, chosen to stay apart from each other on white and
//! under the common forms of colour-blindness where it matters (the sequential scale).

use super::svg::{Colour, Paint};

/// Text, axes and outlines.
pub(crate) const INK: Colour = Colour(36, 41, 51);
/// Secondary text (notes, messages).
pub(crate) const INK_SOFT: Colour = Colour(96, 104, 116);
/// Grid lines.
pub(crate) const GRID: Colour = Colour(226, 229, 234);
pub(crate) const PAPER: Colour = Colour(255, 255, 255);

/// Total subsidence (basement depth).
pub(crate) const TOTAL: Colour = Colour(28, 74, 112);
/// Tectonic subsidence, best estimate; its water-depth range uses the same hue, light.
pub(crate) const TECTONIC: Colour = Colour(200, 82, 30);
/// A fitted model curve.
pub(crate) const MODEL: Colour = Colour(104, 52, 150);
/// Heat flow through time.
pub(crate) const HEAT: Colour = Colour(178, 34, 52);
/// Reference lines (equilibrium values).
pub(crate) const REFERENCE: Colour = Colour(110, 118, 128);
/// The water column in the burial chart.
pub(crate) const WATER: Colour = Colour(92, 156, 214);
/// Rift-interval bars.
pub(crate) const RIFT_BAR: Colour = Colour(200, 82, 30);
/// Outline of wells without a stretching fit (drawn hollow).
pub(crate) const NO_FIT: Colour = Colour(70, 76, 86);

/// Dash pattern (SVG `stroke-dasharray`) for model and reference lines.
pub(crate) const DASH: &str = "9 5";

/// Opacity of filled bands that sit under lines.
pub(crate) const BAND_OPACITY: f64 = 0.28;

/// Fill of a rift-phase band: pre-, syn- and post-rift have fixed colours, any other
/// name takes one of the spare colours by its position.
pub(crate) fn phase_colour(name: &str, position: usize) -> Paint {
    let key = name.to_ascii_lowercase();
    let rgb = if key.starts_with("pre") {
        Colour(186, 194, 206)
    } else if key.starts_with("syn") {
        Colour(246, 190, 150)
    } else if key.starts_with("post") {
        Colour(170, 214, 196)
    } else {
        const SPARE: [Colour; 3] = [
            Colour(214, 200, 234),
            Colour(236, 222, 160),
            Colour(200, 222, 238),
        ];
        SPARE[position % SPARE.len()]
    };
    with_alpha(rgb, 0.45)
}

pub(crate) fn with_alpha(c: Colour, alpha: f64) -> Paint {
    Paint {
        colour: c,
        opacity: alpha,
    }
}

/// Fill of one catalogue lithology (lower-case name). Names outside our list get a
/// stable colour from a spare set, picked by a hash of the name.
fn single_lithology_colour(name: &str) -> Colour {
    match name.trim().to_ascii_lowercase().as_str() {
        "sandstone" | "sand" => Colour(238, 208, 112),
        "shaly sandstone" => Colour(214, 196, 128),
        "siltstone" | "silt" => Colour(196, 186, 150),
        "shale" | "mudstone" | "claystone" => Colour(136, 158, 130),
        "chalk" => Colour(236, 238, 222),
        "limestone" => Colour(146, 188, 214),
        "dolomite" => Colour(178, 164, 206),
        "salt" | "halite" => Colour(236, 178, 196),
        "anhydrite" => Colour(204, 156, 204),
        "coal" => Colour(64, 62, 60),
        "basement" => Colour(168, 118, 104),
        other => {
            const SPARE: [Colour; 6] = [
                Colour(160, 196, 170),
                Colour(214, 170, 130),
                Colour(170, 170, 204),
                Colour(200, 200, 150),
                Colour(150, 186, 196),
                Colour(206, 160, 160),
            ];
            SPARE[(fnv1a_64(other) % SPARE.len() as u64) as usize]
        }
    }
}

/// The 64-bit FNV-1a hash of `text`'s bytes: stable across runs and platforms, unlike
/// the std hasher, so an unlisted lithology keeps its colour from one day to the next.
fn fnv1a_64(text: &str) -> u64 {
    text.bytes().fold(0xcbf2_9ce4_8422_2325_u64, |h, b| {
        (h ^ u64::from(b)).wrapping_mul(0x0100_0000_01b3)
    })
}

/// Fill of a lithology label as the analysis writes it: one name (`shale`) or a mix
/// (`shale:60;sandstone:40`). A mix gets the blend of its parts' colours weighted
/// by their percentages, so a sandy shale reads between the two.
pub(crate) fn lithology_colour(label: &str) -> Colour {
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
    Colour(channel(rgb[0]), channel(rgb[1]), channel(rgb[2]))
}

fn channel(v: f64) -> u8 {
    v.round().clamp(0.0, 255.0) as u8
}

/// The lithology fill as `#rrggbb`, for page elements outside the charts (table swatches).
pub fn lithology_colour_hex(label: &str) -> String {
    lithology_colour(label).hex()
}

/// Control points of the viridis scale (van der Walt & Smith's perceptually uniform,
/// colour-blind-safe map, released to the public domain), at t = 0, 1/8, …, 1.
/// Values as printed by the common 9-step listing of the scale \[memory\].
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
pub(crate) fn sequential_colour(t: f64) -> Colour {
    let t = if t.is_nan() { 0.0 } else { t.clamp(0.0, 1.0) };
    let scaled = t * (VIRIDIS.len() - 1) as f64;
    let i = (scaled.floor() as usize).min(VIRIDIS.len() - 2);
    let f = scaled - i as f64;
    let (a, b) = (VIRIDIS[i], VIRIDIS[i + 1]);
    let mix = |x: u8, y: u8| channel(f64::from(x) + (f64::from(y) - f64::from(x)) * f);
    Colour(mix(a.0, b.0), mix(a.1, b.1), mix(a.2, b.2))
}

/// The sequential scale as `#rrggbb`, for page elements outside the charts.
pub fn sequential_colour_hex(t: f64) -> String {
    sequential_colour(t).hex()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Relative luminance (sRGB, WCAG 2 definition).
    fn luminance(c: Colour) -> f64 {
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
        assert_eq!(sequential_colour(0.0), Colour(0x44, 0x01, 0x54));
        assert_eq!(sequential_colour(1.0), Colour(0xfd, 0xe7, 0x25));
        assert_eq!(sequential_colour(0.5), Colour(0x21, 0x90, 0x8c));
        // Halfway between the last two control points: the channel means.
        assert_eq!(sequential_colour(15.0 / 16.0), Colour(212, 226, 44));
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
        // From the table above: shale (136, 158, 130), sandstone (238, 208, 112).
        // 60:40 by hand: 0.6*136 + 0.4*238 = 176.8, 0.6*158 + 0.4*208 = 178.0,
        // 0.6*130 + 0.4*112 = 122.8, rounded to (177, 178, 123).
        assert_eq!(
            lithology_colour("shale:60;sandstone:40"),
            Colour(177, 178, 123)
        );
        assert_eq!(
            lithology_colour("sandstone: 40 %; shale :60"),
            Colour(177, 178, 123)
        );
        assert_eq!(lithology_colour("shale:100"), Colour(136, 158, 130));
        assert_eq!(lithology_colour("Sandstone"), Colour(238, 208, 112));
        // 136 = 0x88, 158 = 0x9E, 130 = 0x82.
        assert_eq!(lithology_colour_hex("shale"), "#889E82");
        assert_eq!(lithology_colour_hex("shale:60;sandstone:40"), "#B1B27B");
    }

    #[test]
    fn the_hash_of_unlisted_names_is_fnv_1a() {
        // Test vectors of the FNV specification (Fowler, Noll, Vo; IETF draft
        // draft-eastlake-fnv), quoted from memory and checked with an independent
        // implementation in Python.
        assert_eq!(fnv1a_64(""), 0xcbf2_9ce4_8422_2325);
        assert_eq!(fnv1a_64("a"), 0xaf63_dc4c_8601_ec8c);
        assert_eq!(fnv1a_64("foobar"), 0x8594_4171_f739_67e8);
    }

    #[test]
    fn unlisted_lithologies_get_a_spare_colour_chosen_by_their_name() {
        // FNV-1a("volcanic tuff") = 0x26e1a0ca9264ea4b, which is 1 modulo 6: spare colour 1.
        // FNV-1a("basalt") = 0x6c6ea6a10841f7e4, 4 modulo 6: spare colour 4 (Python).
        assert_eq!(lithology_colour("volcanic tuff"), Colour(214, 170, 130));
        assert_eq!(lithology_colour(" Volcanic Tuff "), Colour(214, 170, 130));
        assert_eq!(lithology_colour("basalt"), Colour(150, 186, 196));
        // The empty name hashes to the offset basis, 5 modulo 6.
        assert_eq!(lithology_colour(""), Colour(206, 160, 160));
    }
}
