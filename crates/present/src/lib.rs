//! Words for the core results.
