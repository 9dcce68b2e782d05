//! The `Unlevering` sheet, and the order in which the capital sheets are built.
//!
//! One row per peer: the raw beta from `Betas`, the case's adjustment (Blume, or Vasicek's
//! shrinkage toward a prior), the peer's capital structure as inputs, its D/E, debt beta and
//! cost of debt, the unlevered beta under the case's formula and the cash-corrected one. The
//! last column holds the figure each aggregated peer contributes (the text "left out" for a
//! peer left out), which the `Cost of capital` sheet's `MEDIAN`, `AVERAGE` and `TRIMMEAN` read.

use crate::case::{Adjustment, DebtBetaSource, DebtMeasure};
use crate::error::Result;
use crate::leverage::Formula;

use super::betas::BetasLayout;
use super::{absolute, relative, xlsx_error, Book, Expect, Sheet};

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
    /// The unlevered betas the case aggregates (plain or cash-corrected), every peer.
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

/// What the aggregated-figure column shows for a peer left out.
const LEFT_OUT: &str = "left out";

const HEADERS: [&str; 19] = [
    "Peer",
    "Aggregated (1 = yes)",
    "Raw beta",
    "SE(β)",
    "Vasicek weight on the estimate",
    "Adjusted beta",
    "Beta used",
    "Equity value",
    "Debt",
    "Cash",
    "Tax rate",
    "D/E",
    "Pre-tax cost of debt",
    "Debt beta",
    "Unlevered beta",
    "Cash / (equity + debt)",
    "Cash-corrected unlevered beta",
    "Aggregated figure",
    "Why left out",
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
    let formula = crate::format::label(&v.cost.beta.formula);
    let note = format!(
        "Unlevered with {} ({}): {}. Debt in D/E: {} debt.",
        formula,
        v.cost.beta.formula_source,
        v.cost.beta.formula_expression,
        crate::format::label(&v.cost.beta.debt_measure)
    );
    book.text(&mut sheet, (last + 1, 0), &note, &book.styles.text.clone())?;
    sheet.ws.set_freeze_panes(1, 1).map_err(xlsx_error)?;
    sheet.ws.set_row_height(0, 45).map_err(xlsx_error)?;
    sheet.ws.set_column_width(PEER, 26).map_err(xlsx_error)?;
    for col in INCLUDED..REASON {
        sheet.ws.set_column_width(col, 12).map_err(xlsx_error)?;
    }
    sheet.ws.set_column_width(REASON, 50).map_err(xlsx_error)?;
    let range = |col| sheet.range(first, last, col);
    let chosen = if v.cost.beta.cash_corrected {
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

/// One peer: adjustment, capital structure, debt terms, unlevered and cash-corrected betas.
fn peer_row(
    book: &mut Book,
    sheet: &mut Sheet,
    betas: &BetasLayout,
    i: usize,
    row: u32,
) -> Result<()> {
    let v = book.v;
    let peer = &v.peers[i];
    let settings = &v.settings;
    let spec = &settings.peers[i];
    let at = |col: u16| relative(row, col);
    let p = |field: &str| Expect::Json(format!("/peers/{i}/{field}"));
    let s = &book.styles;
    let (beta, pct, ratio, text) = (
        s.beta.clone(),
        s.percent.clone(),
        s.ratio.clone(),
        s.text.clone(),
    );
    let (amount_in, pct_in, beta_in, flag) = (
        s.amount_input.clone(),
        s.percent_input.clone(),
        s.beta_input.clone(),
        s.flag.clone(),
    );
    book.text(sheet, (row, PEER), &peer.name, &text)?;
    let included = peer.excluded_reason.is_none();
    book.number(
        sheet,
        (row, INCLUDED),
        if included { 1.0 } else { 0.0 },
        &flag,
    )?;
    if let Some(reason) = &peer.excluded_reason {
        book.text(sheet, (row, REASON), reason, &text)?;
    }
    let bref = |col: u16| format!("={}", betas.sheet.abs(betas.rows[i], col));
    book.formula(sheet, (row, RAW), &bref(betas.beta), p("beta"), &beta)?;
    book.formula(
        sheet,
        (row, SE),
        &bref(betas.std_error),
        p("beta_std_error"),
        &beta,
    )?;
    let used = match settings.beta.adjustment {
        Adjustment::None => format!("={}", at(RAW)),
        Adjustment::Blume => {
            book.formula(
                sheet,
                (row, ADJUSTED),
                &format!("=0.67*{}+0.33", at(RAW)),
                p("adjusted_beta"),
                &beta,
            )?;
            format!("={}", at(ADJUSTED))
        }
        Adjustment::Vasicek => {
            let weight = format!("=VasicekPriorVariance/(VasicekPriorVariance+{}^2)", at(SE));
            book.formula(
                sheet,
                (row, WEIGHT),
                &weight,
                p("vasicek/weight_on_estimate"),
                &beta,
            )?;
            let shrunk = format!("={w}*{}+(1-{w})*VasicekPriorMean", at(RAW), w = at(WEIGHT));
            book.formula(sheet, (row, ADJUSTED), &shrunk, p("adjusted_beta"), &beta)?;
            format!("={}", at(ADJUSTED))
        }
    };
    book.formula(sheet, (row, USED), &used, p("beta_used"), &beta)?;
    book.number(sheet, (row, EQUITY), spec.equity_value, &amount_in)?;
    book.number(sheet, (row, DEBT), spec.debt, &amount_in)?;
    book.number(sheet, (row, CASH), spec.cash, &amount_in)?;
    book.number(sheet, (row, TAX), spec.tax_rate, &pct_in)?;
    let de = match settings.leverage.debt_measure {
        DebtMeasure::Gross => format!("={}/{}", at(DEBT), at(EQUITY)),
        DebtMeasure::Net => format!("=({}-{})/{}", at(DEBT), at(CASH), at(EQUITY)),
    };
    book.formula(sheet, (row, DE), &de, p("debt_to_equity"), &ratio)?;
    match spec.cost_of_debt {
        Some(kd) => book.number(sheet, (row, KD), kd, &pct_in)?,
        None => book.formula(
            sheet,
            (row, KD),
            "=CostOfDebtPreTax",
            p("cost_of_debt"),
            &pct,
        )?,
    }
    match (settings.leverage.debt_beta_source, spec.debt_beta) {
        (DebtBetaSource::None, _) => book.number(sheet, (row, DEBT_BETA), 0.0, &beta)?,
        (_, Some(own)) => book.number(sheet, (row, DEBT_BETA), own, &beta_in)?,
        (DebtBetaSource::Given, None) => book.formula(
            sheet,
            (row, DEBT_BETA),
            "=SubjectDebtBeta",
            p("debt_beta"),
            &beta,
        )?,
        (DebtBetaSource::CreditSpread, None) => {
            let formula = format!("=({}-RiskFreeRate)/EquityRiskPremium", at(KD));
            book.formula(sheet, (row, DEBT_BETA), &formula, p("debt_beta"), &beta)?
        }
    }
    let unlevered = unlever_formula(v.cost.beta.formula, &at);
    book.formula(
        sheet,
        (row, UNLEVERED),
        &unlevered,
        p("unlevered_beta"),
        &beta,
    )?;
    let share = format!("={}/({}+{})", at(CASH), at(EQUITY), at(DEBT));
    book.formula(
        sheet,
        (row, CASH_SHARE),
        &share,
        p("cash_share_of_capital"),
        &ratio,
    )?;
    let corrected = format!("={}/(1-{})", at(UNLEVERED), at(CASH_SHARE));
    book.formula(
        sheet,
        (row, CORRECTED),
        &corrected,
        p("cash_corrected_unlevered_beta"),
        &beta,
    )?;
    let (chosen, field) = if v.cost.beta.cash_corrected {
        (CORRECTED, "cash_corrected_unlevered_beta")
    } else {
        (UNLEVERED, "unlevered_beta")
    };
    // Text for a peer left out, which MEDIAN, AVERAGE, TRIMMEAN and the rest skip.
    let aggregated = format!("=IF({}=1,{},\"{LEFT_OUT}\")", at(INCLUDED), at(chosen));
    let expect = if included {
        p(field)
    } else {
        Expect::Text(LEFT_OUT)
    };
    book.formula(sheet, (row, AGGREGATED), &aggregated, expect, &beta)
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
    let mean = format!("=SUMPRODUCT({included},{raw})/SUM({included})");
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
        "=SUMPRODUCT({included},({raw}-{m})^2)/(SUM({included})-1)",
        m = absolute(row, 2)
    );
    book.formula(
        sheet,
        (row + 1, 2),
        &variance,
        Expect::Json("/beta/vasicek_prior/variance".into()),
        &beta,
    )?;
    names.push(("VasicekPriorMean".into(), format!("={}", sheet.abs(row, 2))));
    names.push((
        "VasicekPriorVariance".into(),
        format!("={}", sheet.abs(row + 1, 2)),
    ));
    Ok(())
}
