//! Searches on one date's network: point-to-point Dijkstra on generalised cost (goal-directed),
//! the next options and the fewest-rides set ([`search`]), the one-to-all sweep ([`sweep`]), the self-pruning profile over a
//! window of departures ([`profile`]),
//! what they prepare once per network and walking setting ([`bounds`], [`boardings`]) and the
//! monotone priority queue ([`radix_heap`]).
//!
//! The vocabulary both searches speak (query parameters, endpoints, the found journey, the
//! reusable buffers) lives in [`query`] and [`edges`], so neither search file reaches into the
//! other. This layer knows the timetable and the graph; it knows nothing of legs, words or
//! callers.

pub mod boardings;
pub mod bounds;
pub mod edges;
pub mod options;
pub mod profile;
pub mod query;
pub mod radix_heap;
pub mod search;
pub mod sweep;

pub use query::{Endpoints, Journey, Params, StepFree};
pub use search::SearchState;
