//! The temporary folders (`.hurdle-staging-*`) a run killed outright leaves behind: each run
//! locks its own ([`hold`]), and a later run removes those nobody holds that have not changed
//! for a minute ([`remove_abandoned`]). Kept apart from [`super::staging`], which calls it when
//! a stage begins; `hurdle init`'s [`super::new_file`] locks its folder the same way.

use std::fs;
use std::path::Path;

/// A temporary folder opened and locked for as long as the returned file lives (an advisory
/// lock, released when the process ends however it ends), so that a later run can tell a folder
/// in use from one a killed run left ([`remove_abandoned`]). `None` where folders cannot be
/// locked.
pub(crate) fn hold(folder: &Path) -> Option<fs::File> {
    let file = fs::File::open(folder).ok()?;
    file.try_lock().ok()?;
    Some(file)
}

/// How long a temporary folder must have been left untouched before a later run removes it:
/// a run in progress locks its folder at once ([`hold`]), but a folder made a moment ago may not
/// be locked yet.
pub(crate) const ABANDONED_AFTER: std::time::Duration = std::time::Duration::from_secs(60);

/// Removes the temporary folders (`.hurdle-staging-*`) beside `dir` and inside it that a run
/// killed outright left behind (found by review: a run killed by SIGKILL or a power cut left
/// its temporary folder for good): a folder is removed only when nobody holds its lock and it
/// has not changed for [`ABANDONED_AFTER`]. Called with `dir` locked, so no other run is
/// writing into `dir`; a folder that cannot be read, locked or removed is left as it is.
pub(crate) fn remove_abandoned(dir: &Path) {
    let parent = dir
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    for folder in [parent, dir] {
        let Ok(entries) = fs::read_dir(folder) else {
            continue;
        };
        for entry in entries.flatten() {
            let name = entry.file_name();
            let ours = name.to_string_lossy().starts_with(".hurdle-staging-");
            let is_folder = entry.file_type().is_ok_and(|t| t.is_dir());
            let untouched = (entry.metadata().and_then(|m| m.modified()).ok())
                .and_then(|changed| changed.elapsed().ok())
                .is_some_and(|age| age >= ABANDONED_AFTER);
            if ours && is_folder && untouched && hold(&entry.path()).is_some() {
                let _ = fs::remove_dir_all(entry.path());
            }
        }
    }
}
