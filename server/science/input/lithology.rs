//! The lithology cell of a tops file: one catalogue name, or a mix such as
//! `shale:60;sandstone:40` (percent, `;` between parts).

pub use crate::column::MIX_SUM_TOLERANCE_PERCENT;
use crate::{LithologyMix, MixPart};
use std::collections::HashMap;

/// Resolves lithology names against the study's catalogue (any case), asking the
/// catalogue once per distinct spelling so a large file stays fast.
pub(crate) struct LithologyNames<'a> {
    resolve: &'a dyn Fn(&str) -> Option<String>,
    seen: HashMap<String, Option<String>>,
}

impl<'a> LithologyNames<'a> {
    pub(crate) fn new(resolve: &'a dyn Fn(&str) -> Option<String>) -> Self {
        LithologyNames {
            resolve,
            seen: HashMap::new(),
        }
    }

    fn resolve(&mut self, name: &str) -> Option<String> {
        if let Some(known) = self.seen.get(name) {
            return known.clone();
        }
        let known = (self.resolve)(name);
        self.seen.insert(name.to_string(), known.clone());
        known
    }

    /// Read a non-empty lithology cell into a mix of catalogue names with fractions
    /// summing to 1. `Err` holds the reason, naming every unknown lithology.
    pub(crate) fn parse(&mut self, text: &str) -> Result<LithologyMix, String> {
        let written: LithologyMix = text
            .parse()
            .map_err(|e: crate::column::MixSyntaxError| e.0)?;
        let mut unknown = Vec::new();
        let mut mix = Vec::with_capacity(written.parts.len());
        for part in written.parts {
            match self.resolve(&part.lithology) {
                Some(lithology) => mix.push(MixPart {
                    lithology,
                    fraction: part.fraction,
                }),
                None => unknown.push(format!("\"{}\"", part.lithology)),
            }
        }
        match unknown.len() {
            0 => Ok(LithologyMix { parts: mix }),
            1 => Err(format!(
                "unknown lithology {}: it is not in the study's lithology catalogue",
                unknown[0]
            )),
            _ => Err(format!(
                "unknown lithologies {}: they are not in the study's lithology catalogue",
                unknown.join(", ")
            )),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// An invented catalogue with its own spelling, matched in any case.
    fn catalogue(name: &str) -> Option<String> {
        ["shale", "sandstone", "Limestone"]
            .into_iter()
            .find(|c| c.eq_ignore_ascii_case(name))
            .map(str::to_string)
    }

    #[test]
    fn a_single_name_takes_the_catalogue_spelling() {
        let mut names = LithologyNames::new(&catalogue);
        assert_eq!(
            names.parse("LIMESTONE"),
            Ok(LithologyMix::single("Limestone"))
        );
    }

    #[test]
    fn a_mix_resolves_to_fractions() {
        let mut names = LithologyNames::new(&catalogue);
        let mix = names.parse("Shale:60; sandstone : 40% ;").unwrap();
        assert_eq!(
            mix.parts,
            [
                MixPart {
                    lithology: "shale".into(),
                    fraction: 0.6
                },
                MixPart {
                    lithology: "sandstone".into(),
                    fraction: 0.4
                },
            ]
        );
        // One part at 100 percent is the lithology alone.
        assert_eq!(names.parse("shale:100"), Ok(LithologyMix::single("shale")));
    }

    #[test]
    fn percentages_within_the_tolerance_are_accepted_and_made_whole() {
        let mut names = LithologyNames::new(&catalogue);
        let mix = names
            .parse("shale:33.33;sandstone:33.33;limestone:33.33")
            .unwrap();
        let total: f64 = mix.parts.iter().map(|p| p.fraction).sum();
        assert!((total - 1.0).abs() < 1e-12, "{total}");
        let err = names.parse("shale:60;sandstone:39.98").unwrap_err();
        assert_eq!(
            err,
            "the mix percentages in \"shale:60;sandstone:39.98\" sum to 99.98, not 100"
        );
    }

    #[test]
    fn malformed_mixes_say_what_is_wrong() {
        let mut names = LithologyNames::new(&catalogue);
        let cases = [
            (
                "shale:60;sandstone",
                "the part \"sandstone\" has no percentage",
            ),
            (":60;sandstone:40", "the part \":60\" has no lithology name"),
            (
                "shale:sixty;sandstone:40",
                "the percentage of shale must be a number above 0",
            ),
            (
                "shale:0;sandstone:100",
                "the percentage of shale must be a number above 0",
            ),
            ("shale:50;Shale:50", "Shale appears twice in the mix"),
            (";", "names no lithology"),
        ];
        for (text, reason) in cases {
            let err = names.parse(text).unwrap_err();
            assert!(err.contains(reason), "{text}: {err}");
        }
    }

    #[test]
    fn every_unknown_name_of_a_mix_is_named() {
        let mut names = LithologyNames::new(&catalogue);
        assert_eq!(
            names.parse("shale:50;chalky:25;marly:25").unwrap_err(),
            "unknown lithologies \"chalky\", \"marly\": they are not in the study's lithology catalogue"
        );
    }
}
