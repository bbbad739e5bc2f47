//! Errors of the science core. They describe what is wrong with an input in the
//! trade's words, so the web and CLI layers can show them to users as they are.

use thiserror::Error;

#[derive(Debug, Clone, PartialEq, Error)]
pub enum ScienceError {
    /// A parameter lies outside its physical range.
    #[error("{name} = {value} is outside the physical range {range}")]
    OutOfRange {
        name: &'static str,
        value: f64,
        range: &'static str,
    },
    /// A lithology name that the study's catalogue does not hold.
    #[error("unknown lithology '{0}'")]
    UnknownLithology(String),
    /// A lithology mix whose percentages do not sum to 100.
    #[error("lithology mix percentages sum to {0}, not 100")]
    MixNotWhole(f64),
    /// A well column that cannot be analysed as given.
    #[error("well '{well}': {reason}")]
    InvalidColumn { well: String, reason: String },
    /// An iterative solve that did not converge (should not happen for valid inputs).
    #[error("{what} did not converge")]
    NoConvergence { what: &'static str },
    /// A section (a line of wells) that cannot be analysed as given.
    #[error("section: {0}")]
    InvalidSection(String),
    /// A lithosphere model run that cannot be made as asked.
    #[error("lithosphere model: {0}")]
    InvalidModel(String),
    /// A fit that had too few points or no admissible solution.
    #[error("cannot fit: {0}")]
    CannotFit(String),
}
