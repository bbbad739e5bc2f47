//! Sagline: well-by-well subsidence analysis for sedimentary basins.
//!
//! The science core, the input parsing and the analysis contract are the crate
//! `sagline_science` (server/science/), and the charts the crate `sagline_charts`
//! (server/charts/); everything here depends on them, never the other way round.
//!
//! Inside this crate dependencies point one way: `web` → `services` → `store`. The web
//! layer parses, calls a service and renders; services own every operation (reads,
//! analyses, changes) and re-export the few store rows and contract types the views show.

/// Accounts and access without I/O: roles, the access rules, password hashing, session tokens.
pub mod auth;
/// The `sagline analyze` batch command.
pub mod batch;
/// The command line.
pub mod cli;
/// Writing CSV rows with no cell a spreadsheet would run as a formula.
pub mod csv_cells;
/// The demo study, built from the files in `demo-db/`.
pub mod demo;
/// Builds the demo study's CSV files from the invented basin in `demo-db/basin.json`.
pub mod demo_build;
/// The `sagline section` batch command: flexural backstripping along a section line.
pub mod section_batch;
/// Starting and stopping the web server.
pub mod server;
/// Operations: every read, analysis and change a page or an API call needs (changes in one
/// transaction each, with their activity-log row).
pub mod services;
/// The store: every SQL statement, as functions taking an executor.
pub mod store;
/// The HTTP layer: routers per feature, pages and their JSON twins.
pub mod web;
