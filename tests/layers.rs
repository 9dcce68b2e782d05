//! The library's layers import one way, down the pipeline (DEVELOPERS.md, "Architecture"): a
//! module may use only the modules above it in this order. This reads every source file and
//! fails on an import that points the other way, so an import circle cannot come back.

use std::path::Path;

/// The layers in pipeline order; `error` and `demo` sit beside them.
const LAYERS: [&str; 12] = [
    "io",
    "panel",
    "market",
    "stats",
    "beta",
    "estimate",
    "capital",
    "case",
    "valuation",
    "universe",
    "audit",
    "report",
];

fn rust_files(dir: &Path, out: &mut Vec<std::path::PathBuf>) {
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

#[test]
fn no_layer_imports_a_later_one() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut violations = Vec::new();
    for (rank, layer) in LAYERS.iter().enumerate() {
        let mut files = Vec::new();
        rust_files(&src.join(layer), &mut files);
        assert!(!files.is_empty(), "src/{layer} holds no source");
        for file in files {
            let text = std::fs::read_to_string(&file).unwrap();
            for (later_rank, later) in LAYERS.iter().enumerate().skip(rank + 1) {
                let needle = format!("crate::{later}::");
                let needle_bare = format!("crate::{later};");
                if text.contains(&needle) || text.contains(&needle_bare) {
                    violations.push(format!(
                        "{} (layer {rank}, {layer}) imports {later} (layer {later_rank})",
                        file.strip_prefix(&src).unwrap().display()
                    ));
                }
            }
        }
    }
    assert!(violations.is_empty(), "{}", violations.join("\n"));
}
