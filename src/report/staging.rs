//! Writing outputs safely: never over an input, all or nothing, nothing left on failure.
//!
//! Every command that writes files hands them here together with the files the run read.
//! A [`Stage`] refuses a target that is one of those inputs (naming it), or a folder in the way;
//! writes every file into a temporary folder beside the output folder, each flushed to disk on a
//! thread of its own as soon as it is written (so a run's flushes overlap the rendering of its
//! later files); and only when all are written and flushed (and no stop was requested) moves
//! them into place, keeping each replaced file until the last move succeeded so that a failed
//! move puts everything back. Folders it had to create are removed again on failure.
//! [`write_outputs`] does all of it for files already rendered. A second Ctrl-C exits at once
//! through [`abandon`], which removes the temporary folders, unless the moves are under way (they
//! take milliseconds).

use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Mutex;
use std::thread::JoinHandle;

pub use crate::case::{files_read, FileRead};
use crate::error::{Error, Result};

/// Temporary folders in use, removed by [`abandon`] on a forced exit.
static STAGING: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());
/// The output folders stages in progress created (outermost first), which a forced exit
/// removes when they are empty (found by review: a second Ctrl-C left a new, empty output
/// folder).
static CREATED: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());
/// Set while files are being moved into place, when a forced exit must wait.
static MOVING: AtomicBool = AtomicBool::new(false);

/// Writes `files` (name, contents) into `dir` as one group, after checking that none of them
/// would replace a file in `reads`. Returns the paths written.
pub fn write_outputs(
    dir: &Path,
    files: &[(String, Vec<u8>)],
    reads: &[FileRead],
) -> Result<Vec<PathBuf>> {
    Ok(write_outputs_replacing(dir, files, reads, &[])?.0)
}

/// [`write_outputs`] for a command some of whose files are optional: each name in `optional`
/// that this group does not write but an earlier group left in `dir` is taken away with the same
/// commit ([`Stage::retire`]), so the folder holds one run's outputs. Returns the paths written
/// and the names taken away.
pub fn write_outputs_replacing(
    dir: &Path,
    files: &[(String, Vec<u8>)],
    reads: &[FileRead],
    optional: &[&str],
) -> Result<(Vec<PathBuf>, Vec<String>)> {
    let mut stage = Stage::begin(dir, reads)?;
    for (name, _) in files {
        stage.check_target(name)?;
    }
    for (name, bytes) in files {
        stage.add(name, bytes)?;
    }
    let names: Vec<String> = files.iter().map(|(name, _)| name.clone()).collect();
    let earlier = super::earlier::holds_an_earlier_run(dir);
    let stale: Vec<String> = (optional.iter().map(|name| name.to_string()))
        .filter(|name| earlier && !names.contains(name) && dir.join(name).is_file())
        .collect();
    let stale: Vec<String> = stale
        .into_iter()
        .filter(|name| stage.retire(name))
        .collect();
    Ok((stage.commit(&names)?, stale))
}

/// A staged file's flush, on a thread of its own (`None`: flushed when it was written).
type Flush = Option<JoinHandle<std::io::Result<()>>>;

/// One group of output files on its way into `dir`.
pub struct Stage {
    dir: PathBuf,
    /// The files the run reads, canonical, with their identities ([`file_id`]) and roles.
    inputs: Vec<(PathBuf, Option<FileId>, String)>,
    /// Folders created for the outputs (outermost first), removed again on failure.
    created: Vec<PathBuf>,
    staging: Option<tempfile::TempDir>,
    /// The temporary folder, held locked while it is in use (see [`super::earlier::hold`]).
    _staging_lock: Option<fs::File>,
    /// Each staged file's flush.
    flushes: Mutex<Vec<(PathBuf, Flush)>>,
    /// Files of an earlier group in `dir` that this group takes away ([`Stage::retire`]).
    retired: Vec<String>,
    /// The output folder, held locked until the stage ends (see [`lock_folder`]).
    _lock: Option<fs::File>,
}

