//! Sanity rules on a case: the checks a reviewer applies before trusting a figure.
//!
//! A file can parse and every key lie in its range and the result still be nonsense: yields
//! typed as percentages, a balance sheet that makes D/E infinite, NaN in a key nobody reads, work
//! that would run for hours. Each rule refuses such input with a message naming the key and the
//! value. The thresholds are the constants below, stated with their reasons in README's "Error
//! handling" section; the text checks (TOML values with their lines) are in [`text`]. The rules on
//! data files are in `io::sanity`, those on estimates and results in `valuation::sanity`.

pub mod names;
pub mod prices;
pub mod text;
pub mod window;

use super::{CaseDate, CaseFile, DebtSource, TargetSource};
use crate::error::compact as show;

pub(crate) use names::distinct_name;
pub use prices::price_pattern_notes;
pub use text::{case_or_universe, check_claimed_text, empty_or_csv, toml_text};
pub use window::{
    file_end_notes, index_cadence_note, index_coverage_note, peer_cadence_note, short_window_note,
    unused_beta_notes, window_end_note, window_note,
};

/// Most Monte Carlo draws: about five seconds on one core. On the demo case the median's own
/// sampling error (1.2533·σ/√n, the asymptotic SE of a sample median) is 0.1 bp of WACC at a
/// tenth of this and 0.03 bp at it; more draws only cost time.
pub const MAX_DRAWS: u32 = 1_000_000;
/// Most return periods, lags or window lengths: four centuries of daily data.
pub const MAX_PERIODS: u32 = 100_000;
/// Highest D/E of a peer, the target or the subject: debt above 10/11 of capital, where equity
/// is an option on distressed assets and no leverage formula's assumptions hold.
pub const MAX_DEBT_TO_EQUITY: f64 = 10.0;

/// Where a figure is "far above what such a figure usually is": the bounds a run's notes and
/// `implied`'s caution both use (hurdle's judgement, not a standard's; they flag, they do not
/// refuse). A risk-free rate; an equity risk premium or premiums; a pre-tax cost of debt or a
/// WACC.
pub const USUAL_MAX_RISK_FREE: f64 = 0.20;
pub const USUAL_MAX_PREMIUM: f64 = 0.15;
pub const USUAL_MAX_COST: f64 = 0.30;
/// An expected inflation rate (`[conversion]`): well below the 26% a year that compounds to
/// 100% over three years, IAS 29's indicator of hyperinflation (paragraph 3(e), from memory),
/// so the note comes before a currency is hyperinflationary.
pub const USUAL_MAX_INFLATION: f64 = 0.15;
/// Lowest equity risk premium when the debt beta is read from the credit spread,
/// (Kd − rf) / ERP: below 10 bp a spread of a few points reads as a debt beta in the tens or
/// more, which says nothing about debt, and a premium near zero makes the ratio overflow.
pub const MIN_SPREAD_PREMIUM: f64 = 0.001;
/// Highest weight of preferred equity or of leases: above half of capital they are the main
/// financing, not an addition to a structure of equity and debt.
pub const MAX_COMPONENT_WEIGHT: f64 = 0.5;
/// A price that moves by more than this factor between two consecutive rows (up, or down to
/// less than its inverse) is an error unless the case accepts the date: a simple return above
/// +200% or below −66.7%, the same log move either way.
pub const JUMP_FACTOR: f64 = 3.0;

/// Whether a price moving from `previous` to `price` between two consecutive rows goes beyond
/// [`JUMP_FACTOR`] up or down: a case refuses the file unless the date is accepted, a universe
/// does not estimate the security.
pub fn implausible_move(previous: f64, price: f64) -> bool {
    !(1.0 / JUMP_FACTOR..=JUMP_FACTOR).contains(&(price / previous))
}
/// A peer whose returns the index explains to more than this R² is the index (or a copy).
pub const MAX_R_SQUARED: f64 = crate::estimate::INDEX_COPY_R_SQUARED;
/// A risk-free series whose median yield exceeds this multiple of `market.risk_free_rate`
/// (at least 1%) is taken for percentages.
pub const YIELD_RATIO: f64 = 10.0;
/// Years a case date may lie in: the calendar arithmetic is exercised there, and no market
/// data is older.
pub const YEARS: (i32, i32) = (1800, 2199);
/// Largest relative tolerance of `verify`: looser, it stops being a reproduction check.
pub const MAX_TOLERANCE: f64 = 1e-6;

