//! `hurdle grid CASE.toml --rows KEY=LOW..HIGH:STEP --cols KEY=LOW..HIGH:STEP
//!  [--metric wacc|cost_of_equity] [--csv FILE] [--set KEY=VALUE]...`
//!
//! Prints the WACC (or cost of equity) over two case keys and writes the table as CSV (default:
//! `output/grid.csv` beside the case). Each cell equals a run with the two values as `--set`.

use std::path::PathBuf;

use hurdle::audit::grid::{grid, parse_axis};
use hurdle::case::Metric;
use hurdle::report::format::percent;

use super::CaseArgs;

#[derive(Debug, clap::Args)]
pub struct Args {
    #[command(flatten)]
    pub case: CaseArgs,
    /// Row axis, e.g. market.equity_risk_premium=0.04..0.07:0.005
    #[arg(long, value_name = "KEY=LOW..HIGH:STEP")]
    pub rows: String,
    /// Column axis, e.g. target.debt_to_equity=0..1:0.25
    #[arg(long, value_name = "KEY=LOW..HIGH:STEP")]
    pub cols: String,
    /// The figure in the cells: wacc or cost_of_equity.
    #[arg(long, default_value = "wacc")]
    pub metric: Metric,
    /// Where to write the CSV (default: output/grid.csv beside the case).
    #[arg(long, value_name = "FILE")]
    pub csv: Option<PathBuf>,
}

/// A refusal of the output folder in `--csv`'s words, when the user named the file and the
/// refusal is of the file itself (found by review: "output folder : writing case.toml there
/// would overwrite case.toml"; and a refusal of the default folder put down to a --csv never
/// given). `name` is the file's name.
fn csv_refusal(error: hurdle::Error, csv: Option<&std::path::Path>, name: &str) -> hurdle::Error {
    match (error, csv) {
        (hurdle::Error::Argument { option, message }, Some(path))
            if option.starts_with("output folder") && message.contains(name) =>
        {
            hurdle::Error::Argument {
                option: format!("--csv {}", path.display()),
                message: message.replace("choose another output folder", "choose another file"),
            }
        }
        (other, _) => other,
    }
}

pub fn run(args: &Args) -> hurdle::Result<()> {
    let rows = parse_axis("--rows", &args.rows)?;
    let columns = parse_axis("--cols", &args.cols)?;
    let inputs = args.case.inputs()?;
    // The peers are estimated once; cells re-estimate only when an axis changes estimation.
    let estimates = hurdle::valuation::estimate_peers(&inputs.case, &inputs)?;
    let table = grid(&inputs, &estimates, &rows, &columns, args.metric)?;
    let axes = [rows.key.as_str(), columns.key.as_str()];
    for (set, axis) in hurdle::audit::grid::replaced_overrides(&inputs.case, axes)? {
        say!("note: --set {set} is replaced in every cell by the grid's values of {axis}");
    }
    let mut out = format!("{:>14}", "");
    for c in &table.columns.values {
        out.push_str(&format!(" {c:>9}"));
    }
    out.push_str(&format!("   ← {}\n", table.columns.key));
    for (r, cells) in table.rows.values.iter().zip(&table.cells) {
        out.push_str(&format!("{r:>14}"));
        for cell in cells {
            let cell = cell.map_or_else(|| "n/a".to_string(), |v| percent(v, 2));
            out.push_str(&format!(" {cell:>9}"));
        }
        out.push('\n');
    }
    out.push_str(&format!(
        "rows: {}; cells: {}\n",
        table.rows.key,
        hurdle::report::format::label(&table.metric)
    ));
    // The refused cells, grouped by reason in the order each reason first appears.
    let mut reasons: Vec<(&str, Vec<String>)> = Vec::new();
    for refused in &table.refused {
        let cell = format!(
            "({}, {})",
            table.rows.values[refused.row], table.columns.values[refused.column]
        );
        match reasons
            .iter_mut()
            .find(|(reason, _)| *reason == refused.reason)
        {
            Some((_, cells)) => cells.push(cell),
            None => reasons.push((&refused.reason, vec![cell])),
        }
    }
    for (reason, cells) in reasons {
        out.push_str(&format!("n/a at {}: {reason}\n", cells.join(", ")));
    }
    let figure = match table.metric {
        hurdle::case::Metric::Wacc => "WACC",
        hurdle::case::Metric::CostOfEquity => "cost of equity",
    };
    for key in table.unmoved_axes() {
        out.push_str(&format!(
            "note: the {figure} does not move along {key} over the values tried: a setting the \
             case does not use (`hurdle run` notes those), or one that does not reach the \
             figure over this range (a peer's figures away from the median, say)\n"
        ));
    }
    let path = args
        .csv
        .clone()
        .unwrap_or_else(|| args.case.default_output_dir().join("grid.csv"));
    let (dir, name) = super::split_file_path("--csv", &path)?;
    let file = (name, hurdle::report::csv::grid_csv(&table));
    let reads = hurdle::case::files_read(&inputs.case);
    // The table is printed once its file is written, as `run` prints its summary: a failed
    // write prints only its error (found by review: the table came first, then the error).
    let name = file.0.clone();
    hurdle::report::staging::write_outputs(&dir, &[file], &reads)
        .map_err(|error| csv_refusal(error, args.csv.as_deref(), &name))?;
    print!("{out}");
    println!("  wrote {}", path.display());
    Ok(())
}
