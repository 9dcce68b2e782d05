//! The `Cost of capital` sheet: aggregation, relevering, the cost of equity, the cost of debt,
//! the weights and the WACC, each a formula over named cells.
//!
//! Every row shows its figure, the `result.json` field it equals and the relation in words, so
//! a reviewer can follow the chain down the page. The aggregate is the case's statistic of the
//! aggregated peers' unlevered betas (`MEDIAN`, `AVERAGE`, a market-cap-weighted `SUMPRODUCT`,
//! `TRIMMEAN`); relevering uses the case's formula; the WACC is the sum of its contributions.

use crate::capital::leverage::Formula;
use crate::case::CountryMethod;
use crate::error::Result;
use crate::stats::Aggregation;

use super::capital::PeerRanges;
use super::{xlsx_error, Book, Expect, Sheet};

/// How a row's figure is shown.
#[derive(Clone, Copy)]
enum Fmt {
    Percent,
    Beta,
    Count,
}

/// One row: the step, its formula, the `result.json` field it equals, its format, the relation
/// in words, and a defined name for the cell (so later formulas read as words). Braced words in
/// the formula and the relation are filled in per case by [`fill`].
type Row = (
    &'static str,
    &'static str,
    &'static str,
    Fmt,
    &'static str,
    Option<&'static str>,
);

#[rustfmt::skip]
const AGGREGATION: &[Row] = &[
    ("Peers aggregated", "=COUNT({agg})", "/beta/peers_included", Fmt::Count,
     "Peers without a reason to be left out.", None),
    ("Median", "=MEDIAN({agg})", "/beta/unlevered_statistics/median", Fmt::Beta,
     "Of the aggregated peers' {which}unlevered betas.", Some("AggregateMedian")),
    ("Mean", "=AVERAGE({agg})", "/beta/unlevered_statistics/mean", Fmt::Beta, "",
     Some("AggregateMean")),
    ("Market-cap-weighted mean", "=SUMPRODUCT(--({inc}=1),{chosen},{eq})/SUMPRODUCT(--({inc}=1),{eq})",
     "/beta/unlevered_statistics/market_cap_weighted_mean", Fmt::Beta,
     "Weights: each peer's market value of equity.", Some("AggregateMarketCapWeighted")),
    ("Trimmed mean", "=TRIMMEAN({agg},2*TrimFraction)", "/beta/unlevered_statistics/trimmed_mean",
     Fmt::Beta, "TRIMMEAN cuts floor(n·fraction) values from each end, as hurdle does.",
     Some("AggregateTrimmedMean")),
    ("Lowest", "=MIN({agg})", "/beta/unlevered_dispersion/min", Fmt::Beta, "", None),
    ("Lower quartile", "=QUARTILE.INC({agg},1)", "/beta/unlevered_dispersion/lower_quartile",
     Fmt::Beta, "Linear interpolation between order statistics.", None),
    ("Upper quartile", "=QUARTILE.INC({agg},3)", "/beta/unlevered_dispersion/upper_quartile",
     Fmt::Beta, "", None),
    ("Highest", "=MAX({agg})", "/beta/unlevered_dispersion/max", Fmt::Beta, "", None),
    ("Standard deviation", "=IF(COUNT({agg})>1,STDEV.S({agg}),\"n/a\")",
     "/beta/unlevered_dispersion/std_dev", Fmt::Beta, "Sample standard deviation (n − 1).", None),
    ("Aggregate unlevered beta βU", "={statistic}", "/beta/unlevered", Fmt::Beta,
     "The case's statistic: {aggregation}.", Some("UnleveredBeta")),
];

#[rustfmt::skip]
const RELEVERING: &[Row] = &[
    ("Target D/E", "=TargetDebtToEquity", "/target/debt_to_equity", Fmt::Beta, "", None),
    ("Aggregated peers' median D/E", "{peer_median_de}", "/target/peer_median_debt_to_equity",
     Fmt::Beta, "Beside the target: the structure a market participant would hold, read from \
     the peers (the memo's section 5).", None),
    ("Target D/(D + E)", "=TargetDebtToEquity/(1+TargetDebtToEquity)", "/target/debt_to_capital",
     Fmt::Percent, "", None),
    ("Target tax rate", "=TargetTaxRate", "/target/tax_rate", Fmt::Percent, "", None),
    ("Subject's debt beta βD", "=SubjectDebtBeta", "/subject_debt_beta", Fmt::Beta,
     "{debt_beta_use}", None),
    ("Relevered beta βL", "{relevered}", "/beta/relevered", Fmt::Beta, "{expression} — {citation}",
     Some("ReleveredBeta")),
];