/// The largest Monte Carlo seed: the largest whole number a TOML file holds, as the case is
/// written back as TOML (a what-if, the receipt's settings) and must read the same again.
pub const MAX_SEED: u64 = i64::MAX as u64;

/// The checks on a case file's text before it is parsed ([`text::check_case_text`]), and its
/// `uncertainty.seed` in range, named with its key and line: the parser names a seed beyond
/// 64 bits or below 0 by its line only, and one between [`MAX_SEED`] and 2^64 not at all (found
/// by review: "u64 value was too large").
pub fn check_case_text(text: &str) -> std::result::Result<(), String> {
    text::check_case_text(text)?;
    seed_in_text(text)
}

/// `uncertainty.seed` as written, refused with its line when it is a whole number outside 0 to
/// [`MAX_SEED`]; any other value (text, a decimal) is left to the typed parser.
fn seed_in_text(text: &str) -> std::result::Result<(), String> {
    use toml::de::{DeTable, DeValue};
    let Ok(document) = DeTable::parse(text) else {
        return Ok(()); // The parser names a syntax error with its line.
    };
    fn entry<'t, 'i>(table: &'t DeTable<'i>, key: &str) -> Option<&'t toml::Spanned<DeValue<'i>>> {
        (table.iter())
            .find(|(k, _)| k.get_ref().as_ref() == key)
            .map(|(_, v)| v)
    }
    let Some(uncertainty) = entry(document.get_ref(), "uncertainty") else {
        return Ok(());
    };
    let DeValue::Table(uncertainty) = uncertainty.get_ref() else {
        return Ok(());
    };
    let Some(seed) = entry(uncertainty, "seed") else {
        return Ok(());
    };
    let DeValue::Integer(whole) = seed.get_ref() else {
        return Ok(());
    };
    let value = i128::from_str_radix(whole.as_str(), whole.radix());
    if value
        .as_ref()
        .is_ok_and(|&v| (0..=i128::from(MAX_SEED)).contains(&v))
    {
        return Ok(());
    }
    let line = text.as_bytes()[..seed.span().start.min(text.len())]
        .iter()
        .filter(|&&b| b == b'\n')
        .count()
        + 1;
    let negative = whole.as_str().starts_with('-');
    Err(format!(
        "line {line}: {}",
        seed_out_of_range(&whole.to_string(), negative)
    ))
}

/// The refusal of `uncertainty.seed = value` outside 0 to [`MAX_SEED`], in words.
pub(crate) fn seed_out_of_range(value: &str, negative: bool) -> String {
    let which = match negative {
        true => "below 0".to_string(),
        false => format!("above {MAX_SEED}"),
    };
    format!(
        "uncertainty.seed = {value} is {which}: a seed is a whole number from 0 to {MAX_SEED}, \
         the largest a case file holds (the same seed always gives the same draws)"
    )
}

/// Every number of a case (after overrides) finite. Called first by `case::validate`, so a
/// non-finite value is named before any arithmetic.
pub fn check_finite(case: &CaseFile) -> std::result::Result<(), String> {
    let table = toml::Value::try_from(case).map_err(|e| e.to_string())?;
    check_finite_table(&table)
}

/// [`check_finite`] over the case's settings already serialised (a what-if's table).
pub fn check_finite_table(table: &toml::Value) -> std::result::Result<(), String> {
    match text::first_non_finite(table, String::new()) {
        Some((key, value)) => Err(format!("{key} = {value}: {}", text::NOT_A_NUMBER)),
        None => Ok(()),
    }
}

