//! The `Cost of capital` sheet: aggregation, relevering, the cost of equity, the cost of debt,
//! the weights and the WACC, each a formula over named cells.
//!
//! Every row shows its figure, the `result.json` field it equals and the relation in words, so
//! a reviewer can follow the chain down the page. The aggregate is the case's statistic of the
//! aggregated peers' unlevered betas (`MEDIAN`, `AVERAGE`, a market-cap-weighted `SUMPRODUCT`,
//! `TRIMMEAN`); relevering uses the case's formula; the WACC is the sum of its contributions.

use crate::case::CountryMethod;
use crate::error::Result;
use crate::leverage::Formula;
use crate::stats::Aggregation;

use super::capital::PeerRanges;
use super::{xlsx_error, Book, Expect, Sheet};

/// One row: what it is, the formula, the field it equals, its format and the relation in words.
struct Line<'a> {
    label: &'a str,
    formula: String,
    pointer: &'a str,
    format: Fmt,
    how: String,
    /// A defined name for the cell, so later formulas read as words.
    name: Option<&'a str>,
}

#[derive(Clone, Copy)]
enum Fmt {
    Percent,
    Beta,
    Count,
}

fn line<'a>(
    label: &'a str,
    formula: impl Into<String>,
    pointer: &'a str,
    format: Fmt,
    how: impl Into<String>,
) -> Line<'a> {
    Line {
        label,
        formula: formula.into(),
        pointer,
        format,
        how: how.into(),
        name: None,
    }
}

fn named<'a>(mut l: Line<'a>, name: &'a str) -> Line<'a> {
    l.name = Some(name);
    l
}

pub(crate) fn sheet(
    book: &mut Book,
    peers: &PeerRanges,
    names: &mut Vec<(String, String)>,
) -> Result<Sheet> {
    let v = book.v;
    let mut sheet = Sheet::new("Cost of capital")?;
    book.text(
        &mut sheet,
        (0, 0),
        "Cost of capital",
        &book.styles.title.clone(),
    )?;
    let header = book.styles.header.clone();
    for (col, text) in ["Step", "Figure", "result.json field", "Relation"]
        .iter()
        .enumerate()
    {
        book.text(&mut sheet, (2, col as u16), text, &header)?;
    }
    let mut writer = Writer {
        sheet: &mut sheet,
        names,
        row: 3,
    };
    writer.section(book, "Aggregation of the unlevered betas")?;
    for l in aggregation(v, peers) {
        writer.line(book, l)?;
    }
    writer.section(book, "Relevering at the target structure")?;
    for l in relevering(v) {
        writer.line(book, l)?;
    }
    writer.section(book, "Cost of equity (CAPM plus premiums)")?;
    for l in cost_of_equity(v) {
        writer.line(book, l)?;
    }
    writer.section(book, "Cost of debt and the other components")?;
    for l in debt_and_weights(v) {
        writer.line(book, l)?;
    }
    writer.section(book, "WACC")?;
    for l in wacc() {
        writer.line(book, l)?;
    }
    if v.cost.currency_conversion.is_some() {
        writer.section(book, "In the output currency (Fisher relation)")?;
        for l in conversion() {
            writer.line(book, l)?;
        }
    }
    for (col, width) in [(0, 42.0), (1, 12.0), (2, 44.0), (3, 80.0)] {
        sheet.ws.set_column_width(col, width).map_err(xlsx_error)?;
    }
    sheet.ws.set_freeze_panes(3, 0).map_err(xlsx_error)?;
    Ok(sheet)
}

/// Writes lines one under the other.
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

    fn line(&mut self, book: &mut Book, l: Line) -> Result<()> {
        let r = self.row;
        let s = &book.styles;
        let format = match l.format {
            Fmt::Percent => s.percent.clone(),
            Fmt::Beta => s.beta.clone(),
            Fmt::Count => s.count.clone(),
        };
        let (label, mono, text) = (s.label.clone(), s.mono.clone(), s.text.clone());
        book.text(self.sheet, (r, 0), l.label, &label)?;
        book.formula(
            self.sheet,
            (r, 1),
            &l.formula,
            Expect::Json(l.pointer.to_string()),
            &format,
        )?;
        book.text(
            self.sheet,
            (r, 2),
            &l.pointer.trim_start_matches('/').replace('/', "."),
            &mono,
        )?;
        book.text(self.sheet, (r, 3), &l.how, &text)?;
        if let Some(name) = l.name {
            self.names
                .push((name.to_string(), format!("={}", self.sheet.abs(r, 1))));
        }
        self.row += 1;
        Ok(())
    }
}

