//! report.html in a real browser: headless Chromium (Debian's `chromium`) opens the demo's
//! report and tests/browser/check_report.py asserts what a reader gets — no console error,
//! nothing fetched, one inline chart per figures/*.svg, each regression line with its peer's
//! beta as slope (read back from the rendered DOM through the axis labels, to a pixel's worth),
//! tables that fit A4 and Letter, and the cautions on the last page of the printed PDF. The
//! screenshot and the PDFs are kept in `$HURDLE_ARTIFACTS` (default `<target>/tmp/report-check`),
//! never in the repository.

use std::path::PathBuf;
use std::process::Command;

mod common;

use common::{hurdle, DEMO_CASE};

fn artifacts(label: &str) -> PathBuf {
    let base = std::env::var_os("HURDLE_ARTIFACTS")
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("report-check"));
    base.join(label)
}

fn browser_check(label: &str, extra: &[&str]) {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().to_str().unwrap();
    let mut args = vec!["run", DEMO_CASE, "--out", out];
    args.extend_from_slice(extra);
    let run = hurdle(&args);
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/browser/check_report.py");
    let artifacts = artifacts(label);
    let output = Command::new("python3")
        .arg(script)
        .arg(out)
        .arg(&artifacts)
        .output()
        .expect("python3 runs the browser check");
    let stdout = String::from_utf8_lossy(&output.stdout);
    assert!(
        output.status.success() && stdout.contains(" 0 failed"),
        "{label}: browser check failed (it needs Debian's chromium and poppler-utils: \
         apt-get install -y chromium poppler-utils)\n{stdout}\n{}",
        String::from_utf8_lossy(&output.stderr)
    );
    for file in ["report.png", "report-a4.pdf", "report-letter.pdf"] {
        assert!(artifacts.join(file).is_file(), "{label}: {file} not saved");
    }
    println!("{label}: {}", stdout.trim_end());
}

#[test]
fn demo_report_reads_and_prints_in_chromium() {
    browser_check("demo", &[]);
}

// The thin-trading estimators draw the summed beta's line; its slope is that beta.
#[test]
fn dimson_report_reads_and_prints_in_chromium() {
    browser_check("dimson", &["--set", "beta.method=dimson"]);
}