/// Range checks on a whole case (after overrides) that its keys' own ranges do not cover, once
/// its numbers are known to be finite ([`check_finite`]).
pub fn check_case(case: &CaseFile) -> std::result::Result<(), String> {
    check_paths(case)?;
    check_dates(case)?;
    check_counts(case)?;
    check_structure(case)?;
    for (key, weight) in [
        ("preferred.weight", case.preferred.weight),
        ("leases.weight", case.leases.weight),
    ] {
        if weight > MAX_COMPONENT_WEIGHT {
            let weight = show(weight);
            return Err(format!(
                "{key} = {weight} is above {MAX_COMPONENT_WEIGHT}: a component that large is the \
                 main financing; model it as debt or equity"
            ));
        }
    }
    Ok(())
}

fn check_paths(case: &CaseFile) -> std::result::Result<(), String> {
    // A series read from a wide table (`source`) has no file of its own; `sources::validate`
    // checks that it names one or the other.
    let mut paths = Vec::new();
    if case.market.index.source.is_none() {
        paths.push(("market.index.prices".to_string(), &case.market.index.prices));
    }
    if let Some(series) = case
        .market
        .risk_free_series
        .as_ref()
        .filter(|s| s.source.is_none())
    {
        paths.push(("market.risk_free_series.yields".into(), &series.yields));
    }
    for (i, peer) in case
        .peers
        .iter()
        .enumerate()
        .filter(|(_, p)| p.source.is_none())
    {
        paths.push((
            format!("peer.{i}.prices (peer \"{}\")", peer.name),
            &peer.prices,
        ));
    }
    match case.debt.source {
        DebtSource::Given => {}
        DebtSource::Rating => paths.extend(
            case.debt
                .rating_table
                .iter()
                .map(|t| ("debt.rating_table".to_string(), t)),
        ),
        DebtSource::Coverage => paths.extend(
            case.debt
                .coverage_table
                .iter()
                .map(|t| ("debt.coverage_table".to_string(), t)),
        ),
    }
    if let Some(reconcile) = &case.reconcile {
        paths.push(("reconcile.claimed".into(), &reconcile.claimed));
    }
    match paths.iter().find(|(_, path)| path.trim().is_empty()) {
        // A key left out reads as empty too (a series may name a `source` instead of a file).
        // Only a series may name a source (found by review: the advice was given for
        // reconcile.claimed and the spread tables too).
        Some((key, _)) => {
            let series = !key.starts_with("debt.") && !key.starts_with("reconcile.");
            Err(format!(
                "{key} = \"\" (missing or empty): give the path of the file{}",
                if series {
                    " (or a source and column)"
                } else {
                    ""
                }
            ))
        }
        None => Ok(()),
    }
}

fn check_dates(case: &CaseFile) -> std::result::Result<(), String> {
    let beta = &case.beta;
    let mut dates: Vec<(String, Option<CaseDate>)> = vec![
        ("case.valuation_date".into(), Some(case.case.valuation_date)),
        ("beta.window_start".into(), beta.window_start),
        ("beta.window_end".into(), beta.window_end),
    ];
    // The dates of accepted jumps too (found by review: 1700-01-03 passed).
    let jumps = |key: String, list: &[CaseDate]| {
        list.iter()
            .map(move |&date| (key.clone(), Some(date)))
            .collect::<Vec<_>>()
    };
    dates.extend(jumps(
        "market.index.accept_jumps".into(),
        &case.market.index.accept_jumps,
    ));
    for (i, peer) in case.peers.iter().enumerate() {
        dates.extend(jumps(format!("peer.{i}.accept_jumps"), &peer.accept_jumps));
    }
    for (key, date) in dates {
        if let Some(date) = date {
            date_in_years(&key, date)?;
        }
    }
    Ok(())
}

