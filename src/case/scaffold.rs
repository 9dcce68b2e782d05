//! A starting case file from a wide price table, for `hurdle init`.
//!
//! A newcomer with one price table should not have to write a `[[peer]]` table per column by
//! hand. [`starting_case`] writes a complete case: the table as a `[sources]` entry, the index
//! (and the risk-free yields, when named) and one peer per other column, every setting at its
//! default with a comment, and every figure hurdle cannot know as a placeholder
//! ([`crate::case::placeholders`]), so the case cannot run until a person has entered each one.
//! Every column the case names is read here as `hurdle run` will read it, so a column that
//! cannot be read is refused now; a peer column whose values all lie between −1 and 1 (yields,
//! not prices, most likely) is reported in [`StartingCase`] and marked in the case.

use std::fmt::Write as _;
use std::path::{Component, Path, PathBuf};

use serde::Serialize;

use crate::case::placeholders::placeholder;
use crate::case::{BetaSettings, LeverageSettings, Premiums, UncertaintySettings};
use crate::error::{compact, Error, Result};
use crate::io::series::ValueKind;
use crate::io::tables::{PriceTable, TableFormat};

mod names;
use names::{display_name, peer_names};

/// What `hurdle init` was asked for.
#[derive(Debug, Clone)]
pub struct StartOptions<'a> {
    /// The table's path as the case file will write it (relative to the case file's folder).
    pub table_path: &'a str,
    /// The column holding the market index.
    pub index: &'a str,
    /// The column holding annualised risk-free yields, if the table has one.
    pub risk_free: Option<&'a str>,
}

/// A TOML string literal.
fn quoted(text: &str) -> String {
    toml::Value::String(text.to_string()).to_string()
}

/// What `hurdle init` wrote and chose: the case's text and the columns it names.
#[derive(Debug, Clone)]
pub struct StartingCase {
    /// The case file's text.
    pub text: String,
    /// The index column's header, as the table writes it.
    pub index: String,
    /// The risk-free yield column's header, when one was named.
    pub risk_free: Option<String>,
    /// One per peer, in the table's order.
    pub peers: Vec<StartedPeer>,
}

/// A peer made of a column of the table.
#[derive(Debug, Clone)]
pub struct StartedPeer {
    /// The peer's name in the case: the header on one line, numbered when it would read like
    /// another column's header or another peer's name ([`peer_names`]).
    pub name: String,
    /// The column's header, as the table writes it.
    pub column: String,
    /// The lowest and the highest value when every value lies strictly between −1 and 1, as
    /// yields and rates do and prices seldom do: the column may be the risk-free yields.
    pub rate_like: Option<(f64, f64)>,
}

/// The starting case for `table`: one peer per column other than the index and the risk-free
/// column. Every column it names is read as `hurdle run` will read it (the same reader), so a
/// column that cannot be read, or holds fewer than two values, is refused here, naming its cell.
pub fn starting_case(table: &PriceTable, options: &StartOptions) -> Result<StartingCase> {
    let fail = |message: String| Error::DataFile {
        file: table.resolved.clone(),
        message,
    };
    let index = chosen(table, "the index column", options.index)?;
    let risk_free = match options.risk_free {
        Some(column) => Some(chosen(table, "the risk-free column", column)?),
        None => None,
    };
    if risk_free == Some(index) {
        return Err(fail(format!(
            "the index and the risk-free yields name the same column `{index}`"
        )));
    }
    let columns: Vec<&String> = table
        .columns
        .iter()
        .filter(|c| c.as_str() != index && Some(c.as_str()) != risk_free)
        .collect();
    if columns.is_empty() {
        return Err(fail(format!(
            "the table has {} price column(s) ({}) besides the date column `{}`; init needs the \
             index column and at least one peer column",
            table.columns.len(),
            quoted_list(&table.columns),
            table.date_column
        )));
    }
    column_values(table, index, ValueKind::Price, "")?;
    if let Some(column) = risk_free {
        column_values(table, column, ValueKind::Yield, "")?;
    }
    let peers = started_peers(table, &columns)?;
    let mut text = header(table, options);
    text.push_str(&market(index, risk_free));
    text.push_str(&defaults_sections());
    text.push_str(&capital_sections());
    for peer in &peers {
        text.push_str(&peer_table(peer));
    }
    Ok(StartingCase {
        text,
        index: index.to_string(),
        risk_free: risk_free.map(str::to_string),
        peers,
    })
}