impl Stage {
    /// Checks the output folder, creates it when missing and makes the temporary folder.
    pub fn begin(dir: &Path, reads: &[FileRead]) -> Result<Stage> {
        if dir.exists() && !dir.is_dir() {
            return Err(refusal(
                dir,
                "is a file, not a folder; give a folder for the outputs".into(),
            ));
        }
        let inputs = reads
            .iter()
            .filter_map(|(path, role)| {
                Some((fs::canonicalize(path).ok()?, file_id(path), role.clone()))
            })
            .collect();
        let created = create_missing(dir)?;
        let lock = lock_folder(dir).inspect_err(|_| {
            for made in created.iter().rev() {
                let _ = fs::remove_dir(made);
            }
        })?;
        if let Ok(mut folders) = CREATED.lock() {
            folders.extend(created.iter().cloned());
        }
        let mut stage = Stage {
            dir: dir.to_path_buf(),
            inputs,
            created,
            staging: None,
            _staging_lock: None,
            flushes: Mutex::new(Vec::new()),
            retired: Vec::new(),
            _lock: lock,
        };
        super::earlier::remove_abandoned(dir);
        let staging = staging_folder(dir)?;
        register_temporary(staging.path());
        stage._staging_lock = super::earlier::hold(staging.path());
        stage.staging = Some(staging);
        Ok(stage)
    }

    fn staging(&self) -> &Path {
        self.staging
            .as_ref()
            .expect("set by begin until the stage ends")
            .path()
    }

    /// The role of the file at `path` when this run reads it: the same canonical path, or the
    /// same file reached by another path (a bind mount, a hard link; found by review: an output
    /// folder that reached the data folder through a bind mount had a price file named
    /// `peers.csv` overwritten).
    fn input_role(&self, path: &Path) -> Option<&String> {
        let canonical = fs::canonicalize(path).ok()?;
        let id = file_id(path);
        self.inputs
            .iter()
            .find(|(input, input_id, _)| *input == canonical || (id.is_some() && *input_id == id))
            .map(|(_, _, role)| role)
    }

    /// Refuses a target that is an input or a folder.
    pub fn check_target(&self, name: &str) -> Result<()> {
        let target = self.dir.join(name);
        // A file standing where a folder of the outputs goes (`figures`) is refused before
        // anything is written, as a folder where a file goes is (found by review: the run
        // failed only while moving its files).
        let blocked = (target.ancestors().skip(1))
            .take_while(|folder| *folder != self.dir)
            .find(|folder| folder.exists() && !folder.is_dir());
        if let Some(file) = blocked {
            return Err(refusal(
                &self.dir,
                format!(
                    "{} is a file; hurdle writes {name} into a folder of that name and never \
                     replaces a file it did not write",
                    file.display()
                ),
            ));
        }
        let Ok(canonical) = fs::canonicalize(&target) else {
            return Ok(()); // Nothing there yet, so nothing to overwrite.
        };
        if let Some(role) = self.input_role(&target) {
            return Err(refusal(
                &self.dir,
                format!(
                    "writing {name} there would overwrite {}, which this run reads ({role}); \
                     choose another output folder",
                    target.display()
                ),
            ));
        }
        // A symbolic link is replaced itself, never what it points to (a file, a folder, a
        // pipe), so what it points to does not matter here (found by review: a link to a
        // folder was refused as the folder).
        let kind = fs::symlink_metadata(&target).map(|m| m.file_type());
        if kind.as_ref().is_ok_and(|k| k.is_symlink()) {
            return Ok(());
        }
        if canonical.is_dir() {
            return Err(refusal(
                &self.dir,
                format!(
                    "{} is a folder; hurdle writes a file of that name and never replaces a folder",
                    target.display()
                ),
            ));
        }
        // A named pipe, a device or a socket would be replaced by a plain file (found by review:
        // `--csv /dev/null` run as root replaced the device).
        if kind.is_ok_and(|k| !k.is_file()) {
            return Err(refusal(
                &self.dir,
                format!(
                    "{} is not a regular file (a named pipe, a device or a socket); hurdle writes \
                     a file of that name and never replaces anything else",
                    target.display()
                ),
            ));
        }
        Ok(())
    }