/// A date given under `key` must lie in [`YEARS`] (a case's dates, a claim's `as_of`).
pub fn date_in_years(key: &str, CaseDate(date): CaseDate) -> std::result::Result<(), String> {
    match (YEARS.0..=YEARS.1).contains(&chrono::Datelike::year(&date)) {
        true => Ok(()),
        false => Err(format!(
            "{key} = {date} is outside the years {} to {}",
            YEARS.0, YEARS.1
        )),
    }
}

fn check_counts(case: &CaseFile) -> std::result::Result<(), String> {
    let beta = &case.beta;
    let counts = [
        ("beta.min_observations", Some(beta.min_observations)),
        ("beta.dimson_lags", Some(beta.dimson_lags)),
        ("beta.dimson_leads", Some(beta.dimson_leads)),
        ("beta.newey_west_lags", beta.newey_west_lags),
        ("beta.rolling_window", beta.rolling_window),
        ("beta.rolling_step", Some(beta.rolling_step)),
        (
            "beta.rolling_min_observations",
            beta.rolling_min_observations,
        ),
    ];
    for (key, count) in counts {
        if let Some(n) = count.filter(|&n| n > MAX_PERIODS) {
            return Err(format!(
                "{key} = {n} is more than any price history holds; at most {MAX_PERIODS}"
            ));
        }
    }
    if let Some(start) = beta.window_start {
        let periods = beta.lookback_periods(case.case.valuation_date.0);
        if periods > MAX_PERIODS {
            return Err(format!(
                "beta.window_start = {start} gives {periods} return periods; at most {MAX_PERIODS}"
            ));
        }
    }
    let draws = case.uncertainty.draws;
    if draws > MAX_DRAWS {
        return Err(format!(
            "uncertainty.draws = {draws} is above {MAX_DRAWS}: that many draws would run for \
             minutes to hours without changing the percentiles it reports"
        ));
    }
    Ok(())
}

/// D/E of the target, the subject and every peer at most [`MAX_DEBT_TO_EQUITY`]; a peer's cash
/// below its equity plus debt.
fn check_structure(case: &CaseFile) -> std::result::Result<(), String> {
    let too_high = |what: String, de: f64| {
        // A ratio too large for a number is said so, not written "inf" (found by review).
        let de = match de.is_finite() {
            true => format!("D/E = {}", significant(de)),
            false => "a D/E too large to compute".to_string(),
        };
        format!(
            "{what} gives {de}, above {MAX_DEBT_TO_EQUITY} (debt over 10/11 of capital): no \
             leverage formula holds there; check the figures and their units"
        )
    };
    let target = &case.target;
    if let Some(de) = target.debt_to_equity.filter(|&de| de > MAX_DEBT_TO_EQUITY) {
        return Err(too_high(
            format!("target.debt_to_equity = {}", show(de)),
            de,
        ));
    }
    if let Some(dc) = target
        .debt_to_capital
        .filter(|&dc| (0.0..1.0).contains(&dc))
    {
        let de = crate::capital::cost::debt_to_equity_from_capital(dc);
        if de > MAX_DEBT_TO_EQUITY {
            return Err(too_high(
                format!("target.debt_to_capital = {}", show(dc)),
                de,
            ));
        }
    }
    let measure = case.leverage.debt_measure;
    // Only when the target is the subject's own: under another source the subject's figures
    // describe it beside the target and relever nothing (a review found a refusal of them
    // there harsh; the note that sets them beside the target leaves out a ratio too large to
    // compute).
    if let (TargetSource::Subject, Some(equity), Some(debt)) = (
        target.source,
        target.subject_equity_value.filter(|&e| e > 0.0),
        target.subject_debt,
    ) {
        let de = measure.debt(debt, target.subject_cash.unwrap_or(0.0)) / equity;
        if de > MAX_DEBT_TO_EQUITY {
            return Err(too_high(
                format!(
                    "target.subject_debt = {} over target.subject_equity_value = {}",
                    show(debt),
                    show(equity)
                ),
                de,
            ));
        }
    }
    for (i, peer) in case.peers.iter().enumerate() {
        if peer.equity_value <= 0.0 || peer.debt < 0.0 || peer.cash < 0.0 {
            continue; // `validate` names these with its own message.
        }
        let de = measure.debt(peer.debt, peer.cash) / peer.equity_value;
        if de > MAX_DEBT_TO_EQUITY {
            return Err(too_high(
                format!(
                    "peer.{i} (peer \"{}\"): debt = {} over equity_value = {}",
                    peer.name,
                    show(peer.debt),
                    show(peer.equity_value)
                ),
                de,
            ));
        }
        if peer.cash >= peer.equity_value + peer.debt {
            return Err(format!(
                "peer.{i}.cash = {} (peer \"{}\") is not below equity_value + debt = {}: the firm \
                 is valued at less than its cash, so its beta says nothing about operating assets",
                show(peer.cash),
                peer.name,
                show(peer.equity_value + peer.debt)
            ));
        }
    }
    Ok(())
}

