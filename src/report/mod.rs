//! Outputs: each file format is one [`Render`] implementation that turns a [`Valuation`] into
//! bytes; [`render_run`] renders the files of `hurdle run` into a [`staging::Stage`], which
//! writes them as one group (a temporary folder beside the target, each file flushed, then all
//! moved into place), so a failure leaves no output at all and no output ever replaces a file
//! the run reads.

pub mod cautions;
pub mod csv;
pub mod earlier;
pub mod figures;
pub mod format;
pub mod json;
pub mod memo;
pub mod new_file;
pub mod rolling;
pub mod staging;
pub mod universe;
pub mod verification;
pub mod workbook;

use std::path::Path;

use crate::error::Result;
use crate::valuation::Valuation;

/// The HTML report's file name in the output folder.
pub const REPORT: &str = "report.html";

/// One output file format.
pub trait Render: Sync {
    /// The file name written in the output folder.
    fn file_name(&self) -> &str;
    /// The file's complete contents.
    fn render(&self, valuation: &Valuation) -> Result<Vec<u8>>;
}

/// Renders every file `hurdle run` writes into `stage` and returns their names in the order
/// they are listed: `memo.md`, `result.json`, `peers.csv`, `returns.csv`, `rolling.csv`,
/// `workbook.xlsx`, and with `figures` the charts and `report.html`. Two strands run side by side: the tables and the
/// workbook; and the charts, then the memo that links them, then the report that converts that
/// memo (rendered once) and inlines the charts. Each file goes to the stage as soon as it is
/// rendered, so its flush to disk overlaps the rendering of the others.
pub fn render_run(
    valuation: &Valuation,
    memo: memo::Memo,
    figures: bool,
    stage: &staging::Stage,
) -> Result<Vec<String>> {
    use rayon::prelude::*;
    let tables: [&dyn Render; 5] = [
        &json::Json,
        &csv::PeersCsv,
        &csv::ReturnsCsv,
        &rolling::RollingCsv,
        &workbook::Workbook,
    ];
    let (visual, tables) = rayon::join(
        || render_visual(valuation, memo, figures, stage),
        || {
            tables
                .par_iter()
                .map(|output| {
                    let name = output.file_name().to_string();
                    stage.add(&name, &output.render(valuation)?)?;
                    Ok(name)
                })
                .collect::<Result<Vec<_>>>()
        },
    );
    let (memo, visual) = visual?;
    let mut names = vec![memo];
    names.extend(tables?);
    names.extend(visual);
    Ok(names)
}

/// The files an earlier `hurdle run` wrote into `dir` that this run, writing `written`, does not
/// write again: charts named as a run names them ([`figures::is_chart_name`]; a peer no longer in
/// the case, a bridge no longer asked for) and the report (a run with `figures` off). Left there,
/// they would sit beside the new memo as if they belonged to it; and `hurdle verify --out`'s
/// status of the receipt this run replaces. Only in a folder that holds an earlier run's
/// receipt (`earlier_run`, from [`earlier::earlier_receipt`]). Sorted.
pub fn stale_run_outputs(
    dir: &Path,
    written: &[String],
    earlier: Option<&earlier::EarlierReceipt>,
) -> Vec<String> {
    let Some(earlier) = earlier else {
        return Vec::new();
    };
    let mut names = vec![REPORT.to_string()];
    // A universe's tables, when its receipt is the one replaced: they would sit beside the
    // case's receipt as if it had written them.
    if earlier.universe {
        names.extend(universe::OUTPUTS.iter().map(|n| n.to_string()));
    }
    if let Ok(entries) = std::fs::read_dir(dir.join(figures::FOLDER)) {
        names.extend(entries.flatten().map(|entry| {
            format!(
                "{}/{}",
                figures::FOLDER,
                entry.file_name().to_string_lossy()
            )
        }));
    }
    let mut stale: Vec<String> = names
        .into_iter()
        .filter(|name| {
            name == REPORT
                || earlier.drew_case_chart(name)
                || universe::OUTPUTS.contains(&name.as_str())
                || universe::chart::is_chart_name(name)
        })
        .filter(|name| !written.contains(name) && dir.join(name).is_file())
        .collect();
    if verifies_the_receipt_in(dir) {
        stale.extend(VERIFICATION.iter().map(|name| name.to_string()));
        stale.retain(|name| dir.join(name).is_file());
    }
    stale.sort();
    stale
}

