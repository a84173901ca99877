//! The one way the tool writes a file (exports, CSV lists, SVG pictures, netlists, sheets, and
//! anything added later). A write:
//! - refuses the stock database and its `-wal`/`-shm`/`-journal` companions, compared by file
//!   identity (device and inode) when the file exists and by the resolved path when it does not
//!   yet, never by the text of the path;
//! - refuses to replace an existing file unless the user said `--force` (or the file lies in a
//!   folder the writer was told it may replace files in, such as the demo's own folder);
//! - never follows a symbolic link at the target onto another file;
//! - goes to a temporary file in the same folder, is flushed to disk and moved into place, so a
//!   full disk or a kill never leaves half a file where a good one was. Without `--force` the
//!   move is a hard link, which fails rather than replace a file made meanwhile.
//!
//! Folders an option names (`--svg DIR`) are made with [`FileWriter::folder`], which says plainly
//! when the name is a file.

use anyhow::{Context as _, bail};
use std::io::Write as _;
use std::path::{Component, Path, PathBuf};

/// Where files may go: which files are protected, and whether existing files may be replaced.
#[derive(Debug, Clone, Default)]
pub struct FileWriter {
    /// The database and its companions, as given and as resolved; none of them is ever written.
    protected: Vec<PathBuf>,
    /// Replace existing files.
    force: bool,
    /// A folder (resolved) in which existing files may be replaced without `--force`.
    replace_within: Option<PathBuf>,
}

/// The companions SQLite keeps beside a database file.
const COMPANIONS: [&str; 3] = ["-wal", "-shm", "-journal"];

impl FileWriter {
    /// A writer that protects the database at `db` (and its `-wal`, `-shm`, `-journal`).
    pub fn new(db: Option<&Path>, force: bool) -> Self {
        let mut protected = Vec::new();
        if let Some(d) = db {
            // The path as given and, when it is (or goes through) a link, where it leads:
            // SQLite puts the companions beside the real file.
            let mut bases = vec![d.to_path_buf()];
            if let Some(real) = resolve(d).filter(|r| r != d) {
                bases.push(real);
            }
            for base in bases {
                for suffix in COMPANIONS {
                    let mut s = base.as_os_str().to_owned();
                    s.push(suffix);
                    protected.push(PathBuf::from(s));
                }
                protected.push(base);
            }
        }
        Self {
            protected,
            force,
            replace_within: None,
        }
    }

    /// The same writer, also protecting the database at `db` and its companions.
    pub fn protecting(mut self, db: &Path) -> Self {
        let more = Self::new(Some(db), self.force).protected;
        self.protected.extend(more);
        self
    }

    /// The same writer, also allowed to replace files inside `dir` and its subfolders (for a
    /// folder the tool itself owns, such as the demo's output folder). The database stays
    /// protected.
    pub fn replacing_within(mut self, dir: &Path) -> Self {
        self.replace_within = resolve(dir);
        self
    }

    /// Whether existing files may be replaced.
    pub fn force(&self) -> bool {
        self.force
    }

    /// Make the folder `dir` (and its parents) for files to go in; a clear error when a part
    /// of it is a file.
    pub fn folder(&self, dir: &Path) -> anyhow::Result<()> {
        let mut at = PathBuf::new();
        for part in dir.components() {
            at.push(part);
            match std::fs::metadata(&at) {
                Ok(m) if m.is_dir() => continue,
                Ok(_) => bail!(
                    "{} is a file, not a folder; give a folder name here (files go inside it)",
                    at.display()
                ),
                Err(e) if e.kind() == std::io::ErrorKind::NotFound => break,
                Err(e) => {
                    return Err(e).with_context(|| format!("cannot look at {}", at.display()));
                }
            }
        }
        std::fs::create_dir_all(dir).with_context(|| format!("creating folder {}", dir.display()))
    }

