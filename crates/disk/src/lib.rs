//! The file-system side of the native shells (the command line, later the Python package): a
//! feed given as a path, a zip file or a folder of `.txt` files, loaded into the core through
//! bytes or a [`FeedSource`]; and output files that appear whole or not at all.
//!
//! **Boundary:** the core crate knows no paths; this crate is where a path becomes bytes.

use std::fs::File;
use std::io::{self, BufReader, Read, Write};
use std::path::{Path, PathBuf};

use timeweave::error::{FeedError, FeedIssue};
use timeweave::feed::{FeedSource, Progress};
use timeweave::timetable::FeedMeta;
use timeweave::Engine;

/// A folder of GTFS `.txt` files.
pub struct FolderSource {
    root: PathBuf,
}

impl FolderSource {
    pub fn new(root: &Path) -> FolderSource {
        FolderSource { root: root.to_path_buf() }
    }
}

impl FeedSource for FolderSource {
    fn has(&self, name: &str) -> bool {
        self.root.join(name).is_file()
    }

    fn open(&mut self, name: &str) -> Result<Option<Box<dyn Read + '_>>, String> {
        let path = self.root.join(name);
        if !path.is_file() {
            return Ok(None);
        }
        let f = File::open(&path).map_err(|e| format!("cannot open {}: {e}", path.display()))?;
        Ok(Some(Box::new(BufReader::new(f))))
    }
}

/// The feed name a path stands for: its file stem (`city.zip` and `city/` are both `city`).
pub fn feed_name(path: &Path) -> &str {
    path.file_stem().and_then(|s| s.to_str()).unwrap_or("feed")
}

/// Loads a feed from a zip file or a folder of `.txt` files, or a snapshot (told by its
/// signature, whatever its name). On error the feeds loaded before stay loaded.
pub fn load_feed<'e>(engine: &'e mut Engine, path: &Path, progress: Progress) -> Result<&'e FeedMeta, FeedError> {
    let name = feed_name(path);
    if path.is_dir() {
        engine.load_source(name, &mut FolderSource::new(path), progress)
    } else {
        let bytes = std::fs::read(path).map_err(|e| FeedError(FeedIssue::new(name, format!("cannot read {}: {e}", path.display()))))?;
        if timeweave::timetable::snapshot::is_snapshot(&bytes) {
            let shown =
                |e: timeweave::timetable::snapshot::SnapshotError| FeedError(FeedIssue::new(name, format!("{}: {e}", path.display())));
            engine.load_snapshot(&bytes).map_err(shown)?;
            return Ok(&engine.tt.feeds[0]);
        }
        engine.load_zip(name, &bytes, progress)
    }
}

/// An output file being written under a temporary name in its folder: created before any work
/// (so an unwritable path fails at once), it replaces `path` only on [`Staged::commit`]; dropped
/// without a commit, it leaves nothing behind.
pub struct Staged {
    path: std::path::PathBuf,
    tmp: tempfile::NamedTempFile,
}

impl Staged {
    pub fn create(path: &Path) -> io::Result<Staged> {
        if path.is_dir() {
            return Err(io::Error::other(format!("{} is a folder", path.display())));
        }
        let dir = path.parent().filter(|d| !d.as_os_str().is_empty()).unwrap_or(Path::new("."));
        let tmp = tempfile::NamedTempFile::new_in(dir)?;
        Ok(Staged { path: path.to_path_buf(), tmp })
    }
    /// A buffered writer onto the temporary file.
    pub fn writer(&self) -> io::Result<io::BufWriter<File>> {
        Ok(io::BufWriter::new(self.tmp.as_file().try_clone()?))
    }
    /// Flushes the data to disk and gives the file its name.
    pub fn commit(self) -> io::Result<()> {
        self.tmp.as_file().sync_all()?;
        self.tmp.persist(&self.path).map_err(|e| e.error)?;
        readable(&self.path)
    }
}

/// Writes `path` whole or not at all: the bytes go to a temporary file in the same folder,
/// which replaces `path` only once `write` has succeeded and the data are flushed. A failure
/// leaves no partial file behind.
/// The writer is buffered and seekable (a zip writer needs that).
pub fn write_atomically<T>(path: &Path, write: impl FnOnce(&mut io::BufWriter<&mut File>) -> io::Result<T>) -> io::Result<T> {
    let dir = path.parent().filter(|d| !d.as_os_str().is_empty()).unwrap_or(Path::new("."));
    let mut tmp = tempfile::NamedTempFile::new_in(dir)?;
    let value = {
        let mut out = io::BufWriter::new(tmp.as_file_mut());
        let value = write(&mut out)?;
        out.flush()?;
        value
    };
    tmp.as_file().sync_all()?;
    tmp.persist(path).map_err(|e| e.error)?;
    readable(path)?;
    Ok(value)
}

/// An output folder being written under a temporary name beside it: it takes the place of
/// `path` only on [`StagedFolder::commit`] (replacing a folder that `replaceable` accepted when
/// staged); dropped without a commit, it leaves nothing behind.
pub struct StagedFolder {
    path: std::path::PathBuf,
    tmp: tempfile::TempDir,
}

impl StagedFolder {
    /// Refuses at once, before any work, when `path` is a file or a non-empty folder that
    /// `replaceable` does not accept.
    pub fn create(path: &Path, replaceable: impl Fn(&Path) -> bool) -> io::Result<StagedFolder> {
        if path.exists() {
            let empty = path.is_dir() && std::fs::read_dir(path)?.next().is_none();
            if !path.is_dir() || !(empty || replaceable(path)) {
                return Err(io::Error::other(format!(
                    "{} exists and is not a folder this command wrote: choose another --out",
                    path.display()
                )));
            }
        }
        let dir = path.parent().filter(|d| !d.as_os_str().is_empty()).unwrap_or(Path::new("."));
        let tmp = tempfile::Builder::new().prefix(".timeweave-").tempdir_in(dir)?;
        Ok(StagedFolder { path: path.to_path_buf(), tmp })
    }
    /// The temporary folder to write into.
    pub fn dir(&self) -> &Path {
        self.tmp.path()
    }
    /// Gives the folder its name, replacing the old one.
    pub fn commit(self) -> io::Result<()> {
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            std::fs::set_permissions(self.tmp.path(), std::fs::Permissions::from_mode(0o755))?;
        }
        let new = self.tmp.keep();
        if self.path.exists() {
            let old = new.with_extension("old");
            std::fs::rename(&self.path, &old)?;
            std::fs::rename(&new, &self.path)?;
            std::fs::remove_dir_all(&old)?;
        } else {
            std::fs::rename(&new, &self.path)?;
        }
        Ok(())
    }
}

/// A temporary file is created readable by its owner only; the output a user asked for gets the
/// usual mode (0644) instead.
fn readable(path: &Path) -> io::Result<()> {
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        std::fs::set_permissions(path, std::fs::Permissions::from_mode(0o644))?;
    }
    let _ = path;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_failed_write_leaves_nothing() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("out.csv");
        let r: io::Result<()> = write_atomically(&path, |w| {
            w.write_all(b"half")?;
            Err(io::Error::other("stopped"))
        });
        assert!(r.is_err());
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0, "no partial or temporary file is left");
        write_atomically(&path, |w| w.write_all(b"whole")).unwrap();
        assert_eq!(std::fs::read(&path).unwrap(), b"whole");
    }
}
