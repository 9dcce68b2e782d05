//! The `Cover` sheet: what the workbook is, where its inputs came from, and how to read it.
//!
//! It names the case, the valuation date and the run, lists every input file with its sheet,
//! column and SHA-256 (the same hashes as `result.json`, so the workbook can be tied to a
//! receipt), repeats the headline figures as formulas over the `Cost of capital` sheet, explains
//! the colours, and carries the cautions every hurdle output carries.

use crate::error::Result;

use super::{xlsx_error, Book, Expect, Sheet};

/// The cautions, as README and the memo state them.
const CAUTIONS: [&str; 5] = [
    "A discount rate is a judgement. This workbook shows how one was estimated; it does not make \
     the choices behind it (peers, index, window, frequency, premiums) right.",
    "A beta is an estimate with statistical error, and so is every figure built on it: read the \
     confidence intervals, not only the point estimates.",
    "Every input (prices, balance-sheet figures, tax rates, rates, premiums, the cost of debt) is \
     as supplied by the user; hurdle checks form and range, not truth. Verify each against its \
     source before relying on the result.",
    "hurdle computes; it does not advise. Nothing here is investment, tax, legal or accounting \
     advice, nor a fairness opinion.",
    "Defer to the valuation and reporting standards that apply to the engagement and to the \
     judgement of appropriately qualified professionals.",
];

/// The sheets, in order, with what each holds.
const GUIDE: [(&str, &str); 7] = [
    (
        "Cover",
        "This page: the case, the input files and their hashes, the headline figures.",
    ),
    (
        "Inputs",
        "The case's figures as named cells (yellow); change one to see what moves.",
    ),
    (
        "Cost of capital",
        "Aggregation, relevering, cost of equity, cost of debt, weights, WACC.",
    ),
    (
        "Unlevering",
        "Per peer: adjustment, capital structure, debt terms, unlevered betas.",
    ),
    (
        "Betas",
        "Per peer: the regression as spreadsheet functions over the Returns sheet.",
    ),
    (
        "Returns",
        "Every return each regression uses, one block of rows per peer.",
    ),
    (
        "Analyses",
        "Reruns of the case (formula comparison, sensitivity, Monte Carlo): values.",
    ),
];

pub(crate) fn sheet(book: &mut Book) -> Result<Sheet> {
    let v = book.v;
    let mut sheet = Sheet::new("Cover")?;
    let s = &book.styles;
    let (title, label, text, mono) = (
        s.title.clone(),
        s.label.clone(),
        s.text.clone(),
        s.mono.clone(),
    );
    book.text(&mut sheet, (0, 0), &v.case.title, &title)?;
    let intro = format!(
        "Cost-of-capital workbook written by {} {}. The chain from the returns to the WACC is made \
         of live formulas: change an input on the Inputs sheet and every figure that depends on \
         it recomputes. Cached values equal result.json of the same run until an input is \
         edited; the headline figures' State column then says which figures are no longer the \
         run's, and the notes, the Analyses sheet and the file hashes below stay as of the run.",
        v.tool.name, v.tool.version
    );
    book.text(&mut sheet, (1, 0), &intro, &text)?;
    let facts = [
        ("Subject", v.case.subject.clone()),
        ("Currency", v.case.currency.clone()),
        ("Run at (UTC)", v.generated_at.clone()),
        ("Case file", v.case.file.clone()),
        ("Case file SHA-256", v.case.sha256.clone()),
        ("Overrides", v.case.overrides.join("; ")),
        ("Beta method", v.estimator.method_description.clone()),
        (
            "Standard errors",
            v.estimator.std_errors_description.clone(),
        ),
        (
            "Return window",
            format!(
                "{} {} returns, {} to {}",
                v.sampling.lookback,
                crate::report::format::label(&v.sampling.frequency),
                v.sampling.window_start,
                v.sampling.window_end
            ),
        ),
    ];
    book.text(&mut sheet, (3, 0), "Valuation date", &label)?;
    book.date(&mut sheet, (3, 1), v.case.valuation_date)?;
    let mut row = 4;
    for (name, value) in facts {
        book.text(&mut sheet, (row, 0), name, &label)?;
        let format = if name.ends_with("SHA-256") {
            &mono
        } else {
            &text
        };
        book.text(&mut sheet, (row, 1), &value, format)?;
        row += 1;
    }
    row = headline(book, &mut sheet, row + 1)?;
    row = notes(book, &mut sheet, row + 1)?;
    row = files(book, &mut sheet, row + 1)?;
    guide_and_cautions(book, &mut sheet, row)?;
    sheet.ws.set_column_width(0, 28).map_err(xlsx_error)?;
    sheet.ws.set_column_width(1, 60).map_err(xlsx_error)?;
    for col in 2..8 {
        sheet.ws.set_column_width(col, 16).map_err(xlsx_error)?;
    }
    Ok(sheet)
}

