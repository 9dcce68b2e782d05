//! Outputs: each file format is one [`Render`] implementation that turns a [`Valuation`] into
//! bytes; [`write_all`] renders every file first and only then writes them as one group through
//! [`staging`] (a temporary folder beside the target, flushed, then moved into place), so a
//! failure leaves no output at all and no output ever replaces a file the run reads.

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

use std::path::{Path, PathBuf};

use crate::error::Result;
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