#[rustfmt::skip]
const COST_OF_EQUITY: &[Row] = &[
    ("Risk-free rate", "=RiskFreeRate", "/risk_free_rate", Fmt::Percent, "", None),
    ("Equity risk premium", "=EquityRiskPremium", "/equity_risk_premium", Fmt::Percent, "", None),
    ("βL × ERP", "=ReleveredBeta*EquityRiskPremium", "/beta_times_equity_risk_premium",
     Fmt::Percent, "The CAPM term (Sharpe 1964; Lintner 1965).", Some("BetaTimesPremium")),
    ("Size premium", "=SizePremium", "/premiums/size", Fmt::Percent, "", None),
    ("Country premium scale", "{scale}", "/premiums/country_scale", Fmt::Beta, "{scale_how}",
     Some("CountryScale")),
    ("Country premium as applied", "=CountryScale*CountryPremium", "/premiums/country_applied",
     Fmt::Percent, "", Some("CountryApplied")),
    ("Company-specific premium", "=CompanySpecificPremium", "/premiums/company_specific",
     Fmt::Percent, "", None),
    ("Premiums added", "=SizePremium+CountryApplied+CompanySpecificPremium", "/premiums/total",
     Fmt::Percent, "", Some("TotalPremiums")),
    ("Cost of equity Ke", "=RiskFreeRate+BetaTimesPremium+TotalPremiums", "/cost_of_equity",
     Fmt::Percent, "rf + βL·ERP + premiums.", Some("CostOfEquity")),
];

#[rustfmt::skip]
const DEBT_AND_WEIGHTS: &[Row] = &[
    ("Pre-tax cost of debt Kd", "=CostOfDebtPreTax", "/cost_of_debt_pre_tax", Fmt::Percent,
     "Source: {debt_source}.", None),
    ("After-tax cost of debt", "=CostOfDebtPreTax*(1-TargetTaxRate)", "/cost_of_debt_after_tax",
     Fmt::Percent, "Kd·(1 − t): interest is deductible.", Some("CostOfDebtAfterTax")),
    ("Cost of preferred equity", "=PreferredCost", "/other_capital_costs/preferred_cost",
     Fmt::Percent, "", None),
    ("After-tax cost of leases", "=LeaseCostPreTax*(1-TargetTaxRate)",
     "/other_capital_costs/lease_cost_after_tax", Fmt::Percent, "", Some("LeaseCostAfterTax")),
    ("Equity weight E/V", "=(1-PreferredWeight-LeaseWeight)/(1+TargetDebtToEquity)",
     "/weights/equity", Fmt::Percent, "(1 − wP − wL)/(1 + D/E).", Some("EquityWeight")),
    ("Debt weight D/V",
     "=(1-PreferredWeight-LeaseWeight)*TargetDebtToEquity/(1+TargetDebtToEquity)", "/weights/debt",
     Fmt::Percent, "(1 − wP − wL)·(D/E)/(1 + D/E).", Some("DebtWeight")),
    ("Preferred equity weight", "=PreferredWeight", "/weights/preferred", Fmt::Percent, "", None),
    ("Lease liabilities weight", "=LeaseWeight", "/weights/leases", Fmt::Percent, "", None),
];

#[rustfmt::skip]
const WACC: &[Row] = &[
    ("Equity: E/V × Ke", "=EquityWeight*CostOfEquity", "/wacc_contributions/equity", Fmt::Percent,
     "", Some("EquityContribution")),
    ("Debt: D/V × Kd(1 − t)", "=DebtWeight*CostOfDebtAfterTax", "/wacc_contributions/debt",
     Fmt::Percent, "", Some("DebtContribution")),
    ("Preferred: wP × Kp", "=PreferredWeight*PreferredCost", "/wacc_contributions/preferred",
     Fmt::Percent, "", Some("PreferredContribution")),
    ("Leases: wL × KL(1 − t)", "=LeaseWeight*LeaseCostAfterTax", "/wacc_contributions/leases",
     Fmt::Percent, "", Some("LeaseContribution")),
    ("WACC", "=EquityContribution+DebtContribution+PreferredContribution+LeaseContribution",
     "/wacc", Fmt::Percent,
     "The sum of the contributions (Modigliani and Miller 1963 for the tax shield).", Some("Wacc")),
];

