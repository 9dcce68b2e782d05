//! Outputs: each file format is one [`Render`] implementation that turns a [`Valuation`] into
//! bytes; [`write_all`] renders every file first and only then writes them, each atomically
//! (a temporary file in the same folder, flushed, then a rename), so a failure leaves no output
//! at all and a crash never leaves half a file. Inputs are never opened for writing.

pub mod csv;
pub mod figures;
pub mod format;
pub mod json;
pub mod memo;
pub mod rolling;
pub mod staging;
pub mod universe;
pub mod verification;
pub mod workbook;

use std::io::Write;
use std::path::{Path, PathBuf};

use crate::error::{Error, Result};
use crate::valuation::Valuation;

/// One output file format.
pub trait Render: Sync {
    /// The file name written in the output folder.
    fn file_name(&self) -> &str;
    /// The file's complete contents.
    fn render(&self, valuation: &Valuation) -> Result<Vec<u8>>;
}

/// Renders every output, then writes them all into `dir` (created when missing): each to a
/// temporary file beside its target, all flushed to disk together (concurrently: a journaling
/// file system commits concurrent flushes at once, so twenty files cost about one flush), and
/// only then each renamed onto its name.
pub fn write_all(
    dir: &Path,
    valuation: &Valuation,
    outputs: &[&dyn Render],
    reads: &[crate::case::FileRead],
) -> Result<Vec<PathBuf>> {
    // Each output is rendered on its own (the workbook, the report and the charts take the
    // longest), so they render side by side; the files keep the order given.
    use rayon::prelude::*;
    let rendered = outputs
        .par_iter()
        .map(|output| Ok((output.file_name().to_string(), output.render(valuation)?)))
        .collect::<Result<Vec<_>>>()?;
    staging::write_outputs(dir, &rendered, reads)
}

/// Writes one file atomically, creating its folder when missing.
pub fn write_file(path: &Path, bytes: &[u8]) -> Result<()> {
    if let Some(dir) = path.parent().filter(|d| !d.as_os_str().is_empty()) {
        std::fs::create_dir_all(dir).map_err(|source| Error::Io {
            path: dir.to_path_buf(),
            action: "cannot create the output folder",
            source,
        })?;
    }
    write_atomic(path, bytes)
}

/// Writes `bytes` to `path` through a temporary file in the same folder and a rename.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<()> {
    let file = stage(path, bytes)?;
    file.as_file().sync_all().map_err(|source| Error::Io {
        path: path.to_path_buf(),
        action: "cannot flush",
        source,
    })?;
    persist(path, file)
}

/// `bytes` in a new temporary file beside `path` (its folder created when missing), not yet
/// flushed or renamed.
fn stage(path: &Path, bytes: &[u8]) -> Result<tempfile::NamedTempFile> {
    let dir = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    std::fs::create_dir_all(dir).map_err(|source| Error::Io {
        path: dir.to_path_buf(),
        action: "cannot create the output folder",
        source,
    })?;
    let io_error = |action: &'static str| {
        move |source| Error::Io {
            path: path.to_path_buf(),
            action,
            source,
        }
    };
    let mut temporary = tempfile::NamedTempFile::new_in(dir)
        .map_err(io_error("cannot create a temporary file beside"))?;
    temporary
        .write_all(bytes)
        .map_err(io_error("cannot write"))?;
    Ok(temporary)
}

/// Renames a staged file onto `path`.
fn persist(path: &Path, file: tempfile::NamedTempFile) -> Result<()> {
    file.persist(path).map_err(|e| Error::Io {
        path: path.to_path_buf(),
        action: "cannot rename the temporary file onto",
        source: e.error,
    })?;
    Ok(())
}
