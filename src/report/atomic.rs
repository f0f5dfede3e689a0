//! Output files written atomically: the bytes go to a temporary file beside the target, which
//! is flushed to disk and then renamed over the target. A reader sees the old file or the new
//! one, never a part; on any error the temporary file is removed and the target is untouched.

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
}
