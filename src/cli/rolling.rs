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
    let earlier = report::earlier::earlier_receipt(&out);
    let written = report::staging::write_outputs(&out, &[file], &reads)?;
    for (name, estimated) in names.iter().zip(&estimates.peers) {
        match &estimated.stability {
            Some(s) => println!(
                "{}: {} windows of {} periods{}, beta {} to {}, trend {} per year",
                name,
                s.windows,
                s.window_periods,
                match s.windows < s.windows_laid {
                    true => format!(
                        " ({} of {} laid; the others skipped)",
                        s.windows, s.windows_laid
                    ),
                    false => String::new(),
                },
                fixed(s.min, 3),
                fixed(s.max, 3),
                fixed(s.trend_per_year, 3)
            ),
            None => println!(
                "{name}: {}",
                no_line(estimated.no_stability, &estimates.spec.estimator)
            ),
        }
    }
    for path in written {
        println!("  wrote {}", path.display());
    }
    if let Some(receipt) = earlier {
        // `hurdle run` writes rolling.csv with its receipt; this file now follows other
        // settings, another case or other prices than the receipt beside it (found by review).
        let prices = std::iter::once(&inputs.index)
            .chain(inputs.risk_free.as_ref())
            .chain(&inputs.peers);
        let same = receipt.of_the_same_inputs(
            (&inputs.case.sha256, &inputs.case.overrides),
            prices.map(|f| f.sha256.as_str()),
        );
        if !same {
            println!(
                "  note: the result.json in {} is {}; rolling.csv now follows this command's \
                 case, --set values and price files, not that receipt's (hurdle run writes its \
                 own)",
                out.display(),
                match receipt.universe {
                    true => "a universe's receipt".to_string(),
                    false => format!("the receipt of {}", receipt.case_file),
                }
            );
        }
    }
    Ok(())
}

/// Why a peer has no line of rolling betas, as `result.json`'s `stability_missing` records it
/// (found by review: every peer was said to have fewer than two windows, whatever the cause).
fn no_line(
    cause: Option<hurdle::beta::rolling::NoStability>,
    estimator: &hurdle::beta::spec::EstimatorSpec,
) -> &'static str {
    use hurdle::beta::rolling::NoStability;
    use hurdle::beta::BetaMethod;
    use hurdle::stats::least_squares::StdErrors;
    let shifted = estimator.method != BetaMethod::Ols;
    let lags = estimator.std_errors == StdErrors::NeweyWest;
    match cause {
        Some(NoStability::OneWindow) => {
            "one rolling window only (beta.rolling_window and beta.rolling_step leave room for \
             one in the estimation window), so no line over time"
        }
        Some(NoStability::NeweyWestLags) => {
            "no rolling window: beta.newey_west_lags needs more than four times as many \
             observations as a window of beta.rolling_window periods holds"
        }
        // Only the constraint the settings impose (found by review: both were named).
        Some(NoStability::ShortForEstimator) => match (shifted, lags) {
            (true, true) => {
                "no rolling window: a window of beta.rolling_window periods is too short for \
                 the estimator (its shifted index columns and its Newey–West lags must each \
                 stay below a quarter of a window's observations)"
            }
            (true, false) => {
                "no rolling window: a window of beta.rolling_window periods is too short for \
                 the estimator (its shifted index columns, beta.method, must stay below a \
                 quarter of a window's observations)"
            }
            (false, _) => {
                "no rolling window: a window of beta.rolling_window periods is too short for \
                 the estimator (the Newey–West lag rule's lags must stay below a quarter of a \
                 window's observations)"
            }
        },
        Some(NoStability::TooFewWindows) | None => {
            "fewer than two rolling windows with enough observations"
        }
    }
}
