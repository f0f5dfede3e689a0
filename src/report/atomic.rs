//! Output files written atomically: the bytes go to a temporary file beside the target, which
//! is flushed to disk and then renamed over the target. A reader sees the old file or the new
//! one, never a part; on any error the temporary file is removed and the target is untouched.
//! A directory of files (a report) is written the same way: into a temporary sibling
//! directory, every file flushed, then renamed into place.

use std::fs::{File, OpenOptions};
use std::io::{self, Write};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

/// Distinguishes temporary files of one process (several writes may run at once).
static COUNTER: AtomicU64 = AtomicU64::new(0);

/// Writes `bytes` to `path` atomically (same directory, then rename).
pub fn write_atomically(path: &Path, bytes: &[u8]) -> io::Result<()> {
    write_with(path, |file| file.write_all(bytes))
}

/// The atomic write with the contents produced by `fill` into the temporary file.
fn write_with(path: &Path, fill: impl FnOnce(&mut File) -> io::Result<()>) -> io::Result<()> {
    let name = path.file_name().ok_or_else(|| {
        io::Error::new(
            io::ErrorKind::InvalidInput,
            format!("{} does not name a file", path.display()),
        )
    })?;
    let directory = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let (temporary, file) = create_temporary(&directory, &name.to_string_lossy())?;
    let written = fill_and_sync(file, fill).and_then(|()| std::fs::rename(&temporary, path));
    if written.is_err() {
        let _ = std::fs::remove_file(&temporary);
    }
    written?;
    sync_directory(&directory);
    Ok(())
}

/// A new file `.NAME.tmp-<pid>-<n>` in `directory`, created exclusively (never an existing one).
fn create_temporary(directory: &Path, name: &str) -> io::Result<(PathBuf, File)> {
    loop {
        let n = COUNTER.fetch_add(1, Ordering::Relaxed);
        let candidate = directory.join(format!(".{name}.tmp-{}-{n}", std::process::id()));
        match OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&candidate)
        {
            Ok(file) => return Ok((candidate, file)),
            // Left behind by an earlier process with the same id: take the next number.
            Err(e) if e.kind() == io::ErrorKind::AlreadyExists => continue,
            Err(e) => return Err(e),
        }
    }
}

fn fill_and_sync(mut file: File, fill: impl FnOnce(&mut File) -> io::Result<()>) -> io::Result<()> {
    fill(&mut file)?;
    file.flush()?;
    file.sync_all()
}

/// Makes the rename itself durable where the platform allows it; a failure here leaves the
/// new file in place, so it is not an error.
fn sync_directory(directory: &Path) {
    if let Ok(dir) = File::open(directory) {
        let _ = dir.sync_all();
    }
}

/// Why a directory could not be written.
#[derive(Debug, thiserror::Error)]
pub enum DirectoryError {
    #[error("{0} already exists; add --force to replace it")]
    Exists(String),
    #[error(
        "{0} exists and is not a report this tool wrote (it holds {1}); it is not replaced, even with --force"
    )]
    NotReplaceable(String, String),
    #[error("{0}: {1}")]
    Io(String, io::Error),
}

/// Writes `files` (name, bytes) as the directory `target`: all of them go into a temporary
/// sibling directory, each flushed to disk, and that directory is renamed to `target`. A
/// reader (or a crash) sees no directory or a complete one, never part of one. An existing
/// `target` is refused unless `force`; with `force` it is replaced only if it holds nothing
/// but plain files and a `report.html` or `report.md` (an earlier report): it is renamed aside
/// first, the new one renamed in, and the old one removed.
pub fn write_directory_atomically(
    target: &Path,
    files: &[(String, Vec<u8>)],
    force: bool,
) -> Result<(), DirectoryError> {
    let shown = target.display().to_string();
    let io_error = |e: io::Error| DirectoryError::Io(shown.clone(), e);
    let (parent, name) = parent_and_name(target).map_err(io_error)?;
    let existing = std::fs::symlink_metadata(target).is_ok();
    if existing {
        if !force {
            return Err(DirectoryError::Exists(shown));
        }
        check_replaceable(target)?;
    }
    let temporary = create_temporary_directory(&parent, &name).map_err(io_error)?;
    let written = fill_directory(&temporary, files)
        .and_then(|()| move_into_place(&temporary, target, &parent, &name, existing));
    if let Err(e) = written {
        let _ = std::fs::remove_dir_all(&temporary);
        return Err(io_error(e));
    }
    sync_directory(&parent);
    Ok(())
}

fn parent_and_name(path: &Path) -> io::Result<(PathBuf, String)> {
    let name = path.file_name().ok_or_else(|| {
        io::Error::new(
            io::ErrorKind::InvalidInput,
            "does not name a directory (it ends in .. or /)",
        )
    })?;
    let parent = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    Ok((parent, name.to_string_lossy().into_owned()))
}