fn aggregation<'a>(v: &crate::valuation::Valuation, p: &PeerRanges) -> Vec<Line<'a>> {
    let (agg, inc, chosen, eq) = (&p.aggregated, &p.included, &p.chosen, &p.equity);
    let statistic = match v.cost.beta.aggregation {
        Aggregation::Median => "AggregateMedian",
        Aggregation::Mean => "AggregateMean",
        Aggregation::MarketCapWeighted => "AggregateMarketCapWeighted",
        Aggregation::TrimmedMean => "AggregateTrimmedMean",
    };
    let which = if v.cost.beta.cash_corrected {
        "cash-corrected "
    } else {
        ""
    };
    vec![
        line(
            "Peers aggregated",
            format!("=COUNT({agg})"),
            "/beta/peers_included",
            Fmt::Count,
            "Peers without a reason to be left out.",
        ),
        named(
            line(
                "Median",
                format!("=MEDIAN({agg})"),
                "/beta/unlevered_statistics/median",
                Fmt::Beta,
                format!("Of the aggregated peers' {which}unlevered betas."),
            ),
            "AggregateMedian",
        ),
        named(
            line(
                "Mean",
                format!("=AVERAGE({agg})"),
                "/beta/unlevered_statistics/mean",
                Fmt::Beta,
                "",
            ),
            "AggregateMean",
        ),
        named(
            line(
                "Market-cap-weighted mean",
                format!("=SUMPRODUCT({inc},{chosen},{eq})/SUMPRODUCT({inc},{eq})"),
                "/beta/unlevered_statistics/market_cap_weighted_mean",
                Fmt::Beta,
                "Weights: each peer's market value of equity.",
            ),
            "AggregateMarketCapWeighted",
        ),
        named(
            line(
                "Trimmed mean",
                format!("=TRIMMEAN({agg},2*TrimFraction)"),
                "/beta/unlevered_statistics/trimmed_mean",
                Fmt::Beta,
                "TRIMMEAN cuts floor(n·fraction) values from each end, as hurdle does.",
            ),
            "AggregateTrimmedMean",
        ),
        line(
            "Lowest",
            format!("=MIN({agg})"),
            "/beta/unlevered_dispersion/min",
            Fmt::Beta,
            "",
        ),
        line(
            "Lower quartile",
            format!("=QUARTILE.INC({agg},1)"),
            "/beta/unlevered_dispersion/lower_quartile",
            Fmt::Beta,
            "Linear interpolation between order statistics.",
        ),
        line(
            "Upper quartile",
            format!("=QUARTILE.INC({agg},3)"),
            "/beta/unlevered_dispersion/upper_quartile",
            Fmt::Beta,
            "",
        ),
        line(
            "Highest",
            format!("=MAX({agg})"),
            "/beta/unlevered_dispersion/max",
            Fmt::Beta,
            "",
        ),
        line(
            "Standard deviation",
            format!("=IF(COUNT({agg})>1,STDEV.S({agg}),0)"),
            "/beta/unlevered_dispersion/std_dev",
            Fmt::Beta,
            "Sample standard deviation (n − 1).",
        ),
        named(
            line(
                "Aggregate unlevered beta βU",
                format!("={statistic}"),
                "/beta/unlevered",
                Fmt::Beta,
                format!(
                    "The case's statistic: {}.",
                    crate::format::label(&v.cost.beta.aggregation)
                ),
            ),
            "UnleveredBeta",
        ),
    ]
}

