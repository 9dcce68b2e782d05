//! `peers.csv` and `returns.csv`: the peer table and every aligned return, so a reviewer can
//! redo each regression in another tool. Numbers are written in full (shortest round-trip form).

use std::fmt::Write as _;

use super::format::Full;
use super::Render;
use crate::beta::diagnostics::LagResponse;
use crate::error::Result;
use crate::valuation::Valuation;

/// One row per peer: the estimate, its statistics and the unlevering inputs.
pub struct PeersCsv;

/// Long form: one row per peer and return period.
pub struct ReturnsCsv;

const PEER_COLUMNS: [&str; 36] = [
    "name",
    "prices_file",
    "observations",
    "periods_dropped",
    "alpha",
    "beta",
    "beta_std_error",
    "beta_t_stat",
    "beta_p_value",
    "beta_ci_low",
    "beta_ci_high",
    "r_squared",
    "shrunk_beta",
    "beta_used",
    "debt_to_equity",
    "tax_rate",
    "unlevered_beta",
    "residual_std_error",
    "method",
    "std_errors",
    "durbin_watson",
    "large_studentised_residuals",
    "flags",
    "excluded_reason",
    "debt_beta",
    "cost_of_debt",
    "operating_share",
    "operations_beta",
    "stale_share",
    "zero_return_share",
    "lag_slope",
    "lag_slope_std_error",
    "lag_slope_t_stat",
    "lag_slope_p_value",
    "lag_summed_beta",
    "cost_of_debt_used",
];

impl Render for PeersCsv {
    fn file_name(&self) -> &str {
        "peers.csv"
    }

    fn render(&self, valuation: &Valuation) -> Result<Vec<u8>> {
        let mut out = PEER_COLUMNS.join(",");
        out.push('\n');
        for p in &valuation.peers {
            let e = &p.estimate;
            let lag = |f: fn(&LagResponse) -> f64| {
                p.lag_response
                    .map(|l| Full(f(&l)).to_string())
                    .unwrap_or_default()
            };
            let cells = [
                field(&p.name),
                field(&p.prices_file),
                e.observations.to_string(),
                p.periods_dropped.total.to_string(),
                Full(e.alpha).to_string(),
                Full(e.beta).to_string(),
                Full(e.beta_std_error).to_string(),
                Full(e.beta_t_stat).to_string(),
                Full(e.beta_p_value).to_string(),
                Full(e.beta_ci_low).to_string(),
                Full(e.beta_ci_high).to_string(),
                Full(e.r_squared).to_string(),
                p.shrunk_beta
                    .map(|b| Full(b).to_string())
                    .unwrap_or_default(),
                Full(p.beta_used).to_string(),
                Full(p.debt_to_equity).to_string(),
                Full(p.tax_rate).to_string(),
                Full(p.unlevered_beta).to_string(),
                Full(e.residual_std_error).to_string(),
                crate::report::format::label(&e.method),
                crate::report::format::label(&e.std_errors),
                Full(e.durbin_watson).to_string(),
                e.large_studentised_residuals.to_string(),
                field(
                    &p.flags
                        .iter()
                        .map(|f| f.name())
                        .collect::<Vec<_>>()
                        .join(";"),
                ),
                field(p.excluded_reason.as_deref().unwrap_or("")),
                Full(p.debt_beta).to_string(),
                p.cost_of_debt
                    .map(|kd| Full(kd).to_string())
                    .unwrap_or_default(),
                Full(p.operating_share).to_string(),
                Full(p.operations_beta).to_string(),
                Full(p.stale_share).to_string(),
                Full(p.zero_return_share).to_string(),
                lag(|l| l.slope),
                lag(|l| l.std_error),
                lag(|l| l.t_stat),
                lag(|l| l.p_value),
                lag(|l| l.summed_beta),
                // Whether `cost_of_debt` went into the unlevered beta, and whose it is (found by
                // review: the column alone suggested every peer's was used).
                crate::report::format::label(&p.cost_of_debt_used),
            ];
            out.push_str(&cells.join(","));
            out.push('\n');
        }
        Ok(out.into_bytes())
    }
}

impl Render for ReturnsCsv {
    fn file_name(&self) -> &str {
        "returns.csv"
    }