#[rustfmt::skip]
const CONVERSION: &[Row] = &[
    ("Cost of equity, output currency",
     "=(1+CostOfEquity)*(1+InflationOutput)/(1+InflationCase)-1",
     "/currency_conversion/cost_of_equity", Fmt::Percent,
     "(1 + r)·(1 + π out)/(1 + π case) − 1 (Fisher 1930).", Some("CostOfEquityOutputCurrency")),
    ("WACC, output currency", "=(1+Wacc)*(1+InflationOutput)/(1+InflationCase)-1",
     "/currency_conversion/wacc", Fmt::Percent, "", Some("WaccOutputCurrency")),
    ("Cost of equity, real", "=(1+CostOfEquity)/(1+InflationCase)-1",
     "/currency_conversion/cost_of_equity_real", Fmt::Percent, "", None),
    ("WACC, real", "=(1+Wacc)/(1+InflationCase)-1", "/currency_conversion/wacc_real", Fmt::Percent,
     "", None),
    ("Pre-tax cost of debt, output currency",
     "=(1+CostOfDebtPreTax)*(1+InflationOutput)/(1+InflationCase)-1",
     "/currency_conversion/cost_of_debt_pre_tax", Fmt::Percent, "", Some("CostOfDebtOutputCurrency")),
    ("WACC, borrowing in the output currency",
     "=EquityWeight*CostOfEquityOutputCurrency+DebtWeight*CostOfDebtOutputCurrency*(1-TargetTaxRate)\
      +PreferredWeight*((1+PreferredCost)*(1+InflationOutput)/(1+InflationCase)-1)\
      +LeaseWeight*((1+LeaseCostPreTax)*(1+InflationOutput)/(1+InflationCase)-1)*(1-TargetTaxRate)",
     "/currency_conversion/wacc_borrowing_locally", Fmt::Percent,
     "Each component carried on its own and weighted again, the tax shield taken on the carried \
      interest: for a subject that borrows in the output currency.",
     Some("WaccBorrowingOutputCurrency")),
];

pub(crate) fn sheet(
    book: &mut Book,
    peers: &PeerRanges,
    names: &mut Vec<(String, String)>,
) -> Result<Sheet> {
    let v = book.v;
    let mut sheet = Sheet::new("Cost of capital")?;
    let (title, header) = (book.styles.title.clone(), book.styles.header.clone());
    book.text(&mut sheet, (0, 0), "Cost of capital", &title)?;
    for (col, text) in ["Step", "Figure", "result.json field", "Relation"]
        .iter()
        .enumerate()
    {
        book.text(&mut sheet, (2, col as u16), text, &header)?;
    }
    let words = case_words(v, peers);
    let mut sections = vec![
        ("Aggregation of the unlevered betas", AGGREGATION),
        ("Relevering at the target structure", RELEVERING),
        ("Cost of equity (CAPM plus premiums)", COST_OF_EQUITY),
        ("Cost of debt and the other components", DEBT_AND_WEIGHTS),
        ("WACC", WACC),
    ];
    if v.cost.currency_conversion.is_some() {
        sections.push(("In the output currency (Fisher relation)", CONVERSION));
    }
    let mut writer = Writer {
        sheet: &mut sheet,
        names,
        row: 3,
    };
    for (title, rows) in sections {
        writer.section(book, title)?;
        for row in rows {
            writer.line(book, row, &words)?;
        }
    }
    for (col, width) in [(0, 42.0), (1, 12.0), (2, 44.0), (3, 80.0)] {
        sheet.ws.set_column_width(col, width).map_err(xlsx_error)?;
    }
    sheet.ws.set_freeze_panes(3, 0).map_err(xlsx_error)?;
    Ok(sheet)
}

