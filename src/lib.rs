//! Eddybench: a build logbook and test-results tracker for self-oscillating induction heaters.

/// Pure analysis: the model of a revision, flags, run analysis and trends.
pub mod analysis;
/// Reading channels and their names.
pub mod channel;
/// Server-side SVG charts.
pub mod charts;
/// Pure checks of every write, shared by pages, API, imports and the command line.
pub mod checks;
/// Start-up configuration.
pub mod config;
/// The demo scenario.
pub mod demo;
/// A build as one JSON document (export and import between instances) and as CSV tables.
pub mod export;
/// The bench-side feeder: instruments to a durable queue to the JSON API.
pub mod feed;
/// The parts contract of a revision.
pub mod parts;
/// Pure driver physics: each formula once, with its source.
pub mod physics;
/// Notices of changes to open runs, for their live pages.
pub mod run_feed;
/// Passwords, session ids and tokens.
pub mod secrets;
/// The SQLite store, the only module that speaks SQL.
pub mod store;
/// Values with SI prefixes and units: parsing and engineering notation.
pub mod units;
/// Pages, the JSON API and their middleware.
pub mod web;

pub use web::{AppState, app};
