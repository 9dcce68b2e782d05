//! Helpers shared by the integration tests. Each test binary compiles this module and uses a
//! subset of it, so every item carries `allow(dead_code)` for the binaries that do not.

use std::fs;
use std::path::Path;
use std::process::{Command, Output};

/// The shipped demo case folder and its case file.
#[allow(dead_code)]
pub const DEMO_DIR: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/cases/quillmarsh");
#[allow(dead_code)]
pub const DEMO_CASE: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/cases/quillmarsh/case.toml");

/// Runs the built `hurdle` binary.
#[allow(dead_code)]
pub fn hurdle(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_hurdle"))
        .args(args)
        .output()
        .expect("hurdle runs")
}

/// A number in a JSON value by its dotted path (`weights.equity`).
#[allow(dead_code)]
pub fn number(v: &serde_json::Value, path: &str) -> f64 {
    path.split('.')
        .fold(v, |v, key| &v[key])
        .as_f64()
        .unwrap_or_else(|| panic!("{path} is not a number"))
}

/// Runs tests/reference/check_regressions.py (numpy, scipy and the textbook formulas) on a
/// run's output folder; asserts that it ran and found no mismatch, and returns its report.
/// `label` names the configuration in a failure message.
#[allow(dead_code)]
pub fn reference_check(out: &Path, label: &str) -> String {
    let script = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/reference/check_regressions.py"
    );
    let output = Command::new("python3")
        .arg(script)
        .arg(out)
        .output()
        .expect("python3 must be installed for the reference check");
    let stdout = String::from_utf8_lossy(&output.stdout).into_owned();
    assert!(
        output.status.success() && stdout.contains(" 0 failed"),
        "{label}: reference check failed (install numpy and scipy: python3 -m pip install numpy scipy)\n{stdout}\n{}",
        String::from_utf8_lossy(&output.stderr)
    );
    stdout
}

/// The wide-table form of the demo case (`hurdle-demo-data` writes it beside the demo).
#[allow(dead_code)]
pub const WIDE_DIR: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/cases/quillmarsh-wide");

/// Copies the wide-table demo case folder into `to`, without any previous run's `output/`.
#[allow(dead_code)]
pub fn copy_wide_case(to: &Path) {
    copy_tree(Path::new(WIDE_DIR), to, true);
}

/// Copies the demo case folder into `to`, without any previous run's `output/`.
#[allow(dead_code)]
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
