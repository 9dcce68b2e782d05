//! Sanity rules on a case: the checks a reviewer applies before trusting a figure.
//!
//! A file can parse and every key lie in its range and the result still be nonsense: yields
//! typed as percentages, a balance sheet that makes D/E infinite, NaN in a key nobody reads, work
//! that would run for hours. Each rule refuses such input with a message naming the key and the
//! value. The thresholds are the constants below, stated with their reasons in README's "Error
//! handling" section; the text checks (TOML values with their lines) are in [`text`]. The rules on
//! data files are in `io::sanity`, those on estimates and results in `valuation::sanity`.

pub mod text;

use super::{CaseDate, CaseFile, DebtSource, TargetSource};
use crate::error::compact as show;

pub use text::{case_or_universe, check_case_text, check_claimed_text, empty_or_csv};

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
        Some((key, _)) => Err(format!(
            "{key} = \"\" (missing or empty): give the path of the file (or, for a series, a \
             source and column)"
        )),
        None => Ok(()),
    }
}

fn check_dates(case: &CaseFile) -> std::result::Result<(), String> {
    use chrono::Datelike;
    let beta = &case.beta;
    let dates = [
        ("case.valuation_date", Some(case.case.valuation_date)),
        ("beta.window_start", beta.window_start),
        ("beta.window_end", beta.window_end),
    ];
    for (key, date) in dates {
        if let Some(CaseDate(date)) = date {
            if !(YEARS.0..=YEARS.1).contains(&date.year()) {
                return Err(format!(
                    "{key} = {date} is outside the years {} to {}",
                    YEARS.0, YEARS.1
                ));
            }
        }
    }
    Ok(())
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
        let de = significant(de);
        format!(
            "{what} gives D/E = {de}, above {MAX_DEBT_TO_EQUITY} (debt over 10/11 of capital): \
             no leverage formula holds there; check the figures and their units"
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
        let de = dc / (1.0 - dc);
        if de > MAX_DEBT_TO_EQUITY {
            return Err(too_high(
                format!("target.debt_to_capital = {}", show(dc)),
                de,
            ));
        }
    }
    let measure = case.leverage.debt_measure;
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
pub(crate) fn plain_label(key: &str, text: &str) -> std::result::Result<(), String> {
    if !crate::io::sanity::is_one_line(text) {
        return Err(format!(
            "{key} = {text:?} holds a line break or another control character: names, titles \
             and labels are one line of text"
        ));
    }
    match text.chars().find(|c| matches!(c, '`' | '[' | ']')) {
        None => Ok(()),
        Some(mark) => Err(format!(
            "{key} = \"{text}\" holds `{mark}`, which opens code or a link in the memo's and the \
             report's Markdown (a name could then draw a link or lose its chart); write it \
             without backticks and square brackets, with parentheses for instance"
        )),
    }
}

/// A peer's name must be told apart from the others by a reader and by an override that names
/// it (`peer.NAME.…`): no white space around it (`"Alder "` prints as `"Alder"`, which an
/// override then cannot find),
/// and no earlier peer's name, also when the two differ only in capitals.
pub(crate) fn distinct_name<'a>(
    i: usize,
    name: &str,
    earlier: impl Iterator<Item = &'a str>,
) -> std::result::Result<(), String> {
    if name.trim() != name {
        return Err(format!(
            "peer.{i}.name = \"{name}\" has white space around it, which no table shows and \
             no override naming the peer (`peer.NAME.…`) can match; remove it"
        ));
    }
    let folded = name.to_lowercase();
    match earlier
        .enumerate()
        .find(|(_, e)| e.to_lowercase() == folded)
    {
        Some((j, other)) => Err(format!(
            "peer.{i}.name = \"{name}\" repeats peer.{j}.name (\"{other}\"); peer names must be \
             unique, also when capitals are ignored"
        )),
        None => Ok(()),
    }
}

/// A text the CSV outputs write (a peer's name, its exclusion reason) may not begin with a
/// character that makes a spreadsheet read the cell as a formula (`=`, `+`, `-`, `@`; the
/// characters OWASP's advice on CSV injection names): opened in a spreadsheet, peers.csv or
/// returns.csv would run it.
pub(crate) fn not_a_formula(key: &str, text: &str) -> std::result::Result<(), String> {
    match text
        .chars()
        .next()
        .filter(|c| matches!(c, '=' | '+' | '-' | '@'))
    {
        None => Ok(()),
        Some(first) => Err(format!(
            "{key} = \"{text}\" begins with `{first}`: a spreadsheet opening peers.csv or \
             returns.csv would run it as a formula; begin it otherwise (a peer's column in a \
             wide table is chosen by `column`, not by its name)"
        )),
    }
}

