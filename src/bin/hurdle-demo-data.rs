//! `hurdle-demo-data [CASE_DIR]`: writes the invented demo case (default `cases/quillmarsh`)
//! from the seeded generator in `hurdle::demo`, and the same case in wide-table form (one price
//! table, CSV and workbook) beside it in `CASE_DIR-wide`, an invented market around its peers
//! for `hurdle universe` in `CASE_DIR-market` (`hurdle::demo_market`), and prints the true betas
//! it used.

/// Writes one line to standard error without panicking when it cannot be written: the exit
/// status still says what happened.
macro_rules! say {
    ($($arg:tt)*) => {{
        use std::io::Write as _;
        let _ = writeln!(std::io::stderr().lock(), $($arg)*);
    }};
}

use std::path::PathBuf;
use std::process::ExitCode;

use hurdle::demo::{generate, PEERS, SEED};
use hurdle::demo_market::generate_market;
use hurdle::demo_wide::generate_wide;
use hurdle::report::format::fixed;

const USAGE: &str = "usage: hurdle-demo-data [CASE_DIR]  (default cases/quillmarsh; also writes \
CASE_DIR-wide and CASE_DIR-market)";

fn main() -> ExitCode {
    let mut args = std::env::args_os().skip(1);
    let dir = args.next().map(PathBuf::from);
    // An option (`--help`, `-h`) is not a folder to write into; nor is a second argument.
    let option = dir
        .as_ref()
        .is_some_and(|d| d.to_string_lossy().starts_with('-'));
    if option || args.next().is_some() {
        let asked = dir
            .as_ref()
            .is_some_and(|d| matches!(d.to_str(), Some("--help" | "-h")));
        return match asked {
            true => {
                println!("{USAGE}");
                ExitCode::SUCCESS
            }
            false => {
                say!("error: {USAGE}");
                ExitCode::from(2)
            }
        };
    }
    let dir = dir.unwrap_or_else(|| PathBuf::from("cases/quillmarsh"));
    let mut wide_dir = dir.clone().into_os_string();
    wide_dir.push("-wide");
    let wide_dir = PathBuf::from(wide_dir);
    let mut market_dir = dir.clone().into_os_string();
    market_dir.push("-market");
    let market_dir = PathBuf::from(market_dir);
    // Each folder's files as one group, through the writer every command uses.
    let per_file: Vec<(String, Vec<u8>)> = generate(SEED)
        .into_iter()
        .map(|(relative, text)| (relative, text.into_bytes()))
        .collect();
    let groups = [
        (&dir, per_file),
        (&wide_dir, generate_wide(SEED)),
        (&market_dir, generate_market(SEED)),
    ];
    for (folder, files) in groups {
        if let Err(error) = hurdle::report::staging::write_outputs(folder, &files, &[]) {
            say!("error: {error}");
            return ExitCode::from(2);
        }
    }
    println!("wrote the demo case to {} (seed {SEED})", dir.display());
    println!("wrote it in wide-table form to {}", wide_dir.display());
    println!(
        "wrote an invented market around its peers to {} (hurdle universe {})",
        market_dir.display(),
        market_dir.join("universe.toml").display()
    );
    println!("{:<24} {:>10} {:>11}", "peer", "true βL", "true βU");
    for peer in &PEERS {
        println!(
            "{:<24} {:>10} {:>11}",
            peer.name,
            fixed(peer.true_equity_beta(), 3),
            fixed(peer.true_asset_beta, 3)
        );
    }
    ExitCode::SUCCESS
}
