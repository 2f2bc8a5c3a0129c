//! Where a feed's files come from: a zip archive in memory (the browser only has bytes) or any
//! other [`FeedSource`] a shell provides (the command line's folder of `.txt` files). The core
//! knows no file system. The archive is checked against [`Limits`] from its central directory before anything is
//! expanded, and every read is capped again, since declared sizes can lie.

use std::io::{Cursor, Read};

use crate::error::FeedIssue;

/// Size limits for one feed.
#[derive(Debug, Clone, Copy)]
pub struct Limits {
    /// Largest uncompressed size of all GTFS files of one feed together: 2 GiB.
    pub max_total_bytes: u64,
    /// Largest expansion ratio for one entry (uncompressed / compressed): 1000. CSV text
    /// compresses about 5–20×; a ratio past 1000 is a decompression bomb. Common practice, no source.
    pub max_ratio: u64,
}

impl Default for Limits {
    fn default() -> Self {
        Limits { max_total_bytes: 2 << 30, max_ratio: 1000 }
    }
}

/// A feed's files as a shell provides them (a folder, say): names are bare file names such as
/// `stops.txt`. Every read is capped at the feed's size limit by the core.
pub trait FeedSource {
    /// True when the feed has this file.
    fn has(&self, name: &str) -> bool;
    /// Opens one file, or `None` when the feed does not have it. The error text names the file
    /// and the cause; the core adds the feed's name.
    fn open(&mut self, name: &str) -> Result<Option<Box<dyn Read + '_>>, String>;
}

pub enum FeedFiles<'a> {
    Zip { archive: zip::ZipArchive<Cursor<&'a [u8]>>, names: Vec<(String, usize)>, limit: u64 },
    Source { source: &'a mut dyn FeedSource, limit: u64 },
}

impl<'a> FeedFiles<'a> {
    pub fn from_zip(feed: &str, bytes: &'a [u8], limits: &Limits) -> Result<Self, FeedIssue> {
        if bytes.len() < 4 || &bytes[..2] != b"PK" {
            return Err(FeedIssue::new(
                feed,
                "not a zip archive (a GTFS feed is a .zip of .txt files); the file does not start with the zip signature",
            ));
        }
        let mut archive =
            zip::ZipArchive::new(Cursor::new(bytes)).map_err(|e| FeedIssue::new(feed, format!("unreadable zip archive: {e}")))?;
        let mut names = Vec::new();
        let mut total: u64 = 0;
        for i in 0..archive.len() {
            let entry = archive.by_index_raw(i).map_err(|e| FeedIssue::new(feed, format!("unreadable zip entry {i}: {e}")))?;
            if entry.is_dir() {
                continue;
            }
            let Some(base) = entry.name().rsplit(['/', '\\']).next().filter(|n| !n.is_empty()).map(str::to_string) else { continue };
            if !base.ends_with(".txt") || names.iter().any(|(n, _)| n == &base) {
                continue;
            }
            let (size, packed) = (entry.size(), entry.compressed_size().max(1));
            if size / packed > limits.max_ratio {
                return Err(FeedIssue::new(
                    feed,
                    format!(
                        "{base} would expand {}× ({packed} bytes to {size}); refused as a decompression bomb (limit {}×)",
                        size / packed,
                        limits.max_ratio
                    ),
                )
                .file(&base));
            }
            total = total.saturating_add(size);
            names.push((base, i));
        }
        if total > limits.max_total_bytes {
            return Err(FeedIssue::new(
                feed,
                format!(
                    "the archive expands to {total} bytes, more than the limit of {} bytes; refused before expanding",
                    limits.max_total_bytes
                ),
            ));
        }
        Ok(FeedFiles::Zip { archive, names, limit: limits.max_total_bytes })
    }

    pub fn from_source(source: &'a mut dyn FeedSource, limits: &Limits) -> Self {
        FeedFiles::Source { source, limit: limits.max_total_bytes }
    }

    pub fn has(&self, name: &str) -> bool {
        match self {
            FeedFiles::Zip { names, .. } => names.iter().any(|(n, _)| n == name),
            FeedFiles::Source { source, .. } => source.has(name),
        }
    }

    /// Opens one file, or `None` when the feed does not have it.
    pub fn open(&mut self, feed: &str, name: &str) -> Result<Option<Box<dyn Read + '_>>, FeedIssue> {
        match self {
            FeedFiles::Zip { archive, names, limit } => {
                let Some(&(_, i)) = names.iter().find(|(n, _)| n == name) else { return Ok(None) };
                let limit = *limit;
                let entry = archive.by_index(i).map_err(|e| FeedIssue::new(feed, format!("cannot expand {name}: {e}")).file(name))?;
                Ok(Some(Box::new(Capped { inner: entry, left: limit, feed: feed.to_string(), name: name.to_string() })))
            }
            FeedFiles::Source { source, limit } => {
                let limit = *limit;
                match source.open(name).map_err(|e| FeedIssue::new(feed, e).file(name))? {
                    Some(r) => Ok(Some(Box::new(Capped { inner: r, left: limit, feed: feed.to_string(), name: name.to_string() }))),
                    None => Ok(None),
                }
            }
        }
    }
}

/// A reader that fails once more than `left` bytes came out of it.
struct Capped<R> {
    inner: R,
    left: u64,
    feed: String,
    name: String,
}

impl<R: Read> Read for Capped<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        if n as u64 > self.left {
            return Err(std::io::Error::other(format!("{}/{}: expands past the size limit", self.feed, self.name)));
        }
        self.left -= n as u64;
        Ok(n)
    }
}
