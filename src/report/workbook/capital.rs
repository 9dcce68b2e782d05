//! The `Unlevering` sheet, and the order in which the capital sheets are built.
//!
//! One row per peer: the raw beta from `Betas`, the case's adjustment (Blume, or Vasicek's
//! shrinkage toward a prior), the peer's capital structure as inputs, its D/E, debt beta and
//! cost of debt, the unlevered beta under the case's formula and the beta of the operations. The
//! last column holds the figure each aggregated peer contributes (the text "left out" for a
//! peer left out), which the `Cost of capital` sheet's `MEDIAN`, `AVERAGE` and `TRIMMEAN` read.

use crate::capital::leverage::Formula;
use crate::case::{Adjustment, DebtBetaSource, DebtMeasure};
use crate::error::Result;

use super::betas::BetasLayout;
use super::{absolute, relative, xlsx_error, Book, Expect, Format, Sheet};

/// The sheets after the regressions, and the cells the cover repeats.
pub(crate) struct CapitalSheets {
    pub unlevering: Sheet,
    pub cost: Sheet,
    pub analyses: Sheet,
}

/// The ranges of the `Unlevering` sheet the aggregation reads.
pub(crate) struct PeerRanges {
    /// 1 for an aggregated peer, 0 for one left out.
    pub included: String,
    /// The unlevered betas the case aggregates (unlevered or of the operations), every peer.
    pub chosen: String,
    /// The same, text for a peer left out.
    pub aggregated: String,
    pub equity: String,
}

pub(crate) fn sheets(
    book: &mut Book,
    betas: &BetasLayout,
    names: &mut Vec<(String, String)>,
) -> Result<CapitalSheets> {
    let (unlevering, ranges) = unlevering(book, betas, names)?;
    let cost = super::cost::sheet(book, &ranges, names)?;
    let analyses = super::analyses::sheet(book)?;
    Ok(CapitalSheets {
        unlevering,
        cost,
        analyses,
    })
}

/// The columns of the sheet, fixed whatever the case.
const PEER: u16 = 0;
const INCLUDED: u16 = 1;
const RAW: u16 = 2;
const SE: u16 = 3;
const WEIGHT: u16 = 4;
const ADJUSTED: u16 = 5;
const USED: u16 = 6;
const EQUITY: u16 = 7;
const DEBT: u16 = 8;
const CASH: u16 = 9;
const TAX: u16 = 10;
const DE: u16 = 11;
const KD: u16 = 12;
const DEBT_BETA: u16 = 13;
const UNLEVERED: u16 = 14;
const CASH_SHARE: u16 = 15;
const CORRECTED: u16 = 16;
const AGGREGATED: u16 = 17;
const REASON: u16 = 18;
/// The peer's D/E when it is aggregated, else "left out": what the peers' median target reads,
/// so it follows the Aggregated flag as the beta's statistic does.
const DE_AGGREGATED: u16 = 19;

/// What the aggregated-figure column shows for a peer left out.
const LEFT_OUT: &str = "left out";

const HEADERS: [&str; 20] = [
    "Peer",
    "Aggregated (1 = yes)",
    "Raw beta",
    "SE(β)",
    "Vasicek weight on the estimate",
    "Shrunk beta (Blume or Vasicek)",
    "Beta used",
    "Equity value",
    "Debt",
    "Cash",
    "Tax rate",
    "D/E",
    "Pre-tax cost of debt",
    "Debt beta",
    "Unlevered beta",
    "Operating share, 1 − cash / (equity + debt)",
    "Beta of the operations",
    "Aggregated figure",
    "Why left out",
    "D/E if aggregated (the peers' median target reads these)",
];