    fn render(&self, valuation: &Valuation) -> Result<Vec<u8>> {
        let with_rf = valuation.sampling.excess_returns;
        let mut out = String::from("peer,period_end,asset_return,market_return");
        out.push_str(if with_rf { ",risk_free" } else { "" });
        // Dimson and Scholes–Williams: the lagged and led market (excess) returns used.
        if let Some(first) = valuation.returns.first() {
            for shifted in &first.market_shifted {
                if shifted.offset < 0 {
                    write!(out, ",market_lag_{}", -shifted.offset)
                } else {
                    write!(out, ",market_lead_{}", shifted.offset)
                }
                .expect("writing to a String cannot fail");
            }
        }
        out.push('\n');
        for (peer, returns) in valuation.peers.iter().zip(&valuation.returns) {
            let name = field(&peer.name);
            for j in 0..returns.period_ends.len() {
                write!(
                    out,
                    "{name},{},{},{}",
                    returns.period_ends[j],
                    Full(returns.asset[j]),
                    Full(returns.market[j])
                )
                .expect("writing to a String cannot fail");
                if let Some(rf) = &returns.risk_free {
                    write!(out, ",{}", Full(rf[j])).expect("writing to a String cannot fail");
                }
                for shifted in &returns.market_shifted {
                    write!(out, ",{}", Full(shifted.returns[j]))
                        .expect("writing to a String cannot fail");
                }
                out.push('\n');
            }
        }
        Ok(out.into_bytes())
    }
}

/// Quotes a text field when it holds a comma, a quote or a line break (RFC 4180), or a
/// semicolon, which a spreadsheet set to read `;`-separated files (where the decimal mark is a
/// comma) would split the row at (found by review: a name `Alpha; Beta` and the flags
/// `a;b` moved every later column).
pub(crate) fn field(text: &str) -> String {
    if text.contains([',', '"', '\n', '\r', ';']) {
        format!("\"{}\"", text.replace('"', "\"\""))
    } else {
        text.to_string()
    }
}

/// CSV text another writer made (polars', which quotes a field only for a comma, a quote or a
/// line break) with [`field`]'s rule added: each unquoted field that holds a semicolon is put
/// in quotes, so a table of the universe reads as a case's CSV does (found by review: the
/// flags `too_few_observations;low_r_squared` were left bare in `securities.csv`). A field the
/// writer left unquoted holds no quote, so none needs doubling; quoted fields, numbers and
/// line ends are copied as they are.
pub(crate) fn quote_semicolons(text: Vec<u8>) -> Vec<u8> {
    if !text.contains(&b';') {
        return text;
    }
    let mut out = Vec::with_capacity(text.len() + 256);
    let mut at = 0;
    while at < text.len() {
        // `at` starts a field: a quoted one runs to its closing quote (a doubled quote inside
        // it opens and closes again), a bare one to the next comma or line end.
        let end = match text[at] {
            b'"' => {
                let mut end = at + 1;
                while let Some(p) = memchr::memchr(b'"', &text[end..]) {
                    end += p + 1;
                    if text.get(end) != Some(&b'"') {
                        break;
                    }
                    end += 1;
                }
                end.min(text.len())
            }
            _ => memchr::memchr3(b',', b'\n', b'\r', &text[at..]).map_or(text.len(), |p| at + p),
        };
        let cell = &text[at..end];
        match cell.first() != Some(&b'"') && cell.contains(&b';') {
            true => {
                out.push(b'"');
                out.extend_from_slice(cell);
                out.push(b'"');
            }
            false => out.extend_from_slice(cell),
        }
        // The comma or line end after the field.
        out.extend_from_slice(&text[end..(end + 1).min(text.len())]);
        at = end + 1;
    }
    out
}

/// A sensitivity grid as CSV: the row key's values down the first column, the column key's
/// values across the header; a cell the valuation refuses is empty (its reason is in
/// result.json's `sensitivity.refused`, or printed by `hurdle grid`).
pub fn grid_csv(grid: &crate::audit::grid::Grid) -> Vec<u8> {
    let mut out = field(&format!("{} \\ {}", grid.rows.key, grid.columns.key));
    for value in &grid.columns.values {
        write!(out, ",{}", Full(*value)).expect("writing to a String cannot fail");
    }
    out.push('\n');
    for (value, cells) in grid.rows.values.iter().zip(&grid.cells) {
        out.push_str(&Full(*value).to_string());
        for cell in cells {
            out.push(',');
            if let Some(cell) = cell {
                write!(out, "{}", Full(*cell)).expect("writing to a String cannot fail");
            }
        }
        out.push('\n');
    }
    out.into_bytes()
}

