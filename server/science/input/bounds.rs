//! Physical bounds on every value read from an input file.
//!
//! A number can be finite and still impossible: an age of 1e15 Ma, a depth of
//! 1e308 m. Such a value is refused at the edge with the file, line, column and
//! reason, so nothing downstream ever sizes a grid, a loop or an allocation by it.
//! The bounds are wide enough for any real basin and narrow enough to catch unit
//! mistakes (an age in years, a depth in millimetres). They are common practice with
//! the physical fact that sets each one named beside it, not a published standard.

/// The admissible range of one kind of input value.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PhysicalRange {
    /// What the value is, in words, for the problem message.
    pub quantity: &'static str,
    /// The unit the bounds are in.
    pub unit: &'static str,
    pub min: f64,
    pub max: f64,
    /// Whether `min` itself is refused (a thickness must be positive).
    pub min_exclusive: bool,
    /// The physical fact behind the bounds, said in the problem message.
    pub why: &'static str,
}

/// Ages (Ma): not negative, and not older than the Earth (about 4,567 Ma; 4,600 is
/// the bound).
pub const AGE_MA: PhysicalRange = PhysicalRange {
    quantity: "an age",
    unit: "Ma",
    min: 0.0,
    max: 4600.0,
    min_exclusive: false,
    why: "ages are millions of years before present, and the Earth is about 4,570 Ma old",
};

/// Depths below present sea level (m, positive down): from the highest ground on Earth
/// (8,849 m above sea level; -9,000 is the bound) to 30 km, below any sedimentary
/// basin's floor (the deepest boreholes reach about 12 km; a deeper pseudo-well may
/// stand for a whole basin fill).
pub const DEPTH_M: PhysicalRange = PhysicalRange {
    quantity: "a depth",
    unit: "m",
    min: -9000.0,
    max: 30_000.0,
    min_exclusive: false,
    why: "depths are metres below present sea level, between the highest ground (about 8,850 m up) and 30 km down",
};

/// Palaeo-water depths (m; negative is land elevation): from 9,000 m of elevation to
/// the deepest ocean trench (about 10,935 m; 11,000 is the bound).
pub const WATER_DEPTH_M: PhysicalRange = PhysicalRange {
    quantity: "a water depth",
    unit: "m",
    min: -9000.0,
    max: 11_000.0,
    min_exclusive: false,
    why: "water depths lie between the highest ground (about 8,850 m of elevation, written negative) and the deepest ocean (about 10,950 m)",
};

/// Eroded thickness (m): positive, and at most 10 km (more than any section known to
/// have been removed at one unconformity).
pub const ERODED_M: PhysicalRange = PhysicalRange {
    quantity: "an eroded thickness",
    unit: "m",
    min: 0.0,
    max: 10_000.0,
    min_exclusive: true,
    why: "an eroded thickness is positive and at most 10 km",
};

/// Eustatic sea level above present (m): within 1,000 m either way (Phanerozoic
/// eustasy spans a few hundred metres).
pub const SEA_LEVEL_M: PhysicalRange = PhysicalRange {
    quantity: "a sea level",
    unit: "m",
    min: -1000.0,
    max: 1000.0,
    min_exclusive: false,
    why: "eustatic sea level has varied by a few hundred metres, never by a kilometre",
};

/// Projected map coordinates (m): within 100,000 km of the grid origin, far beyond any
/// projection's extent (a UTM northing is at most 10,000 km).
pub const COORDINATE_M: PhysicalRange = PhysicalRange {
    quantity: "a map coordinate",
    unit: "m",
    min: -1.0e8,
    max: 1.0e8,
    min_exclusive: false,
    why: "projected coordinates are metres, and no projection reaches 100,000 km",
};

/// Longest well, horizon or lithology name, in characters.
pub const MAX_NAME_CHARS: usize = 100;
/// Longest notes cell, in characters.
pub const MAX_NOTE_CHARS: usize = 2000;

/// How many years make one Ma; an age column in years reads a million times too old.
const YEARS_PER_MA: f64 = 1.0e6;

impl PhysicalRange {
    /// Whether `value` (in this range's unit) is admissible.
    pub fn contains(&self, value: f64) -> bool {
        let above_min = if self.min_exclusive {
            value > self.min
        } else {
            value >= self.min
        };
        value.is_finite() && above_min && value <= self.max
    }