/// A note when the index's prices cover less than the return window (a valuation date after the
/// last price, a lookback longer than the data): the periods outside them have no index return,
/// so every `each` (peer, security) loses them, counted under `counted`; a reader of one row could
/// take that for a fault of that row, and the window the outputs name is not the one the data
/// cover.
pub fn index_coverage_note(
    index: &crate::io::series::DataFile,
    window: &crate::estimate::Window,
    each: &str,
    counted: &str,
) -> Option<String> {
    let (start, end) = (window.start(), window.end());
    // The last period takes the last price after the sample point before it, so an index whose
    // last price falls on the Friday before a Sunday month end still covers the window.
    (index.first_date > start || index.last_date <= window.last_period_opens()).then(|| {
        format!(
            "The index ({}) has prices from {} to {}, less than the window's {start} to {end}: \
             periods outside them have no index return, so every {each}'s are dropped there \
             (counted in {counted}).",
            index.path, index.first_date, index.last_date
        )
    })
}

/// A return window shorter than this many years is noted (common practice estimates betas over
/// two to five years: less rests on one phase of the market).
const SHORT_WINDOW_YEARS: f64 = 2.0;

/// A note when the return window spans less than [`SHORT_WINDOW_YEARS`]: a lookback counted in
/// periods keeps its count when the frequency changes (60 months are 60 weeks once weekly), so
/// the calendar span is said in years.
pub fn short_window_note(
    (start, end): (chrono::NaiveDate, chrono::NaiveDate),
    periods: usize,
    period: &str,
) -> Option<String> {
    let years = (end - start).num_days() as f64 / 365.25;
    (years < SHORT_WINDOW_YEARS).then(|| {
        format!(
            "The return window, {periods} {period} returns from {start} to {end}, spans {} \
             years: less than the two to five years betas are usually estimated over (common \
             practice), so it rests on one phase of the market; a lookback counted in periods \
             keeps its count when the frequency changes (beta.lookback).",
            crate::error::rounded(years, 2)
        )
    })
}

/// Where the return window ends against the valuation date: `beta.window_end` before it (a
/// setting a rolled-forward case easily keeps), or a valuation date that is no period end.
pub fn window_end_note(
    beta: &crate::case::BetaSettings,
    valuation_date: chrono::NaiveDate,
    end: chrono::NaiveDate,
) -> Option<String> {
    match beta.window_end.map(|d| d.0) {
        Some(set) if set != valuation_date => {
            let last = if end == set {
                String::new()
            } else {
                format!("; the last period end on or before it is {end}")
            };
            Some(format!(
                "beta.window_end = {set} ends the return window {} days {} the valuation date \
                 {valuation_date}{last}.",
                (valuation_date - set).num_days().abs(),
                if set < valuation_date {
                    "before"
                } else {
                    "after"
                }
            ))
        }
        _ => (end != valuation_date).then(|| {
            format!(
                "The valuation date {valuation_date} is not a period end; the return window ends \
                 at {end}, the last period end before it."
            )
        }),
    }
}

/// More calendar days than a long holiday weekend leaves between a file's last price and the
/// window's end: hurdle's choice for noting a file that was not brought up to date.
const STALE_END_DAYS: i64 = 7;

/// Files whose dates stop short of the window's last period, or run far past the valuation
/// date: the marks of a case rolled forward with a file left behind or a date left unmoved.
/// `peers` pairs each peer's name with its file.
pub fn file_end_notes(
    index: &crate::io::series::DataFile,
    risk_free: Option<&crate::io::series::DataFile>,
    peers: &[(&str, &crate::io::series::DataFile)],
    period_ends: &[chrono::NaiveDate],
    (valuation_date, max_stale_days): (chrono::NaiveDate, Option<u32>),
) -> Vec<String> {
    let mut notes = Vec::new();
    // A file whose last date is on or before the next-to-last period end has no price inside
    // the last period, so that period's return is missing (at the least).
    let [.., before_last, end] = period_ends else {
        return notes;
    };
    for (name, file) in peers {
        let short = (*end - file.last_date).num_days();
        if file.last_date <= *before_last {
            notes.push(format!(
                "{name}: its prices ({}) end at {}, before the window's last period (to \
                 {end}): its returns after that are missing (counted in \
                 periods_dropped.asset_missing).",
                file.path, file.last_date
            ));
        } else if short > STALE_END_DAYS {
            // Inside the last period: its return ends at that old price unless a staleness
            // limit drops it.
            let what = match max_stale_days {
                Some(days) if i64::from(days) < short => format!(
                    "the last period's sample is {short} days old, beyond beta.max_stale_days = \
                     {days}, so that return is dropped as stale"
                ),
                _ => format!(
                    "the last period's return runs to a price {short} days old (a \
                     beta.max_stale_days below {short} would drop it as stale)"
                ),
            };
            notes.push(format!(
                "{name}: its prices ({}) end at {}, {short} days before the window's end \
                 {end}: {what}.",
                file.path, file.last_date
            ));
        }
    }
    if let Some(file) = risk_free.filter(|f| f.last_date <= *before_last) {
        notes.push(format!(
            "The risk-free series ({}) ends at {}, before the window's last period (to {end}): \
             every peer's returns after that are missing (counted in \
             periods_dropped.risk_free_missing).",
            file.path, file.last_date
        ));
    }
    // A month past the valuation date: prices fetched later than the date are common, but a
    // quarter's worth more is the trace of a valuation date not moved with the files.
    let past = (index.last_date - valuation_date).num_days();
    if past > 31 {
        notes.push(format!(
            "The index's prices ({}) run to {}, {past} days past the valuation date \
             {valuation_date}; returns after the window's end are not used (if the case was \
             meant to move to a later date, check case.valuation_date).",
            index.path, index.last_date
        ));
    }
    notes
}

