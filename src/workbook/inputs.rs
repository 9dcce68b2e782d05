//! The `Inputs` sheet: the case's figures as named cells that every formula refers to.
//!
//! A reviewer changes the equity risk premium or the target D/E here and watches the WACC move.
//! Each input is a defined name (`RiskFreeRate`, `EquityRiskPremium`, …) so formulas read
//! `=RiskFreeRate+ReleveredBeta*EquityRiskPremium` rather than cell addresses. Figures the case
//! derives from other inputs (a cost of debt from a spread, a credit-spread debt beta) are
//! formulas here too.

use crate::case::{DebtBetaSource, DebtSource};
use crate::error::Result;

use super::{absolute, Book, Expect, Sheet};

/// Column of the values; the bp column follows.
const VALUE: u16 = 1;

/// What one row of the sheet holds.
struct Row<'a> {
    label: &'a str,
    name: &'a str,
    key: &'a str,
    note: String,
    /// Basis points beside the value.
    bp: bool,
}

/// Writes the sheet and appends each defined name (`name`, `=Inputs!$B$5`) to `names`.
pub(crate) fn sheet(book: &mut Book, names: &mut Vec<(String, String)>) -> Result<Sheet> {
    let mut sheet = Sheet::new("Inputs")?;
    let v = book.v;
    let settings = &v.settings;
    let s = &book.styles;
    let (title, header) = (s.title.clone(), s.header.clone());
    book.text(&mut sheet, (0, 0), "Inputs", &title)?;
    book.text(
        &mut sheet,
        (1, 0),
        "Yellow cells are the case's inputs, each a named cell; change one and every formula \
         that depends on it recomputes. Other cells here are formulas over the inputs.",
        &s.text.clone(),
    )?;
    for (col, head) in ["Input", "Value", "In bp", "Name", "Case key", "Note"]
        .iter()
        .enumerate()
    {
        book.text(&mut sheet, (3, col as u16), head, &header)?;
    }
    let mut rows = Rows {
        sheet: &mut sheet,
        names,
        next: 4,
    };
    let (pct, pct_in) = (
        book.styles.percent.clone(),
        book.styles.percent_input.clone(),
    );
    let row = |label, name, key, note: &str, bp| Row {
        label,
        name,
        key,
        note: note.to_string(),
        bp,
    };
    rows.input(
        book,
        row(
            "Risk-free rate",
            "RiskFreeRate",
            "market.risk_free_rate",
            "",
            false,
        ),
        "/risk_free_rate",
        &pct_in,
    )?;
    rows.input(
        book,
        row(
            "Equity risk premium",
            "EquityRiskPremium",
            "market.equity_risk_premium",
            "",
            false,
        ),
        "/equity_risk_premium",
        &pct_in,
    )?;
    rows.input(
        book,
        row(
            "Size premium",
            "SizePremium",
            "premiums.size",
            &settings.premiums.size_justification,
            true,
        ),
        "/premiums/size",
        &pct_in,
    )?;
    let method = crate::format::label(&settings.premiums.country_method);
    rows.input(
        book,
        row(
            "Country risk premium",
            "CountryPremium",
            "premiums.country",
            &format!(
                "Enters the cost of equity by the method \"{method}\" (see Cost of capital). {}",
                settings.premiums.country_justification
            ),
            true,
        ),
        "/premiums/country",
        &pct_in,
    )?;
    rows.input(
        book,
        row(
            "Country exposure λ",
            "CountryLambda",
            "premiums.country_lambda",
            "Used when premiums.country_method = \"lambda\".",
            false,
        ),
        "/settings/premiums/country_lambda",
        &book.styles.beta_input.clone(),
    )?;
    rows.input(
        book,
        row(
            "Company-specific premium",
            "CompanySpecificPremium",
            "premiums.company_specific",
            &settings.premiums.company_specific_justification,
            true,
        ),
        "/premiums/company_specific",
        &pct_in,
    )?;
    let target_note = match v.cost.target.given {
        "peer_median" => "The median of the aggregated peers' D/E (target.source = \"peer-median\"), as hurdle found it.",
        "subject_current" => "The subject's own current D/E (target.source = \"subject\").",
        "debt_to_capital" => "From target.debt_to_capital, D/E = r / (1 − r).",
        _ => "",
    };
    rows.input(
        book,
        row(
            "Target debt-to-equity (D/E)",
            "TargetDebtToEquity",
            "target.debt_to_equity",
            target_note,
            false,
        ),
        "/target/debt_to_equity",
        &book.styles.ratio_input.clone(),
    )?;
    rows.input(
        book,
        row(
            "Target tax rate",
            "TargetTaxRate",
            "target.tax_rate",
            &format!(
                "{} rate.",
                crate::format::label(&v.cost.target.tax_rate_basis)
            ),
            false,
        ),
        "/target/tax_rate",
        &pct_in,
    )?;
    cost_of_debt_rows(book, &mut rows)?;
    rows.input(
        book,
        row(
            "Preferred equity weight",
            "PreferredWeight",
            "preferred.weight",
            "Share of total capital.",
            false,
        ),
        "/weights/preferred",
        &pct_in,
    )?;
    rows.input(
        book,
        row(
            "Cost of preferred equity",
            "PreferredCost",
            "preferred.cost",
            "Not tax-deductible; 0 without preferred equity.",
            false,
        ),
        "/other_capital_costs/preferred_cost",
        &pct_in,
    )?;
    rows.input(
        book,
        row(
            "Lease liabilities weight",
            "LeaseWeight",
            "leases.weight",
            "Share of total capital.",
            false,
        ),
        "/weights/leases",
        &pct_in,
    )?;
    if settings.leases.cost_pre_tax.is_some() {
        rows.input(
            book,
            row(
                "Pre-tax cost of leases",
                "LeaseCostPreTax",
                "leases.cost_pre_tax",
                "",
                false,
            ),
            "/other_capital_costs/lease_cost_pre_tax",
            &pct_in,
        )?;
    } else {
        rows.formula(
            book,
            row(
                "Pre-tax cost of leases",
                "LeaseCostPreTax",
                "leases.cost_pre_tax",
                "Not given: the pre-tax cost of debt.",
                false,
            ),
            "=CostOfDebtPreTax",
            "/other_capital_costs/lease_cost_pre_tax",
            &pct,
        )?;
    }
    rows.input(
        book,
        row(
            "Trim fraction",
            "TrimFraction",
            "leverage.trim_fraction",
            "Share cut from each end by the trimmed mean (rounded down to whole peers).",
            false,
        ),
        "/settings/leverage/trim_fraction",
        &book.styles.ratio_input.clone(),
    )?;
    if let Some(prior) = &v.cost.beta.vasicek_prior {
        if prior.source == "stated" {
            rows.input(
                book,
                row(
                    "Vasicek prior mean",
                    "VasicekPriorMean",
                    "beta.vasicek_prior_mean",
                    "",
                    false,
                ),
                "/beta/vasicek_prior/mean",
                &book.styles.beta_input.clone(),
            )?;
            rows.input(
                book,
                row(
                    "Vasicek prior variance",
                    "VasicekPriorVariance",
                    "beta.vasicek_prior_variance",
                    "",
                    false,
                ),
                "/beta/vasicek_prior/variance",
                &book.styles.beta_input.clone(),
            )?;
        }
    }
    if v.cost.currency_conversion.is_some() {
        rows.input(
            book,
            row(
                "Expected inflation, case currency",
                "InflationCase",
                "conversion.inflation_case",
                "",
                false,
            ),
            "/currency_conversion/inflation_from",
            &pct_in,
        )?;
        rows.input(
            book,
            row(
                "Expected inflation, output currency",
                "InflationOutput",
                "conversion.inflation_output",
                "",
                false,
            ),
            "/currency_conversion/inflation_to",
            &pct_in,
        )?;
    }
    for (col, width) in [
        (0, 34.0),
        (1, 12.0),
        (2, 10.0),
        (3, 24.0),
        (4, 30.0),
        (5, 70.0),
    ] {
        sheet
            .ws
            .set_column_width(col, width)
            .map_err(super::xlsx_error)?;
    }
    sheet.ws.set_freeze_panes(4, 0).map_err(super::xlsx_error)?;
    Ok(sheet)
}