    /// Writes one file (a name may hold a subfolder, `figures/…`) into the temporary folder and
    /// starts its flush; callable from several threads at once.
    pub fn add(&self, name: &str, bytes: &[u8]) -> Result<()> {
        self.check_target(name)?;
        let path = self.staging().join(name);
        // Errors name the output file, not the temporary folder that no longer exists when the
        // message is read (found by review: a full disk named `.hurdle-staging-…/report.html`).
        let target = self.dir.join(name);
        let staging_error = |source| Error::Io {
            path: target.clone(),
            action: "cannot write (while staging it beside the output folder)",
            source,
        };
        if let Some(folder) = path.parent() {
            fs::create_dir_all(folder).map_err(staging_error)?;
        }
        let mut file = fs::File::create(&path).map_err(staging_error)?;
        file.write_all(bytes).map_err(staging_error)?;
        // The flush waits on the disk, not on a core: a thread of its own, so twenty files
        // cost about one disk round trip and the caller goes on rendering. Without a thread
        // to be had, it flushes here.
        let file = std::sync::Arc::new(file);
        let flushing = std::sync::Arc::clone(&file);
        let flush = match std::thread::Builder::new().spawn(move || flushing.sync_all()) {
            Ok(flush) => Some(flush),
            Err(_) => {
                file.sync_all().map_err(io_error(&path, "cannot flush"))?;
                None
            }
        };
        self.flushes
            .lock()
            .map_err(|_| stopped_flush(&path))?
            .push((path, flush));
        Ok(())
    }

    /// Marks a file of an earlier group in the folder, which this group does not write, to be
    /// taken away with the commit: set aside with the replaced files, so that a failed commit
    /// puts it back. A file this run reads is never taken away; returns whether the file is
    /// to be taken away, so that only those are reported as removed.
    pub fn retire(&mut self, name: &str) -> bool {
        let reads_it = self.input_role(&self.dir.join(name)).is_some();
        if !reads_it {
            self.retired.push(name.to_string());
        }
        !reads_it
    }

    /// Waits for every flush, then moves the files named in `names` (each added) into place, in
    /// that order, and takes away the retired files; returns the written files' paths.
    pub fn commit(mut self, names: &[String]) -> Result<Vec<PathBuf>> {
        self.wait_for_flushes()?;
        crate::progress::check_stop()?;
        MOVING.store(true, Ordering::SeqCst);
        let moved = move_into_place(self.staging(), &self.dir, names, &self.retired);
        MOVING.store(false, Ordering::SeqCst);
        let moved = moved?;
        discard_previous(self.staging(), names.iter().chain(&self.retired));
        // A subfolder the retired files leave empty (`figures/` after a run without charts)
        // goes too; one that still holds anything, such as a user's own file, stays.
        for name in &self.retired {
            if let Some(parent) = Path::new(name).parent() {
                if !parent.as_os_str().is_empty() {
                    let _ = fs::remove_dir(self.dir.join(parent));
                }
            }
        }
        forget_created(&self.created);
        self.created.clear(); // They hold the outputs now.
        Ok(moved)
    }

    fn wait_for_flushes(&self) -> Result<()> {
        let flushes = match self.flushes.lock() {
            Ok(mut flushes) => std::mem::take(&mut *flushes),
            Err(_) => return Err(stopped_flush(self.staging())),
        };
        let mut outcome = Ok(());
        for (path, flush) in flushes {
            let flushed = match flush.map(JoinHandle::join) {
                None => Ok(()),
                Some(Ok(result)) => result.map_err(io_error(&path, "cannot flush")),
                Some(Err(_)) => Err(stopped_flush(&path)),
            };
            if outcome.is_ok() {
                outcome = flushed;
            }
        }
        outcome
    }
}

impl Drop for Stage {
    /// Removes the temporary folder and, when the stage did not commit, the folders it created
    /// (deepest first, and only if they are empty again).
    fn drop(&mut self) {
        let _ = self.wait_for_flushes();
        if let Some(staging) = self.staging.take() {
            let path = staging.path().to_path_buf();
            drop(staging);
            forget_temporary(&path);
        }
        for folder in self.created.iter().rev() {
            let _ = fs::remove_dir(folder);
        }
        forget_created(&self.created);
    }
}

/// Takes `folders` off the list a forced exit removes.
fn forget_created(folders: &[PathBuf]) {
    if let Ok(mut created) = CREATED.lock() {
        created.retain(|f| !folders.contains(f));
    }
}

fn stopped_flush(path: &Path) -> Error {
    Error::Io {
        path: path.to_path_buf(),
        action: "cannot flush",
        source: std::io::Error::other("a flushing thread stopped"),
    }
}

