//! Questions about many journeys at once: travel-time profiles over a time window, reach over a
//! window, travel-time matrices, the interchange audit, the step-free audit and timetable
//! comparison. Each analysis is built on [`crate::route`]'s searches and returns data (ids,
//! seconds, codes), never text.
//!
//! Empty for now: this is where that work lands, so that it sits above the searches and below
//! the engine's front door, and none of it reaches back into the graph or the feed.
