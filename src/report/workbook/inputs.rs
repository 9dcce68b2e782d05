//! The `Inputs` sheet: the case's figures as named cells that every formula refers to.
//!
//! A reviewer changes the equity risk premium or the target D/E here and watches the WACC move.
//! Each input is a defined name (`RiskFreeRate`, `EquityRiskPremium`, …) so formulas read
//! `=RiskFreeRate+ReleveredBeta*EquityRiskPremium` rather than cell addresses. Figures the case
//! derives from other inputs (a cost of debt from a spread, a credit-spread debt beta) are
//! formulas here too.

use crate::case::{DebtBetaSource, DebtSource};
use crate::error::Result;
use crate::valuation::Valuation;

use super::{absolute, relative, xlsx_error, Book, Expect, Sheet};

/// Column of the values; the basis-point column follows.
const VALUE: u16 = 1;

/// What the value cell holds.
#[derive(Clone, PartialEq)]
enum Kind {
    /// The case's figure, which the reader may change (yellow).
    Input,
    /// A figure of the case's settings that is not meant to be changed here.
    Fixed,
    /// A formula over other inputs.
    Formula(String),
}

#[derive(Clone, Copy)]
enum Fmt {
    Percent,
    Beta,
    Ratio,
    /// A balance-sheet amount (equity value, debt, cash), in the case's unit.
    Amount,
}

/// One row of the sheet.
struct Spec {
    label: &'static str,
    /// The defined name of the value cell.
    name: &'static str,
    key: &'static str,
    /// The `result.json` field the value is.
    pointer: &'static str,
    format: Fmt,
    kind: Kind,
    /// Basis points beside the value.
    bp: bool,
    note: String,
}

fn spec(label: &'static str, name: &'static str, key: &'static str, pointer: &'static str) -> Spec {
    Spec {
        label,
        name,
        key,
        pointer,
        format: Fmt::Percent,
        kind: Kind::Input,
        bp: false,
        note: String::new(),
    }
}

impl Spec {
    fn format(mut self, format: Fmt) -> Spec {
        self.format = format;
        self
    }
    fn kind(mut self, kind: Kind) -> Spec {
        self.kind = kind;
        self
    }
    fn bp(mut self) -> Spec {
        self.bp = true;
        self
    }
    fn note(mut self, note: impl Into<String>) -> Spec {
        self.note = note.into();
        self
    }
}

/// Writes the sheet and appends each defined name (`name`, `=Inputs!$B$5`) to `names`.
pub(crate) fn sheet(book: &mut Book, names: &mut Vec<(String, String)>) -> Result<Sheet> {
    let v = book.v;
    let mut sheet = Sheet::new("Inputs")?;
    let s = &book.styles;
    let (title, header, text) = (s.title.clone(), s.header.clone(), s.text.clone());
    book.text(&mut sheet, (0, 0), "Inputs", &title)?;
    let intro = "Yellow cells are the case's inputs, each a named cell; change one and every \
                 formula that depends on it recomputes. Other cells here are formulas over the \
                 inputs, or figures the case fixes that are not meant to be changed here (a \
                 debt beta of 0 under riskless debt). Each peer's inputs (equity value, debt, \
                 cash, tax rate, and its own cost of debt or debt beta when it gives one) and its \
                 Aggregated flag are the yellow cells of the Unlevering sheet.";
    book.text(&mut sheet, (1, 0), intro, &text)?;
    let heads = ["Input", "Value", "In bp", "Name", "Case key", "Note"];
    for (col, head) in heads.iter().enumerate() {
        book.text(&mut sheet, (3, col as u16), head, &header)?;
    }
    let specs = rates(v)
        .into_iter()
        .chain(debt(v))
        .chain(components(v))
        .chain(optional(v));
    for (i, spec) in specs.enumerate() {
        let row = 4 + i as u32;
        write_row(book, &mut sheet, row, &spec)?;
        names.push((
            spec.name.to_string(),
            format!("=Inputs!{}", absolute(row, VALUE)),
        ));
    }
    for (col, width) in [
        (0, 34.0),
        (1, 12.0),
        (2, 10.0),
        (3, 24.0),
        (4, 30.0),
        (5, 70.0),
    ] {
        sheet.ws.set_column_width(col, width).map_err(xlsx_error)?;
    }
    sheet.ws.set_freeze_panes(4, 0).map_err(xlsx_error)?;
    Ok(sheet)
}

