//! `hurdle run CASE.toml [--out DIR] [--template FILE] [--no-figures] [--set KEY=VALUE]...`
//!
//! Computes the valuation and writes `memo.md`, `result.json`, `peers.csv`, `returns.csv`,
//! `rolling.csv`, `workbook.xlsx` (formulas that recompute the chain), the charts `figures/*.svg` and
//! `report.html` to DIR (default: `output/` beside the case file),
//! each atomically and only after all of them rendered; prints a short summary. `--no-figures`
//! writes the text outputs and the workbook only (no charts, no report). Charts and a report an earlier run left
//! in DIR that this run does not write are taken away with the same commit, and listed.

use std::path::PathBuf;

use hurdle::report::format::{fixed, label, percent};
use hurdle::report::{self, memo::Memo};
use hurdle::valuation::Valuation;

use super::CaseArgs;

#[derive(Debug, clap::Args)]
pub struct Args {
    #[command(flatten)]
    pub case: CaseArgs,
    /// Output folder (default: `output/` beside the case file).
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Memo template to use instead of the shipped one (minijinja syntax).
    #[arg(long, value_name = "FILE")]
    pub template: Option<PathBuf>,
    /// Write the text outputs and the workbook only: no figures/*.svg and no report.html.
    #[arg(long)]
    pub no_figures: bool,
}

pub fn run(args: &Args) -> hurdle::Result<()> {
    // Read the template first: a bad path should fail before any work is done.
    let memo = match &args.template {
        Some(path) => Memo::from_file(path)?,
        None => Memo::shipped(),
    };
    let inputs = args.case.inputs()?;
    let mut reads = hurdle::case::files_read(&inputs.case);
    if let Some(path) = &args.template {
        reads.push((path.clone(), "the memo template, --template".into()));
    }
    let valuation = hurdle::audit::evaluate(&inputs, &super::timestamp())?;
    let out = args
        .out
        .clone()
        .unwrap_or_else(|| args.case.default_output_dir());
    let earlier = report::earlier::earlier_receipt(&out);
    let foreign = report::earlier::holds_a_foreign_result(&out);
    let mut stage = report::staging::Stage::begin(&out, &reads)?;
    let names = report::render_run(&valuation, memo, !args.no_figures, &stage)?;
    let stale = report::stale_run_outputs(&out, &names, earlier.as_ref());
    let stale: Vec<String> = stale
        .into_iter()
        .filter(|name| stage.retire(name))
        .collect();
    let written = stage.commit(&names)?;
    print!("{}", summary(&valuation));
    for path in written {
        println!("  wrote {}", path.display());
    }
    if let Some(e) = earlier.filter(|e| e.of_another_valuation(&valuation.case)) {
        match e.universe {
            true => println!(
                "  replaced the receipt of a universe run ({}); its tables are taken away",
                e.case_file
            ),
            false => println!(
                "  replaced the receipt of another valuation: {}, valuation date {}{}",
                e.case_file,
                e.valuation_date,
                e.wacc
                    .map(|w| format!(", WACC {}", percent(w, 2)))
                    .unwrap_or_default()
            ),
        }
    }
    if foreign {
        println!("  replaced a result.json that was no hurdle receipt");
    }
    for name in &stale {
        let why = match report::VERIFICATION.contains(&name.as_str()) {
            true => "the status of the receipt this run replaces",
            false => "an earlier run's; this run does not write it",
        };
        println!("  removed {} ({why})", out.join(name).display());
    }
    Ok(())
}

