//! Flexural isostasy: an elastic plate carries a load over a width set by its rigidity
//! (docs/science-flexure.md; SCIENCE.md 11; Turcotte & Schubert ch. 3; Watts, *Isostasy and
//! Flexure*).
//!
//! - [`plate`]: rigidity, the flexural parameter, closed-form line and strip loads.
//! - [`spectral`], [`finite_difference`], [`solver`]: the plate's deflection under any load
//!   along a line, continuous (spectral) or broken (finite differences).
//! - [`section`]: a section line and the wells projected onto it.
//! - [`backstrip`]: flexural backstripping along a section, and the Te sweep.
//! - [`foreland`]: a forward model of a foreland load and its fit to a section.
//! - [`loading_curve`]: the subsidence curve of one well as a load approaches it.
//! - [`forward`]: synthetic wells whose Airy tectonic subsidence follows a given curve.

pub mod backstrip;
pub mod finite_difference;
pub mod foreland;
pub mod forward;
pub mod loading_curve;
pub mod plate;
pub mod section;
mod simplex;
pub mod solver;
pub mod spectral;

pub use plate::ElasticPlate;
pub use solver::{DeflectionProfile, LineLoad, PlateGeometry, PlateSolver};