/// The cost of debt (given, or rf + a table spread) and the subject's debt beta.
fn cost_of_debt_rows(book: &mut Book, rows: &mut Rows) -> Result<()> {
    let v = book.v;
    let (pct, pct_in) = (
        book.styles.percent.clone(),
        book.styles.percent_input.clone(),
    );
    let record = &v.cost.cost_of_debt;
    match record.source {
        DebtSource::Given => rows.input(
            book,
            Row {
                label: "Pre-tax cost of debt",
                name: "CostOfDebtPreTax",
                key: "debt.cost_pre_tax",
                note: String::new(),
                bp: false,
            },
            "/cost_of_debt_pre_tax",
            &pct_in,
        )?,
        DebtSource::Rating | DebtSource::Coverage => {
            let row = record.row.as_ref();
            let note = format!(
                "Spread of rating {} in {} (line {}){}.",
                row.map_or("", |r| r.rating.as_str()),
                record.table.as_ref().map_or("", |t| t.path.as_str()),
                row.map_or(0, |r| r.line),
                record.interest_coverage.map_or(String::new(), |c| format!(
                    ", the synthetic rating of interest coverage {c:.3}"
                ))
            );
            rows.input(
                book,
                Row {
                    label: "Credit spread over the risk-free rate",
                    name: "CreditSpread",
                    key: "debt.rating_table / debt.coverage_table",
                    note,
                    bp: true,
                },
                "/cost_of_debt/row/spread",
                &pct_in,
            )?;
            rows.formula(
                book,
                Row {
                    label: "Pre-tax cost of debt",
                    name: "CostOfDebtPreTax",
                    key: "debt.source",
                    note: "The risk-free rate plus the spread.".into(),
                    bp: false,
                },
                "=RiskFreeRate+CreditSpread",
                "/cost_of_debt_pre_tax",
                &pct,
            )?;
        }
    }
    let beta_in = book.styles.beta_input.clone();
    let beta = book.styles.beta.clone();
    match v.settings.leverage.debt_beta_source {
        DebtBetaSource::None => rows.fixed(book, Row { label: "Debt beta (subject and peers)", name: "SubjectDebtBeta", key: "leverage.debt_beta_source", note: "Riskless debt: every debt beta is 0 (leverage.debt_beta_source = \"none\").".into(), bp: false }, "/subject_debt_beta", &beta),
        DebtBetaSource::Given => rows.input(book, Row { label: "Debt beta (subject, and peers without their own)", name: "SubjectDebtBeta", key: "leverage.debt_beta", note: String::new(), bp: false }, "/subject_debt_beta", &beta_in),
        DebtBetaSource::CreditSpread => rows.formula(book, Row { label: "Subject's debt beta (Kd − rf) / ERP", name: "SubjectDebtBeta", key: "leverage.debt_beta_source", note: "The credit-spread approximation; it reads the whole spread as a premium for systematic risk, so it overstates the debt beta.".into(), bp: false }, "=(CostOfDebtPreTax-RiskFreeRate)/EquityRiskPremium", "/subject_debt_beta", &beta),
    }
}