fn unlevering(
    book: &mut Book,
    betas: &BetasLayout,
    names: &mut Vec<(String, String)>,
) -> Result<(Sheet, PeerRanges)> {
    let v = book.v;
    let mut sheet = Sheet::new("Unlevering")?;
    let header = book.styles.header.clone();
    for (col, text) in HEADERS.iter().enumerate() {
        book.text(&mut sheet, (0, col as u16), text, &header)?;
    }
    let n = v.peers.len() as u32;
    let (first, last) = (1u32, n);
    if v.settings.beta.adjustment == Adjustment::Vasicek {
        vasicek_prior(book, &mut sheet, names, last + 2, (first, last))?;
    }
    for i in 0..v.peers.len() {
        peer_row(book, &mut sheet, betas, i, 1 + i as u32)?;
    }
    // The Aggregated flags are inputs a user may change: 1 or 0 only (a 2 or "yes" would read
    // differently in a weighted sum and a test for 1).
    let flags = rust_xlsxwriter::DataValidation::new()
        .allow_whole_number(rust_xlsxwriter::DataValidationRule::Between(0, 1))
        .set_error_title("Aggregated: 1 or 0")
        .and_then(|d| d.set_error_message("1 aggregates the peer, 0 leaves it out."))
        .map_err(xlsx_error)?;
    (sheet.ws)
        .add_data_validation(first, INCLUDED, last, INCLUDED, &flags)
        .map_err(xlsx_error)?;
    let formula = crate::report::format::label(&v.cost.beta.formula);
    let note = format!(
        "Unlevered with {} ({}): {}. Debt in D/E: {} debt.",
        formula,
        v.cost.beta.formula_source,
        v.cost.beta.formula_expression,
        crate::report::format::label(&v.cost.beta.debt_measure)
    );
    book.text(&mut sheet, (last + 1, 0), &note, &book.styles.text.clone())?;
    sheet.ws.set_freeze_panes(1, 1).map_err(xlsx_error)?;
    sheet.ws.set_row_height(0, 45).map_err(xlsx_error)?;
    (sheet.ws)
        .set_column_width(PEER, super::name_column_width(book.v))
        .map_err(xlsx_error)?;
    for col in INCLUDED..REASON {
        sheet.ws.set_column_width(col, 12).map_err(xlsx_error)?;
    }
    sheet.ws.set_column_width(REASON, 50).map_err(xlsx_error)?;
    sheet
        .ws
        .set_column_width(DE_AGGREGATED, 16)
        .map_err(xlsx_error)?;
    let range = |col| sheet.range(first, last, col);
    let chosen = if v.cost.beta.uses_operations_beta {
        CORRECTED
    } else {
        UNLEVERED
    };
    let ranges = PeerRanges {
        included: range(INCLUDED),
        chosen: range(chosen),
        aggregated: range(AGGREGATED),
        equity: range(EQUITY),
    };
    Ok((sheet, ranges))
}

/// The peers' median D/E over this sheet's "D/E if aggregated" column, for a target taken from
/// the peers (`target.source = "peer-median"`): a change to a peer's equity, debt or cash, or
/// to its Aggregated flag, moves the target, as it moves the beta's statistic (MEDIAN skips the
/// "left out" text).
pub(crate) fn peer_median_debt_to_equity(v: &crate::valuation::Valuation) -> String {
    let last = v.peers.len() as u32;
    format!(
        "=MEDIAN(Unlevering!{}:{})",
        absolute(1, DE_AGGREGATED),
        absolute(last, DE_AGGREGATED)
    )
}

/// One peer's row of the sheet: where it is and the peer's `result.json` fields.
struct Row {
    i: usize,
    row: u32,
}

impl Row {
    fn at(&self, col: u16) -> String {
        relative(self.row, col)
    }

    fn field(&self, field: &str) -> Expect {
        Expect::Json(format!("/peers/{}/{field}", self.i))
    }

    /// A formula in column `col` equal to the peer's field `field`.
    fn put(
        &self,
        book: &mut Book,
        sheet: &mut Sheet,
        col: u16,
        formula: &str,
        field: &str,
        format: &Format,
    ) -> Result<()> {
        book.formula(sheet, (self.row, col), formula, self.field(field), format)
    }
}

/// One peer: adjustment, capital structure, debt terms, unlevered beta and beta of the operations.
fn peer_row(
    book: &mut Book,
    sheet: &mut Sheet,
    betas: &BetasLayout,
    i: usize,
    row: u32,
) -> Result<()> {
    let peer = &book.v.peers[i];
    let text = book.styles.text.clone();
    let r = Row { i, row };
    book.text(sheet, (row, PEER), &peer.name, &text)?;
    let included = peer.excluded_reason.is_none();
    let flag = book.styles.flag_input.clone();
    book.number(
        sheet,
        (row, INCLUDED),
        if included { 1.0 } else { 0.0 },
        &flag,
    )?;
    if let Some(reason) = &peer.excluded_reason {
        book.text(sheet, (row, REASON), reason, &text)?;
    }
    adjustment(book, sheet, betas, &r)?;
    structure(book, sheet, &r)?;
    unlever(book, sheet, &r, included)?;
    let de = format!("=IF({}=1,{},\"{LEFT_OUT}\")", r.at(INCLUDED), r.at(DE));
    let expect = match included {
        true => r.field("debt_to_equity"),
        false => Expect::Text(LEFT_OUT),
    };
    let ratio = book.styles.ratio.clone();
    book.formula(sheet, (r.row, DE_AGGREGATED), &de, expect, &ratio)
}

