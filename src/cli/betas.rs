//! `hurdle betas CASE.toml [--format table|json] [--compare-frequencies] [--set KEY=VALUE]...`
//!
//! Prints each peer's beta estimate and its statistics; writes no file.

use hurdle::audit::frequency_comparison::FrequencyRun;
use hurdle::capital::leverage::DebtBetaSource;
use hurdle::case::Case;
use hurdle::report::format::{fixed, label};
use hurdle::valuation::{PeerEstimates, PeerResult};

use super::CaseArgs;

#[derive(Debug, Clone, Copy, clap::ValueEnum)]
pub enum Format {
    Table,
    Json,
}

#[derive(Debug, clap::Args)]
pub struct Args {
    #[command(flatten)]
    pub case: CaseArgs,
    /// Output format.
    #[arg(long, value_enum, default_value = "table")]
    pub format: Format,
    /// Print one row per peer with the beta at every frequency (daily, weekly, monthly,
    /// quarterly) over the case's calendar window.
    #[arg(long)]
    pub compare_frequencies: bool,
}

pub fn run(args: &Args) -> hurdle::Result<()> {
    // Estimates only: no target, cost of equity or WACC is computed for a listing, and the spread
    // table is read only when an unlevered beta needs the subject's cost of debt.
    let inputs = args.case.listing_inputs()?;
    let estimates = hurdle::valuation::estimate_peers(&inputs.case, &inputs)?;
    if args.compare_frequencies {
        let runs = hurdle::audit::frequency_comparison::compare_frequencies(&inputs, &estimates)?;
        match args.format {
            Format::Table => print!("{}", comparison_table(&inputs.case, &estimates, &runs)),
            Format::Json => println!("{}", comparison_json(&inputs.case, &estimates, &runs)),
        }
        return Ok(());
    }
    let peers = hurdle::valuation::listing::list_betas(&inputs.case, &inputs, &estimates)?;
    match args.format {
        Format::Table => print!("{}", table(&inputs.case, &estimates, &peers)),
        Format::Json => println!(
            "{}",
            serde_json::to_string_pretty(&peers).expect("peers always serialise")
        ),
    }
    Ok(())
}

fn name_width(case: &Case) -> usize {
    case.settings
        .peers
        .iter()
        .map(|p| p.name.chars().count())
        .max()
        .unwrap_or(4)
        .max(4)
}

/// The frequency comparison as JSON: the window, then per frequency either the reason there is
/// no estimate or each peer's estimate (the `peers[]` statistics of `result.json`).
fn comparison_json(case: &Case, base: &PeerEstimates, runs: &[FrequencyRun]) -> String {
    let frequencies: Vec<serde_json::Value> = runs
        .iter()
        .map(|run| match &run.estimates {
            Ok(estimates) => serde_json::json!({
                "frequency": run.frequency,
                "reason": null,
                "peers": case.settings.peers.iter().zip(&estimates.peers).map(|(peer, e)| {
                    serde_json::json!({ "name": peer.name, "estimate": e.estimate })
                }).collect::<Vec<_>>(),
            }),
            Err(reason) => serde_json::json!({
                "frequency": run.frequency,
                "reason": reason,
                "peers": [],
            }),
        })
        .collect();
    let document = serde_json::json!({
        "window_start": base.window_start.to_string(),
        "window_end": base.window_end.to_string(),
        "method": base.spec.estimator.method,
        "std_errors": base.spec.estimator.std_errors,
        "frequencies": frequencies,
    });
    serde_json::to_string_pretty(&document).expect("estimates always serialise")
}

