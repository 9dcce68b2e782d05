//! `hurdle rolling CASE.toml [--out DIR] [--set KEY=VALUE]...`
//!
//! Computes the valuation and writes `rolling.csv` (peer, window_end, beta, std_error,
//! observations) to DIR (default: `output/` beside the case file), never over an input; prints
//! each peer's range and trend of the rolling beta. Window length and step:
//! `beta.rolling_window`, `beta.rolling_step`.

use std::path::PathBuf;

use hurdle::format::fixed;
use hurdle::output::{self, rolling::RollingCsv, Render};

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
    let (inputs, valuation) = args.case.inputs_and_valuation()?;
    let out = args
        .out
        .clone()
        .unwrap_or_else(|| args.case.default_output_dir());
    let outputs: [&dyn Render; 1] = [&RollingCsv];
    let reads = hurdle::staging::files_named(&inputs.case);
    let written = output::write_all(&out, &valuation, &outputs, &reads)?;
    for peer in &valuation.peers {
        match &peer.stability {
            Some(s) => println!(
                "{}: {} windows of {} periods, beta {} to {}, trend {} per year",
                peer.name,
                s.windows,
                s.window_periods,
                fixed(s.min, 3),
                fixed(s.max, 3),
                fixed(s.trend_per_year, 3)
            ),
            None => println!("{}: fewer than two rolling windows", peer.name),
        }
    }
    for path in written {
        println!("  wrote {}", path.display());
    }
    Ok(())
}