fn relevering<'a>(v: &crate::valuation::Valuation) -> Vec<Line<'a>> {
    let formula = v.cost.beta.formula;
    let relevered = match formula {
        Formula::Hamada => "=UnleveredBeta*(1+(1-TargetTaxRate)*TargetDebtToEquity)",
        Formula::HarrisPringle => "=UnleveredBeta+(UnleveredBeta-SubjectDebtBeta)*TargetDebtToEquity",
        Formula::MilesEzzell => "=UnleveredBeta+(UnleveredBeta-SubjectDebtBeta)*(1-TargetTaxRate*CostOfDebtPreTax/(1+CostOfDebtPreTax))*TargetDebtToEquity",
        Formula::Conine => "=UnleveredBeta+(UnleveredBeta-SubjectDebtBeta)*(1-TargetTaxRate)*TargetDebtToEquity",
    };
    vec![
        line(
            "Target D/E",
            "=TargetDebtToEquity",
            "/target/debt_to_equity",
            Fmt::Beta,
            "",
        ),
        line(
            "Target D/(D + E)",
            "=TargetDebtToEquity/(1+TargetDebtToEquity)",
            "/target/debt_to_capital",
            Fmt::Percent,
            "",
        ),
        line(
            "Target tax rate",
            "=TargetTaxRate",
            "/target/tax_rate",
            Fmt::Percent,
            "",
        ),
        line(
            "Subject's debt beta βD",
            "=SubjectDebtBeta",
            "/subject_debt_beta",
            Fmt::Beta,
            if formula == Formula::Hamada {
                "Not used by Hamada (riskless debt)."
            } else {
                ""
            },
        ),
        named(
            line(
                "Relevered beta βL",
                relevered,
                "/beta/relevered",
                Fmt::Beta,
                format!(
                    "{} — {}",
                    v.cost.beta.formula_expression, v.cost.beta.formula_source
                ),
            ),
            "ReleveredBeta",
        ),
    ]
}

fn cost_of_equity<'a>(v: &crate::valuation::Valuation) -> Vec<Line<'a>> {
    let (scale, how) = match v.cost.premiums.country_method {
        CountryMethod::Added => ("=1", "\"added\": the premium as given."),
        CountryMethod::Lambda => ("=CountryLambda", "\"lambda\": λ times the premium."),
        CountryMethod::Beta => (
            "=ReleveredBeta",
            "\"beta\": the relevered beta times the premium.",
        ),
    };
    vec![
        line(
            "Risk-free rate",
            "=RiskFreeRate",
            "/risk_free_rate",
            Fmt::Percent,
            "",
        ),
        line(
            "Equity risk premium",
            "=EquityRiskPremium",
            "/equity_risk_premium",
            Fmt::Percent,
            "",
        ),
        named(
            line(
                "βL × ERP",
                "=ReleveredBeta*EquityRiskPremium",
                "/beta_times_equity_risk_premium",
                Fmt::Percent,
                "The CAPM term (Sharpe 1964; Lintner 1965).",
            ),
            "BetaTimesPremium",
        ),
        line(
            "Size premium",
            "=SizePremium",
            "/premiums/size",
            Fmt::Percent,
            "",
        ),
        named(
            line(
                "Country premium scale",
                scale,
                "/premiums/country_scale",
                Fmt::Beta,
                how,
            ),
            "CountryScale",
        ),
        named(
            line(
                "Country premium as applied",
                "=CountryScale*CountryPremium",
                "/premiums/country_applied",
                Fmt::Percent,
                "",
            ),
            "CountryApplied",
        ),
        line(
            "Company-specific premium",
            "=CompanySpecificPremium",
            "/premiums/company_specific",
            Fmt::Percent,
            "",
        ),
        named(
            line(
                "Premiums added",
                "=SizePremium+CountryApplied+CompanySpecificPremium",
                "/premiums/total",
                Fmt::Percent,
                "",
            ),
            "TotalPremiums",
        ),
        named(
            line(
                "Cost of equity Ke",
                "=RiskFreeRate+BetaTimesPremium+TotalPremiums",
                "/cost_of_equity",
                Fmt::Percent,
                "rf + βL·ERP + premiums.",
            ),
            "CostOfEquity",
        ),
    ]
}

