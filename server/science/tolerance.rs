//! One tolerance policy for the science core and its tests.
//!
//! Published check values in docs/science.md are printed to 3 decimals (mm for lengths),
//! so a check passes when it agrees to half a unit of the last printed digit, or
//! to a relative tolerance for values printed to significant figures.

/// Convergence tolerance of iterative depth solves (m), as docs/science.md 2.2 recommends:
/// a micrometre, far below the millimetres that published values are printed to.
pub const DEPTH_SOLVE_M: f64 = 1e-6;

/// `true` when `actual` equals a value printed with `decimals` decimals, to half a
/// unit of the last printed digit (plus a little floating-point slack).
pub fn agrees_to_decimals(actual: f64, printed: f64, decimals: i32) -> bool {
    let half_unit = 0.5 * 10f64.powi(-decimals);
    (actual - printed).abs() <= half_unit * 1.000_001 + 1e-12
}

/// `true` when `actual` agrees with `expected` to the relative tolerance `rel`.
pub fn agrees_relative(actual: f64, expected: f64, rel: f64) -> bool {
    (actual - expected).abs() <= rel * expected.abs().max(f64::MIN_POSITIVE)
}

/// Assert [`agrees_to_decimals`], with a message that names the check.
#[track_caller]
pub fn assert_printed(actual: f64, printed: f64, decimals: i32, what: &str) {
    assert!(
        agrees_to_decimals(actual, printed, decimals),
        "{what}: computed {actual}, published {printed} (to {decimals} decimals)"
    );
}

/// Assert [`agrees_relative`], with a message that names the check.
#[track_caller]
pub fn assert_relative(actual: f64, expected: f64, rel: f64, what: &str) {
    assert!(
        agrees_relative(actual, expected, rel),
        "{what}: computed {actual}, expected {expected} (relative tolerance {rel})"
    );
}
