//! The one way the tool writes a file (exports, CSV lists, SVG pictures, netlists, sheets, and
//! anything added later). A write:
//! - refuses the stock database and its `-wal`/`-shm` companions, compared by file identity
//!   (device and inode), not by the text of the path;
//! - refuses to replace an existing file unless the user said `--force`;
//! - never follows a symbolic link at the target onto another file;
//! - goes to a temporary file in the same folder, is flushed to disk and renamed over the target,
//!   so a full disk or a kill never leaves half a file where a good one was.

use anyhow::{Context as _, bail};
use std::io::Write as _;
use std::path::{Path, PathBuf};

/// Where files may go: which files are protected, and whether existing files may be replaced.
#[derive(Debug, Clone, Default)]
pub struct FileWriter {
    /// The database and its companions; none of them is ever written.
    protected: Vec<PathBuf>,
    /// Replace existing files.
    force: bool,
}

impl FileWriter {
    /// A writer that protects the database at `db` (and its `-wal`, `-shm`, `-journal`).
    pub fn new(db: Option<&Path>, force: bool) -> Self {
        let protected = db
            .map(|d| {
                let mut v = vec![d.to_path_buf()];
                for suffix in ["-wal", "-shm", "-journal"] {
                    let mut s = d.as_os_str().to_owned();
                    s.push(suffix);
                    v.push(PathBuf::from(s));
                }
                v
            })
            .unwrap_or_default();
        Self { protected, force }
    }

    /// Whether existing files may be replaced.
    pub fn force(&self) -> bool {
        self.force
    }

    /// Write `bytes` to `path` safely (see the module header).
    pub fn write(&self, path: &Path, bytes: &[u8]) -> anyhow::Result<()> {
        self.check_target(path)?;
        let dir = match path.parent() {
            Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
            _ => PathBuf::from("."),
        };
        let name = path
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_else(|| "out".to_string());
        let mut tmp = None;
        for attempt in 0..100u32 {
            let candidate = dir.join(format!(".{name}.{}.{attempt}.tmp", std::process::id()));
            match std::fs::OpenOptions::new()
                .write(true)
                .create_new(true)
                .open(&candidate)
            {
                Ok(f) => {
                    tmp = Some((candidate, f));
                    break;
                }
                Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => continue,
                Err(e) => {
                    return Err(e).with_context(|| format!("cannot write in {}", dir.display()));
                }
            }
        }
        let Some((tmp_path, mut file)) = tmp else {
            bail!("cannot make a temporary file in {}", dir.display());
        };
        let result = (|| -> std::io::Result<()> {
            file.write_all(bytes)?;
            file.sync_all()?;
            Ok(())
        })();
        if let Err(e) = result {
            let _ = std::fs::remove_file(&tmp_path);
            return Err(e)
                .with_context(|| format!("writing {} (nothing was replaced)", path.display()));
        }
        drop(file);
        // Check again just before the rename: another process may have made the file since.
        if let Err(e) = self.check_target(path) {
            let _ = std::fs::remove_file(&tmp_path);
            return Err(e);
        }
        if let Err(e) = std::fs::rename(&tmp_path, path) {
            let _ = std::fs::remove_file(&tmp_path);
            return Err(e).with_context(|| format!("writing {}", path.display()));
        }
        Ok(())
    }

    /// Refuse a target that is the database, a link, or (without `--force`) an existing file.
    fn check_target(&self, path: &Path) -> anyhow::Result<()> {
        let meta = match std::fs::symlink_metadata(path) {
            Ok(m) => m,
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(()),
            Err(e) => return Err(e).with_context(|| format!("cannot look at {}", path.display())),
        };
        if meta.file_type().is_symlink() {
            bail!(
                "{} is a symbolic link; onhand does not write through links (give the real path)",
                path.display()
            );
        }
        if meta.is_dir() {
            bail!("{} is a folder, not a file", path.display());
        }
        for p in &self.protected {
            if same_file(path, p) {
                bail!(
                    "{} is the stock database (or one of its journal files); choose another \
                     file name",
                    path.display()
                );
            }
        }
        if !self.force {
            bail!(
                "{} already exists; give another name, or --force to replace it",
                path.display()
            );
        }
        Ok(())
    }
}

/// Whether two paths name the same file on disk (device and inode on Unix).
pub(crate) fn same_file(a: &Path, b: &Path) -> bool {
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt as _;
        match (std::fs::metadata(a), std::fs::metadata(b)) {
            (Ok(x), Ok(y)) => x.dev() == y.dev() && x.ino() == y.ino(),
            _ => false,
        }
    }
    #[cfg(not(unix))]
    {
        match (std::fs::canonicalize(a), std::fs::canonicalize(b)) {
            (Ok(x), Ok(y)) => x == y,
            _ => false,
        }
    }
}