/// The files a case's run writes that are not a universe's, as they stand in `dir`: what a
/// universe run takes away when the receipt it replaces is `earlier`, a case's (the memo, the
/// tables, the workbook, the report, the charts that run drew and `hurdle verify --out`'s
/// status of that receipt).
pub fn case_run_outputs_in(dir: &Path, earlier: &earlier::EarlierReceipt) -> Vec<String> {
    let mut names: Vec<String> = [
        "memo.md",
        "peers.csv",
        "returns.csv",
        "rolling.csv",
        "workbook.xlsx",
        REPORT,
    ]
    .iter()
    .map(|n| n.to_string())
    .collect();
    if let Ok(entries) = std::fs::read_dir(dir.join(figures::FOLDER)) {
        names.extend(
            (entries.flatten())
                .map(|e| format!("{}/{}", figures::FOLDER, e.file_name().to_string_lossy()))
                .filter(|name| earlier.drew_case_chart(name)),
        );
    }
    if verifies_the_receipt_in(dir) {
        names.extend(VERIFICATION.iter().map(|n| n.to_string()));
    }
    names.retain(|name| dir.join(name).is_file());
    names.sort();
    names
}

/// What `hurdle verify --out` writes.
pub const VERIFICATION: [&str; 2] = ["verification.json", "verification.md"];

/// Whether `dir` holds `hurdle verify --out`'s status of the receipt in `dir` itself, by the
/// receipt's SHA-256 the status records (a path would depend on the folder `verify` ran
/// from): the run replaces that receipt, so the status (which may say REPRODUCED) no longer
/// describes the `result.json` beside it. A status of another receipt, or one without the
/// hash, is the user's and stays.
pub(crate) fn verifies_the_receipt_in(dir: &Path) -> bool {
    let Ok(text) = std::fs::read_to_string(dir.join(VERIFICATION[0])) else {
        return false;
    };
    let Ok(status) = serde_json::from_str::<serde_json::Value>(&text) else {
        return false;
    };
    let Ok(receipt) = std::fs::read(dir.join("result.json")) else {
        return false;
    };
    match status["receipt_sha256"].as_str() {
        Some(hash) => hash == crate::io::series::sha256_hex(&receipt),
        // A status of 0.2.0 records no hash: its receipt path, from the working folder, as
        // that version took it away.
        None => {
            let same = |a: &Path, b: &Path| match (a.canonicalize(), b.canonicalize()) {
                (Ok(a), Ok(b)) => a == b,
                _ => false,
            };
            (status["receipt"].as_str())
                .is_some_and(|receipt| same(Path::new(receipt), &dir.join("result.json")))
        }
    }
}

/// The memo, then the charts and the report when `with_figures`, each into `stage`; returns the
/// memo's name and the others'.
fn render_visual(
    valuation: &Valuation,
    memo: memo::Memo,
    with_figures: bool,
    stage: &staging::Stage,
) -> Result<(String, Vec<String>)> {
    let drawn = match with_figures {
        true => figures::draw_all(valuation)?,
        false => Vec::new(),
    };
    let mut names = Vec::with_capacity(drawn.len() + 1);
    for figure in &drawn {
        stage.add(&figure.file_name, figure.svg.as_bytes())?;
        names.push(figure.file_name.clone());
    }
    let memo = memo.with_figures(figures::index(&drawn));
    let text = memo.render(valuation)?;
    if with_figures {
        let report = figures::report::page(&String::from_utf8_lossy(&text), &drawn);
        stage.add(REPORT, report.as_bytes())?;
        names.push(REPORT.to_string());
    }
    stage.add(memo.file_name(), &text)?;
    Ok((memo.file_name().to_string(), names))
}
