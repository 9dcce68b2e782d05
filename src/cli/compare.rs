//! `hurdle compare A.toml B.toml [--out DIR]`
//!
//! Bridges the WACC of A to that of B, where each is a case file or a claimed build-up (a TOML
//! file with a `[claimed]` table): one input group at a time in a fixed order, with each group's
//! Shapley value beside it. With `--out`, also writes `bridge.csv`.

use std::path::PathBuf;

use hurdle::audit::bridge::{bridge, read_side_with_facts, Bridge, CaseFacts, Group};
use hurdle::report::format::{basis_points, fixed, percent};

#[derive(Debug, clap::Args)]
pub struct Args {
    /// The starting side: a case file or a claimed build-up.
    pub from: PathBuf,
    /// The side bridged to.
    pub to: PathBuf,
    /// Also write bridge.csv into this folder.
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
}

pub fn run(args: &Args) -> hurdle::Result<()> {
    let (from, from_facts) = read_side_with_facts(&args.from, &args.from.display().to_string())?;
    let (to, to_facts) = read_side_with_facts(&args.to, &args.to.display().to_string())?;
    let result = bridge(&from, &to);
    // The file is written before the bridge is printed, as `verify` and `grid` do: an output
    // folder that cannot take it stops the command with its error alone (found by review: the
    // bridge was printed, then the error came).
    let mut wrote = None;
    if let Some(dir) = &args.out {
        let mut reads = Vec::new();
        for side in [&args.from, &args.to] {
            // A case side also reads its data files; a claimed build-up is the one file.
            match hurdle::case::read_case(side, &[]) {
                Ok(case) => reads.extend(hurdle::case::files_read(&case)),
                Err(_) => reads.push((side.clone(), "a compared build-up".into())),
            }
        }
        let file = (
            "bridge.csv".to_string(),
            hurdle::report::csv::bridge_csv(&result),
        );
        hurdle::report::staging::write_outputs(dir, &[file], &reads)?;
        wrote = Some(dir.join("bridge.csv"));
    }
    print!(
        "{}",
        render(
            &result,
            [from_facts.as_ref(), to_facts.as_ref()],
            wrote.is_some()
        )
    );
    if let Some(path) = wrote {
        println!("  wrote {}", path.display());
    }
    Ok(())
}

fn render(b: &Bridge, facts: [Option<&CaseFacts>; 2], csv: bool) -> String {
    // A claim whose stated WACC its components do not give: both figures, named.
    let wacc = |side: &hurdle::audit::bridge::Side| match side.stated_gap() {
        Some(_) => format!(
            "WACC {} from its components (stated {})",
            percent(side.wacc, 3),
            percent(side.headline_wacc(), 3)
        ),
        None => format!("WACC {}", percent(side.wacc, 3)),
    };
    let mut out = String::new();
    for ((word, side), facts) in [("from", &b.from), ("  to", &b.to)].into_iter().zip(facts) {
        let dated = match (&side.as_of, facts) {
            (Some(date), None) => format!(" as of {date}"),
            _ => String::new(),
        };
        out.push_str(&format!(
            "{word} {} ({}) {}{dated}\n",
            side.label,
            side.source,
            wacc(side)
        ));
        if let Some(f) = facts {
            out.push_str(&format!(
                "     valuation date {}, {} returns {} to {}, {} peer{} aggregated, unlevered \
                 beta {}, target D/E {}\n",
                f.valuation_date,
                f.frequency,
                f.window.0,
                f.window.1,
                f.peers_included.len(),
                if f.peers_included.len() == 1 { "" } else { "s" },
                fixed(f.unlevered_beta, 3),
                fixed(f.target_debt_to_equity, 3)
            ));
        }
    }
    out.push_str(&bridge_table(b));
    out.push_str(&notes(b, csv));
    out.push_str(&side_notes(b));
    let library = hurdle::audit::bridge::scaled_premium_notes(b, facts)
        .into_iter()
        .chain(hurdle::audit::bridge::asset_beta_note(b, facts));
    for note in library {
        out.push_str(&format!("note: {note}\n"));
    }
    if let [Some(from), Some(to)] = facts {
        for note in hurdle::audit::bridge::case_notes(b, from, to) {
            out.push_str(&format!("note: {note}\n"));
        }
    }
    out
}

