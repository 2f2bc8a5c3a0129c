//! Errors and warnings about feeds, and errors about queries.
//!
//! A feed problem always says where it is: which file, which line (1-based, the header is line 1),
//! which field, the offending value and what was expected. The same [`FeedIssue`] is a fatal error
//! when the feed cannot be used at all and a warning when only one row is skipped.

use serde::Serialize;
use std::fmt;

/// One problem found in a feed, located as precisely as the input allows.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
/// (Short strings are boxed, so a `Result` carrying one stays small.)
pub struct FeedIssue {
    /// Name of the feed (file stem of the zip or folder) the problem belongs to.
    pub feed: String,
    /// File inside the feed, e.g. `stop_times.txt`; `None` for the archive itself.
    pub file: Option<Box<str>>,
    /// 1-based line number, the header being line 1.
    pub line: Option<u64>,
    pub field: Option<Box<str>>,
    pub value: Option<Box<str>>,
    /// What is wrong and what was expected.
    pub message: String,
}

impl FeedIssue {
    pub fn new(feed: &str, message: impl Into<String>) -> Self {
        FeedIssue { feed: feed.to_string(), file: None, line: None, field: None, value: None, message: message.into() }
    }
    pub fn file(mut self, file: &str) -> Self {
        self.file = Some(file.into());
        self
    }
    pub fn line(mut self, line: u64) -> Self {
        self.line = Some(line);
        self
    }
    pub fn field(mut self, field: &str) -> Self {
        self.field = Some(field.into());
        self
    }
    pub fn value(mut self, value: &str) -> Self {
        let mut v: String = value.chars().take(80).collect();
        if v.len() < value.len() {
            v.push('…');
        }
        self.value = Some(v.into());
        self
    }
}

impl fmt::Display for FeedIssue {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.feed)?;
        if let Some(file) = &self.file {
            write!(f, "/{file}")?;
        }
        if let Some(line) = self.line {
            write!(f, " line {line}")?;
        }
        if let Some(field) = &self.field {
            write!(f, ", field {field}")?;
        }
        if let Some(value) = &self.value {
            write!(f, " = {value:?}")?;
        }
        write!(f, ": {}", self.message)
    }
}

/// A feed that cannot be loaded. Nothing loaded before it is touched.
#[derive(Debug, Clone, thiserror::Error)]
#[error("{0}")]
pub struct FeedError(pub FeedIssue);

/// Warnings collected while reading one feed. Only the first [`WarningLog::KEEP`] are kept in
/// full; the rest are counted, so a feed with millions of broken rows cannot exhaust memory.
#[derive(Debug, Clone, Default, Serialize)]
pub struct WarningLog {
    pub issues: Vec<FeedIssue>,
    pub total: u64,
}

impl WarningLog {
    pub const KEEP: usize = 500;
    pub fn push(&mut self, issue: FeedIssue) {
        self.total += 1;
        if self.issues.len() < Self::KEEP {
            self.issues.push(issue);
        }
    }
}

/// A query that cannot be answered as asked (as opposed to "no journey", which is a result).
#[derive(Debug, Clone, thiserror::Error, Serialize)]
pub enum QueryError {
    #[error("no stop matches {text:?}{}", suggest(.suggestions))]
    UnknownStop { text: String, suggestions: Vec<String> },
    #[error("{text:?} matches several stops: {}; give a stop id", .candidates.join(", "))]
    AmbiguousStop { text: String, candidates: Vec<String> },
    #[error("date {0:?} is not YYYY-MM-DD")]
    BadDate(String),
    #[error("time {0:?} is not HH:MM")]
    BadTime(String),
    #[error("no feed is loaded")]
    NoFeed,
    #[error("{0}")]
    BadOption(String),
}

fn suggest(s: &[String]) -> String {
    if s.is_empty() {
        String::new()
    } else {
        format!("; did you mean: {}?", s.join(", "))
    }
}
