//! `hurdle betas CASE.toml [--format table|json] [--set KEY=VALUE]...`
//!
//! Prints each peer's beta estimate and its statistics; writes no file.

use hurdle::format::fixed;
use hurdle::valuation::Valuation;

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
}

pub fn run(args: &Args) -> hurdle::Result<()> {
    let valuation = args.case.valuation()?;
    match args.format {
        Format::Table => print!("{}", table(&valuation)),
        Format::Json => println!(
            "{}",
            serde_json::to_string_pretty(&valuation.peers).expect("peers always serialise")
        ),
    }
    Ok(())
}

/// The peer's flags and exclusion, for the table's last column.
fn flags_cell(p: &hurdle::valuation::PeerResult) -> String {
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

fn table(v: &Valuation) -> String {
    let name_width = v
        .peers
        .iter()
        .map(|p| p.name.chars().count())
        .max()
        .unwrap_or(4)
        .max(4);
    let mut out = format!(
        "{:<name_width$}  {:>4}  {:>7}  {:>6}  {:>17}  {:>5}  {:>7}  {:>6}  {:>9}  flags\n",
        "peer", "N", "beta", "SE", "95% CI", "R²", "beta*", "D/E", "unlevered"
    );
    for p in &v.peers {
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
    out.push_str(&format!(
        "beta* = beta used ({} adjustment); frequency {:?}, window {} to {}\n",
        match v.peers.first().and_then(|p| p.adjusted_beta) {
            Some(_) => "Blume",
            None => "no",
        },
        v.sampling.frequency,
        v.sampling.window_start,
        v.sampling.window_end
    ));
    out
}