/// The guide to the sheets, the legend of the cell colours and the general cautions, from
/// `row` down.
fn guide_and_cautions(book: &mut Book, sheet: &mut Sheet, row: u32) -> Result<()> {
    let s = &book.styles;
    let (subtitle, label, text) = (s.subtitle.clone(), s.label.clone(), s.text.clone());
    // Long sentences wrap inside column B, on screen and on paper.
    let wrapped = text.clone().set_text_wrap();
    book.text(sheet, (row + 1, 0), "Sheets", &subtitle)?;
    let mut row = row + 2;
    for (name, what) in GUIDE {
        book.text(sheet, (row, 0), name, &label)?;
        book.text(sheet, (row, 1), what, &wrapped)?;
        row += 1;
    }
    row = legend(book, sheet, row + 1)?;
    book.text(sheet, (row + 1, 0), "Cautions", &subtitle)?;
    row += 2;
    for caution in CAUTIONS {
        book.text(sheet, (row, 0), "•", &text)?;
        book.text(sheet, (row, 1), caution, &wrapped)?;
        row += 1;
    }
    Ok(())
}

/// The run's own notes, as `result.json` and the memo give them, the figures to check first: a
/// reader who opens only the workbook sees what the run found (a premium typed as a percentage,
/// a peer dropped, a window the data do not cover), not just the general cautions.
fn notes(book: &mut Book, sheet: &mut Sheet, row: u32) -> Result<u32> {
    let v = book.v;
    let (subtitle, text, flag) = (
        book.styles.subtitle.clone(),
        book.styles.text.clone(),
        book.styles.flag.clone(),
    );
    book.text(sheet, (row, 0), "Notes on this run", &subtitle)?;
    let mut row = row + 1;
    let cautions = crate::report::cautions::case_cautions(v, "the Betas sheet's Flags column");
    if v.notes.is_empty() && cautions.is_empty() {
        book.text(sheet, (row, 1), "None.", &text)?;
        return Ok(row + 1);
    }
    let checks = v.notes.iter().filter(|n| n.starts_with("Check: "));
    let others = v.notes.iter().filter(|n| !n.starts_with("Check: "));
    let marked = (cautions.iter().map(|c| ("Caution", c)))
        .chain(checks.map(|n| ("Check", n)))
        .chain(others.map(|n| ("•", n)));
    for (mark, note) in marked {
        let style = match mark {
            "•" => &text,
            _ => &flag,
        };
        book.text(sheet, (row, 0), mark, style)?;
        book.text(sheet, (row, 1), note, &text.clone().set_text_wrap())?;
        row += 1;
    }
    Ok(row)
}

/// The headline figures, as formulas over the named results.
fn headline(book: &mut Book, sheet: &mut Sheet, row: u32) -> Result<u32> {
    let (subtitle, label) = (book.styles.subtitle.clone(), book.styles.label.clone());
    let (pct, beta) = (book.styles.percent.clone(), book.styles.beta.clone());
    book.text(sheet, (row, 0), "Headline figures", &subtitle)?;
    let header = book.styles.header.clone();
    let currency = &book.v.case.currency;
    // The live column holds figures in both currencies when the case converts (found by review:
    // it was headed with the case's currency alone); each row's label names its currency.
    let live = match &book.v.cost.currency_conversion {
        Some(_) => "Live (formulas)".to_string(),
        None => format!("Live ({currency}; formulas)"),
    };
    for (col, text) in [
        (1, live),
        (2, "As run (values)".to_string()),
        (3, "State".to_string()),
    ] {
        book.text(sheet, (row, col), &text, &header)?;
    }
    let rows = headline_rows(book.v);
    let mut r = row + 1;
    for (name, formula, pointer, percent) in rows {
        let format = if percent { &pct } else { &beta };
        book.text(sheet, (r, 0), &name, &label)?;
        book.formula(sheet, (r, 1), formula, Expect::Json(pointer.into()), format)?;
        // The run's own figure beside the live one, and whether an edit moved it by more than
        // 1e-9 of it (1e-9 below 1): LINEST misses hurdle's QR by 1e-12 on an ill-conditioned
        // Dimson design (found by review: an unedited workbook read EDITED).
        let as_run = book.figure(pointer)?;
        let fixed = book.styles.computed(format);
        book.number(sheet, (r, 2), as_run, &fixed)?;
        let (live, kept) = (sheet.abs(r, 1), sheet.abs(r, 2));
        let state =
            format!("=IF(ABS({live}-{kept})>1E-9*MAX(1,ABS({kept})),\"{EDITED}\",\"{AS_RUN}\")");
        let text = book.styles.text.clone();
        book.formula(sheet, (r, 3), &state, Expect::Text(AS_RUN), &text)?;
        r += 1;
    }
    Ok(r)
}