fn comparison_table(case: &Case, base: &PeerEstimates, runs: &[FrequencyRun]) -> String {
    let name_width = name_width(case);
    let mut out = format!("{:<name_width$}", "peer");
    for run in runs {
        out.push_str(&format!(
            "  {:>22}",
            format!("{} β (SE) N", label(&run.frequency))
        ));
    }
    out.push('\n');
    for (i, peer) in case.settings.peers.iter().enumerate() {
        out.push_str(&format!("{:<name_width$}", peer.name));
        for run in runs {
            let cell = match &run.estimates {
                Ok(estimates) => {
                    let e = &estimates.peers[i].estimate;
                    format!(
                        "{} ({}) {}",
                        fixed(e.beta, 3),
                        fixed(e.beta_std_error, 3),
                        e.observations
                    )
                }
                Err(_) => "n/a".to_string(),
            };
            out.push_str(&format!("  {cell:>22}"));
        }
        out.push('\n');
    }
    out.push_str(&format!(
        "window {} to {} at every frequency; method {}, std errors {}\n",
        base.window_start,
        base.window_end,
        label(&base.spec.estimator.method),
        label(&base.spec.estimator.std_errors)
    ));
    for run in runs {
        if let Err(reason) = &run.estimates {
            out.push_str(&format!("{}: n/a: {reason}\n", label(&run.frequency)));
        }
    }
    out
}

/// The peer's flags and exclusion, for the table's last column.
fn flags_cell(p: &PeerResult) -> String {
    let mut parts: Vec<String> = p.flags.iter().map(|f| f.name().to_string()).collect();
    if let Some(reason) = &p.excluded_reason {
        parts.push(format!("excluded: {reason}"));
    }
    if parts.is_empty() {
        "-".into()
    } else {
        parts.join(", ")
    }
}

fn table(case: &Case, estimates: &PeerEstimates, peers: &[PeerResult]) -> String {
    let name_width = name_width(case);
    let mut out = format!(
        "{:<name_width$}  {:>4}  {:>7}  {:>6}  {:>17}  {:>5}  {:>7}  {:>6}  {:>9}  flags\n",
        "peer", "N", "beta", "SE", "95% CI", "R²", "beta*", "D/E", "unlevered"
    );
    for p in peers {
        let e = &p.estimate;
        out.push_str(&format!(
            "{:<name_width$}  {:>4}  {:>7}  {:>6}  {:>17}  {:>5}  {:>7}  {:>6}  {:>9}  {}\n",
            p.name,
            e.observations,
            fixed(e.beta, 3),
            fixed(e.beta_std_error, 3),
            format!(
                "[{}, {}]",
                fixed(e.beta_ci_low, 3),
                fixed(e.beta_ci_high, 3)
            ),
            fixed(e.r_squared, 2),
            fixed(p.beta_used, 3),
            fixed(p.debt_to_equity, 3),
            fixed(p.unlevered_beta, 3),
            flags_cell(p),
        ));
    }
    // The estimator and the kind of standard error, as the frequency comparison's footer
    // names them (found by review: a listing under Scholes–Williams with Newey–West errors did
    // not say which SE it showed).
    out.push_str(&format!(
        "beta* = beta used: the {}; method {}, std errors {}; frequency {}, window {} to {}\n",
        super::shrinkage(&case.settings.beta),
        label(&estimates.spec.estimator.method),
        label(&estimates.spec.estimator.std_errors),
        label(&estimates.spec.frequency),
        estimates.window_start,
        estimates.window_end
    ));
    // How D/E and the unlevered beta were formed (found by review: a net D/E and a
    // Miles–Ezzell beta with credit-spread debt betas were shown without a word).
    let leverage = &case.settings.leverage;
    let debt_beta = match leverage.debt_beta_source {
        // Hamada takes no debt beta whatever the source (found by review).
        _ if leverage.formula == hurdle::capital::leverage::Formula::Hamada => {
            "no debt beta (Hamada: riskless debt)".to_string()
        }
        DebtBetaSource::None => "debt beta 0".to_string(),
        DebtBetaSource::Given => format!(
            "debt beta {} (a peer's own where given)",
            hurdle::error::compact(leverage.debt_beta)
        ),
        DebtBetaSource::CreditSpread => {
            "debt betas from the credit spread, (Kd − rf) / ERP".to_string()
        }
    };
    out.push_str(&format!(
        "D/E = {} debt / equity value; unlevered by {}, {debt_beta}{}\n",
        label(&leverage.debt_measure),
        label(&leverage.formula),
        match leverage.operations_beta {
            true => " (the aggregate takes the betas of the operations, not shown here)",
            false => "",
        }
    ));
    out
}
