//! Questions about many journeys at once: travel times over a window of departures, reach over a
//! window, travel-time matrices ([`window`], [`matrix`]) over the places of a timetable
//! ([`places`]); the interchange audit ([`interchange`]); the step-free audit and timetable comparison land here
//! too. Each analysis is built on [`crate::route`]'s searches and returns data (ids, seconds,
//! codes), never text; files and words belong to the shells.

pub mod interchange;
#[cfg(not(target_arch = "wasm32"))]
pub mod matrix;
pub mod places;
pub mod stepfree;
pub mod window;