fn refusal(dir: &Path, message: String) -> Error {
    Error::Argument {
        option: format!("output folder {}", dir.display()),
        message,
    }
}

/// Adds `folder` to the temporary folders a forced exit removes ([`abandon`]).
pub(crate) fn register_temporary(folder: &Path) {
    if let Ok(mut folders) = STAGING.lock() {
        folders.push(folder.to_path_buf());
    }
}

/// Takes `folder` off the temporary folders a forced exit removes.
pub(crate) fn forget_temporary(folder: &Path) {
    if let Ok(mut folders) = STAGING.lock() {
        folders.retain(|f| f != folder);
    }
}

/// Removes every temporary folder in use, and the output folders a stage in progress created
/// when they are empty; for the binary's forced exit on a second Ctrl-C.
/// Returns false while files are being moved into place, when the exit must wait.
pub fn abandon() -> bool {
    if MOVING.load(Ordering::SeqCst) {
        return false;
    }
    if let Ok(folders) = STAGING.lock() {
        for folder in folders.iter() {
            let _ = fs::remove_dir_all(folder);
        }
    }
    if let Ok(folders) = CREATED.lock() {
        for folder in folders.iter().rev() {
            let _ = fs::remove_dir(folder);
        }
    }
    true
}

/// An I/O failure at `path` while doing `action`, as an [`Error::Io`].
pub(crate) fn io_error<'a>(
    path: &'a Path,
    action: &'static str,
) -> impl FnOnce(std::io::Error) -> Error + 'a {
    move |source| Error::Io {
        path: path.to_path_buf(),
        action,
        source,
    }
}

/// Creates `dir` and its missing parents, returning the folders created (outermost first).
fn create_missing(dir: &Path) -> Result<Vec<PathBuf>> {
    let mut missing = Vec::new();
    let mut current = Some(dir);
    while let Some(folder) = current.filter(|f| !f.as_os_str().is_empty() && !f.exists()) {
        missing.push(folder.to_path_buf());
        current = folder.parent();
    }
    missing.reverse();
    let mut made = Vec::new();
    for folder in missing {
        match fs::create_dir(&folder) {
            Ok(()) => made.push(folder),
            // Another run created it meanwhile: it is that run's, not this one's to remove.
            Err(_) if folder.is_dir() => {}
            Err(source) => {
                for folder in made.iter().rev() {
                    let _ = fs::remove_dir(folder);
                }
                return Err(io_error(&folder, "cannot create the output folder")(source));
            }
        }
    }
    Ok(made)
}

/// The output folder opened and locked (an advisory lock, `flock` on Unix, released when the
/// run ends, also when it crashes): two runs writing one folder at once would leave it holding
/// some files of each. A second run is refused while the first holds it. Where a folder cannot
/// be opened or locked (another platform, a file system without locks), runs go unlocked.
fn lock_folder(dir: &Path) -> Result<Option<fs::File>> {
    // A bare file name's folder is the current one (found by review: `grid --csv grid.csv`
    // ran unlocked).
    let dir = match dir.as_os_str().is_empty() {
        true => Path::new("."),
        false => dir,
    };
    let Ok(folder) = fs::File::open(dir) else {
        return Ok(None);
    };
    match folder.try_lock() {
        Ok(()) => Ok(Some(folder)),
        Err(fs::TryLockError::WouldBlock) => Err(refusal(
            dir,
            "is being written by another hurdle run right now; wait for it to finish, or give \
             another output folder"
                .into(),
        )),
        Err(fs::TryLockError::Error(_)) => Ok(None),
    }
}

/// A temporary folder beside `dir`, or inside it when its parent is not writable or a file
/// cannot be moved from beside it into it (a mount point, a container's volume, a symbolic link
/// to another disk; found by review: every run into a mounted folder failed with "Invalid
/// cross-device link").
fn staging_folder(dir: &Path) -> Result<tempfile::TempDir> {
    let parent = dir
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let builder = || {
        let mut b = tempfile::Builder::new();
        b.prefix(".hurdle-staging-");
        b
    };
    let beside = || {
        let staging = builder().tempdir_in(parent)?;
        moves_into(staging.path(), dir)?;
        Ok::<_, std::io::Error>(staging)
    };
    beside()
        .or_else(|_| builder().tempdir_in(dir))
        // Found by review: "cannot create a temporary folder beside" named no place.
        .map_err(io_error(
            dir,
            "cannot be written: no temporary folder for the outputs could be made beside it or \
             inside it",
        ))
}