/// When `beta.window_start` is given it sets the window and `beta.lookback` is not used; the
/// run says so (a case file that writes both is refused by [`check_case_text`]).
pub fn window_note(beta: &crate::case::BetaSettings) -> Option<String> {
    beta.window_start.map(|start| {
        format!(
            "beta.window_start = {start} sets the start of the window; beta.lookback ({}) is not \
             used.",
            beta.lookback
        )
    })
}

/// `[beta]` settings the case gives but the chosen method, standard errors or adjustment never
/// read: a reviewer who sees `newey_west_lags = 6` in the file should not take the standard
/// errors for Newey–West ones. A setting with a default counts as given when it differs from
/// that default (the parsed case cannot tell a default written out from one left out).
pub fn unused_beta_notes(beta: &crate::case::BetaSettings) -> Vec<String> {
    use crate::beta::{Adjustment, BetaMethod};
    use crate::stats::least_squares::StdErrors;
    let default = crate::case::BetaSettings::default();
    let mut notes = Vec::new();
    if let Some(lags) = beta
        .newey_west_lags
        .filter(|_| beta.std_errors != StdErrors::NeweyWest)
    {
        notes.push(format!(
            "beta.newey_west_lags = {lags} is not used: the standard errors are {} \
             (beta.std_errors), not Newey–West.",
            match beta.std_errors {
                StdErrors::Hc1 => "HC1",
                _ => "classical",
            }
        ));
    }
    if beta.method != BetaMethod::Dimson
        && (beta.dimson_lags, beta.dimson_leads) != (default.dimson_lags, default.dimson_leads)
    {
        notes.push(format!(
            "beta.dimson_lags = {} and beta.dimson_leads = {} are not used: the method is {} \
             (beta.method), not Dimson.",
            beta.dimson_lags,
            beta.dimson_leads,
            match beta.method {
                BetaMethod::ScholesWilliams => "Scholes–Williams, which takes one lag and one lead",
                _ => "OLS",
            }
        ));
    }
    let adjustment = match beta.adjustment {
        Adjustment::None => "none",
        Adjustment::Blume => "Blume",
        Adjustment::Vasicek => "Vasicek",
    };
    if beta.adjustment != Adjustment::Blume && beta.blume_weight != default.blume_weight {
        notes.push(format!(
            "beta.blume_weight = {} is not used: the adjustment is {adjustment} \
             (beta.adjustment), not Blume.",
            beta.blume_weight
        ));
    }
    if beta.adjustment != Adjustment::Vasicek {
        let given = [
            ("beta.vasicek_prior_mean", beta.vasicek_prior_mean),
            ("beta.vasicek_prior_variance", beta.vasicek_prior_variance),
        ];
        for (key, value) in given.iter().filter_map(|(k, v)| v.map(|v| (k, v))) {
            notes.push(format!(
                "{key} = {value} is not used: the adjustment is {adjustment} (beta.adjustment), \
                 not Vasicek."
            ));
        }
    }
    // A daily sample takes only a price dated after the previous weekday (a Monday's from
    // Saturday at the oldest), so no limit of two days or more can drop one.
    if let Some(days) = beta
        .max_stale_days
        .filter(|d| *d >= 2 && beta.frequency == crate::market::sampling::Frequency::Daily)
    {
        notes.push(format!(
            "beta.max_stale_days = {days} cannot drop a daily sample: a day's sample is a price \
             dated after the previous weekday, at most 2 days old, so the stale_prices flag \
             cannot fire; a thinly traded share shows in daily data as missing days, or as zero \
             returns when its vendor repeats the last price (flag zero_returns)."
        ));
    }
    notes
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