    /// Write `bytes` to `path` safely (see the module header). The folder must exist (see
    /// [`FileWriter::folder`]).
    pub fn write(&self, path: &Path, bytes: &[u8]) -> anyhow::Result<()> {
        let Some(name) = path.file_name().map(|n| n.to_string_lossy().into_owned()) else {
            bail!("{} does not name a file", path.display());
        };
        let replace = self.check_target(path)?;
        let dir = match path.parent() {
            Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
            _ => PathBuf::from("."),
        };
        // Keep the temporary name within the usual 255-byte limit of a file name.
        let stem: String = name.chars().take(120).collect();
        let mut tmp = None;
        for attempt in 0..100u32 {
            let candidate = dir.join(format!(".{stem}.{}.{attempt}.tmp", std::process::id()));
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
            if let Some(perm) = replace.as_ref() {
                // A replaced file keeps who may read it.
                file.set_permissions(perm.clone())?;
            }
            file.sync_all()?;
            Ok(())
        })();
        drop(file);
        if let Err(e) = result {
            let _ = std::fs::remove_file(&tmp_path);
            return Err(e)
                .with_context(|| format!("writing {} (nothing was replaced)", path.display()));
        }
        let placed = self.place(&tmp_path, path, replace.is_some());
        let _ = std::fs::remove_file(&tmp_path);
        placed?;
        // Make the new name itself durable.
        if let Ok(d) = std::fs::File::open(&dir) {
            let _ = d.sync_all();
        }
        Ok(())
    }

    /// Move the finished temporary file to `path`.
    fn place(&self, tmp: &Path, path: &Path, replacing: bool) -> anyhow::Result<()> {
        // Check again just before the move: another process may have made the file since.
        self.check_target(path)?;
        if !replacing {
            match std::fs::hard_link(tmp, path) {
                Ok(()) => return Ok(()),
                Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
                    bail!(
                        "{} was created by something else meanwhile; nothing was replaced",
                        path.display()
                    )
                }
                // A file system without hard links: fall back to the rename below.
                Err(_) => {}
            }
        }
        std::fs::rename(tmp, path).with_context(|| format!("writing {}", path.display()))
    }

    /// Refuse a target that is the database, a link, a folder or (without `--force`) an
    /// existing file. Returns the permissions of the file it would replace, if any.
    fn check_target(&self, path: &Path) -> anyhow::Result<Option<std::fs::Permissions>> {
        let meta = match std::fs::symlink_metadata(path) {
            Ok(m) => Some(m),
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => None,
            Err(e) => return Err(e).with_context(|| format!("cannot look at {}", path.display())),
        };
        if meta.as_ref().is_some_and(|m| m.file_type().is_symlink()) {
            bail!(
                "{} is a symbolic link; onhand does not write through links (give the real path)",
                path.display()
            );
        }
        if self.is_protected(path) {
            bail!(
                "{} is the stock database (or one of its journal files); nothing was written, \
                 choose another file name",
                path.display()
            );
        }
        let Some(meta) = meta else {
            return Ok(None);
        };
        if meta.is_dir() {
            bail!("{} is a folder, not a file", path.display());
        }
        if !meta.is_file() {
            bail!(
                "{} is not a plain file; onhand writes only plain files",
                path.display()
            );
        }
        let inside_own_folder = self.replace_within.as_ref().is_some_and(|own| {
            path.parent()
                .map(|p| {
                    if p.as_os_str().is_empty() {
                        Path::new(".")
                    } else {
                        p
                    }
                })
                .and_then(resolve)
                .is_some_and(|p| p.starts_with(own))
        });
        if !self.force && !inside_own_folder {
            bail!(
                "{} already exists; give another name, or --force to replace it",
                path.display()
            );
        }
        Ok(Some(meta.permissions()))
    }

    /// Whether `path` is the database or a companion: the same file on disk, or (when neither
    /// exists yet) the same resolved path.
    fn is_protected(&self, path: &Path) -> bool {
        let target = resolve(path);
        self.protected.iter().any(|p| {
            same_file(path, p) || (target.is_some() && resolve(p).is_some() && resolve(p) == target)
        })
    }
}

/// The absolute path `p` names with every link and `.`/`..` resolved; for a file that does not
/// exist yet, its resolved folder joined with its name.
fn resolve(p: &Path) -> Option<PathBuf> {
    if let Ok(real) = std::fs::canonicalize(p) {
        return Some(real);
    }
    let name = p.file_name()?;
    if matches!(p.components().next_back(), Some(Component::ParentDir)) {
        return None;
    }
    let parent = match p.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    std::fs::canonicalize(parent).ok().map(|d| d.join(name))
}