/// The rates, premiums and target structure.
fn rates(v: &Valuation) -> Vec<Spec> {
    let premiums = &v.settings.premiums;
    let method = crate::report::format::label(&premiums.country_method);
    let mut specs = vec![
        spec(
            "Risk-free rate",
            "RiskFreeRate",
            "market.risk_free_rate",
            "/risk_free_rate",
        )
        .note(&v.settings.market.risk_free_rate_justification),
        spec(
            "Equity risk premium",
            "EquityRiskPremium",
            "market.equity_risk_premium",
            "/equity_risk_premium",
        )
        .note(&v.settings.market.equity_risk_premium_justification),
        spec(
            "Size premium",
            "SizePremium",
            "premiums.size",
            "/premiums/size",
        )
        .bp()
        .note(&premiums.size_justification),
        spec(
            "Country risk premium",
            "CountryPremium",
            "premiums.country",
            "/premiums/country",
        )
        .bp()
        .note(format!(
            "Enters the cost of equity by the method \"{method}\" (see Cost of capital). {}",
            premiums.country_justification
        )),
        spec(
            "Country exposure λ",
            "CountryExposure",
            "premiums.country_exposure",
            "/settings/premiums/country_exposure",
        )
        .format(Fmt::Beta)
        .note("Used when premiums.country_method = \"exposure\"."),
        spec(
            "Company-specific premium",
            "CompanySpecificPremium",
            "premiums.company_specific",
            "/premiums/company_specific",
        )
        .bp()
        .note(&premiums.company_specific_justification),
    ];
    specs.extend(subject_structure(v));
    specs.push(target_debt_to_equity(v));
    specs.push(
        spec(
            "Target tax rate",
            "TargetTaxRate",
            "target.tax_rate",
            "/target/tax_rate",
        )
        .note(format!(
            "The {} rate (target.tax_rate_basis).",
            crate::report::format::label(&v.cost.target.tax_rate_basis)
        )),
    );
    specs
}

/// The subject's equity value, debt and (under net debt, when given) cash, as inputs, when the
/// target is its own structure: the target D/E is then a formula over them (found by review: a
/// typed number whose inputs no cell held).
fn subject_structure(v: &Valuation) -> Vec<Spec> {
    if v.cost.target.given != "subject_current" {
        return Vec::new();
    }
    let amount = |label, name, key, pointer| spec(label, name, key, pointer).format(Fmt::Amount);
    let mut specs = vec![
        amount(
            "Subject's equity value",
            "SubjectEquityValue",
            "target.subject_equity_value",
            "/settings/target/subject_equity_value",
        ),
        amount(
            "Subject's debt",
            "SubjectDebt",
            "target.subject_debt",
            "/settings/target/subject_debt",
        ),
    ];
    if v.cost.beta.debt_measure == crate::capital::leverage::DebtMeasure::Net
        && v.settings.target.subject_cash.is_some()
    {
        specs.push(amount(
            "Subject's cash",
            "SubjectCash",
            "target.subject_cash",
            "/settings/target/subject_cash",
        ));
    }
    specs
}

/// The target D/E row: an input, or the peers' median as a formula over their D/E cells when
/// the target comes from the peers.
fn target_debt_to_equity(v: &Valuation) -> Spec {
    let target_note = match v.cost.target.given {
        "peer_median" => {
            "The median of the aggregated peers' D/E on the Unlevering sheet (target.source = \
             \"peer-median\"; its column \"D/E if aggregated\"): a change to a peer's equity, \
             debt or cash there moves it, and so does a change to a peer's Aggregated flag, as it \
             moves the beta's statistic."
        }
        "subject_current" => {
            "The subject's own current D/E (target.source = \"subject\"), a formula over its \
             amounts above (debt net of cash under net debt, over equity value): a change to \
             them moves it."
        }
        "debt_to_capital" => "From target.debt_to_capital, D/E = r / (1 − r).",
        _ => "",
    };
    // A basis the case file wrote for another source than an override chose is marked, as in
    // the memo.
    let overridden = (v.case.overrides.iter())
        .any(|o| o.starts_with("target.source"))
        .then_some("(target.source was set by an override: the case file's basis may describe another source.)")
        .filter(|_| !v.settings.target.justification.is_empty())
        .unwrap_or("");
    let target_note = [
        target_note,
        v.settings.target.justification.as_str(),
        overridden,
    ]
    .iter()
    .filter(|text| !text.is_empty())
    .copied()
    .collect::<Vec<_>>()
    .join(" ");
    // The key that sets the ratio: the one the case gives (a debt-to-capital is converted),
    // or none for the subject's structure (its debt and equity) or the peers' median.
    let key = match v.cost.target.given {
        "debt_to_capital" => "target.debt_to_capital (as D/E = r / (1 − r))",
        "subject_current" => "target.source = \"subject\" (the subject's amounts above)",
        _ => "target.debt_to_equity",
    };
    spec(
        "Target debt-to-equity (D/E)",
        "TargetDebtToEquity",
        key,
        "/target/debt_to_equity",
    )
    .format(Fmt::Ratio)
    .kind(match v.cost.target.given {
        "peer_median" => Kind::Formula(super::capital::peer_median_debt_to_equity(v)),
        "subject_current" => Kind::Formula(
            match subject_structure(v).len() {
                3 => "=(SubjectDebt-SubjectCash)/SubjectEquityValue",
                _ => "=SubjectDebt/SubjectEquityValue",
            }
            .into(),
        ),
        _ => Kind::Input,
    })
    .note(target_note)
}