/// The raw beta and its SE from `Betas`, the case's adjustment, and the beta used.
fn adjustment(book: &mut Book, sheet: &mut Sheet, betas: &BetasLayout, r: &Row) -> Result<()> {
    let beta = book.styles.beta.clone();
    let from_betas = |col: u16| format!("={}", betas.sheet.abs(betas.rows[r.i], col));
    r.put(book, sheet, RAW, &from_betas(betas.beta), "beta", &beta)?;
    r.put(
        book,
        sheet,
        SE,
        &from_betas(betas.std_error),
        "beta_std_error",
        &beta,
    )?;
    let used = match book.v.settings.beta.adjustment {
        Adjustment::None => format!("={}", r.at(RAW)),
        Adjustment::Blume => {
            let blume = format!("=BlumeWeight*{}+(1-BlumeWeight)", r.at(RAW));
            r.put(book, sheet, ADJUSTED, &blume, "shrunk_beta", &beta)?;
            format!("={}", r.at(ADJUSTED))
        }
        Adjustment::Vasicek => {
            let weight = format!(
                "=VasicekPriorVariance/(VasicekPriorVariance+{}^2)",
                r.at(SE)
            );
            r.put(
                book,
                sheet,
                WEIGHT,
                &weight,
                "vasicek/weight_on_estimate",
                &beta,
            )?;
            let w = r.at(WEIGHT);
            let shrunk = format!("={w}*{}+(1-{w})*VasicekPriorMean", r.at(RAW));
            r.put(book, sheet, ADJUSTED, &shrunk, "shrunk_beta", &beta)?;
            format!("={}", r.at(ADJUSTED))
        }
    };
    r.put(book, sheet, USED, &used, "beta_used", &beta)
}

/// The peer's equity, debt, cash and tax rate (inputs), its D/E, cost of debt and debt beta.
fn structure(book: &mut Book, sheet: &mut Sheet, r: &Row) -> Result<()> {
    let settings = &book.v.settings;
    let spec = &settings.peers[r.i];
    let s = &book.styles;
    let (beta, pct, ratio) = (s.beta.clone(), s.percent.clone(), s.ratio.clone());
    let (amount_in, pct_in, beta_in) = (
        s.amount_input.clone(),
        s.percent_input.clone(),
        s.beta_input.clone(),
    );
    for (col, value) in [
        (EQUITY, spec.equity_value),
        (DEBT, spec.debt),
        (CASH, spec.cash),
    ] {
        book.number(sheet, (r.row, col), value, &amount_in)?;
    }
    book.number(sheet, (r.row, TAX), spec.tax_rate, &pct_in)?;
    let de = match settings.leverage.debt_measure {
        DebtMeasure::Gross => format!("={}/{}", r.at(DEBT), r.at(EQUITY)),
        DebtMeasure::Net => format!("=({}-{})/{}", r.at(DEBT), r.at(CASH), r.at(EQUITY)),
    };
    r.put(book, sheet, DE, &de, "debt_to_equity", &ratio)?;
    match spec.cost_of_debt {
        Some(kd) => book.number(sheet, (r.row, KD), kd, &pct_in)?,
        None => r.put(book, sheet, KD, "=CostOfDebtPreTax", "cost_of_debt", &pct)?,
    }
    match (settings.leverage.debt_beta_source, spec.debt_beta) {
        (DebtBetaSource::None, _) => book.number(sheet, (r.row, DEBT_BETA), 0.0, &beta),
        (_, Some(own)) => book.number(sheet, (r.row, DEBT_BETA), own, &beta_in),
        (DebtBetaSource::Given, None) => r.put(
            book,
            sheet,
            DEBT_BETA,
            "=SubjectDebtBeta",
            "debt_beta",
            &beta,
        ),
        (DebtBetaSource::CreditSpread, None) => {
            let spread = format!("=({}-RiskFreeRate)/EquityRiskPremium", r.at(KD));
            r.put(book, sheet, DEBT_BETA, &spread, "debt_beta", &beta)
        }
    }
}

