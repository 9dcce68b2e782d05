//! The command line: parse arguments, call the library, print. Nothing here computes a figure
//! (the few decisions left here, which notes to print, are wording, not figures).
//!
//! One file per subcommand, each opening with its usage; add a command by adding a file and an
//! arm in [`Command`] and [`run`].

pub mod betas;
pub mod compare;
pub mod grid;
pub mod implied;
pub mod init;
pub mod rolling;
pub mod run;
pub mod universe;
pub mod verify;

use std::path::PathBuf;
use std::process::ExitCode;

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
    /// Estimate the peers' betas and the WACC, and write memo.md, result.json, peers.csv,
    /// returns.csv, rolling.csv, workbook.xlsx, the charts (figures/*.svg) and report.html.
    Run(run::Args),
    /// Print the peers' beta estimates only.
    Betas(betas::Args),
    /// Rerun the case a result.json names and compare every figure and input hash.
    Verify(verify::Args),
    /// Solve for the input value that reproduces a claimed WACC.
    Implied(implied::Args),
    /// Bridge the WACC of one case or claimed build-up to another's.
    Compare(compare::Args),
    /// Tabulate the WACC (or cost of equity) over two case keys.
    Grid(grid::Args),
    /// Write each peer's rolling beta to rolling.csv.
    Rolling(rolling::Args),
    /// Estimate every security of a market's price panel and tabulate betas by industry.
    Universe(universe::Args),
    /// Start a case file from a wide price table (one column per security).
    Init(init::Args),
}

/// A library error in the command line's words: the library speaks of overrides and of the
/// file a receipt records; here they are `--set` and `--case`.
pub fn render_error(error: &hurdle::Error) -> String {
    use hurdle::Error;
    match error {
        Error::Override {
            assignment,
            message,
        } => format!("--set {assignment}: {message}"),
        Error::AfterOverrides {
            file,
            overrides,
            message,
        } => format!(
            "{}: after applying --set {}: {message}",
            file.display(),
            overrides.join(", --set ")
        ),
        Error::InputNotFound { .. } => format!("{error}; give its place with --case"),
        Error::AmbiguousInput { .. } => format!("{error} with --case"),
        Error::ReceiptAsInput { .. } => format!("{error}; give that file with --case"),
        other => other.to_string(),
    }
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

    /// Reads the case, applies overrides and reads its data files.
    pub fn inputs(&self) -> hurdle::Result<hurdle::valuation::Inputs> {
        hurdle::valuation::load_inputs(self.read_case()?)
    }

    /// Reads the case, its price files and, only when an unlevered beta reads the subject's cost of
    /// debt from it, the spread table: what a beta listing needs.
    pub fn listing_inputs(&self) -> hurdle::Result<hurdle::valuation::Inputs> {
        hurdle::valuation::load_listing_inputs(self.read_case()?)
    }

    /// Reads the case and its price files only (no spread table): what estimating needs.
    pub fn price_inputs(&self) -> hurdle::Result<hurdle::valuation::Inputs> {
        hurdle::valuation::load_price_inputs(self.read_case()?)
    }

    /// The case with the command line's overrides, a value set twice said on stderr.
    fn read_case(&self) -> hurdle::Result<hurdle::case::Case> {
        note_repeated_sets(&self.case, &self.overrides);
        hurdle::case::read_case(&self.case, &self.overrides)
    }
}

/// Says on stderr which `--set` replaces an earlier one of the same value (the same key, or a
/// peer by index and by name): the later wins, as the receipt's recorded order reapplies it.
/// A file that cannot be read or parsed is left to the reader's own message.
pub fn note_repeated_sets(file: &std::path::Path, overrides: &[String]) {
    // Only a regular file is read ahead: a pipe or a FIFO gives its text once, to the reader
    // (found by review: a case piped in with two --set read as empty, a FIFO hung).
    if overrides.len() < 2 || !file.is_file() {
        return;
    }
    let Some(table) =
        (std::fs::read_to_string(file).ok()).and_then(|text| text.parse::<toml::Table>().ok())
    else {
        return;
    };
    for (earlier, later) in hurdle::case::overrides::repeated(&table, overrides) {
        say!(
            "note: --set {} replaces --set {}, which sets the same key; the later is used",
            overrides[later],
            overrides[earlier]
        );
    }
}

/// Which beta is unlevered, in the words the outputs use: the raw beta, or the shrunk beta and by
/// whose method (with Blume's weight).
pub fn shrinkage(beta: &hurdle::case::BetaSettings) -> String {
    use hurdle::case::Adjustment;
    match beta.adjustment {
        Adjustment::None => "raw beta (no shrinkage)".into(),
        Adjustment::Blume => format!(
            "shrunk beta (Blume, weight {} on the raw beta)",
            beta.blume_weight
        ),
        Adjustment::Vasicek => "shrunk beta (Vasicek)".into(),
    }
}

/// The folder and the file name of an output file given on the command line as `option`.
pub fn split_file_path(option: &str, path: &std::path::Path) -> hurdle::Result<(PathBuf, String)> {
    // `out/grid/` and `out/grid/.` name a folder, though a file name is read from them (found
    // by review: they wrote the file `out/grid`).
    let written = path.as_os_str().to_string_lossy();
    let ends_in_separator = written.ends_with(std::path::is_separator)
        || written
            .strip_suffix('.')
            .is_some_and(|rest| rest.is_empty() || rest.ends_with(std::path::is_separator));
    let name = path
        .file_name()
        .and_then(|n| n.to_str())
        .filter(|_| !ends_in_separator)
        .ok_or_else(|| hurdle::Error::Argument {
            option: format!("{option} {}", path.display()),
            message: "names no file (it ends in a folder); give a file name such as grid.csv"
                .into(),
        })?;
    // A bare file name's folder is the working one, named so in messages (not "").
    let dir = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(std::path::Path::new("."));
    Ok((dir.to_path_buf(), name.to_string()))
}

/// The run's UTC time, to the second.
pub fn timestamp() -> String {
    chrono::Utc::now().to_rfc3339_opts(chrono::SecondsFormat::Secs, true)
}

/// Runs the parsed command. `Ok` carries the exit status: a verification that fails or a
/// claim that cannot be reached exits 1; errors exit 2.
pub fn run(cli: Cli) -> hurdle::Result<ExitCode> {
    match cli.command {
        Command::Run(args) => run::run(&args).map(|()| ExitCode::SUCCESS),
        Command::Betas(args) => betas::run(&args).map(|()| ExitCode::SUCCESS),
        Command::Verify(args) => verify::run(&args),
        Command::Implied(args) => implied::run(&args),
        Command::Compare(args) => compare::run(&args).map(|()| ExitCode::SUCCESS),
        Command::Grid(args) => grid::run(&args).map(|()| ExitCode::SUCCESS),
        Command::Rolling(args) => rolling::run(&args).map(|()| ExitCode::SUCCESS),
        Command::Universe(args) => universe::run(&args).map(|()| ExitCode::SUCCESS),
        Command::Init(args) => init::run(&args).map(|()| ExitCode::SUCCESS),
    }
}