/// The rows written so far and the names defined.
struct Rows<'s, 'n> {
    sheet: &'s mut Sheet,
    names: &'n mut Vec<(String, String)>,
    next: u32,
}

impl Rows<'_, '_> {
    /// The label, name, key and note of a row, its defined name, and the bp cell.
    fn describe(&mut self, book: &mut Book, row: &Row, pointer: &str) -> Result<u32> {
        let r = self.next;
        self.next += 1;
        let (label, text, mono) = (
            book.styles.label.clone(),
            book.styles.text.clone(),
            book.styles.mono.clone(),
        );
        book.text(self.sheet, (r, 0), row.label, &label)?;
        book.text(self.sheet, (r, 3), row.name, &mono)?;
        book.text(self.sheet, (r, 4), row.key, &mono)?;
        if !row.note.trim().is_empty() {
            book.text(self.sheet, (r, 5), row.note.trim(), &text)?;
        }
        self.names.push((
            row.name.to_string(),
            format!("=Inputs!{}", absolute(r, VALUE)),
        ));
        if row.bp {
            let bp = book.styles.basis_points.clone();
            let formula = format!("={}*10000", super::relative(r, VALUE));
            book.formula(
                self.sheet,
                (r, VALUE + 1),
                &formula,
                Expect::Scaled(pointer.to_string(), 10_000.0),
                &bp,
            )?;
        }
        Ok(r)
    }

    /// An input cell: the case's value, which the reader may change.
    fn input(
        &mut self,
        book: &mut Book,
        row: Row,
        pointer: &str,
        format: &rust_xlsxwriter::Format,
    ) -> Result<()> {
        let r = self.describe(book, &row, pointer)?;
        let value = book.figure(pointer)?;
        book.number(self.sheet, (r, VALUE), value, format)
    }

    /// A fixed figure of the case's settings, not meant to be changed here.
    fn fixed(
        &mut self,
        book: &mut Book,
        row: Row,
        pointer: &str,
        format: &rust_xlsxwriter::Format,
    ) -> Result<()> {
        let r = self.describe(book, &row, pointer)?;
        let value = book.figure(pointer)?;
        book.number(self.sheet, (r, VALUE), value, format)
    }

    /// A named formula over other inputs.
    fn formula(
        &mut self,
        book: &mut Book,
        row: Row,
        formula: &str,
        pointer: &str,
        format: &rust_xlsxwriter::Format,
    ) -> Result<()> {
        let r = self.describe(book, &row, pointer)?;
        book.formula(
            self.sheet,
            (r, VALUE),
            formula,
            Expect::Json(pointer.to_string()),
            format,
        )
    }
}
