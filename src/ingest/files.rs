//! Where a feed's files come from: a zip archive in memory (the browser only has bytes) or a
//! folder. The archive is checked against [`Limits`] from its central directory before anything is
//! expanded, and every read is capped again, since declared sizes can lie.

use std::io::{Cursor, Read};
use std::path::{Path, PathBuf};

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

pub enum FeedFiles<'a> {
    Zip { archive: zip::ZipArchive<Cursor<&'a [u8]>>, names: Vec<(String, usize)>, limit: u64 },
    Dir { root: PathBuf, limit: u64 },
}

impl<'a> FeedFiles<'a> {
    pub fn from_zip(feed: &str, bytes: &'a [u8], limits: &Limits) -> Result<Self, FeedIssue> {
        if bytes.len() < 4 || &bytes[..2] != b"PK" {
            return Err(FeedIssue::new(feed, "not a zip archive (a GTFS feed is a .zip of .txt files); the file does not start with the zip signature"));
        }
        let mut archive = zip::ZipArchive::new(Cursor::new(bytes)).map_err(|e| FeedIssue::new(feed, format!("unreadable zip archive: {e}")))?;
        let mut names = Vec::new();
        let mut total: u64 = 0;
        for i in 0..archive.len() {
            let entry = archive.by_index_raw(i).map_err(|e| FeedIssue::new(feed, format!("unreadable zip entry {i}: {e}")))?;
            if entry.is_dir() {
                continue;
            }
            let Some(base) = Path::new(entry.name()).file_name().and_then(|n| n.to_str()).map(str::to_string) else { continue };
            if !base.ends_with(".txt") || names.iter().any(|(n, _)| n == &base) {
                continue;
            }
            let (size, packed) = (entry.size(), entry.compressed_size().max(1));
            if size / packed > limits.max_ratio {
                return Err(FeedIssue::new(feed, format!("{base} would expand {}× ({packed} bytes to {size}); refused as a decompression bomb (limit {}×)", size / packed, limits.max_ratio)).file(&base));
            }
            total = total.saturating_add(size);
            names.push((base, i));
        }
        if total > limits.max_total_bytes {
            return Err(FeedIssue::new(feed, format!("the archive expands to {total} bytes, more than the limit of {} bytes; refused before expanding", limits.max_total_bytes)));
        }
        Ok(FeedFiles::Zip { archive, names, limit: limits.max_total_bytes })
    }

    pub fn from_dir(feed: &str, root: &Path, limits: &Limits) -> Result<Self, FeedIssue> {
        if !root.is_dir() {
            return Err(FeedIssue::new(feed, format!("{} is not a folder", root.display())));
        }
        Ok(FeedFiles::Dir { root: root.to_path_buf(), limit: limits.max_total_bytes })
    }

    pub fn has(&self, name: &str) -> bool {
        match self {
            FeedFiles::Zip { names, .. } => names.iter().any(|(n, _)| n == name),
            FeedFiles::Dir { root, .. } => root.join(name).is_file(),
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
            FeedFiles::Dir { root, limit } => {
                let path = root.join(name);
                if !path.is_file() {
                    return Ok(None);
                }
                let f = std::fs::File::open(&path).map_err(|e| FeedIssue::new(feed, format!("cannot open {}: {e}", path.display())).file(name))?;
                Ok(Some(Box::new(Capped { inner: std::io::BufReader::new(f), left: *limit, feed: feed.to_string(), name: name.to_string() })))
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
