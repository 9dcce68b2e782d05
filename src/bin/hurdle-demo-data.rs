//! `hurdle-demo-data [CASE_DIR]`: writes the invented demo case (default `cases/quillmarsh`)
//! from the seeded generator in `hurdle::demo`, and prints the true betas it used.

use std::path::PathBuf;
use std::process::ExitCode;

use hurdle::demo::{generate, PEERS, SEED};
use hurdle::report::format::fixed;

fn main() -> ExitCode {
    let dir = std::env::args_os()
        .nth(1)
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from("cases/quillmarsh"));
    for (relative, contents) in generate(SEED) {
        let path = dir.join(relative);
        if let Err(error) = hurdle::report::write_file(&path, contents.as_bytes()) {
            eprintln!("error: {error}");
            return ExitCode::from(2);
        }
    }
    println!("wrote the demo case to {} (seed {SEED})", dir.display());
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