/// Whether an entry of `staging` can be moved into `dir` (not across file systems or mounts,
/// which a bind mount of the same file system also refuses): an empty folder is moved there and
/// removed again.
fn moves_into(staging: &Path, dir: &Path) -> std::io::Result<()> {
    let probe = staging.join("probe");
    fs::create_dir(&probe)?;
    let name = staging.file_name().unwrap_or_default().to_string_lossy();
    let there = dir.join(format!("{name}-probe"));
    fs::rename(&probe, &there)?;
    fs::remove_dir(&there)
}

/// A file's identity: its device and inode on Unix, so that one file reached by two paths is
/// known as one; `None` elsewhere (the canonical path alone then decides).
type FileId = (u64, u64);

#[cfg(unix)]
fn file_id(path: &Path) -> Option<FileId> {
    use std::os::unix::fs::MetadataExt;
    fs::metadata(path).ok().map(|m| (m.dev(), m.ino()))
}

#[cfg(not(unix))]
fn file_id(_: &Path) -> Option<FileId> {
    None
}

/// Removes the replaced files kept in `staging/previous`, side by side: freeing a file's blocks
/// waits on the file system's journal (a fraction of a millisecond each), not on a core. What is
/// left (a file that could not be removed) goes with the staging folder.
fn discard_previous<'a>(staging: &Path, names: impl Iterator<Item = &'a String>) {
    let previous = staging.join("previous");
    std::thread::scope(|scope| {
        for name in names {
            let path = previous.join(name);
            let remove = move || {
                let _ = fs::remove_file(&path);
            };
            // Without a thread to be had, the file goes with the staging folder.
            let _ = std::thread::Builder::new().spawn_scoped(scope, remove);
        }
    });
}