/// The bridge as the terminal's table: a row per input group, a claim's stated WACC beyond its
/// components before and after them, the total of the stated WACCs' gap, and the note on the
/// steps' order.
fn bridge_table(b: &Bridge) -> String {
    let mut rows: Vec<[String; 6]> =
        vec![["input group", "from", "to", "WACC after", "step", "Shapley"].map(str::to_string)];
    // A claim's stated WACC beyond its components, first for the starting side and last for
    // the other, as bridge.csv lists them, so the total is the gap between the stated WACCs
    // (found by review: the total was the components' gap alone).
    let unexplained = |wacc_after: f64, gap: f64| {
        let name = "stated, unexplained".to_string();
        let (after, gap) = (percent(wacc_after, 3), basis_points(gap));
        [name, String::new(), String::new(), after, gap.clone(), gap]
    };
    if let Some(gap) = b.unexplained_from.filter(|g| *g != 0.0) {
        rows.push(unexplained(b.from.wacc, -gap));
    }
    for s in &b.steps {
        let shown = |side: &hurdle::audit::bridge::Side| {
            let (u, x) = (&side.build_up, s.group.figure(&side.build_up));
            match s.group {
                Group::Beta => fixed(x, 3),
                Group::Weights => hurdle::report::format::capital_weights(
                    u.equity_weight,
                    u.debt_weight,
                    u.preferred_weight,
                    u.lease_weight,
                ),
                _ => percent(x, 2),
            }
        };
        rows.push([
            hurdle::report::format::label(&s.group).to_string(),
            shown(&b.from),
            shown(&b.to),
            percent(s.wacc_after, 3),
            basis_points(s.contribution),
            basis_points(s.shapley),
        ]);
    }
    if let Some(gap) = b.unexplained.filter(|g| *g != 0.0) {
        rows.push(unexplained(b.to.headline_wacc(), gap));
    }
    let total = basis_points(b.stated_difference);
    rows.push([
        "total".into(),
        String::new(),
        String::new(),
        String::new(),
        total.clone(),
        total,
    ]);
    // The sides' columns as wide as their widest cell (the weights list each component).
    let width = |column: usize| {
        (rows.iter())
            .map(|r| r[column].chars().count())
            .max()
            .unwrap_or(0)
            .max(10)
    };
    let (from, to) = (width(1), width(2));
    let mut out = String::new();
    for r in &rows {
        out.push_str(&format!(
            "{:<22} {:>from$}  {:>to$} {:>12} {:>10} {:>10}\n",
            r[0], r[1], r[2], r[3], r[4], r[5]
        ));
    }
    // The steps are taken one after another in the order listed, so each depends on the ones
    // before it; the Shapley value averages a group's step over every order (found by review:
    // the two columns stood side by side unexplained).
    out.push_str(
        "note: each step takes one group from the other side after the groups above it, so it \
         depends on their order; the Shapley value is the group's step averaged over every \
         order\n",
    );
    out
}

/// The library's notes on the two sides: their dates, their currencies, and each claim's
/// figures that fail the plausibility checks.
fn side_notes(b: &Bridge) -> String {
    use hurdle::audit::bridge::{claim_notes, currency_note, dates_note};
    let pair = dates_note(&b.from, &b.to)
        .into_iter()
        .chain(currency_note(&b.from, &b.to));
    let claims = [&b.from, &b.to].into_iter().flat_map(claim_notes);
    pair.chain(claims).map(|n| format!("note: {n}\n")).collect()
}

/// The notes under the bridge table: each side's unexplained part, the preferred and lease
/// terms the weights step moves, the rounding of the steps, and what the beta line carries.
fn notes(b: &Bridge, csv: bool) -> String {
    let mut out = String::new();
    // Half a basis point: what the printed figures can show.
    let visible = |gap: &f64| gap.abs() >= 5e-5;
    // Either side: a stated WACC (a claim's `wacc`) that its own components do not give.
    for (side, gap) in [(&b.from, b.unexplained_from), (&b.to, b.unexplained)] {
        if let (Some(gap), Some(stated)) = (gap.filter(visible), side.stated_wacc) {
            out.push_str(&format!(
                "note: {} states a WACC of {}; its own components give {}, so {} of it \
                 (stated less components) is explained by no input group\n",
                side.label,
                percent(stated, 3),
                percent(side.wacc, 3),
                basis_points(gap)
            ));
        }
    }
    // Preferred equity and leases move with the weights group, their costs included.
    // A component of weight 0 is "none": its cost is then no input (found by review: a side
    // without leases read "leases 0.0% at 0.00% pre-tax").
    let other = |u: &hurdle::audit::bridge::BuildUp| {
        let part = |name: &str, weight: f64, cost: f64, taxed: &str| match weight == 0.0 {
            true => format!("no {name}"),
            false => format!(
                "{name} {} at {}{taxed}",
                percent(weight, 1),
                percent(cost, 2)
            ),
        };
        format!(
            "{}, {}",
            part("preferred", u.preferred_weight, u.preferred_cost, ""),
            part("leases", u.lease_weight, u.lease_cost_pre_tax, " pre-tax")
        )
    };
    let (from, to) = (&b.from.build_up, &b.to.build_up);
    if from.preferred_weight + from.lease_weight + to.preferred_weight + to.lease_weight > 0.0 {
        out.push_str(&format!(
            "note: the weights step also moves preferred equity and leases, weights and costs: \
             from {}; to {}\n",
            other(from),
            other(to)
        ));
    }
    // Only a bridge written with `--out` has a bridge.csv to point to (found by review).
    out.push_str(&format!(
        "note: steps and Shapley values are shown to the basis point and may not add to the \
         total by a basis point; {}\n",
        match csv {
            true => "bridge.csv holds them in full",
            false => "`--out DIR` writes them in full to bridge.csv",
        }
    ));
    // Only when the D/E differs (found by review: said of two cases of one D/E).
    // (Also when preferred equity on one side makes the weights' products differ by rounding.)
    if b.structures_differ() {
        out.push_str(
            "note: each group is the figure the build-up carries: the beta is the relevered \
             beta, so a different D/E moves the beta line as well as the weights line (the \
             weights step does not relever it)\n",
        );
    }
    out
}
