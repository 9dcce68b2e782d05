//! The `Analyses` sheet: figures that are whole reruns of the case, written as hurdle's values.
//!
//! The comparison of leverage formulas, the sensitivity grid, the Monte Carlo percentiles and
//! the bridge to a claimed build-up each need the pipeline run again under other settings, which
//! no formula on one sheet can do. They are shown here as values, marked as computed by hurdle,
//! so a reviewer sees them beside the live chain without mistaking them for formulas.

use rust_xlsxwriter::Format;

use crate::error::Result;

use super::{xlsx_error, Book, Note, Sheet};

pub(crate) fn sheet(book: &mut Book) -> Result<Sheet> {
    let v = book.v;
    let mut sheet = Sheet::new("Analyses")?;
    book.text(
        &mut sheet,
        (0, 0),
        "Analyses (values computed by hurdle)",
        &book.styles.title.clone(),
    )?;
    book.text(
        &mut sheet,
        (1, 0),
        "Each figure on this sheet is a full rerun of the case under other settings; it is a \
         value, not a formula, and does not follow changes made to the Inputs sheet.",
        &book.styles.text.clone(),
    )?;
    let mut row = 3;
    row = formulas(book, &mut sheet, row)?;
    if let Some(grid) = &v.sensitivity {
        row = sensitivity(book, &mut sheet, row + 1, grid)?;
    }
    if let Some(u) = &v.uncertainty {
        row = monte_carlo(book, &mut sheet, row + 1, u)?;
    }
    if let Some(bridge) = &v.reconciliation {
        bridge_table(book, &mut sheet, row + 1, bridge)?;
    }
    sheet.ws.set_column_width(0, 40).map_err(xlsx_error)?;
    for col in 1..12 {
        sheet.ws.set_column_width(col, 13).map_err(xlsx_error)?;
    }
    Ok(sheet)
}

/// A table title with a note on where its figures come from.
fn title(book: &Book, sheet: &mut Sheet, row: u32, text: &str, why: &str) -> Result<()> {
    // With a currency conversion, every analysis is in the case's currency (found by review:
    // nothing said so beside the converted headline).
    let text = match &book.v.cost.currency_conversion {
        Some(_) => format!("{text} (in {})", book.v.case.currency),
        None => text.to_string(),
    };
    book.text(sheet, (row, 0), &text, &book.styles.subtitle.clone())?;
    let note = Note::new(format!("Computed by hurdle: {why}"))
        .set_author("hurdle")
        .add_author_prefix(false);
    sheet.ws.insert_note(row, 0, &note).map_err(xlsx_error)?;
    Ok(())
}

fn headers(book: &Book, sheet: &mut Sheet, row: u32, texts: &[&str]) -> Result<()> {
    let header = book.styles.header.clone();
    for (col, text) in texts.iter().enumerate() {
        book.text(sheet, (row, col as u16), text, &header)?;
    }
    Ok(())
}

fn value(book: &Book, sheet: &mut Sheet, at: (u32, u16), x: f64, format: &Format) -> Result<()> {
    let format = book.styles.computed(format);
    book.number(sheet, at, x, &format)
}

fn formulas(book: &mut Book, sheet: &mut Sheet, row: u32) -> Result<u32> {
    let v = book.v;
    title(
        book,
        sheet,
        row,
        "Every leverage formula, same inputs",
        "the chain from the peers' betas to the WACC, once per formula.",
    )?;
    headers(
        book,
        sheet,
        row + 1,
        &[
            "Formula",
            "In use",
            "Aggregate βU",
            "Relevered βL",
            "Cost of equity",
            "WACC",
        ],
    )?;
    let (beta, pct, text) = (
        book.styles.beta.clone(),
        book.styles.percent.clone(),
        book.styles.text.clone(),
    );
    let mut r = row + 2;
    for compared in &v.cost.leverage_comparison {
        let outcome = &compared.outcome;
        let label = format!(
            "{} — {}",
            crate::report::format::label(&outcome.formula),
            outcome.formula_source
        );
        book.text(sheet, (r, 0), &label, &text)?;
        book.text(
            sheet,
            (r, 1),
            if outcome.in_use { "yes" } else { "" },
            &text,
        )?;
        value(book, sheet, (r, 2), outcome.unlevered, &beta)?;
        value(book, sheet, (r, 3), outcome.relevered, &beta)?;
        value(book, sheet, (r, 4), outcome.cost_of_equity, &pct)?;
        value(book, sheet, (r, 5), outcome.wacc, &pct)?;
        if let Some(reason) = &compared.refused {
            let note = Note::new(format!(
                "For comparison only: the case would be refused under this formula: {reason}"
            ))
            .set_author("hurdle")
            .add_author_prefix(false);
            sheet.ws.insert_note(r, 0, &note).map_err(xlsx_error)?;
        }
        r += 1;
    }
    Ok(r)
}

