//! `hurdle implied CASE.toml --wacc X --solve TARGET [--range LOW..HIGH] [--set KEY=VALUE]...`
//!
//! Solves for the value of one input (erp, beta, cost_of_debt, debt_to_equity, risk_free,
//! size_premium) that reproduces a claimed WACC. Exit 1 when no value in the range does.

use std::process::ExitCode;

use hurdle::audit::implied::{implied, Target};
use hurdle::report::format::{fixed, percent};

use super::CaseArgs;

#[derive(Debug, clap::Args)]
pub struct Args {
    #[command(flatten)]
    pub case: CaseArgs,
    /// The claimed WACC, as a decimal (0.091 for 9.1%).
    #[arg(long, allow_hyphen_values = true, value_parser = hurdle::valuation::sanity::check_rate_argument)]
    pub wacc: f64,
    /// The input to solve for: erp, beta, cost_of_debt, debt_to_equity, risk_free, size_premium.
    #[arg(long)]
    pub solve: Target,
    /// The range to search, LOW..HIGH (default: a wide plausible range for the input). For
    /// debt_to_equity always in D/E, also when the case's target is a debt-to-capital.
    // A range may start below zero (the risk-free rate's default is −0.02..0.20).
    #[arg(long, value_name = "LOW..HIGH", allow_hyphen_values = true, value_parser = parse_range)]
    pub range: Option<(f64, f64)>,
}

fn parse_range(text: &str) -> Result<(f64, f64), String> {
    let (low, high) = text
        .split_once("..")
        .ok_or_else(|| format!("`{text}` is not LOW..HIGH"))?;
    let number = |t: &str| {
        t.trim()
            .parse::<f64>()
            .ok()
            .filter(|v| v.is_finite())
            .ok_or_else(|| format!("`{t}` is not a finite number"))
    };
    Ok((number(low)?, number(high)?))
}

pub fn run(args: &Args) -> hurdle::Result<ExitCode> {
    let inputs = args.case.inputs()?;
    let estimates = hurdle::valuation::estimate_peers(&inputs.case, &inputs)?;
    let base = hurdle::valuation::value_with(&inputs.case, &inputs, &estimates, "")?;
    // The library speaks of the search range; here it is the user's `--range`.
    let r = implied(
        &inputs, &estimates, &base, args.solve, args.wacc, args.range,
    )
    .map_err(|error| match error {
        hurdle::Error::Argument { option, message } if option.starts_with("search range") => {
            hurdle::Error::Argument {
                option: option.replacen("search range", "--range", 1),
                message,
            }
        }
        other => other,
    })?;
    Ok(print_answer(&r, args.range))
}

/// The exact value found, as `--set` takes it (the relevered beta is the build-up's, not a
/// case key), and a note when several intervals of the range cross the claim.
fn print_exact(r: &hurdle::audit::implied::Implied, value: f64) {
    match r.target {
        Target::Beta => println!("  exact: {value} (the relevered beta; not a --set key)"),
        _ => println!("  exact: {}={value}", r.key),
    }
    if r.crossings > 1 {
        println!(
            "  note: {} intervals of the range cross the claim; this is the lowest value",
            r.crossings
        );
    }
    if let Some(caution) = r.caution() {
        println!("  caution: {caution}; the claim may rest on other inputs than this one");
    }
}

/// Prints the answer (a value, a jump, or none in the range) and returns the exit status.
fn print_answer(r: &hurdle::audit::implied::Implied, range: Option<(f64, f64)>) -> ExitCode {
    let show = |x: f64| {
        if r.key.contains("beta") || r.key.contains("debt_to_") {
            fixed(x, 4)
        } else {
            percent(x, 3)
        }
    };
    println!(
        "claimed WACC {} | case WACC {} with {} = {}",
        percent(r.claimed_wacc, 3),
        percent(r.base_wacc, 3),
        r.key,
        show(r.base_value)
    );
    let refusals = || {
        if let (Some((low, high)), Some((x, why))) = (r.refused_range, &r.refused_at_edge) {
            println!(
                "  note: the case refuses {} of the {} values searched ({} to {}); at {} = {}: \
                 {why}",
                r.refused,
                r.searched,
                show(low),
                show(high),
                r.key,
                show(*x)
            );
        }
    };
    match (r.value, r.achieved_wacc) {
        (Some(value), Some(achieved)) if !r.reproduces() => {
            println!(
                "no value of {} reproduces it exactly: the WACC jumps across the claim at {} = {} \
                 (WACC there {})",
                r.key,
                r.key,
                show(value),
                percent(achieved, 6)
            );
            refusals();
            ExitCode::from(1)
        }
        (Some(value), Some(achieved)) => {
            println!(
                "{} = {} reproduces it (WACC {})",
                r.key,
                show(value),
                percent(achieved, 6)
            );
            print_exact(r, value);
            refusals();
            ExitCode::SUCCESS
        }
        _ => {
            // A debt-to-capital case searches the D/E range mapped to debt-to-capital.
            let given = match (range, r.key.as_str()) {
                (Some((low, high)), "target.debt_to_capital") => {
                    format!(" (the D/E range {}..{})", show(low), show(high))
                }
                _ => String::new(),
            };
            println!(
                "no value of {} in [{}, {}]{given} reproduces it: the WACC there runs from {} to \
                 {}",
                r.key,
                show(r.range.0),
                show(r.range.1),
                percent(r.wacc_min, 3),
                percent(r.wacc_max, 3)
            );
            refusals();
            ExitCode::from(1)
        }
    }
}
