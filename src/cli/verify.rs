//! `hurdle verify RECEIPT.json [--case CASE.toml] [--tolerance X] [--out DIR]`
//!
//! Reruns the case the receipt names and reports, figure by figure, what matches; with `--out`
//! also writes `verification.json`. Exit 0 only when every input file is unchanged and every
//! figure matches; 1 otherwise. `--out` also writes `verification.md`, the same verdict for the
//! reviewer's file.

use std::path::PathBuf;
use std::process::ExitCode;

use hurdle::audit::verify::{
    by_file, read_receipt, verify, Verification, DEFAULT_TOLERANCE, SAME_VERSION_WORDING_NOTE,
};

#[derive(Debug, clap::Args)]
pub struct Args {
    /// The result.json to verify.
    pub receipt: PathBuf,
    /// Where the case file (or, for a universe's receipt, the universe file) is, when not beside
    /// the receipt's folder nor at the path the receipt records.
    #[arg(long, value_name = "CASE.toml")]
    pub case: Option<PathBuf>,
    /// Relative tolerance for numbers, in [0, 1e-6] (0: bit for bit).
    #[arg(long, default_value_t = DEFAULT_TOLERANCE, allow_hyphen_values = true, value_parser = hurdle::valuation::sanity::check_tolerance)]
    pub tolerance: f64,
    /// Also write verification.json and verification.md into this folder.
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
}

pub fn run(args: &Args) -> hurdle::Result<ExitCode> {
    let text = read_receipt(&args.receipt)?;
    let report = verify(&args.receipt, &text, args.case.as_deref(), args.tolerance)?;
    // The status files are written before the verdict is printed: an output folder that
    // cannot take them stops the command with its error alone (found by review: the verdict
    // came first, so a log showed REPRODUCED above the error).
    if let Some(dir) = &args.out {
        let mut bytes = serde_json::to_vec_pretty(&report).expect("a report always serialises");
        bytes.push(b'\n');
        let markdown = hurdle::report::verification::markdown(&report);
        let files = [
            ("verification.json".to_string(), bytes),
            ("verification.md".to_string(), markdown.into_bytes()),
        ];
        let mut reads = report.files_read.clone();
        reads.push((args.receipt.clone(), "the receipt".into()));
        hurdle::report::staging::write_outputs(dir, &files, &reads)?;
    }
    print!("{}", render(&report));
    // As the other commands that write files say where (found by review: compare and verify
    // did not).
    if let Some(dir) = &args.out {
        for name in ["verification.json", "verification.md"] {
            println!("  wrote {}", dir.join(name).display());
        }
    }
    Ok(if report.reproduced {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    })
}

/// The overrides as a POSIX shell takes them, each `--set` in single quotes (a quote inside
/// written `'\''`).
fn quoted_overrides(overrides: &[String]) -> String {
    overrides
        .iter()
        .map(|o| format!("--set '{}'", o.replace('\'', "'\\''")))
        .collect::<Vec<_>>()
        .join(" ")
}

fn render(r: &Verification) -> String {
    let mut out = format!("verifying {} ({} {})\n", r.receipt, r.kind, r.case_file);
    out.push_str(&format!("  {} file: {}\n", r.kind, r.case_state()));
    if !r.overrides.is_empty() {
        out.push_str(&format!(
            "  overrides: the receipt's run applied {}, reapplied here (the {} file alone gives \
             other figures)\n",
            quoted_overrides(&r.overrides),
            r.kind
        ));
    }
    for group in by_file(&r.files) {
        let f = group.check;
        out.push_str(&format!(
            "  {} {}: {}\n",
            group.roles,
            f.path,
            group.describe()
        ));
    }
    let versions = r.versions_note();
    if !versions.is_empty() {
        out.push_str(&format!("  note: {versions}\n"));
    }
    // The chart figures (fitted lines' points, histogram bins, waterfall bars) are counted,
    // not listed: they follow the estimates above them; --out lists each.
    let (charts, figures): (Vec<_>, Vec<_>) =
        r.mismatches.iter().partition(|m| m.is_chart_figure());
    for m in figures {
        out.push_str(&format!("  MISMATCH {}\n", m.describe()));
    }
    if !charts.is_empty() {
        out.push_str(&format!(
            "  and {} figures drawn only for the charts (fitted lines, histogram, waterfall), \
             which follow the figures above; verification.md (--out) lists each\n",
            charts.len()
        ));
    }
    for m in &r.wording_differences {
        out.push_str(&format!("  {}\n", m.wording()));
    }
    if !r.wording_differences.is_empty() {
        out.push_str(&format!("  note: {}\n", r.wording_note()));
    }
    if r.edited_sentences() > 0 {
        out.push_str(&format!("  note: {SAME_VERSION_WORDING_NOTE}\n"));
    }
    for change in &r.known_changes {
        out.push_str(&format!("  known change: {change}\n"));
    }
    if !r.added_by_this_version.is_empty() {
        out.push_str(&format!("  note: {}\n", r.added_note()));
    }
    out.push_str(&format!("  note: {}\n", r.not_compared));
    if !r.headline.is_empty() {
        out.push_str(&format!("  {}\n", r.headline_summary()));
    }
    out.push_str(&r.verdict());
    out.push('\n');
    out
}