/// Whether two paths name the same existing file on disk (device and inode on Unix).
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

#[cfg(test)]
mod tests {
    use super::*;

    fn bench() -> (tempfile::TempDir, PathBuf) {
        let dir = tempfile::tempdir().expect("tmp");
        let db = dir.path().join("stock.db");
        std::fs::write(&db, b"SQLite format 3\0 pretend").expect("db");
        (dir, db)
    }

    fn err(r: anyhow::Result<()>) -> String {
        format!("{:#}", r.expect_err("must be refused"))
    }

    #[test]
    fn the_database_and_its_companions_are_refused_by_identity() {
        let (dir, db) = bench();
        let w = FileWriter::new(Some(&db), true);
        assert!(err(w.write(&db, b"x")).contains("stock database"));
        // Another spelling of the same file: through `..`, and a hard link.
        let sub = dir.path().join("sub");
        std::fs::create_dir(&sub).expect("sub");
        let odd = sub.join("..").join("stock.db");
        assert!(err(w.write(&odd, b"x")).contains("stock database"));
        let hard = dir.path().join("hard.db");
        std::fs::hard_link(&db, &hard).expect("link");
        assert!(err(w.write(&hard, b"x")).contains("stock database"));
        // The -wal and -shm files, whether they exist yet or not.
        let wal = dir.path().join("stock.db-wal");
        assert!(err(w.write(&wal, b"x")).contains("stock database"));
        std::fs::write(dir.path().join("stock.db-shm"), b"").expect("shm");
        let shm = sub.join("../stock.db-shm");
        assert!(err(w.write(&shm, b"x")).contains("stock database"));
        assert_eq!(
            std::fs::read(&db).expect("db"),
            b"SQLite format 3\0 pretend"
        );
    }

    #[test]
    fn a_database_not_yet_created_is_still_protected() {
        let dir = tempfile::tempdir().expect("tmp");
        let db = dir.path().join("new.db");
        let w = FileWriter::new(Some(&db), false);
        let other = dir.path().join(".").join("new.db");
        assert!(err(w.write(&other, b"x")).contains("stock database"));
        assert!(!db.exists());
    }

    #[test]
    fn a_database_reached_through_a_link_protects_the_real_file() {
        let (dir, db) = bench();
        let link = dir.path().join("link.db");
        std::os::unix::fs::symlink(&db, &link).expect("symlink");
        // The store is given as the link; writing to the real file (or its -wal) is refused.
        let w = FileWriter::new(Some(&link), true);
        assert!(err(w.write(&db, b"x")).contains("stock database"));
        assert!(err(w.write(&dir.path().join("stock.db-wal"), b"x")).contains("stock database"));
    }

    #[test]
    fn a_symlink_at_the_target_is_never_followed() {
        let (dir, db) = bench();
        let w = FileWriter::new(None, true);
        // A link onto the database, for a writer that does not know the database.
        let onto_db = dir.path().join("out.csv");
        std::os::unix::fs::symlink(&db, &onto_db).expect("symlink");
        assert!(err(w.write(&onto_db, b"x")).contains("symbolic link"));
        // A dangling link that would create a file elsewhere.
        let dangling = dir.path().join("d.csv");
        std::os::unix::fs::symlink(dir.path().join("elsewhere"), &dangling).expect("symlink");
        assert!(err(w.write(&dangling, b"x")).contains("symbolic link"));
        assert!(!dir.path().join("elsewhere").exists());
        assert_eq!(
            std::fs::read(&db).expect("db"),
            b"SQLite format 3\0 pretend"
        );
    }