fn debt_and_weights<'a>(v: &crate::valuation::Valuation) -> Vec<Line<'a>> {
    let source = crate::format::label(&v.cost.cost_of_debt.source);
    vec![
        line(
            "Pre-tax cost of debt Kd",
            "=CostOfDebtPreTax",
            "/cost_of_debt_pre_tax",
            Fmt::Percent,
            format!("Source: {source}."),
        ),
        named(
            line(
                "After-tax cost of debt",
                "=CostOfDebtPreTax*(1-TargetTaxRate)",
                "/cost_of_debt_after_tax",
                Fmt::Percent,
                "Kd·(1 − t): interest is deductible.",
            ),
            "CostOfDebtAfterTax",
        ),
        line(
            "Cost of preferred equity",
            "=PreferredCost",
            "/other_capital_costs/preferred_cost",
            Fmt::Percent,
            "",
        ),
        named(
            line(
                "After-tax cost of leases",
                "=LeaseCostPreTax*(1-TargetTaxRate)",
                "/other_capital_costs/lease_cost_after_tax",
                Fmt::Percent,
                "",
            ),
            "LeaseCostAfterTax",
        ),
        named(
            line(
                "Equity weight E/V",
                "=(1-PreferredWeight-LeaseWeight)/(1+TargetDebtToEquity)",
                "/weights/equity",
                Fmt::Percent,
                "(1 − wP − wL)/(1 + D/E).",
            ),
            "EquityWeight",
        ),
        named(
            line(
                "Debt weight D/V",
                "=(1-PreferredWeight-LeaseWeight)*TargetDebtToEquity/(1+TargetDebtToEquity)",
                "/weights/debt",
                Fmt::Percent,
                "(1 − wP − wL)·(D/E)/(1 + D/E).",
            ),
            "DebtWeight",
        ),
        line(
            "Preferred equity weight",
            "=PreferredWeight",
            "/weights/preferred",
            Fmt::Percent,
            "",
        ),
        line(
            "Lease liabilities weight",
            "=LeaseWeight",
            "/weights/leases",
            Fmt::Percent,
            "",
        ),
    ]
}

fn wacc<'a>() -> Vec<Line<'a>> {
    vec![
        named(
            line(
                "Equity: E/V × Ke",
                "=EquityWeight*CostOfEquity",
                "/wacc_contributions/equity",
                Fmt::Percent,
                "",
            ),
            "EquityContribution",
        ),
        named(
            line(
                "Debt: D/V × Kd(1 − t)",
                "=DebtWeight*CostOfDebtAfterTax",
                "/wacc_contributions/debt",
                Fmt::Percent,
                "",
            ),
            "DebtContribution",
        ),
        named(
            line(
                "Preferred: wP × Kp",
                "=PreferredWeight*PreferredCost",
                "/wacc_contributions/preferred",
                Fmt::Percent,
                "",
            ),
            "PreferredContribution",
        ),
        named(
            line(
                "Leases: wL × KL(1 − t)",
                "=LeaseWeight*LeaseCostAfterTax",
                "/wacc_contributions/leases",
                Fmt::Percent,
                "",
            ),
            "LeaseContribution",
        ),
        named(
            line(
                "WACC",
                "=EquityContribution+DebtContribution+PreferredContribution+LeaseContribution",
                "/wacc",
                Fmt::Percent,
                "The sum of the contributions (Modigliani and Miller 1963 for the tax shield).",
            ),
            "Wacc",
        ),
    ]
}

fn conversion<'a>() -> Vec<Line<'a>> {
    vec![
        line(
            "Cost of equity, output currency",
            "=(1+CostOfEquity)*(1+InflationOutput)/(1+InflationCase)-1",
            "/currency_conversion/cost_of_equity",
            Fmt::Percent,
            "(1 + r)·(1 + π out)/(1 + π case) − 1 (Fisher 1930).",
        ),
        line(
            "WACC, output currency",
            "=(1+Wacc)*(1+InflationOutput)/(1+InflationCase)-1",
            "/currency_conversion/wacc",
            Fmt::Percent,
            "",
        ),
        line(
            "Cost of equity, real",
            "=(1+CostOfEquity)/(1+InflationCase)-1",
            "/currency_conversion/cost_of_equity_real",
            Fmt::Percent,
            "",
        ),
        line(
            "WACC, real",
            "=(1+Wacc)/(1+InflationCase)-1",
            "/currency_conversion/wacc_real",
            Fmt::Percent,
            "",
        ),
    ]
}