/// An existing target may be replaced only when it looks like an earlier report.
fn check_replaceable(target: &Path) -> Result<(), DirectoryError> {
    let shown = target.display().to_string();
    let refuse = |what: String| DirectoryError::NotReplaceable(shown.clone(), what);
    if !std::fs::symlink_metadata(target).is_ok_and(|m| m.is_dir()) {
        return Err(refuse("no directory: a file or a link".to_string()));
    }
    let entries = std::fs::read_dir(target).map_err(|e| DirectoryError::Io(shown.clone(), e))?;
    let mut is_report = false;
    for entry in entries {
        let entry = entry.map_err(|e| DirectoryError::Io(shown.clone(), e))?;
        let name = entry.file_name().to_string_lossy().into_owned();
        if !entry.file_type().is_ok_and(|t| t.is_file()) {
            return Err(refuse(format!("{name}, which is not a plain file")));
        }
        is_report |= name == "report.html" || name == "report.md";
    }
    if is_report {
        Ok(())
    } else {
        Err(refuse("no report.html or report.md".to_string()))
    }
}

/// A new directory `.NAME.tmp-<pid>-<n>` in `parent`, created exclusively.
fn create_temporary_directory(parent: &Path, name: &str) -> io::Result<PathBuf> {
    loop {
        let candidate = sibling(parent, name, "tmp");
        match std::fs::create_dir(&candidate) {
            Ok(()) => return Ok(candidate),
            Err(e) if e.kind() == io::ErrorKind::AlreadyExists => continue,
            Err(e) => return Err(e),
        }
    }
}

fn sibling(parent: &Path, name: &str, kind: &str) -> PathBuf {
    let n = COUNTER.fetch_add(1, Ordering::Relaxed);
    parent.join(format!(".{name}.{kind}-{}-{n}", std::process::id()))
}

fn fill_directory(directory: &Path, files: &[(String, Vec<u8>)]) -> io::Result<()> {
    for (name, bytes) in files {
        if name.is_empty() || name.contains(['/', '\\']) || name.starts_with('.') {
            return Err(io::Error::new(
                io::ErrorKind::InvalidInput,
                format!("{name:?} is not a plain file name"),
            ));
        }
        let file = OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(directory.join(name))?;
        fill_and_sync(file, |f| f.write_all(bytes))?;
    }
    sync_directory(directory);
    Ok(())
}