fn sensitivity(
    book: &mut Book,
    sheet: &mut Sheet,
    row: u32,
    grid: &crate::audit::grid::Grid,
) -> Result<u32> {
    let metric = match grid.metric {
        crate::case::Metric::Wacc => "WACC",
        crate::case::Metric::CostOfEquity => "cost of equity",
    };
    let text = format!(
        "Sensitivity of the {metric}: {} down, {} across",
        grid.rows.key, grid.columns.key
    );
    title(
        book,
        sheet,
        row,
        &text,
        "each cell reruns the case with the two values set, as `hurdle grid` does.",
    )?;
    let header = book.styles.header.clone();
    let pct = book.styles.percent.clone();
    book.text(
        sheet,
        (row + 1, 0),
        &format!("{} \\ {}", grid.rows.key, grid.columns.key),
        &header,
    )?;
    // Each axis in its key's own format: a rate or premium as a percentage with every digit it
    // has (up to four decimals of a percent), anything else (a D/E, a lookback, an amount) as
    // the number itself.
    let axis_format = |key: &str| {
        let format = header.clone();
        match crate::report::format::key_is_rate(key) {
            true => format.set_num_format("0.00##%"),
            false => format.set_num_format("General"),
        }
    };
    let (row_format, column_format) = (axis_format(&grid.rows.key), axis_format(&grid.columns.key));
    for (c, x) in grid.columns.values.iter().enumerate() {
        book.number(sheet, (row + 1, 1 + c as u16), *x, &column_format)?;
    }
    let mut r = row + 2;
    for (i, (x, cells)) in grid.rows.values.iter().zip(&grid.cells).enumerate() {
        book.number(sheet, (r, 0), *x, &row_format)?;
        for (c, cell) in cells.iter().enumerate() {
            let at = (r, 1 + c as u16);
            match cell {
                Some(cell) => value(book, sheet, at, *cell, &pct)?,
                None => refused_cell(book, sheet, at, grid.refusal(i, c).unwrap_or_default())?,
            }
        }
        r += 1;
    }
    Ok(r)
}

/// A grid cell the case refuses: `n/a`, with the reason in a note.
fn refused_cell(
    book: &Book,
    sheet: &mut Sheet,
    (row, col): (u32, u16),
    reason: &str,
) -> Result<()> {
    book.text(sheet, (row, col), "n/a", &book.styles.text.clone())?;
    let note = Note::new(format!("The case refuses these two values: {reason}"))
        .set_author("hurdle")
        .add_author_prefix(false);
    sheet.ws.insert_note(row, col, &note).map_err(xlsx_error)?;
    Ok(())
}

fn monte_carlo(
    book: &mut Book,
    sheet: &mut Sheet,
    row: u32,
    u: &crate::audit::uncertainty::Uncertainty,
) -> Result<u32> {
    let text = format!(
        "Monte Carlo of the WACC ({} draws, seed {})",
        u.draws, u.seed
    );
    title(
        book,
        sheet,
        row,
        &text,
        &format!(
            "draws of the betas ({}), seeded, through the same chain.",
            u.beta_distribution
        ),
    )?;
    headers(
        book,
        sheet,
        row + 1,
        &[
            "Statistic",
            "WACC, estimation error",
            "WACC, peer set resampled",
        ],
    )?;
    let (pct, label) = (book.styles.percent.clone(), book.styles.label.clone());
    let mut r = row + 2;
    let p = &u.peer_set;
    for (name, x, y) in [
        ("Point estimate", Some(u.point_estimate), u.point_estimate),
        ("Mean", u.mean, p.mean),
        ("5th percentile", Some(u.p05), p.p05),
        ("25th percentile", Some(u.p25), p.p25),
        ("Median", Some(u.p50), p.p50),
        ("75th percentile", Some(u.p75), p.p75),
        ("95th percentile", Some(u.p95), p.p95),
    ] {
        book.text(sheet, (r, 0), name, &label)?;
        match x {
            Some(x) => value(book, sheet, (r, 1), x, &pct)?,
            // The draws' mean when a peer's beta has no finite variance (see the result).
            None => book.text(
                sheet,
                (r, 1),
                "n/a (no finite variance)",
                &book.styles.text.clone(),
            )?,
        }
        value(book, sheet, (r, 2), y, &pct)?;
        r += 1;
    }
    leave_one_out(book, sheet, r + 1, u)
}