/// A name, title or label the memo, the tables and the workbook show must be one line of text:
/// a line break (`"A\nB"` in TOML) would split the memo's tables and headings. Nor may it hold a
/// backtick or a square bracket, which open code spans, links and images in the memo's Markdown:
/// a peer named `[x](http://…)` would put a link, or an image loaded from elsewhere, into the
/// self-contained report, and a bracket in a chart's title breaks the image line that places it.
/// Nor a `<` with a `>` after it, which can open raw HTML or an autolink there ([`angle_bracketed`];
/// found by review: a peer named `Corrowick <b>Valves</b>` put the tags into memo.md's tables,
/// for any Markdown viewer to render).
///
/// Nor a character that changes how the text around it shows without being seen (an explicit
/// direction embedding, override or isolate, U+202A–U+202E and U+2066–U+2069: U+202E reorders
/// a name unseen; the marks U+200E, U+200F and U+061C of right-to-left text are kept), a line or
/// paragraph separator (U+2028, U+2029, at which editors and Python's `splitlines` break a
/// line), or a Unicode noncharacter (U+FFFE and U+FFFF, which XML refuses, made every chart
/// unreadable; the others are not for interchange either; found by review).
pub(crate) fn plain_label(key: &str, text: &str) -> std::result::Result<(), String> {
    visible_one_line(key, text)?;
    // A workbook cell holds 32,767 characters (found by review: a longer name failed only when
    // the workbook was written, naming no peer); a name has no use for a thousand.
    let length = text.chars().count();
    if length > MAX_LABEL_CHARACTERS {
        return Err(format!(
            "{key} is {length} characters long; names, titles and labels are at most \
             {MAX_LABEL_CHARACTERS}"
        ));
    }
    if let Some(mark) = text.chars().find(|c| matches!(c, '`' | '[' | ']')) {
        // A backtick cannot be quoted between backticks (found by review: "holds ```").
        let mark = match mark {
            '`' => "a backtick".to_string(),
            other => format!("`{other}`"),
        };
        return Err(format!(
            "{key} = \"{text}\" holds {mark}, which opens code or a link in the memo's and the \
             report's Markdown (a name could then draw a link or lose its chart); write it \
             without backticks and square brackets, with parentheses for instance"
        ));
    }
    match angle_bracketed(text) {
        None => Ok(()),
        Some(span) => Err(format!(
            "{key} = \"{text}\" holds `{span}`, which a Markdown viewer can read as an HTML tag \
             or a link in the memo (a name holding <b>…</b> changes how the memo shows); write it \
             without the angle brackets, with parentheses for instance"
        )),
    }
}