/// Moves each staged file onto its target, keeping the file it replaces in `staging/previous`,
/// then sets each retired file aside there too; on the first failure undoes every move and puts
/// the set-aside files back.
fn move_into_place(
    staging: &Path,
    dir: &Path,
    names: &[String],
    retired: &[String],
) -> Result<Vec<PathBuf>> {
    let previous = staging.join("previous");
    fs::create_dir(&previous).map_err(io_error(&previous, "cannot create"))?;
    let mut moved: Vec<PathBuf> = Vec::new();
    let mut kept: Vec<(PathBuf, PathBuf)> = Vec::new();
    // Folders made inside `dir` for the outputs (`figures/`), outermost first, removed again
    // when the moves are undone (found by review: a failed commit left an empty `figures/`).
    let mut made: Vec<PathBuf> = Vec::new();
    let mut step = |name: &str, retiring: bool| -> Result<()> {
        let target = dir.join(name);
        let mut missing: Vec<PathBuf> = (target.ancestors().skip(1))
            .take_while(|folder| *folder != dir && !folder.exists())
            .map(Path::to_path_buf)
            .collect();
        missing.reverse();
        made.extend(missing);
        for folder in [target.parent(), previous.join(name).parent()]
            .into_iter()
            .flatten()
        {
            fs::create_dir_all(folder).map_err(io_error(folder, "cannot create"))?;
        }
        if target.exists() {
            let backup = previous.join(name);
            fs::rename(&target, &backup)
                .map_err(io_error(&target, "cannot set aside the previous"))?;
            kept.push((backup, target.clone()));
        }
        if retiring {
            return Ok(());
        }
        fs::rename(staging.join(name), &target)
            .map_err(io_error(&target, "cannot move the new file onto"))?;
        moved.push(target);
        Ok(())
    };
    let steps = names.iter().map(|n| (n, false));
    for (name, retiring) in steps.chain(retired.iter().map(|n| (n, true))) {
        if let Err(error) = step(name, retiring) {
            for target in &moved {
                let _ = fs::remove_file(target);
            }
            for (backup, target) in &kept {
                let _ = fs::rename(backup, target);
            }
            for folder in made.iter().rev() {
                let _ = fs::remove_dir(folder);
            }
            return Err(error);
        }
    }
    Ok(moved)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn files() -> Vec<(String, Vec<u8>)> {
        vec![
            ("a.txt".to_string(), b"new a".to_vec()),
            ("b.txt".to_string(), b"new b".to_vec()),
        ]
    }

    fn listing(dir: &Path) -> Vec<String> {
        let mut names: Vec<String> = fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        names.sort();
        names
    }

    // A temporary folder a killed run left (unlocked, untouched for a while) is removed by the
    // next run into the folder beside it; one in use (locked) or made a moment ago is kept, and
    // so is a folder of another name.
    #[test]
    fn a_killed_runs_temporary_folder_is_removed() {
        let root = tempfile::tempdir().unwrap();
        let out = root.path().join("out");
        let aged = |name: &str| {
            let folder = root.path().join(name);
            fs::create_dir(&folder).unwrap();
            fs::write(folder.join("memo.md"), b"half a run").unwrap();
            let old = std::time::SystemTime::now() - 2 * super::super::earlier::ABANDONED_AFTER;
            fs::File::open(&folder).unwrap().set_modified(old).unwrap();
            folder
        };
        let left = aged(".hurdle-staging-left");
        let in_use = aged(".hurdle-staging-in-use");
        let held = super::super::earlier::hold(&in_use)
            .expect("a folder can be locked on this file system");
        let users = aged("hurdle-staging-of-the-user");
        let fresh = root.path().join(".hurdle-staging-fresh");
        fs::create_dir(&fresh).unwrap();
        write_outputs(&out, &files(), &[]).unwrap();
        assert!(!left.exists(), "the abandoned folder is removed");
        assert!(in_use.exists() && fresh.exists() && users.exists());
        drop(held);
        assert_eq!(listing(&out), ["a.txt", "b.txt"]);
    }

    // A file where the outputs need a folder is refused before anything is staged, naming it.
    #[test]
    fn a_file_where_a_folder_goes_is_refused() {
        let root = tempfile::tempdir().unwrap();
        let out = root.path().join("out");
        fs::create_dir(&out).unwrap();
        fs::write(out.join("figures"), b"a note of the user's").unwrap();
        let stage = Stage::begin(&out, &[]).unwrap();
        let refused = stage
            .add("figures/a.svg", b"new a")
            .unwrap_err()
            .to_string();
        assert!(refused.contains("figures is a file"), "{refused}");
        drop(stage);
        assert_eq!(
            fs::read(out.join("figures")).unwrap(),
            b"a note of the user's"
        );
        assert_eq!(listing(&out), vec!["figures"]);
    }

    // A commit that fails part way puts back what it moved and removes the folders it made
    // for the outputs: the folder is as it was (found by review: an empty `figures/` stayed).
    #[test]
    fn a_failed_commit_removes_the_folders_it_made() {
        let root = tempfile::tempdir().unwrap();
        let out = root.path().join("out");
        fs::create_dir(&out).unwrap();
        fs::write(out.join("b.txt"), b"old b").unwrap();
        let stage = Stage::begin(&out, &[]).unwrap();
        stage.add("figures/a.svg", b"new a").unwrap();
        stage.add("b.txt", b"new b").unwrap();
        stage.add("c.txt", b"new c").unwrap();
        fs::remove_file(stage.staging().join("c.txt")).unwrap();
        let names = ["figures/a.svg", "b.txt", "c.txt"].map(String::from);
        assert!(stage.commit(&names).is_err());
        assert_eq!(listing(&out), vec!["b.txt"]);
        assert_eq!(fs::read(out.join("b.txt")).unwrap(), b"old b");
        assert_eq!(listing(root.path()), vec!["out"]);
    }

    // Two runs writing one folder at once: the second is refused while the first holds it, and
    // may write once the first has ended (flock semantics, POSIX).
    #[test]
    fn a_folder_another_run_is_writing_is_refused() {
        let root = tempfile::tempdir().unwrap();
        let out = root.path().join("out");
        let first = Stage::begin(&out, &[]).unwrap();
        let refused = Stage::begin(&out, &[]).err().expect("refused").to_string();
        assert!(refused.contains("another hurdle run"), "{refused}");
        drop(first);
        assert!(Stage::begin(&out, &[]).is_ok());
    }

    #[test]
    fn writes_every_file_and_leaves_no_temporary_folder() {
        let root = tempfile::tempdir().unwrap();
        let out = root.path().join("deep").join("out");
        let written = write_outputs(&out, &files(), &[]).unwrap();
        assert_eq!(written.len(), 2);
        assert_eq!(fs::read(out.join("b.txt")).unwrap(), b"new b");
        assert_eq!(listing(root.path()), vec!["deep"]);
        assert_eq!(listing(&root.path().join("deep")), vec!["out"]);
    }

    #[test]
    fn refuses_to_overwrite_an_input_and_creates_nothing() {
        let root = tempfile::tempdir().unwrap();
        let input = root.path().join("a.txt");
        fs::write(&input, "input").unwrap();
        let reads = vec![(input.clone(), "a price file".to_string())];
        let message = write_outputs(root.path(), &files(), &reads)
            .unwrap_err()
            .to_string();
        assert!(
            message.contains("a.txt") && message.contains("a price file"),
            "{message}"
        );
        assert_eq!(fs::read(&input).unwrap(), b"input");
        assert_eq!(listing(root.path()), vec!["a.txt"]);
    }

    #[test]
    fn a_folder_in_the_way_is_refused_before_anything_moves() {
        let root = tempfile::tempdir().unwrap();
        fs::create_dir(root.path().join("b.txt")).unwrap();
        let message = write_outputs(root.path(), &files(), &[])
            .unwrap_err()
            .to_string();
        assert!(message.contains("is a folder"), "{message}");
        assert_eq!(listing(root.path()), vec!["b.txt"]);
    }

    // A move that fails half-way (the second staged file vanished) puts the first target's
    // previous contents back and removes nothing else.
    #[test]
    fn a_failed_move_restores_the_previous_files() {
        let root = tempfile::tempdir().unwrap();
        let out = root.path().join("out");
        fs::create_dir(&out).unwrap();
        fs::write(out.join("a.txt"), "old a").unwrap();
        fs::write(out.join("c.txt"), "old c").unwrap();
        let mut stage = Stage::begin(&out, &[]).unwrap();
        for (name, bytes) in files() {
            stage.add(&name, &bytes).unwrap();
        }
        stage.retire("c.txt");
        stage.wait_for_flushes().unwrap();
        fs::remove_file(stage.staging().join("b.txt")).unwrap();
        let names: Vec<String> = files().into_iter().map(|(name, _)| name).collect();
        assert!(stage.commit(&names).is_err());
        assert_eq!(fs::read(out.join("a.txt")).unwrap(), b"old a");
        assert_eq!(fs::read(out.join("c.txt")).unwrap(), b"old c");
        assert_eq!(listing(&out), vec!["a.txt", "c.txt"]);
        assert_eq!(
            listing(root.path()),
            vec!["out"],
            "no temporary folder is left"
        );
    }

    // A retired file goes with the commit; one the run reads is never retired.
    #[test]
    fn retired_files_go_with_the_commit_and_inputs_stay() {
        let root = tempfile::tempdir().unwrap();
        let out = root.path().join("out");
        fs::create_dir(&out).unwrap();
        fs::write(out.join("c.txt"), "old c").unwrap();
        fs::write(out.join("input.txt"), "input").unwrap();
        let reads = vec![(out.join("input.txt"), "a price file".to_string())];
        let mut stage = Stage::begin(&out, &reads).unwrap();
        for (name, bytes) in files() {
            stage.add(&name, &bytes).unwrap();
        }
        stage.retire("c.txt");
        stage.retire("input.txt");
        let names: Vec<String> = files().into_iter().map(|(name, _)| name).collect();
        stage.commit(&names).unwrap();
        assert_eq!(listing(&out), vec!["a.txt", "b.txt", "input.txt"]);
        assert_eq!(listing(root.path()), vec!["out"]);
    }

    #[test]
    fn a_failure_removes_the_folders_it_created() {
        let root = tempfile::tempdir().unwrap();
        let out = root.path().join("new").join("out");
        // A name with a NUL byte cannot be created, so staging fails after the folders exist.
        let bad = vec![("bad\0name".to_string(), Vec::new())];
        assert!(write_outputs(&out, &bad, &[]).is_err());
        assert!(
            listing(root.path()).is_empty(),
            "{:?}",
            listing(root.path())
        );
    }
}
