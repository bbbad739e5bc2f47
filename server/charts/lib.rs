//! Server-side SVG charts for the well page, the study overview and the section page.
//!
//! Every chart is a pure function: a plain input struct defined here (the web layer
//! maps its own views into it) and a [`ChartSize`] in, an SVG document as a `String`
//! out. No I/O, no state. Charts are drawn with the crate's own small typed SVG
//! writer (`svg`), which escapes every text and attribute by construction; text is
//! written as `font-family="sans-serif"` and laid out with estimated widths.
//!
//! Modules depend one way only: `svg` (the writer) <- `style` (palette) <- `frame`
//! (layout, axes, legends) <- the charts; `png` stands alone.
//!
//! Conventions shared by all charts:
//! - geological time runs left (old) to right (young): the x axis is age in Ma, reversed;
//! - depths increase downwards;
//! - each series is a `<g data-series="…">` group (with `data-*` attributes and a
//!   `<title>` where useful) so tests and page scripts can find it;
//! - missing or empty data gives a chart with a message instead of a panic.

mod burial;
mod frame;
mod heat_flow;
mod maturity;
mod png;
mod restored_section;
mod rift_timing;
mod section_profile;
mod style;
mod subsidence;
mod svg;
mod well_map;

#[cfg(test)]
mod test_support;

pub use burial::{
    BurialChartData, BurialHorizon, BurialUnit, BurialUnitStep, WaterDepthPoint, burial_chart,
};
pub use frame::ChartSize;
pub use heat_flow::{HeatFlowChartData, heat_flow_chart};
pub use maturity::{MaturityBand, MaturityChartData, MaturityHorizon, maturity_chart};
pub use png::svg_to_png;
pub use restored_section::{RestoredColumn, RestoredSectionChartData, restored_section_chart};
pub use rift_timing::{RiftTimingData, RiftTimingWell, rift_timing_chart};
pub use section_profile::{SectionProfileChartData, section_profile_chart};
pub use style::{lithology_colour_hex, sequential_colour_hex};
pub use subsidence::{PhaseBand, SubsidenceChartData, TectonicPoint, subsidence_chart};
pub use well_map::{MAX_NAMED_WELLS, MapSection, MapWell, WellMapData, well_map_chart};