/// A label shown on one line (a claim's label too, which may hold any other character): no
/// line break or other control character, and none of the characters [`unseen_or_unwritable`]
/// names.
pub(crate) fn visible_one_line(key: &str, text: &str) -> std::result::Result<(), String> {
    if !crate::io::sanity::is_one_line(text) {
        return Err(format!(
            "{key} = {text:?} holds a line break or another control character: names, titles \
             and labels are one line of text"
        ));
    }
    if let Some(c) = text.chars().find(|&c| unseen_or_unwritable(c)) {
        let what = match c {
            '\u{2028}' | '\u{2029}' => "a line or paragraph separator, which breaks the line",
            '\u{202a}'..='\u{202e}' | '\u{2066}'..='\u{2069}' => {
                "a direction control, which reorders the text around it without being seen"
            }
            '\u{200b}' | '\u{2060}' | '\u{feff}' => {
                "an invisible character (a zero-width space, word joiner or byte-order mark), \
                 which makes two names look alike"
            }
            _ => "a Unicode noncharacter, which is not for interchange (XML cannot hold U+FFFE)",
        };
        return Err(format!(
            "{key} = {text:?} holds U+{:04X}, {what}; write it without that character",
            c as u32
        ));
    }
    Ok(())
}

pub(crate) use crate::io::sanity::unseen_or_unwritable;

/// The longest name, title or label, in characters.
pub(crate) const MAX_LABEL_CHARACTERS: usize = 1000;

/// The first `<…>` in `text` that can open raw HTML or an autolink (CommonMark 0.31, "Raw HTML"
/// and "Autolinks", from memory): a tag, a comment or a declaration, and a web address, begin
/// with a letter, `/`, `!` or `?` after the `<`; an e-mail address holds an `@` and no white
/// space before the `>`. So "R² < 0.1, D/E > 2", "R² <0.05 and D/E >10", "a <-> b" and "A<B
/// Holdings" open nothing.
pub(crate) fn angle_bracketed(text: &str) -> Option<&str> {
    text.char_indices()
        .filter(|&(_, c)| c == '<')
        .filter_map(|(start, _)| {
            let end = start + text[start..].find('>')?;
            let span = &text[start..=end];
            let next = span[1..].chars().next()?;
            let tag = next.is_ascii_alphabetic() || "/!?".contains(next);
            let address = span.contains('@') && !span.contains(char::is_whitespace);
            (tag || address).then_some(span)
        })
        .next()
}

/// A text the CSV outputs write (a peer's name, its exclusion reason) may not begin with a
/// character that makes a spreadsheet read the cell as a formula (`=`, `+`, `-`, `@`; the
/// characters OWASP's advice on CSV injection names): opened in a spreadsheet, peers.csv or
/// returns.csv would run it.
pub(crate) fn not_a_formula(key: &str, text: &str) -> std::result::Result<(), String> {
    match formula_start(text) {
        None => Ok(()),
        Some(first) => Err(format!(
            "{key} = \"{text}\" begins with `{first}`: a spreadsheet opening peers.csv or \
             returns.csv would run it as a formula; begin it otherwise (a peer's column in a \
             wide table is chosen by `column`, not by its name)"
        )),
    }
}

/// The first character of `text` when it makes a spreadsheet read the cell as a formula.
fn formula_start(text: &str) -> Option<char> {
    (text.chars().next()).filter(|c| matches!(c, '=' | '+' | '-' | '@'))
}

/// A price file's path as the case writes it, which `peers.csv` lists in `prices_file`, may
/// not begin as a spreadsheet formula either (found by review: a file named `=1+1` ran as one
/// when peers.csv was opened); `./` before it keeps the file.
pub(crate) fn path_not_a_formula(key: &str, path: &str) -> std::result::Result<(), String> {
    match formula_start(path) {
        None => Ok(()),
        Some(first) => Err(format!(
            "{key} = \"{path}\" begins with `{first}`: peers.csv lists each peer's price file, \
             and a spreadsheet opening it would run this path as a formula; write it as \
             \"./{path}\" or rename the file"
        )),
    }
}

/// A derived ratio to four significant digits (exponent form when very large or small): the
/// message needs its size, not its last bits.
pub(crate) fn significant(value: f64) -> String {
    let magnitude = value.abs();
    if magnitude == 0.0 || !magnitude.is_finite() || (1e-3..1e6).contains(&magnitude) {
        format!("{}", (value * 1e4).round() / 1e4)
    } else {
        format!("{value:.3e}")
    }
}