/// The unlevered beta under the case's formula, the beta of the operations, and the figure the
/// peer contributes to the aggregate.
fn unlever(book: &mut Book, sheet: &mut Sheet, r: &Row, included: bool) -> Result<()> {
    let v = book.v;
    let (beta, ratio) = (book.styles.beta.clone(), book.styles.ratio.clone());
    let unlevered = unlever_formula(v.cost.beta.formula, &|col| r.at(col));
    r.put(book, sheet, UNLEVERED, &unlevered, "unlevered_beta", &beta)?;
    let share = format!("=1-{}/({}+{})", r.at(CASH), r.at(EQUITY), r.at(DEBT));
    r.put(book, sheet, CASH_SHARE, &share, "operating_share", &ratio)?;
    // Of the unlevered beta at gross debt: under net debt the unlevered beta has already netted
    // the cash, and dividing it by the share too would count the cash twice.
    let operations = match v.settings.leverage.debt_measure {
        DebtMeasure::Gross => format!("={}/{}", r.at(UNLEVERED), r.at(CASH_SHARE)),
        DebtMeasure::Net => {
            let gross_de = format!("({}/{})", r.at(DEBT), r.at(EQUITY));
            let at = |col| {
                if col == DE {
                    gross_de.clone()
                } else {
                    r.at(col)
                }
            };
            let gross = unlever_formula(v.cost.beta.formula, &at);
            format!("=({})/{}", gross.trim_start_matches('='), r.at(CASH_SHARE))
        }
    };
    r.put(
        book,
        sheet,
        CORRECTED,
        &operations,
        "operations_beta",
        &beta,
    )?;
    let (chosen, field) = if v.cost.beta.uses_operations_beta {
        (CORRECTED, "operations_beta")
    } else {
        (UNLEVERED, "unlevered_beta")
    };
    // Text for a peer left out, which MEDIAN, AVERAGE, TRIMMEAN and the rest skip.
    let aggregated = format!("=IF({}=1,{},\"{LEFT_OUT}\")", r.at(INCLUDED), r.at(chosen));
    let expect = if included {
        r.field(field)
    } else {
        Expect::Text(LEFT_OUT)
    };
    book.formula(sheet, (r.row, AGGREGATED), &aggregated, expect, &beta)
}

/// βU from the beta used, D/E, tax rate, debt beta and cost of debt of one row, under the
/// case's formula: βU = (βL + βD·s·D/E) / (1 + s·D/E), βD = 0 for Hamada (see `leverage`).
fn unlever_formula(formula: Formula, at: &dyn Fn(u16) -> String) -> String {
    let (used, de, t, kd, bd) = (at(USED), at(DE), at(TAX), at(KD), at(DEBT_BETA));
    match formula {
        Formula::Hamada => format!("={used}/(1+(1-{t})*{de})"),
        Formula::HarrisPringle => format!("=({used}+{bd}*{de})/(1+{de})"),
        Formula::MilesEzzell => {
            let s = format!("(1-{t}*{kd}/(1+{kd}))");
            format!("=({used}+{bd}*{s}*{de})/(1+{s}*{de})")
        }
        Formula::Conine => format!("=({used}+{bd}*(1-{t})*{de})/(1+(1-{t})*{de})"),
    }
}

/// The Vasicek prior below the peer table: the cross-section (mean and sample variance of the
/// aggregated peers' raw betas) as formulas, or the stated one (named on the `Inputs` sheet).
fn vasicek_prior(
    book: &mut Book,
    sheet: &mut Sheet,
    names: &mut Vec<(String, String)>,
    row: u32,
    (first, last): (u32, u32),
) -> Result<()> {
    let v = book.v;
    let Some(prior) = &v.cost.beta.vasicek_prior else {
        return Ok(());
    };
    if prior.source != "cross-section" {
        return Ok(());
    }
    let beta = book.styles.beta.clone();
    let label = book.styles.label.clone();
    // Weighted by the 0/1 flags, so only the aggregated peers' raw betas count.
    let included = sheet.range(first, last, INCLUDED);
    let raw = sheet.range(first, last, RAW);
    book.text(
        sheet,
        (row, 0),
        "Vasicek prior mean (cross-section)",
        &label,
    )?;
    // `--(flag=1)`: a flag of 2 or "yes" counts as left out, as in every other formula.
    let mean = format!("=SUMPRODUCT(--({included}=1),{raw})/COUNTIF({included},1)");
    book.formula(
        sheet,
        (row, 2),
        &mean,
        Expect::Json("/beta/vasicek_prior/mean".into()),
        &beta,
    )?;
    book.text(
        sheet,
        (row + 1, 0),
        "Vasicek prior variance (cross-section)",
        &label,
    )?;
    let variance = format!(
        "=SUMPRODUCT(--({included}=1),({raw}-{m})^2)/(COUNTIF({included},1)-1)",
        m = absolute(row, 2)
    );
    // Four decimals, as the memo gives it (found by review: 0.066 for 0.0665).
    let four = book.styles.p_value.clone();
    book.formula(
        sheet,
        (row + 1, 2),
        &variance,
        Expect::Json("/beta/vasicek_prior/variance".into()),
        &four,
    )?;
    names.push(("VasicekPriorMean".into(), format!("={}", sheet.abs(row, 2))));
    names.push((
        "VasicekPriorVariance".into(),
        format!("={}", sheet.abs(row + 1, 2)),
    ));
    Ok(())
}
