//! Sagline's science core: pure computation, no I/O, no async, no database.
//!
//! This crate holds the science (decompaction, backstripping, stretching models,
//! heat flow), the parsing and checking of the input files ([`input`]) and the
//! whole-well analysis with its JSON contract ([`analysis`]). It depends on no web,
//! SQL or async crate: the compiler keeps it that way, since none is in its
//! `Cargo.toml`.
//!
//! Everything here takes validated inputs and returns named result structs.
//! Units are SI unless a name says otherwise (`_km`, `_ma`, `_myr`, `_mw_m2`).
//! Depth is positive downward; ages are in Ma (millions of years before present).

pub mod analysis;
pub mod backstrip;
pub mod burial;
pub mod column;
pub mod decompaction;
pub mod error;
pub mod finite_fit;
pub mod fit;
pub mod flexure;
pub mod forward;
pub mod heat_flow;
pub mod input;
pub mod lithology;
pub mod map_projection;
pub mod maturity;
pub mod mckenzie;
pub mod numerical_lithosphere;
pub mod params;
pub mod phases;
pub mod search1d;
pub mod thermal;
pub mod tolerance;
pub mod two_layer;
pub mod uncertainty;

pub use column::{
    Bounds, Erosion, LithologyMix, MixPart, MixSyntaxError, SeaLevelCurve, SeaLevelPoint, Surface,
    WaterDepth, WellColumn,
};
pub use error::ScienceError;
pub use params::ModelParameters;

/// Standard gravity (m s^-2); docs/science.md section 0.
pub const GRAVITY_M_S2: f64 = 9.81;
/// One million Julian years in seconds (docs/science.md section 0).
pub const SECONDS_PER_MYR: f64 = 3.15576e13;
