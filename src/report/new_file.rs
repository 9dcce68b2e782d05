//! A single new file written never over an existing one: `hurdle init`'s starting case. Kept
//! apart from the staging of a run's outputs ([`super::staging`]), whose registry of temporary
//! folders it shares, so that a forced exit removes its temporary folder too.

use std::fs;
use std::io::Write;
use std::path::Path;

use super::earlier::hold;
use super::staging::{forget_temporary, io_error, register_temporary};
use crate::error::{Error, Result};

/// Writes `text` to `path`, never over an existing file (the check and the write are one step:
/// `hurdle init`'s starting case). The file is written in a temporary folder beside it, which
/// a forced exit removes ([`super::staging::abandon`]); a stop asked for before the file is in
/// place writes nothing; the file is created for everyone to read, less the user's umask, as
/// the run's outputs are (found by review: init went on after Ctrl-C, could leave its temporary file, and
/// wrote the case readable by its owner alone).
pub fn write_new(path: &Path, text: &str) -> Result<()> {
    let dir = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    if path.exists() {
        return Err(Error::Io {
            path: path.to_path_buf(),
            action: "exists already; init never overwrites a file (name another one to write)",
            source: std::io::Error::from(std::io::ErrorKind::AlreadyExists),
        });
    }
    fs::create_dir_all(dir).map_err(io_error(path, "cannot create the folder of"))?;
    let staging = tempfile::Builder::new()
        .prefix(".hurdle-staging-")
        .tempdir_in(dir)
        .map_err(io_error(
            path,
            "cannot be written: no temporary file could be made in its folder",
        ))?;
    register_temporary(staging.path());
    let _in_use = hold(staging.path());
    let written = write_then_persist(staging.path(), path, text);
    forget_temporary(staging.path());
    written
}

fn write_then_persist(staging: &Path, path: &Path, text: &str) -> Result<()> {
    let mut builder = tempfile::Builder::new();
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        builder.permissions(fs::Permissions::from_mode(0o666));
    }
    let mut temporary = builder
        .tempfile_in(staging)
        .map_err(io_error(path, "cannot create a temporary file beside"))?;
    temporary
        .write_all(text.as_bytes())
        .map_err(io_error(path, "cannot write"))?;
    crate::progress::check_stop()?;
    temporary.persist_noclobber(path).map_err(|e| {
        io_error(
            path,
            "cannot create (it may exist already; init never overwrites)",
        )(e.error)
    })?;
    Ok(())
}
