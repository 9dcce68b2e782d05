//! Where a receipt's case (or universe) file is: beside the receipt's folder, in it, at the
//! recorded path, or that path from the folders above the receipt, by SHA-256 first.

use std::path::{Path, PathBuf};

use crate::error::{Error, Result};

/// What a receipt records of the file it reruns: its SHA-256 and its title (`case.title`, or
/// `universe.title`), each when present.
#[derive(Clone, Copy)]
pub(super) struct RecordedFile<'a> {
    pub sha256: Option<&'a str>,
    pub title: Option<&'a str>,
}

/// Finds the case (or universe) file a receipt names: beside the receipt's folder (where
/// `hurdle run` puts `output/` by default), in the receipt's own folder, or at the recorded
/// path (relative to the working folder). The first with the recorded SHA-256 wins; when none
/// has it, the first with the receipt's title (the receipt's own case, edited); else the first
/// that exists, whose changed hash the verification then reports. A relative recorded path is
/// also tried from the receipt's folder and each folder above it, where only the recorded
/// SHA-256 counts (a file of that name far up the tree is otherwise a stranger's). A bundle's own case that
/// carries the receipt's title but changed, while a farther place holds the unchanged bytes,
/// could be either: that is refused, naming both, for the caller to choose. `section` is the
/// receipt's section that records the file (`case` or `universe`).
pub(super) fn locate_case(
    receipt_path: &Path,
    recorded: &str,
    section: &str,
    file: RecordedFile<'_>,
) -> Result<PathBuf> {
    let recorded = PathBuf::from(recorded);
    // The receipt's path made absolute first, so that `result.json` given from inside the
    // output folder still has a parent folder.
    let receipt_path = std::path::absolute(receipt_path).unwrap_or(receipt_path.to_path_buf());
    let mut candidates = Vec::new();
    if let (Some(output_dir), Some(name)) = (receipt_path.parent(), recorded.file_name()) {
        let case_dir = output_dir.parent().unwrap_or(Path::new(""));
        candidates.push(case_dir.join(name));
        candidates.push(output_dir.join(name));
    }
    let in_bundle = candidates.len();
    candidates.push(recorded.clone());
    // The recorded path was typed from the run's working folder, often one above the output
    // folder (`hurdle run cases/x/case.toml --out reviews/x` from a project's root) or the
    // output folder itself (`--out .`): it is tried from the receipt's folder and each one
    // above it, also along its resolved path (a symbolic link; found by review).
    let named = candidates.len();
    if recorded.is_relative() {
        let output_dir = receipt_path.parent().unwrap_or(Path::new("")).to_path_buf();
        let resolved = std::fs::canonicalize(&output_dir).ok();
        for folder in std::iter::once(&output_dir).chain(&resolved) {
            for folder in folder.ancestors() {
                let path = folder.join(&recorded);
                if !candidates.contains(&path) {
                    candidates.push(path);
                }
            }
        }
    }
    let read = |path: &PathBuf| std::fs::read(path).ok();
    let same_bytes = |path: &PathBuf| {
        let bytes = read(path);
        (file.sha256)
            .is_some_and(|hash| bytes.is_some_and(|b| crate::io::series::sha256_hex(&b) == hash))
    };
    // The receipt's own file, edited: it still carries the receipt's title.
    let titled = |path: &PathBuf| {
        let text = read(path).and_then(|b| String::from_utf8(b).ok());
        let table: Option<toml::Table> = text.and_then(|t| toml::from_str(&t).ok());
        let title = table
            .as_ref()
            .and_then(|t| t.get(section)?.get("title")?.as_str().map(str::to_string));
        file.title.is_some() && title.as_deref() == file.title
    };
    let existing: Vec<&PathBuf> = candidates.iter().filter(|p| p.is_file()).collect();
    // Found by review: a folder far above held an unrelated `case.toml`, taken as the
    // receipt's edited case.
    let near: Vec<&PathBuf> = candidates[..named].iter().filter(|p| p.is_file()).collect();
    let found = (existing.iter().find(|p| same_bytes(p)))
        .or_else(|| near.iter().find(|p| titled(p)))
        .or_else(|| near.first())
        .map(|p| (*p).clone())
        .ok_or_else(|| Error::InputNotFound {
            receipt: receipt_path.clone(),
            section: section.to_string(),
            tried: candidates[..named].to_vec(),
            above: candidates.len() - named,
        })?;
    let absolute = |p: &Path| std::path::absolute(p).unwrap_or(p.to_path_buf());
    let edited_in_bundle = (candidates[..in_bundle].iter())
        .take_while(|p| absolute(p) != absolute(&found))
        .find(|p| p.is_file() && !same_bytes(p) && titled(p));
    if let Some(beside) = edited_in_bundle.filter(|_| same_bytes(&found)) {
        return Err(Error::AmbiguousInput {
            receipt: receipt_path.clone(),
            section: section.to_string(),
            beside: absolute(beside),
            recorded: absolute(&found),
        });
    }
    Ok(found)
}
