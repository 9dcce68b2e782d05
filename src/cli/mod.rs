//! The command line: parse arguments, call the library, print. Nothing here computes a figure.
//!
//! One file per subcommand, each opening with its usage; add a command by adding a file and an
//! arm in [`Command`] and [`run`].

pub mod betas;
pub mod rolling;
pub mod run;

use std::path::PathBuf;

use clap::{Parser, Subcommand};

/// hurdle — a defensible, reproducible cost of capital from market data and capital structure.
#[derive(Debug, Parser)]
#[command(name = "hurdle", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Estimate the peers' betas and the WACC, and write memo.md, result.json, peers.csv and
    /// returns.csv.
    Run(run::Args),
    /// Print the peers' beta estimates only.
    Betas(betas::Args),
    /// Write each peer's rolling beta to rolling.csv.
    Rolling(rolling::Args),
}

/// Arguments every case-reading command takes.
#[derive(Debug, clap::Args)]
pub struct CaseArgs {
    /// The case file (TOML).
    pub case: PathBuf,
    /// Override a case value for a what-if, e.g. --set market.equity_risk_premium=0.05
    /// (repeatable; peers by index or name: --set peer.0.tax_rate=0.3).
    #[arg(long = "set", value_name = "KEY=VALUE")]
    pub overrides: Vec<String>,
}

impl CaseArgs {
    /// `output/` beside the case file.
    pub fn default_output_dir(&self) -> PathBuf {
        self.case
            .parent()
            .map(|p| p.join("output"))
            .unwrap_or_else(|| PathBuf::from("output"))
    }

    /// As [`CaseArgs::valuation`], also returning the inputs read.
    pub fn inputs_and_valuation(
        &self,
    ) -> hurdle::Result<(hurdle::valuation::Inputs, hurdle::valuation::Valuation)> {
        let case = hurdle::case::read_case(&self.case, &self.overrides)?;
        let inputs = hurdle::valuation::load_inputs(case)?;
        let stamp = chrono::Utc::now().to_rfc3339_opts(chrono::SecondsFormat::Secs, true);
        let valuation = hurdle::valuation::value(&inputs, &stamp)?;
        Ok((inputs, valuation))
    }

    /// Reads the case, applies overrides, reads its data and computes the valuation.
    pub fn valuation(&self) -> hurdle::Result<hurdle::valuation::Valuation> {
        let case = hurdle::case::read_case(&self.case, &self.overrides)?;
        let inputs = hurdle::valuation::load_inputs(case)?;
        let stamp = chrono::Utc::now().to_rfc3339_opts(chrono::SecondsFormat::Secs, true);
        hurdle::valuation::value(&inputs, &stamp)
    }
}

/// Runs the parsed command.
pub fn run(cli: Cli) -> hurdle::Result<()> {
    match cli.command {
        Command::Run(args) => run::run(&args),
        Command::Betas(args) => betas::run(&args),
        Command::Rolling(args) => rolling::run(&args),
    }
}