/// The Cover's headline rows: label, formula, `result.json` field, and whether a rate (else a
/// beta). With a currency conversion each rate names its currency, and the output currency's
/// WACC, the WACC of a subject borrowing in it and its cost of equity join them (found by review:
/// the live column was headed with the case's currency alone, and the borrowing rate missing).
fn headline_rows(
    v: &crate::valuation::Valuation,
) -> Vec<(String, &'static str, &'static str, bool)> {
    let currency = &v.case.currency;
    let converted = v.cost.currency_conversion.as_ref().map(|c| c.to.as_str());
    let in_case = |what: &str| match converted {
        Some(_) => format!("{what} ({currency})"),
        None => what.to_string(),
    };
    let mut rows = vec![
        (in_case("WACC"), "=Wacc", "/wacc", true),
        (
            in_case("Cost of equity"),
            "=CostOfEquity",
            "/cost_of_equity",
            true,
        ),
        (
            "After-tax cost of debt".to_string(),
            "=CostOfDebtAfterTax",
            "/cost_of_debt_after_tax",
            true,
        ),
        (
            "Relevered beta".to_string(),
            "=ReleveredBeta",
            "/beta/relevered",
            false,
        ),
        (
            "Aggregate unlevered beta".to_string(),
            "=UnleveredBeta",
            "/beta/unlevered",
            false,
        ),
    ];
    if let Some(to) = converted {
        rows.insert(
            1,
            (
                format!("WACC ({to})"),
                "=WaccOutputCurrency",
                "/currency_conversion/wacc",
                true,
            ),
        );
        rows.insert(
            2,
            (
                format!("WACC ({to}), subject borrowing in {to}"),
                "=WaccBorrowingOutputCurrency",
                "/currency_conversion/wacc_borrowing_locally",
                true,
            ),
        );
        rows.insert(
            4,
            (
                format!("Cost of equity ({to})"),
                "=CostOfEquityOutputCurrency",
                "/currency_conversion/cost_of_equity",
                true,
            ),
        );
    }
    rows
}

/// The headline's state of a figure the workbook still computes as the run did.
const AS_RUN: &str = "as run";
/// The headline's state of a figure an edit has moved.
const EDITED: &str = "EDITED: not the run's figure";

/// Every input file with its sheet, column, rows and SHA-256.
fn files(book: &mut Book, sheet: &mut Sheet, row: u32) -> Result<u32> {
    let v = book.v;
    let (subtitle, header) = (book.styles.subtitle.clone(), book.styles.header.clone());
    let (text, mono, count) = (
        book.styles.text.clone(),
        book.styles.mono.clone(),
        book.styles.count.clone(),
    );
    book.text(sheet, (row, 0), "Input files", &subtitle)?;
    let heads = [
        "Role",
        "File",
        "Sheet",
        "Column",
        "Rows",
        "First date",
        "Last date",
        "SHA-256",
    ];
    for (col, head) in heads.iter().enumerate() {
        book.text(sheet, (row + 1, col as u16), head, &header)?;
    }
    let mut r = row + 2;
    for file in &v.files {
        book.text(sheet, (r, 0), &file.role, &text)?;
        book.text(sheet, (r, 1), &file.path, &text)?;
        book.text(sheet, (r, 2), file.sheet.as_deref().unwrap_or(""), &text)?;
        book.text(sheet, (r, 3), &file.column, &text)?;
        book.number(sheet, (r, 4), file.rows as f64, &count)?;
        book.date(sheet, (r, 5), file.first_date)?;
        book.date(sheet, (r, 6), file.last_date)?;
        book.text(sheet, (r, 7), &file.sha256, &mono)?;
        r += 1;
    }
    if let Some(table) = &v.cost.cost_of_debt.table {
        book.text(sheet, (r, 0), "spread table", &text)?;
        book.text(sheet, (r, 1), &table.path, &text)?;
        book.number(sheet, (r, 4), table.row_count as f64, &count)?;
        book.text(sheet, (r, 7), &table.sha256, &mono)?;
        r += 1;
    }
    Ok(r)
}

/// What the three kinds of cell look like.
fn legend(book: &mut Book, sheet: &mut Sheet, row: u32) -> Result<u32> {
    let s = &book.styles;
    let (subtitle, text) = (s.subtitle.clone(), s.text.clone());
    let input = s.percent_input.clone();
    let computed = s.computed(&s.percent);
    let plain = s.percent.clone();
    book.text(sheet, (row, 0), "Reading the cells", &subtitle)?;
    book.text(sheet, (row + 1, 0), "Input (named; may be changed)", &input)?;
    book.text(
        sheet,
        (row + 1, 1),
        "The case's figure. Every formula that uses it recomputes when it changes.",
        &text,
    )?;
    book.text(sheet, (row + 2, 0), "Formula", &plain)?;
    book.text(
        sheet,
        (row + 2, 1),
        "Computed by the spreadsheet from the cells it names; its saved value is hurdle's figure.",
        &text,
    )?;
    book.text(sheet, (row + 3, 0), "Computed by hurdle", &computed)?;
    book.text(sheet, (row + 3, 1), "A figure no spreadsheet function reproduces (robust standard errors, reruns); a note says how it was computed.", &text)?;
    Ok(row + 4)
}
