//! timeweave: journey planning and service-connectivity analysis over GTFS timetables.
//!
//! The data flows one way: `ingest` reads feeds into the compact [`timetable::Timetable`];
//! [`network::Network`] expands one service date into a time-expanded graph; [`search`] runs
//! Dijkstra on it; [`itinerary`] turns paths into legs. [`engine::Engine`] ties them together for
//! the two shells, the native CLI and the WASM module (`wasm`, the only code that knows about
//! JavaScript).

pub mod boardings;
pub mod bounds;
pub mod engine;
pub mod error;
pub mod ingest;
pub mod itinerary;
pub mod network;
pub mod radix_heap;
pub mod search;
pub mod sweep;
pub mod timetable;

#[cfg(not(target_arch = "wasm32"))]
pub mod serve;
#[cfg(not(target_arch = "wasm32"))]
pub mod synth;

#[cfg(target_arch = "wasm32")]
pub mod wasm;

pub use engine::{Engine, PlanQuery, PlanResult};