    #[test]
    fn an_existing_file_is_replaced_only_with_force() {
        let dir = tempfile::tempdir().expect("tmp");
        let p = dir.path().join("out.csv");
        let w = FileWriter::new(None, false);
        w.write(&p, b"one").expect("new file");
        assert!(err(w.write(&p, b"two")).contains("--force"));
        assert_eq!(std::fs::read(&p).expect("read"), b"one");
        FileWriter::new(None, true)
            .write(&p, b"two")
            .expect("forced");
        assert_eq!(std::fs::read(&p).expect("read"), b"two");
        // No temporary file is left behind.
        let left: Vec<_> = std::fs::read_dir(dir.path())
            .expect("ls")
            .filter_map(Result::ok)
            .map(|e| e.file_name())
            .collect();
        assert_eq!(left, vec![std::ffi::OsString::from("out.csv")]);
    }

    #[test]
    fn a_relative_path_is_written_where_it_points() {
        let dir = tempfile::tempdir().expect("tmp");
        std::fs::create_dir(dir.path().join("a")).expect("a");
        let p = dir.path().join("a/../b.txt");
        FileWriter::new(None, false).write(&p, b"x").expect("write");
        assert_eq!(std::fs::read(dir.path().join("b.txt")).expect("b"), b"x");
    }

    #[test]
    fn a_failed_write_leaves_the_old_file_whole() {
        let dir = tempfile::tempdir().expect("tmp");
        let p = dir.path().join("keep.csv");
        std::fs::write(&p, b"good backup").expect("old");
        // A folder that cannot take the temporary file: the old file is untouched.
        let ro = dir.path().join("ro");
        std::fs::create_dir(&ro).expect("ro");
        let inside = ro.join("keep.csv");
        std::fs::write(&inside, b"good backup").expect("old");
        use std::os::unix::fs::PermissionsExt as _;
        std::fs::set_permissions(&ro, std::fs::Permissions::from_mode(0o500)).expect("chmod");
        let r = FileWriter::new(None, true).write(&inside, b"new");
        std::fs::set_permissions(&ro, std::fs::Permissions::from_mode(0o700)).expect("chmod");
        // Root may write anyway; then the write must have fully succeeded instead.
        match r {
            Err(_) => assert_eq!(std::fs::read(&inside).expect("read"), b"good backup"),
            Ok(()) => assert_eq!(std::fs::read(&inside).expect("read"), b"new"),
        }
        assert_eq!(std::fs::read(&p).expect("read"), b"good backup");
    }

    #[test]
    fn folders_and_odd_targets_say_what_is_wrong() {
        let dir = tempfile::tempdir().expect("tmp");
        let w = FileWriter::new(None, true);
        assert!(err(w.write(dir.path(), b"x")).contains("folder"));
        let afile = dir.path().join("afile");
        std::fs::write(&afile, b"").expect("afile");
        let e = format!("{:#}", w.folder(&afile).expect_err("a file"));
        assert!(e.contains("is a file, not a folder"), "{e}");
        let e = format!("{:#}", w.folder(&afile.join("deeper")).expect_err("a file"));
        assert!(e.contains("is a file, not a folder"), "{e}");
        w.folder(&dir.path().join("x/y")).expect("new folders");
        assert!(dir.path().join("x/y").is_dir());
    }

    #[test]
    fn an_own_folder_allows_replacing_only_inside_it() {
        let dir = tempfile::tempdir().expect("tmp");
        let own = dir.path().join("own");
        std::fs::create_dir(&own).expect("own");
        let w = FileWriter::new(None, false).replacing_within(&own);
        let inside = own.join("a.svg");
        w.write(&inside, b"1").expect("first");
        w.write(&inside, b"2").expect("replace inside");
        assert_eq!(std::fs::read(&inside).expect("read"), b"2");
        std::fs::create_dir(own.join("sub")).expect("sub");
        w.write(&own.join("sub/c.svg"), b"1").expect("first");
        w.write(&own.join("sub/c.svg"), b"2")
            .expect("replace in a subfolder");
        let outside = dir.path().join("b.svg");
        w.write(&outside, b"1").expect("first");
        assert!(err(w.write(&outside, b"2")).contains("--force"));
        // The database stays protected inside the own folder too.
        let db = own.join("x.db");
        std::fs::write(&db, b"db").expect("db");
        let w = FileWriter::new(Some(&db), false).replacing_within(&own);
        assert!(err(w.write(&db, b"x")).contains("stock database"));
    }
}