    /// `Ok` when `value` is admissible, else the reason, saying the bounds, why they
    /// hold and (for an age that reads like years) how to fix the file.
    pub fn check(&self, value: f64) -> Result<f64, String> {
        self.check_written(value, None)
    }

    /// As [`check`](Self::check); `written` is how the file wrote the value when that
    /// differs from `value` in this range's unit (a depth in feet), for the message.
    pub fn check_written(&self, value: f64, written: Option<&str>) -> Result<f64, String> {
        if self.contains(value) {
            return Ok(value);
        }
        let low = if self.min_exclusive {
            format!("above {}", number(self.min))
        } else {
            format!("from {}", number(self.min))
        };
        let given = match written {
            Some(w) => format!("{w} ({} {})", number(value), self.unit),
            None => format!("{} {}", number(value), self.unit),
        };
        let mut reason = format!(
            "{given} is out of range for {} ({low} to {} {}): {}",
            self.quantity,
            number(self.max),
            self.unit,
            self.why
        );
        if self.unit == "Ma" && value > self.max && AGE_MA.contains(value / YEARS_PER_MA) {
            reason.push_str(&format!(
                "; it looks like an age in years: write {} Ma",
                number(value / YEARS_PER_MA)
            ));
        }
        Err(reason)
    }
}

/// `Ok` when a name or note has at most `max` characters, else the reason.
pub fn check_length(what: &str, text: &str, max: usize) -> Result<(), String> {
    let n = text.chars().count();
    if n > max {
        return Err(format!(
            "{what} has {n} characters; at most {max} are accepted"
        ));
    }
    Ok(())
}

/// A number as a person would write it in a message: whole numbers without a
/// fraction, others with up to six significant digits, huge or tiny ones in
/// scientific notation.
fn number(value: f64) -> String {
    let magnitude = value.abs();
    if magnitude != 0.0 && !(1e-3..1e9).contains(&magnitude) {
        format!("{value:e}")
    } else if value.fract() == 0.0 {
        format!("{value:.0}")
    } else {
        let s = format!("{value:.6}");
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ages_of_the_earth_are_admitted_and_older_ones_refused() {
        assert!(AGE_MA.check(0.0).is_ok());
        assert!(AGE_MA.check(4567.0).is_ok());
        let reason = AGE_MA.check(1e15).unwrap_err();
        assert!(
            reason.starts_with("1e15 Ma is out of range for an age"),
            "{reason}"
        );
        assert!(
            !reason.contains("looks like an age in years"),
            "1e15 years is not an age either: {reason}"
        );
    }

    #[test]
    fn an_age_written_in_years_gets_a_hint() {
        let reason = AGE_MA.check(145_000_000.0).unwrap_err();
        assert!(
            reason.ends_with("it looks like an age in years: write 145 Ma"),
            "{reason}"
        );
    }

    #[test]
    fn a_positive_quantity_refuses_zero() {
        assert!(ERODED_M.check(0.0).is_err());
        assert!(ERODED_M.check(0.5).is_ok());
        assert!(ERODED_M.check(10_000.0).is_ok());
        assert!(ERODED_M.check(10_000.1).is_err());
    }

    #[test]
    fn extreme_finite_numbers_are_refused_with_readable_text() {
        let reason = DEPTH_M.check(1e308).unwrap_err();
        assert!(
            reason.starts_with("1e308 m is out of range for a depth (from -9000 to 30000 m)"),
            "{reason}"
        );
        assert!(DEPTH_M.check(-1e308).is_err());
        assert!(DEPTH_M.check(f64::NAN).is_err());
    }

    #[test]
    fn a_converted_value_is_shown_as_written() {
        let reason = DEPTH_M
            .check_written(125_000.0 * 0.3048, Some("125000 ft"))
            .unwrap_err();
        assert!(
            reason.starts_with("125000 ft (38100 m) is out of range for a depth"),
            "{reason}"
        );
    }

    #[test]
    fn lengths_count_characters_not_bytes() {
        let name: String = "é".repeat(MAX_NAME_CHARS);
        assert!(check_length("the well name", &name, MAX_NAME_CHARS).is_ok());
        let long = format!("{name}x");
        assert_eq!(
            check_length("the well name", &long, MAX_NAME_CHARS).unwrap_err(),
            "the well name has 101 characters; at most 100 are accepted"
        );
    }
}