/// Renames the finished directory to `target`; an existing target is moved aside first,
/// put back if the rename fails, and removed once the new one is in place.
fn move_into_place(
    temporary: &Path,
    target: &Path,
    parent: &Path,
    name: &str,
    existing: bool,
) -> io::Result<()> {
    if !existing {
        return std::fs::rename(temporary, target);
    }
    let aside = sibling(parent, name, "old");
    std::fs::rename(target, &aside)?;
    if let Err(e) = std::fs::rename(temporary, target) {
        let _ = std::fs::rename(&aside, target);
        return Err(e);
    }
    let _ = std::fs::remove_dir_all(&aside);
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn leftovers(dir: &Path) -> Vec<String> {
        std::fs::read_dir(dir)
            .expect("the test directory")
            .filter_map(|e| e.ok())
            .map(|e| e.file_name().to_string_lossy().into_owned())
            .filter(|n| n.contains(".tmp-"))
            .collect()
    }

    #[test]
    fn the_target_appears_whole_and_replaces_the_old_file() {
        let dir = tempfile::tempdir().expect("a temporary directory");
        let target = dir.path().join("out.csv");
        std::fs::write(&target, "old contents\n").expect("an old file");
        let bytes: Vec<u8> = (0..200_000u32).map(|i| b'a' + (i % 26) as u8).collect();
        write_atomically(&target, &bytes).expect("the write succeeds");
        assert_eq!(std::fs::read(&target).expect("the new file"), bytes);
        assert!(leftovers(dir.path()).is_empty());
    }

    #[test]
    fn an_error_in_the_middle_of_the_write_keeps_the_old_target() {
        let dir = tempfile::tempdir().expect("a temporary directory");
        let target = dir.path().join("out.csv");
        std::fs::write(&target, "old contents\n").expect("an old file");
        let result = write_with(&target, |file| {
            file.write_all(b"half of the new")?;
            Err(io::Error::other("interrupted"))
        });
        assert_eq!(
            result.expect_err("the write fails").to_string(),
            "interrupted"
        );
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "old contents\n");
        assert!(leftovers(dir.path()).is_empty());
    }

    #[test]
    fn a_missing_directory_fails_and_leaves_nothing() {
        let dir = tempfile::tempdir().expect("a temporary directory");
        let target = dir.path().join("no-such-dir").join("out.csv");
        let error = write_atomically(&target, b"x").expect_err("no parent directory");
        assert_eq!(error.kind(), io::ErrorKind::NotFound);
        assert!(!target.exists());
        assert!(leftovers(dir.path()).is_empty());
    }

    #[test]
    fn a_failed_rename_keeps_the_old_target_and_removes_the_temporary_file() {
        // The target is a non-empty directory: the temporary file is written in full, then
        // the rename over the target fails, which is the last step that can go wrong.
        let dir = tempfile::tempdir().expect("a temporary directory");
        let target = dir.path().join("out.csv");
        std::fs::create_dir(&target).expect("a directory in the way");
        std::fs::write(target.join("keep"), "old").expect("its contents");
        assert!(write_atomically(&target, b"new contents").is_err());
        assert_eq!(std::fs::read_to_string(target.join("keep")).unwrap(), "old");
        assert!(leftovers(dir.path()).is_empty());
    }

    #[cfg(unix)]
    #[test]
    fn a_read_only_directory_fails_and_leaves_the_old_file_intact() {
        use std::os::unix::fs::PermissionsExt;
        let dir = tempfile::tempdir().expect("a temporary directory");
        let target = dir.path().join("out.csv");
        std::fs::write(&target, "old contents\n").expect("an old file");
        let mode = |m| std::fs::Permissions::from_mode(m);
        std::fs::set_permissions(dir.path(), mode(0o555)).expect("read-only directory");
        let probe = dir.path().join("probe");
        // As root the directory stays writable: then there is nothing to show here.
        let writable = File::create(&probe).is_ok();
        let result = write_atomically(&target, b"new contents\n");
        let _ = std::fs::remove_file(&probe);
        std::fs::set_permissions(dir.path(), mode(0o755)).expect("writable again");
        if writable {
            return;
        }
        assert!(result.is_err());
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "old contents\n");
        assert!(leftovers(dir.path()).is_empty());
    }

    #[test]
    fn a_path_without_a_file_name_is_refused() {
        assert!(write_atomically(Path::new("/"), b"x").is_err());
    }

    fn report_files() -> Vec<(String, Vec<u8>)> {
        vec![
            ("report.html".to_string(), b"<html></html>".to_vec()),
            ("report.md".to_string(), b"# report".to_vec()),
        ]
    }

    fn names_in(dir: &Path) -> Vec<String> {
        let mut names: Vec<String> = std::fs::read_dir(dir)
            .expect("the directory")
            .filter_map(|e| e.ok())
            .map(|e| e.file_name().to_string_lossy().into_owned())
            .collect();
        names.sort();
        names
    }

    #[test]
    fn a_directory_appears_whole() {
        let dir = tempfile::tempdir().expect("a temporary directory");
        let target = dir.path().join("out");
        write_directory_atomically(&target, &report_files(), false).expect("written");
        assert_eq!(names_in(&target), ["report.html", "report.md"]);
        assert_eq!(names_in(dir.path()), ["out"]);
    }

    #[test]
    fn an_existing_directory_is_refused_without_force_and_replaced_with_it() {
        let dir = tempfile::tempdir().expect("a temporary directory");
        let target = dir.path().join("out");
        std::fs::create_dir(&target).expect("an old report");
        std::fs::write(target.join("report.md"), "old").expect("its file");
        std::fs::write(target.join("stale.svg"), "old").expect("its plot");
        let refused = write_directory_atomically(&target, &report_files(), false);
        assert!(matches!(refused, Err(DirectoryError::Exists(_))));
        assert_eq!(
            std::fs::read_to_string(target.join("report.md")).unwrap(),
            "old"
        );
        write_directory_atomically(&target, &report_files(), true).expect("replaced");
        assert_eq!(names_in(&target), ["report.html", "report.md"]);
        assert_eq!(names_in(dir.path()), ["out"]);
    }

    #[test]
    fn force_never_replaces_a_directory_that_is_not_a_report() {
        let dir = tempfile::tempdir().expect("a temporary directory");
        let target = dir.path().join("home");
        std::fs::create_dir_all(target.join("documents")).expect("someone's files");
        std::fs::write(target.join("notes.txt"), "keep").expect("a file");
        let refused = write_directory_atomically(&target, &report_files(), true);
        assert!(matches!(refused, Err(DirectoryError::NotReplaceable(..))));
        assert_eq!(
            std::fs::read_to_string(target.join("notes.txt")).unwrap(),
            "keep"
        );
        let file = dir.path().join("plain-file");
        std::fs::write(&file, "keep").expect("a file");
        let refused = write_directory_atomically(&file, &report_files(), true);
        assert!(matches!(refused, Err(DirectoryError::NotReplaceable(..))));
        assert_eq!(std::fs::read_to_string(&file).unwrap(), "keep");
    }

    #[test]
    fn a_bad_file_name_leaves_nothing() {
        let dir = tempfile::tempdir().expect("a temporary directory");
        let target = dir.path().join("out");
        let files = vec![
            ("report.md".to_string(), b"x".to_vec()),
            ("../escape".to_string(), b"x".to_vec()),
        ];
        assert!(write_directory_atomically(&target, &files, false).is_err());
        assert!(names_in(dir.path()).is_empty());
    }

    #[test]
    fn a_parent_that_is_a_file_fails_and_leaves_nothing() {
        let dir = tempfile::tempdir().expect("a temporary directory");
        let blocker = dir.path().join("blocker");
        std::fs::write(&blocker, "x").expect("a file");
        let result = write_directory_atomically(&blocker.join("out"), &report_files(), false);
        assert!(matches!(result, Err(DirectoryError::Io(..))));
        assert_eq!(names_in(dir.path()), ["blocker"]);
    }
}