/// The case's choices and the peer ranges, for the braced words of the rows.
fn case_words(v: &crate::valuation::Valuation, p: &PeerRanges) -> Vec<(&'static str, String)> {
    let beta = &v.cost.beta;
    let statistic = match beta.aggregation {
        Aggregation::Median => "AggregateMedian",
        Aggregation::Mean => "AggregateMean",
        Aggregation::MarketCapWeighted => "AggregateMarketCapWeighted",
        Aggregation::TrimmedMean => "AggregateTrimmedMean",
    };
    let relevered = match beta.formula {
        Formula::Hamada => "=UnleveredBeta*(1+(1-TargetTaxRate)*TargetDebtToEquity)",
        Formula::HarrisPringle => {
            "=UnleveredBeta+(UnleveredBeta-SubjectDebtBeta)*TargetDebtToEquity"
        }
        Formula::MilesEzzell => {
            "=UnleveredBeta+(UnleveredBeta-SubjectDebtBeta)\
             *(1-TargetTaxRate*CostOfDebtPreTax/(1+CostOfDebtPreTax))*TargetDebtToEquity"
        }
        Formula::Conine => {
            "=UnleveredBeta+(UnleveredBeta-SubjectDebtBeta)*(1-TargetTaxRate)*TargetDebtToEquity"
        }
    };
    let (scale, scale_how) = match v.cost.premiums.country_method {
        CountryMethod::Flat => ("=1", "\"flat\": the premium as given."),
        CountryMethod::Exposure => (
            "=CountryExposure",
            "\"exposure\": the subject's exposure λ times the premium.",
        ),
        CountryMethod::BetaScaled => (
            "=ReleveredBeta",
            "\"beta-scaled\": the relevered beta times the premium.",
        ),
    };
    let hamada = beta.formula == Formula::Hamada;
    vec![
        ("agg", p.aggregated.clone()),
        ("inc", p.included.clone()),
        ("chosen", p.chosen.clone()),
        ("eq", p.equity.clone()),
        (
            "which",
            if beta.uses_operations_beta {
                "operations "
            } else {
                ""
            }
            .into(),
        ),
        ("statistic", statistic.into()),
        (
            "aggregation",
            crate::report::format::label(&beta.aggregation),
        ),
        ("relevered", relevered.into()),
        (
            "peer_median_de",
            super::capital::peer_median_debt_to_equity(v),
        ),
        ("expression", beta.formula_expression.into()),
        ("citation", beta.formula_source.into()),
        (
            "debt_beta_use",
            if hamada {
                "Not used by Hamada (riskless debt)."
            } else {
                ""
            }
            .into(),
        ),
        ("scale", scale.into()),
        ("scale_how", scale_how.into()),
        (
            "debt_source",
            crate::report::format::label(&v.cost.cost_of_debt.source),
        ),
    ]
}

/// `template` with each `{word}` replaced by its value.
fn fill(template: &str, words: &[(&'static str, String)]) -> String {
    words
        .iter()
        .fold(template.to_string(), |text, (word, value)| {
            text.replace(&format!("{{{word}}}"), value)
        })
}

/// Writes rows one under the other.
struct Writer<'s, 'n> {
    sheet: &'s mut Sheet,
    names: &'n mut Vec<(String, String)>,
    row: u32,
}

impl Writer<'_, '_> {
    fn section(&mut self, book: &mut Book, title: &str) -> Result<()> {
        self.row += 1;
        book.text(
            self.sheet,
            (self.row, 0),
            title,
            &book.styles.subtitle.clone(),
        )?;
        self.row += 1;
        Ok(())
    }

    fn line(&mut self, book: &mut Book, row: &Row, words: &[(&'static str, String)]) -> Result<()> {
        let &(label, formula, pointer, format, how, name) = row;
        let r = self.row;
        let s = &book.styles;
        let format = match format {
            Fmt::Percent => s.percent.clone(),
            Fmt::Beta => s.beta.clone(),
            Fmt::Count => s.count.clone(),
        };
        let (label_style, mono, text) = (s.label.clone(), s.mono.clone(), s.text.clone());
        book.text(self.sheet, (r, 0), label, &label_style)?;
        // A figure result.json leaves null (the spread of one peer) is the formula's "n/a".
        let expect = match book.is_null(pointer) {
            true => Expect::Text("n/a"),
            false => Expect::Json(pointer.to_string()),
        };
        book.formula(self.sheet, (r, 1), &fill(formula, words), expect, &format)?;
        let field = pointer.trim_start_matches('/').replace('/', ".");
        book.text(self.sheet, (r, 2), &field, &mono)?;
        book.text(self.sheet, (r, 3), &fill(how, words), &text)?;
        if let Some(name) = name {
            self.names
                .push((name.to_string(), format!("={}", self.sheet.abs(r, 1))));
        }
        self.row += 1;
        Ok(())
    }
}