/// The cost of debt (given, or rf + a table spread) and the subject's debt beta.
fn debt(v: &Valuation) -> Vec<Spec> {
    let record = &v.cost.cost_of_debt;
    let pre_tax = spec(
        "Pre-tax cost of debt",
        "CostOfDebtPreTax",
        "debt.cost_pre_tax",
        "/cost_of_debt_pre_tax",
    );
    let mut specs = match record.source {
        DebtSource::Given => vec![pre_tax.note(&v.settings.debt.justification)],
        DebtSource::Rating | DebtSource::Coverage => {
            let row = record.row.as_ref();
            let coverage = record.interest_coverage.map_or(String::new(), |c| {
                format!(", the synthetic rating of interest coverage {c:.3}")
            });
            let note = format!(
                "Spread of rating {} in {} (line {}){coverage}.",
                row.map_or("", |r| r.rating.as_str()),
                record.table.as_ref().map_or("", |t| t.path.as_str()),
                row.map_or(0, |r| r.line),
            );
            vec![
                spec(
                    "Credit spread over the risk-free rate",
                    "CreditSpread",
                    match record.source {
                        DebtSource::Rating => "debt.rating (a row of debt.rating_table)",
                        _ => "debt.ebit, debt.interest_expense (a row of debt.coverage_table)",
                    },
                    "/cost_of_debt/row/spread",
                )
                .bp()
                .note(note),
                pre_tax
                    .kind(Kind::Formula("=RiskFreeRate+CreditSpread".into()))
                    .note("The risk-free rate plus the spread."),
            ]
        }
    };
    let debt_beta = spec(
        "Debt beta of the subject",
        "SubjectDebtBeta",
        "leverage.debt_beta",
        "/subject_debt_beta",
    )
    .format(Fmt::Beta);
    specs.push(match v.settings.leverage.debt_beta_source {
        DebtBetaSource::None => debt_beta
            .kind(Kind::Fixed)
            .note("Riskless debt: every debt beta is 0 (leverage.debt_beta_source = \"none\")."),
        DebtBetaSource::Given => {
            debt_beta.note("Also the debt beta of every peer without its own.")
        }
        DebtBetaSource::CreditSpread => debt_beta
            .kind(Kind::Formula(
                "=(CostOfDebtPreTax-RiskFreeRate)/EquityRiskPremium".into(),
            ))
            .note(
                "(Kd − rf) / ERP, the credit-spread approximation: it reads the whole spread \
                   as a premium for systematic risk, so it overstates the debt beta.",
            ),
    });
    specs
}

/// A row's note, followed by the basis the case states for it, when it states one (found by
/// review: the memo printed the bases of preferred equity, leases and the inflation rates, the
/// workbook none).
fn with_basis(note: &str, basis: &str) -> String {
    match (note.is_empty(), basis.trim().is_empty()) {
        (_, true) => note.to_string(),
        (true, false) => basis.to_string(),
        (false, false) => format!("{note} Basis: {basis}"),
    }
}

/// Preferred equity, leases and the trim fraction.
fn components(v: &Valuation) -> Vec<Spec> {
    let (preferred, leases) = (
        v.settings.preferred.justification.as_str(),
        v.settings.leases.justification.as_str(),
    );
    let mut specs = vec![
        spec(
            "Preferred equity weight",
            "PreferredWeight",
            "preferred.weight",
            "/weights/preferred",
        )
        .note(with_basis("Share of total capital.", preferred)),
        spec(
            "Cost of preferred equity",
            "PreferredCost",
            "preferred.cost",
            "/other_capital_costs/preferred_cost",
        )
        .note("Not tax-deductible; 0 without preferred equity."),
        spec(
            "Lease liabilities weight",
            "LeaseWeight",
            "leases.weight",
            "/weights/leases",
        )
        .note(with_basis("Share of total capital.", leases)),
    ];
    let lease = spec(
        "Pre-tax cost of leases",
        "LeaseCostPreTax",
        "leases.cost_pre_tax",
        "/other_capital_costs/lease_cost_pre_tax",
    );
    specs.push(match v.settings.leases.cost_pre_tax {
        Some(_) => lease,
        None => lease
            .kind(Kind::Formula("=CostOfDebtPreTax".into()))
            .note("Not given: the pre-tax cost of debt."),
    });
    specs.push(
        spec(
            "Trim fraction",
            "TrimFraction",
            "leverage.trim_fraction",
            "/settings/leverage/trim_fraction",
        )
        .format(Fmt::Ratio)
        .note("Share cut from each end by the trimmed mean (rounded down to whole peers)."),
    );
    specs
}

