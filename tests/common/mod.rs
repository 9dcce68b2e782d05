//! Helpers shared by the integration tests.

use std::fs;
use std::path::Path;

/// The shipped demo case folder.
pub const DEMO_DIR: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/cases/quillmarsh");

/// Copies the demo case folder into `to`, without any previous run's `output/`.
pub fn copy_demo_case(to: &Path) {
    copy_tree(Path::new(DEMO_DIR), to, true);
}

fn copy_tree(from: &Path, to: &Path, top: bool) {
    fs::create_dir_all(to).unwrap();
    for entry in fs::read_dir(from).unwrap() {
        let entry = entry.unwrap();
        if top && entry.file_name() == "output" {
            continue;
        }
        let target = to.join(entry.file_name());
        if entry.file_type().unwrap().is_dir() {
            copy_tree(&entry.path(), &target, false);
        } else {
            fs::copy(entry.path(), &target).unwrap();
        }
    }
}