/// The WACC without each aggregated peer, and the specification range, as the memo lists them.
fn leave_one_out(
    book: &mut Book,
    sheet: &mut Sheet,
    row: u32,
    u: &crate::audit::uncertainty::Uncertainty,
) -> Result<u32> {
    title(
        book,
        sheet,
        row,
        "Leave one out",
        "the case rerun at the point estimates without each aggregated peer.",
    )?;
    headers(
        book,
        sheet,
        row + 1,
        &["Peer left out", "WACC", "Change (bp)"],
    )?;
    let (pct, label, text) = (
        book.styles.percent.clone(),
        book.styles.label.clone(),
        book.styles.text.clone(),
    );
    let bp = book.styles.statistic.clone();
    let mut r = row + 2;
    for entry in &u.leave_one_out {
        book.text(sheet, (r, 0), &entry.peer, &label)?;
        match (entry.wacc, entry.change_bp) {
            (Some(wacc), Some(change)) => {
                value(book, sheet, (r, 1), wacc, &pct)?;
                value(book, sheet, (r, 2), change, &bp)?;
            }
            _ => {
                let why = entry.reason.as_deref().unwrap_or("no peer left");
                book.text(sheet, (r, 1), &format!("n/a ({why})"), &text)?;
            }
        }
        r += 1;
    }
    if u.specifications.is_empty() {
        return Ok(r);
    }
    let r = r + 1;
    title(
        book,
        sheet,
        r,
        "Specification range",
        "the case rerun at other return frequencies and windows (result.json lists each \
         row's override values).",
    )?;
    headers(book, sheet, r + 1, &["Frequency", "Window", "WACC", ""])?;
    let mut r = r + 2;
    for spec in &u.specifications {
        book.text(
            sheet,
            (r, 0),
            &crate::report::format::label(&spec.frequency),
            &label,
        )?;
        book.text(sheet, (r, 1), &spec.window, &text)?;
        match spec.wacc {
            Some(wacc) => value(book, sheet, (r, 2), wacc, &pct)?,
            None => book.text(sheet, (r, 2), "n/a", &text)?,
        }
        let remark = match (spec.case_choice, &spec.reason) {
            (true, _) => "this case".to_string(),
            (false, Some(reason)) => reason.clone(),
            (false, None) => String::new(),
        };
        if !remark.is_empty() {
            book.text(sheet, (r, 3), &remark, &text)?;
        }
        r += 1;
    }
    Ok(r)
}

fn bridge_table(
    book: &mut Book,
    sheet: &mut Sheet,
    row: u32,
    bridge: &crate::audit::bridge::Bridge,
) -> Result<u32> {
    title(
        book,
        sheet,
        row,
        "Bridge to the claimed build-up",
        "one input group at a time, with each group's Shapley value.",
    )?;
    headers(
        book,
        sheet,
        row + 1,
        &[
            "Input group",
            "WACC before",
            "WACC after",
            "Contribution",
            "Shapley value",
        ],
    )?;
    let (pct, label) = (book.styles.percent.clone(), book.styles.label.clone());
    let mut r = row + 2;
    for step in &bridge.steps {
        book.text(sheet, (r, 0), step.group.title(), &label)?;
        for (c, x) in [
            step.wacc_before,
            step.wacc_after,
            step.contribution,
            step.shapley,
        ]
        .iter()
        .enumerate()
        {
            value(book, sheet, (r, 1 + c as u16), *x, &pct)?;
        }
        r += 1;
    }
    // Where the steps end, and what the claim states beyond its own components.
    let ends = [
        // WACCs under "WACC after"; the part no group explains, a difference, under
        // "Contribution".
        ("This case's WACC", Some(bridge.from.wacc), 2),
        ("The claim's components give", Some(bridge.to.wacc), 2),
        ("Not explained by any input group", bridge.unexplained, 3),
        ("The claim's WACC as stated", bridge.to.stated_wacc, 2),
    ];
    for (name, x, col) in ends {
        let Some(x) = x else { continue };
        book.text(sheet, (r, 0), name, &label)?;
        value(book, sheet, (r, col), x, &pct)?;
        r += 1;
    }
    Ok(r)
}