/// The header of the column `column` names (as the table writes it; a wrapped header matches
/// its name typed on one line), or an error saying which column `what` is.
fn chosen<'t>(table: &'t PriceTable, what: &str, column: &str) -> Result<&'t str> {
    table
        .find_column(column)
        .map_err(|message| Error::DataFile {
            file: table.resolved.clone(),
            message: format!("{what} `{column}`: {message}"),
        })
}

/// Names in backticks, separated by commas.
fn quoted_list(names: &[String]) -> String {
    names
        .iter()
        .map(|c| format!("`{c}`"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// The values of `column` read as `run` reads them, refused when a cell cannot be read or when
/// fewer than two are there (no return can be made); `peer_advice` ends a peer's message.
fn column_values(
    table: &PriceTable,
    column: &str,
    kind: ValueKind,
    peer_advice: &str,
) -> Result<Vec<f64>> {
    let with_advice = |error: Error| match error {
        Error::DataFile { file, message } => Error::DataFile {
            file,
            message: format!("{message}{peer_advice}"),
        },
        other => other,
    };
    let file = table.series("init", column, kind).map_err(with_advice)?;
    if let [only] = file.places.as_slice() {
        return Err(with_advice(Error::DataFile {
            file: table.resolved.clone(),
            message: format!(
                "{} holds the only {} of its column: a return needs two",
                table.with_column(only, column),
                kind.noun()
            ),
        }));
    }
    Ok(file.series.values)
}

/// A peer for each of `columns`, each read as its prices and named by [`peer_names`].
fn started_peers(table: &PriceTable, columns: &[&String]) -> Result<Vec<StartedPeer>> {
    const ADVICE: &str = "; init makes every column other than the index (and the risk-free \
                          yields) a peer: correct the cell, or remove the column from the table";
    let mut rate_like = Vec::with_capacity(columns.len());
    for column in columns {
        let values = column_values(table, column, ValueKind::Price, ADVICE)?;
        let low = values.iter().copied().fold(f64::INFINITY, f64::min);
        let high = values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        rate_like.push((low > -1.0 && high < 1.0).then_some((low, high)));
    }
    let headers: Vec<&str> = std::iter::once(&table.date_column)
        .chain(&table.columns)
        .map(String::as_str)
        .collect();
    let wanted: Vec<&str> = columns.iter().map(|c| c.as_str()).collect();
    let names = peer_names(&headers, &wanted);
    Ok((columns.iter().zip(names).zip(rate_like))
        .map(|((column, name), rate_like)| StartedPeer {
            name,
            column: column.to_string(),
            rate_like,
        })
        .collect())
}

fn header(table: &PriceTable, options: &StartOptions) -> String {
    let title = Path::new(options.table_path)
        .file_name()
        .map_or(String::new(), |n| n.to_string_lossy().into_owned());
    let mut text = format!(
        "# Case file started by `hurdle init` from {table_path}.\n\
         # Every \"{mark}: …>\" value is a figure hurdle cannot know. Replace each with the figure\n\
         # from its source; `hurdle run` refuses a case that still holds one and lists them all.\n\
         # The other settings are written at their defaults, each with a comment; README's \"Case\n\
         # file reference\" documents every key. Rates are annual decimals (0.055 is 5.5%).\n\n\
         [case]\n\
         title = {title}  # the memo's title\n\
         subject = {subject}\n\
         valuation_date = {date}\n\
         currency = {currency}  # a label; no conversion is made\n\
         peer_selection = \"\"  # how the peers were chosen, printed in the memo\n\n\
         # The price table: a date column and one column per security.\n\
         [sources.prices]\n\
         file = {file}\n",
        table_path = options.table_path,
        mark = crate::case::placeholders::MARK,
        title = quoted(&format!("Cost of capital (started from {title})")),
        subject = placeholder("the firm whose cost of capital is estimated"),
        date = placeholder("valuation date, YYYY-MM-DD; the return window ends at the last period end on or before it"),
        currency = placeholder("currency of the rates, e.g. EUR"),
        file = quoted(options.table_path),
    );
    if table.format == TableFormat::Workbook {
        if let Some(sheet) = &table.sheet {
            writeln!(
                text,
                "sheet = {}  # the workbook's sheet holding the table",
                quoted(sheet)
            )
            .expect("String write");
        }
    }
    writeln!(
        text,
        "date_column = {}  # the header of the date column",
        quoted(&table.date_column)
    )
    .expect("String write");
    text
}

fn market(index: &str, risk_free: Option<&str>) -> String {
    let mut text = format!(
        "\n[market]\n\
         risk_free_rate = {rf}\n\
         equity_risk_premium = {erp}\n\
         risk_free_rate_justification = \"\"  # its source, date and maturity, printed in the memo\n\
         equity_risk_premium_justification = \"\"  # its source and method\n\n\
         # The market index the betas are measured against.\n\
         [market.index]\n\
         name = {name}\n\
         source = \"prices\"\n\
         column = {column}\n",
        rf = placeholder("risk-free rate used in the CAPM, decimal"),
        erp = placeholder("equity risk premium over that rate, decimal"),
        name = quoted(&display_name(index)),
        column = quoted(index),
    );
    match risk_free {
        Some(column) => write!(
            text,
            "\n# Annualised risk-free yields (decimals): regressions use excess returns.\n\
             [market.risk_free_series]\nsource = \"prices\"\ncolumn = {}\n",
            quoted(column)
        )
        .expect("String write"),
        None => text.push_str(
            "\n# Optional: annualised risk-free yields, for excess returns. Add a yield column to\n\
             # the table (or a file) and uncomment:\n\
             # [market.risk_free_series]\n# source = \"prices\"\n# column = \"yield\"\n",
        ),
    }
    text
}

/// `key = value  # comment` lines for the keys of a serialised default settings table, in the
/// order given; optional keys absent from the defaults are written commented out.
fn section<T: Serialize>(name: &str, defaults: &T, keys: &[(&str, &str, &str)]) -> String {
    let table = toml::Value::try_from(defaults).expect("settings serialise to TOML");
    let mut text = format!("\n[{name}]\n");
    for (key, comment, example) in keys {
        match table.get(key) {
            Some(value) => writeln!(text, "{key} = {value}  # {comment}"),
            None => writeln!(text, "# {key} = {example}  # {comment}"),
        }
        .expect("String write");
    }
    text
}

fn defaults_sections() -> String {
    let mut text = section("beta", &BetaSettings::default(), BETA_KEYS);
    text.push_str(&section(
        "leverage",
        &LeverageSettings::default(),
        LEVERAGE_KEYS,
    ));
    text
}

/// The keys of `[beta]` with their comments (and an example for the optional ones).
const BETA_KEYS: &[(&str, &str, &str)] = &[
    (
        "frequency",
        "daily, weekly, monthly or quarterly returns",
        "",
    ),
    (
        "lookback",
        "return periods in the window, or a span such as \"5y\"",
        "",
    ),
    (
        "min_observations",
        "fewer usable returns for a peer is an error",
        "",
    ),
    ("method", "ols, dimson or scholes-williams", ""),
    ("adjustment", "none, blume or vasicek", ""),
    (
        "blume_weight",
        "blume: shrunk β = w·raw + (1 − w); 0.67 is near Blume's (1971) slope 0.677",
        "",
    ),
    ("std_errors", "classical, hc1 or newey-west", ""),
    ("newey_west_lags", "absent: floor(4·(N/100)^(2/9))", "4"),
    ("dimson_lags", "index lags in the Dimson regression", ""),
    ("dimson_leads", "index leads in the Dimson regression", ""),
    (
        "vasicek_prior_mean",
        "absent: the peers' cross-section",
        "1.0",
    ),
    (
        "vasicek_prior_variance",
        "absent: the peers' cross-section",
        "0.09",
    ),
    ("weekday", "the sample weekday of weekly returns", ""),
    ("returns", "simple or log returns", ""),
    ("max_stale_days", "absent: no staleness limit", "10"),
    ("window_start", "absent: the lookback decides", "2021-10-01"),
    ("window_end", "absent: the valuation date", "2026-09-30"),
    (
        "flag_observations_share",
        "flag a peer below this share of the window's periods",
        "",
    ),
    ("flag_r_squared_floor", "flag a peer below this R²", ""),
    (
        "flag_stale_share",
        "flag a peer with more stale periods than this share",
        "",
    ),
    (
        "flag_zero_return_share",
        "flag a peer with more zero returns than this share",
        "",
    ),
    (
        "flag_lag_p_value",
        "flag a peer whose returns follow the index's previous-period return",
        "",
    ),
    (
        "exclude_flags",
        "flags that leave a peer out of the aggregate",
        "",
    ),
    ("rolling_window", "absent: half the window", "30"),
    ("rolling_step", "periods between rolling window ends", ""),
    (
        "rolling_min_observations",
        "absent: 80% of the rolling window",
        "24",
    ),
];

const LEVERAGE_KEYS: &[(&str, &str, &str)] = &[
    (
        "formula",
        "hamada, harris-pringle, miles-ezzell or conine",
        "",
    ),
    (
        "aggregation",
        "median, mean, market-cap-weighted or trimmed-mean",
        "",
    ),
    (
        "debt_beta_source",
        "none (riskless debt), given or credit-spread",
        "",
    ),
    ("debt_beta", "with debt_beta_source = \"given\"", ""),
    (
        "trim_fraction",
        "share cut from each end by trimmed-mean",
        "",
    ),
    (
        "operations_beta",
        "aggregate the betas of the operations, βU / (1 − cash / (equity + debt))",
        "",
    ),
    ("debt_measure", "gross, or net of cash, in every D/E", ""),
];

fn capital_sections() -> String {
    let mut text = format!(
        "\n[target]\n\
         debt_to_equity = {de}\n\
         # debt_to_capital = 0.3  # instead of debt_to_equity: D/(D + E)\n\
         tax_rate = {tax}\n\
         tax_rate_basis = \"marginal\"  # marginal or effective\n\
         source = \"explicit\"  # explicit, peer-median or subject\n\
         justification = \"\"  # why this structure, printed in the memo\n\n\
         [debt]\n\
         source = \"given\"  # given, rating (with rating, rating_table) or coverage\n\
         cost_pre_tax = {kd}\n\
         justification = \"\"  # where the cost of debt or the rating comes from\n",
        de = placeholder("target debt-to-equity at market values"),
        tax = placeholder("the subject's marginal tax rate, decimal"),
        kd = placeholder("pre-tax cost of debt, decimal, e.g. a yield to maturity"),
    );
    let premiums = Premiums::default();
    write!(
        text,
        "\n[premiums]\n\
         size = {size}\n\
         country = {country}\n\
         company_specific = {specific}\n\
         country_method = {method}  # flat, exposure or beta-scaled\n\
         country_exposure = {lambda}  # the exposure λ, for country_method = \"exposure\"\n\
         size_justification = \"\"  # printed in the memo beside each premium\n\
         country_justification = \"\"\n\
         company_specific_justification = \"\"\n\n\
         [preferred]\n\
         weight = 0.0  # preferred equity's share of total capital\n\
         # cost = 0.07  # its cost, required when weight > 0\n\
         justification = \"\"  # where the weight and the cost come from, printed in the memo\n\n\
         [leases]\n\
         weight = 0.0  # lease liabilities' share of total capital\n\
         # cost_pre_tax = 0.05  # absent: the pre-tax cost of debt\n\
         justification = \"\"\n\n\
         [sensitivity]\n\
         metric = \"wacc\"  # wacc or cost_of_equity\n\
         # rows = \"market.equity_risk_premium=0.045..0.065:0.005\"  # absent: ERP ± 1 point\n\
         # columns = \"target.debt_to_equity=0..0.8:0.2\"  # absent: target D/E 0 to twice it\n",
        size = placeholder("size premium, decimal; 0 when none"),
        country = placeholder("country risk premium, decimal; 0 when none"),
        specific = placeholder("company-specific premium, decimal; 0 when none"),
        method = toml::Value::try_from(premiums.country_method).expect("serialises"),
        lambda = toml::Value::Float(premiums.country_exposure),
    )
    .expect("String write");
    let uncertainty = UncertaintySettings::default();
    write!(
        text,
        "\n[uncertainty]\n\
         draws = {}  # Monte Carlo draws of the WACC\n\
         seed = {}  # the same seed gives the same percentiles\n\
         # equity_risk_premium = [0.045, 0.065]  # also draw the ERP from this range\n",
        uncertainty.draws, uncertainty.seed
    )
    .expect("String write");
    text
}

fn peer_table(peer: &StartedPeer) -> String {
    let check = match peer.rate_like {
        Some((low, high)) => format!(
            "# Check: every value of this column lies between -1 and 1 ({} to {}), as yields do\n\
             # and prices seldom do. If it holds the risk-free yields, delete this [[peer]] and\n\
             # read the column as [market.risk_free_series] (source = \"prices\").\n",
            compact(low),
            compact(high)
        ),
        None => String::new(),
    };
    format!(
        "\n{check}[[peer]]\n\
         name = {name}\n\
         source = \"prices\"\n\
         column = {column}\n\
         equity_value = {equity}\n\
         debt = {debt}\n\
         cash = {cash}\n\
         tax_rate = {tax}\n",
        name = quoted(&peer.name),
        column = quoted(&peer.column),
        equity = placeholder("market value of equity, in one unit for every peer"),
        debt = placeholder("total (gross) debt, same unit"),
        cash = placeholder("cash, same unit"),
        tax = placeholder("marginal tax rate, decimal"),
    )
}

/// `table` as a case file in the folder `case_dir` writes it: relative to that folder, with
/// forward slashes where the backslash separates folders (Windows), so the case reads on any
/// system; elsewhere a backslash is a character of the file's name and stays (found by review:
/// `peer\prices.xlsx` was written as the folder `peer`).
pub fn written_path(case_dir: &Path, table: &Path) -> String {
    let relative = relative_path(case_dir, table);
    match std::path::MAIN_SEPARATOR {
        '\\' => relative.to_string_lossy().replace('\\', "/"),
        _ => relative.to_string_lossy().into_owned(),
    }
}

/// `to` (a file) relative to the folder `from`, as a case file writes it; both are made
/// absolute first. Falls back to the absolute path when they share no root.
pub fn relative_path(from: &Path, to: &Path) -> PathBuf {
    let (Ok(from), Ok(to)) = (std::path::absolute(from), std::path::absolute(to)) else {
        return to.to_path_buf();
    };
    fn normal(p: &Path) -> Vec<Component<'_>> {
        let mut out: Vec<Component<'_>> = Vec::new();
        for c in p.components() {
            match c {
                Component::CurDir => {}
                Component::ParentDir if matches!(out.last(), Some(Component::Normal(_))) => {
                    out.pop();
                }
                other => out.push(other),
            }
        }
        out
    }
    let (from, to) = (normal(&from), normal(&to));
    if from.first() != to.first() {
        return to.iter().collect();
    }
    let common = from.iter().zip(&to).take_while(|(a, b)| a == b).count();
    let mut path = PathBuf::new();
    for _ in common..from.len() {
        path.push("..");
    }
    for c in &to[common..] {
        path.push(c);
    }
    path
}

#[cfg(test)]
mod tests {
    use super::*;

    // A wrapped spreadsheet header ("Alder" line break "Tree") names its peer on one line, as
    // case validation requires of a name; the column key keeps the header.
    #[test]
    fn a_wrapped_header_names_its_peer_on_one_line() {
        assert_eq!(display_name("Alder\nTree"), "Alder Tree");
        assert_eq!(display_name(" Birch\r\n\tand  Elm "), "Birch and Elm");
        // What would start a formula in a CSV output is left off (the case refuses it).
        assert_eq!(display_name("=1+2 Cedar"), "1+2 Cedar");
        assert_eq!(display_name("@-Larch"), "Larch");
        assert_eq!(display_name("=-"), "peer");
        // Markdown's code and link marks (refused in a case's name) become plain punctuation.
        assert_eq!(display_name("Alder [A] `B`"), "Alder (A) 'B'");
        assert_eq!(display_name("Alder <b>B</b>"), "Alder (b)B(/b)");
        // A `<` without a `>` after it, and a lone `>`, open nothing and are kept.
        assert_eq!(display_name("R<1 & A>B"), "R<1 & A>B");
        assert_eq!(display_name("Q<x@y.example>"), "Q(x@y.example)");
        assert_eq!(display_name("A<B Holdings"), "A<B Holdings");
        assert_eq!(display_name("D/E > 2"), "D/E > 2");
        let table = peer_table(&StartedPeer {
            name: display_name("Alder\nTree"),
            column: "Alder\nTree".into(),
            rate_like: None,
        });
        assert!(table.contains("name = \"Alder Tree\"\n"), "{table}");
        assert!(
            table.contains("column = \"\"\"\nAlder\nTree\"\"\"\n"),
            "{table}"
        );
    }

    // No peer is named after a column it does not read (found by review: `=Brenvale Co` was
    // named "Brenvale Co" beside the column `Brenvale Co`, named "Brenvale Co (2)"): a header
    // that is a plain name keeps it, a cleaned one is numbered past every other column's header
    // and every other peer's name, capitals and runs of white space aside.
    #[test]
    fn a_cleaned_name_never_takes_another_columns_header() {
        let headers = [
            "Date",
            "Idx",
            "=Brenvale Co",
            "-Corrowick",
            "Brenvale Co",
            "=idx",
            "Estwold",
        ];
        let names = peer_names(&headers, &headers[2..]);
        assert_eq!(
            names,
            [
                "Brenvale Co (2)",
                "Corrowick",
                "Brenvale Co",
                "idx (2)",
                "Estwold"
            ]
        );
        // A numbered name that is itself a header is numbered on; a wrapped header reads like
        // the one-line header beside it, which keeps its name; two headers alike but for
        // capitals are numbered apart.
        let headers = [
            "date",
            "=Alder",
            "Alder",
            "Alder (2)",
            "A\nB",
            "A B",
            "ABC",
            "abc",
        ];
        assert_eq!(
            peer_names(&headers, &headers[1..]),
            [
                "Alder (3)",
                "Alder",
                "Alder (2)",
                "A B (2)",
                "A B",
                "ABC",
                "abc (2)"
            ]
        );
        // The date column's header is another column's too.
        assert_eq!(peer_names(&["Date", "=date"], &["=date"]), ["date (2)"]);
    }

    // Every key a default settings table serialises has a line (and so a comment) in the
    // starting case, so a new setting cannot be forgotten there.
    #[test]
    fn every_default_setting_is_written_with_a_comment() {
        for (defaults, keys) in [
            (
                toml::Value::try_from(BetaSettings::default()).unwrap(),
                BETA_KEYS,
            ),
            (
                toml::Value::try_from(LeverageSettings::default()).unwrap(),
                LEVERAGE_KEYS,
            ),
        ] {
            for key in defaults.as_table().unwrap().keys() {
                assert!(
                    keys.iter().any(|(k, _, _)| k == key),
                    "no comment for {key}"
                );
            }
        }
    }

    #[test]
    fn relative_paths_walk_up_and_down() {
        let p = |from: &str, to: &str| relative_path(Path::new(from), Path::new(to));
        assert_eq!(p("/a/b", "/a/b/t.csv"), PathBuf::from("t.csv"));
        assert_eq!(p("/a/b", "/a/c/t.csv"), PathBuf::from("../c/t.csv"));
        assert_eq!(p("/a/b/c", "/a/t.csv"), PathBuf::from("../../t.csv"));
    }
}