/// A bridge as CSV: one row per input group.
pub fn bridge_csv(bridge: &crate::audit::bridge::Bridge) -> Vec<u8> {
    let mut out =
        String::from("group,from_value,to_value,wacc_before,wacc_after,contribution,shapley\n");
    // A starting claim whose stated WACC its components do not give: first the step from the
    // stated WACC to the components', so the rows add up to the gap between the stated WACCs.
    if let Some(gap) = bridge.unexplained_from.filter(|g| *g != 0.0) {
        writeln!(
            out,
            "unexplained at the start (the starting claim's stated WACC less its components'),,,\
             {},{},{},{}",
            Full(bridge.from.headline_wacc()),
            Full(bridge.from.wacc),
            Full(-gap),
            Full(-gap)
        )
        .expect("writing to a String cannot fail");
    }
    for s in &bridge.steps {
        writeln!(
            out,
            "{},{},{},{},{},{},{}",
            crate::report::format::label(&s.group),
            Full(s.group.figure(&bridge.from.build_up)),
            Full(s.group.figure(&bridge.to.build_up)),
            Full(s.wacc_before),
            Full(s.wacc_after),
            Full(s.contribution),
            Full(s.shapley)
        )
        .expect("writing to a String cannot fail");
    }
    // What the claim states beyond its own components, after the groups: with it the
    // contributions add up to the gap between the two stated WACCs.
    if let Some(gap) = bridge.unexplained.filter(|g| *g != 0.0) {
        writeln!(
            out,
            "unexplained (the claim's stated WACC less its components'),,,{},{},{},{}",
            Full(bridge.to.wacc),
            Full(bridge.to.headline_wacc()),
            Full(gap),
            Full(gap)
        )
        .expect("writing to a String cannot fail");
    }
    out.into_bytes()
}

#[cfg(test)]
mod tests {
    use super::{field, quote_semicolons};
    use crate::report::format::Full;
    use polars::prelude::*;

    // RFC 4180, section 2: fields with commas or quotes are quoted, quotes doubled.
    #[test]
    fn fields_are_quoted_per_rfc_4180() {
        assert_eq!(field("Plain"), "Plain");
        assert_eq!(field("A, B"), "\"A, B\"");
        assert_eq!(field("say \"x\""), "\"say \"\"x\"\"\"");
        // A semicolon too, which RFC 4180 allows inside quotes like any character.
        assert_eq!(
            field("too_few_observations;low_r_squared"),
            "\"too_few_observations;low_r_squared\""
        );
    }

    // polars' own CSV writer and reader as the reference: a table polars wrote, with the
    // semicolons quoted, reads back through polars to the same cells, and each text field is
    // written as `field` writes it (quoted for a semicolon, a comma, a quote or a line break).
    #[test]
    fn semicolons_are_quoted_in_a_table_polars_wrote() {
        let texts = [
            "plain",
            "too_few_observations;low_r_squared",
            "A, B; C",
            "say \"x\"; then",
            "line\nbreak;",
            ";",
            "",
        ];
        let mut frame = df!(
            "security" => texts,
            "beta" => [1.25, -0.5, 3e-14, 0.0, 2.0, 7.0, 1.0],
            "flags" => texts.iter().rev().copied().collect::<Vec<_>>(),
        )
        .unwrap();
        let mut written = Vec::new();
        CsvWriter::new(&mut written).finish(&mut frame).unwrap();
        let quoted = quote_semicolons(written.clone());
        let read = CsvReadOptions::default()
            .with_has_header(true)
            .into_reader_with_file_handle(std::io::Cursor::new(quoted.clone()))
            .finish()
            .unwrap();
        for name in ["security", "flags"] {
            let cells: Vec<String> = (read.column(name).unwrap().str().unwrap())
                .iter()
                .map(|c| c.unwrap_or("").to_string())
                .collect();
            let original: Vec<String> = (frame.column(name).unwrap().str().unwrap())
                .iter()
                .map(|c| c.unwrap_or("").to_string())
                .collect();
            assert_eq!(cells, original, "{name}");
        }
        assert_eq!(read.column("beta").unwrap(), frame.column("beta").unwrap());
        let text = String::from_utf8(quoted).unwrap();
        for t in texts.iter().filter(|t| t.contains(';')) {
            assert!(text.contains(&field(t)), "{t} in {text}");
        }
        // Nothing else moves: without the semicolons, the text is polars' own.
        let strip = |b: &[u8]| -> Vec<u8> { b.iter().copied().filter(|&c| c != b'"').collect() };
        assert_eq!(strip(text.as_bytes()), strip(&written));
        assert_eq!(quote_semicolons(b"a,b\n1,2\n".to_vec()), b"a,b\n1,2\n");
    }

    // Each form reads back to the same double (Rust's own parser, which follows IEEE 754
    // round-trip rules), and is as short as serde_json's (the ryu algorithm, an implementation
    // independent of Rust's formatting) writes the same number in result.json.
    #[test]
    fn numbers_are_written_in_full_and_short() {
        for x in [
            4.2e-244,
            5.110808174994548e-8,
            -3e-6,
            1e-5,
            0.0267,
            2400.0,
            1.5e17,
            0.0,
        ] {
            let text = Full(x).to_string();
            assert_eq!(text.parse::<f64>().unwrap(), x, "{text}");
            let json = serde_json::to_string(&x).unwrap();
            assert!(text.len() <= json.len().max(4), "{text} against {json}");
        }
        assert_eq!(Full(4.2e-244).to_string(), "4.2e-244");
        assert_eq!(Full(0.0267).to_string(), "0.0267");
        assert_eq!(Full(1e-5).to_string(), "0.00001");
    }
}