/// A stated Vasicek prior and the inflation rates of a currency conversion, when the case has
/// them.
fn optional(v: &Valuation) -> Vec<Spec> {
    let mut specs = Vec::new();
    if v.settings.beta.adjustment == crate::beta::Adjustment::Blume {
        specs.push(
            spec(
                "Blume weight on the raw beta",
                "BlumeWeight",
                "beta.blume_weight",
                "/settings/beta/blume_weight",
            )
            .format(Fmt::Beta)
            .note("shrunk β = w·raw β + (1 − w)."),
        );
    }
    if v.cost
        .beta
        .vasicek_prior
        .is_some_and(|p| p.source == "stated")
    {
        specs.push(
            spec(
                "Vasicek prior mean",
                "VasicekPriorMean",
                "beta.vasicek_prior_mean",
                "/beta/vasicek_prior/mean",
            )
            .format(Fmt::Beta),
        );
        specs.push(
            spec(
                "Vasicek prior variance",
                "VasicekPriorVariance",
                "beta.vasicek_prior_variance",
                "/beta/vasicek_prior/variance",
            )
            .format(Fmt::Beta),
        );
    }
    if let Some(conversion) = &v.settings.conversion {
        let basis = conversion.justification.as_str();
        specs.push(
            spec(
                "Expected inflation, case currency",
                "InflationCase",
                "conversion.inflation_case",
                "/currency_conversion/inflation_from",
            )
            .note(with_basis("", basis)),
        );
        specs.push(
            spec(
                "Expected inflation, output currency",
                "InflationOutput",
                "conversion.inflation_output",
                "/currency_conversion/inflation_to",
            )
            .note(with_basis("", basis)),
        );
    }
    specs
}

/// One row: label, value (input, fixed figure or formula), basis points, name, key and note.
fn write_row(book: &mut Book, sheet: &mut Sheet, row: u32, spec: &Spec) -> Result<()> {
    let s = &book.styles;
    let (plain, input) = match spec.format {
        Fmt::Percent => (s.percent.clone(), s.percent_input.clone()),
        Fmt::Beta => (s.beta.clone(), s.beta_input.clone()),
        Fmt::Ratio => (s.ratio.clone(), s.ratio_input.clone()),
        Fmt::Amount => (s.amount_input.clone(), s.amount_input.clone()),
    };
    let (label, text, mono, bp) = (
        s.label.clone(),
        s.text.clone(),
        s.mono.clone(),
        s.basis_points.clone(),
    );
    book.text(sheet, (row, 0), spec.label, &label)?;
    book.text(sheet, (row, 3), spec.name, &mono)?;
    // A formula's row names no case key: none sets it (under a table's spread, say,
    // debt.cost_pre_tax is not read), so the key column would send a reader the wrong way.
    let key = match spec.kind {
        Kind::Formula(_) => "(a formula; no case key sets it)",
        _ => spec.key,
    };
    book.text(sheet, (row, 4), key, &mono)?;
    if !spec.note.trim().is_empty() {
        book.text(sheet, (row, 5), spec.note.trim(), &text)?;
    }
    match &spec.kind {
        Kind::Input => book.number(sheet, (row, VALUE), book.figure(spec.pointer)?, &input)?,
        Kind::Fixed => book.number(sheet, (row, VALUE), book.figure(spec.pointer)?, &plain)?,
        Kind::Formula(formula) => {
            let expect = Expect::Json(spec.pointer.to_string());
            book.formula(sheet, (row, VALUE), formula, expect, &plain)?
        }
    }
    if spec.bp {
        let formula = format!("={}*10000", relative(row, VALUE));
        let expect = Expect::Scaled(spec.pointer.to_string(), 10_000.0);
        book.formula(sheet, (row, VALUE + 1), &formula, expect, &bp)?;
    }
    Ok(())
}
