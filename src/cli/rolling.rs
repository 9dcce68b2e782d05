//! `hurdle rolling CASE.toml [--out DIR] [--set KEY=VALUE]...`
//!
//! Estimates the peers (no target, cost of capital or spread table) and writes `rolling.csv` (peer, window_end, beta, std_error,
//! observations) to DIR (default: `output/` beside the case file), never over an input; prints
//! each peer's range and trend of the rolling beta. Window length and step:
//! `beta.rolling_window`, `beta.rolling_step`.

use std::path::PathBuf;

use hurdle::report;
use hurdle::report::format::fixed;

use super::CaseArgs;

#[derive(Debug, clap::Args)]
pub struct Args {
    #[command(flatten)]
    pub case: CaseArgs,
    /// Output folder (default: `output/` beside the case file).
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
}

pub fn run(args: &Args) -> hurdle::Result<()> {
    // Estimates only: rolling betas need no target, cost of equity or WACC.
    let inputs = args.case.price_inputs()?;
    let estimates = hurdle::valuation::estimate_peers(&inputs.case, &inputs)?;
    let out = args
        .out
        .clone()
        .unwrap_or_else(|| args.case.default_output_dir());
    let names: Vec<&str> = inputs
        .case
        .settings
        .peers
        .iter()
        .map(|p| p.name.as_str())
        .collect();
    let rolling: Vec<_> = estimates.peers.iter().map(|p| p.rolling.clone()).collect();
    let file = (
        "rolling.csv".to_string(),
        report::rolling::rolling_csv(&names, &rolling),
    );
    let reads = hurdle::case::files_read(&inputs.case);
    let written = report::staging::write_outputs(&out, &[file], &reads)?;
    for (name, estimated) in names.iter().zip(&estimates.peers) {
        match &estimated.stability {
            Some(s) => println!(
                "{}: {} windows of {} periods, beta {} to {}, trend {} per year",
                name,
                s.windows,
                s.window_periods,
                fixed(s.min, 3),
                fixed(s.max, 3),
                fixed(s.trend_per_year, 3)
            ),
            None => println!("{name}: {}", no_line(estimated.no_stability)),
        }
    }
    for path in written {
        println!("  wrote {}", path.display());
    }
    Ok(())
}

/// Why a peer has no line of rolling betas, as `result.json`'s `stability_missing` records it
/// (found by review: every peer was said to have fewer than two windows, whatever the cause).
fn no_line(cause: Option<hurdle::beta::rolling::NoStability>) -> &'static str {
    use hurdle::beta::rolling::NoStability;
    match cause {
        Some(NoStability::OneWindow) => {
            "one rolling window only (beta.rolling_window and beta.rolling_step leave room for \
             one in the estimation window), so no line over time"
        }
        Some(NoStability::NeweyWestLags) => {
            "no rolling window: beta.newey_west_lags needs more than four times as many \
             observations as a window of beta.rolling_window periods holds"
        }
        Some(NoStability::ShortForEstimator) => {
            "no rolling window: a window of beta.rolling_window periods is too short for the \
             estimator (its shifted index columns and Newey–West lags must each stay below a \
             quarter of a window's observations)"
        }
        Some(NoStability::TooFewWindows) | None => {
            "fewer than two rolling windows with enough observations"
        }
    }
}
