//! timeweave: journey planning and service-connectivity analysis over GTFS timetables.
//!
//! The data flows one way, one folder per stage:
//! [`feed`] (GTFS bytes → rows, with located warnings) → [`timetable`] (the compact,
//! date-independent timetable) → [`graph`] (one service date's time-expanded network and its stop
//! patterns) → [`route`] (Dijkstra and the one-to-all sweep, their preparations, the heap) →
//! [`journey`] (legs and step-free evidence as data) → [`analysis`] (questions about many
//! journeys at once) → [`engine`] (the front door the shells call).
//!
//! **Boundary:** this crate does no file-system or network I/O, knows no JavaScript, JSON, HTTP
//! or command line, and writes no sentences: results carry codes, ids, seconds and facts. The
//! shells under `crates/` read files, talk to their callers, and put words on results through
//! `timeweave-present`.

pub mod analysis;
pub mod engine;
pub mod error;
pub mod feed;
pub mod graph;
pub mod journey;
pub mod route;
pub mod timetable;

pub use engine::{Engine, PlanQuery, PlanResult};