/// The headline's intervals: the betas' estimation error, and the peer set resampled (nothing
/// to resample with one aggregated peer; only three distinct sets with two).
fn intervals(v: &Valuation) -> String {
    let Some(u) = &v.uncertainty else {
        return String::new();
    };
    let rates = match u.equity_risk_premium_range.is_some() || u.risk_free_rate_range.is_some() {
        true => " and the stated rate ranges",
        false => "",
    };
    let peer_set = match v.cost.beta.peers_included {
        1 => "; with one aggregated peer, resampling the peer set adds nothing".to_string(),
        n => format!(
            ", {} to {} with the peer set resampled{}{}",
            percent(u.peer_set.p05, 2),
            percent(u.peer_set.p95, 2),
            if n == 2 {
                " (only three distinct sets)"
            } else {
                ""
            },
            // Found by review: the headline hid that many resamples gave no WACC.
            match u.peer_set.draws < u.draws {
                true => format!(" ({} of {} draws gave a WACC)", u.peer_set.draws, u.draws),
                false => String::new(),
            }
        ),
    };
    format!(
        ", 90% interval {} to {} (beta estimation error{rates}){peer_set}",
        percent(u.p05, 2),
        percent(u.p95, 2)
    )
}

fn summary(v: &Valuation) -> String {
    let mut lines = vec![
        format!(
            "{} — valuation date {}",
            v.case.title, v.case.valuation_date
        ),
        format!(
            "  {} beta, {} returns over {} to {} ({} periods), {} unlevered; {} unlevering",
            label(&v.estimator.method),
            label(&v.sampling.frequency),
            v.sampling.window_start,
            v.sampling.window_end,
            v.sampling.lookback,
            super::shrinkage(&v.settings.beta),
            label(&v.cost.beta.formula)
        ),
        format!(
            "  peers {} ({} aggregated) | unlevered beta ({}) {} | relevered {} at D/E {}",
            v.peers.len(),
            v.cost.beta.peers_included,
            label(&v.cost.beta.aggregation),
            fixed(v.cost.beta.unlevered, 3),
            fixed(v.cost.beta.relevered, 3),
            fixed(v.cost.target.debt_to_equity, 3)
        ),
        format!(
            "  cost of equity {} | cost of debt ({}) {} pre-tax, {} after tax",
            percent(v.cost.cost_of_equity, 2),
            label(&v.cost.cost_of_debt.source),
            percent(v.cost.cost_of_debt_pre_tax, 2),
            percent(v.cost.cost_of_debt_after_tax, 2)
        ),
        format!(
            "  weights E {} / D {}{} | WACC {} (point estimate){}",
            percent(v.cost.weights.equity, 1),
            percent(v.cost.weights.debt, 1),
            other_weights(&v.cost.weights),
            percent(v.cost.wacc, 2),
            intervals(v)
        ),
    ];
    // The memo's headline carries the converted rate; so does the terminal (found by review).
    if let Some(c) = &v.cost.currency_conversion {
        lines.push(format!(
            "  in {}: WACC {}, cost of equity {} (Fisher relation, inflation {} in {} against {} in \
             {}); {} for a subject borrowing in {}",
            c.to,
            percent(c.wacc, 2),
            percent(c.cost_of_equity, 2),
            percent(c.inflation_to, 2),
            c.to,
            percent(c.inflation_from, 2),
            c.from,
            percent(c.wacc_borrowing_locally, 2),
            c.to
        ));
    }
    if !v.case.overrides.is_empty() {
        lines.insert(
            1,
            format!(
                "  with --set {} (recorded in result.json; the case file alone gives other figures)",
                v.case.overrides.join(", ")
            ),
        );
    }
    for caution in hurdle::report::cautions::case_cautions(v, "peers.csv's flags column") {
        lines.push(format!("  caution: {caution}"));
    }
    for note in &v.notes {
        lines.push(format!("  note: {note}"));
    }
    lines.push(String::new());
    lines.join("\n")
}

/// The preferred equity and lease weights after E and D when the case has them, so that the
/// weights shown add up to 100%.
fn other_weights(weights: &hurdle::capital::chain::Weights) -> String {
    let mut text = String::new();
    if weights.preferred > 0.0 {
        text.push_str(&format!(" / preferred {}", percent(weights.preferred, 1)));
    }
    if weights.leases > 0.0 {
        text.push_str(&format!(" / leases {}", percent(weights.leases, 1)));
    }
    text
}
