//! Notes on the return window and the data files a run reads, said before any peer's own: the
//! index's coverage of the window, a window under two years, where the window ends against the
//! valuation date, files that end before it, and settings the window does not use. Notes, not
//! errors: each figure can be right, and the reader is told what to weigh.

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
    // The last period takes the last price after the sample point before it: an index whose
    // last price falls on the Friday before a Sunday month end covers the window, one that
    // stops weeks before the end still has a return there, on a stale price.
    let gap = (end - index.last_date).num_days();
    if index.first_date > start || index.last_date <= window.last_period_opens() {
        return Some(format!(
            "The index ({}) has prices from {} to {}, less than the window's {start} to {end}: \
             periods outside them have no index return, so every {each}'s are dropped there \
             (counted in {counted}).",
            index.path, index.first_date, index.last_date
        ));
    }
    (gap > STALE_END_DAYS).then(|| {
        format!(
            "The index ({}) ends on {}, {gap} days before the window's end {end}: the last \
             period's index return ends on that price, older than the {each} prices it is set \
             against (beta.max_stale_days drops such a period).",
            index.path, index.last_date
        )
    })
}

/// A note when the index's prices inside the window come further apart than a market's trading
/// days and than the prices set against them (found by review: a weekly index under monthly
/// returns set each month's last Friday against the securities' month-end prices, moving every
/// beta, without a word): more than 3 calendar days per price on average (weekends and
/// holidays make about 1.45) and more than 1.5 times `others`, the calendar days per price of
/// the peers' or securities' median one (an index of month-ends beside month-end prices is not
/// noted).
pub fn index_cadence_note(
    index: &crate::io::series::DataFile,
    window: &crate::estimate::Window,
    (others, whose): (Option<f64>, &str),
) -> Option<String> {
    let bounds = (window.start(), window.end());
    let gap = super::prices::mean_gap(&index.series.dates, bounds)?;
    let others = others.unwrap_or(1.0);
    (gap > 3.0 && gap > 1.5 * others).then(|| {
        format!(
            "The index ({}) has a price every {} calendar days in the window on average, the \
             {whose} one every {}: a period's index price may then be days older than the \
             prices set against it, which misaligns the returns (and under daily returns \
             leaves most days without one); give the index's price for every trading day.",
            index.path,
            crate::error::rounded(gap, 1),
            crate::error::rounded(others, 1)
        )
    })
}

/// A note naming the peers whose prices inside the window come further apart than a market's
/// trading days and than the index's, by the rule of [`index_cadence_note`] turned round: more
/// than 3 calendar days per price on average and more than 1.5 times the index's (found by
/// review: a peer given weekly prices in a case of daily ones was left to the reader to guess
/// from its missing returns; the universe says so in its own note). Weekly prices beside a
/// daily index, or a share that seldom trades: either way a period's price may be days older
/// than the index's.
pub fn peer_cadence_note(
    peers: &[(&str, &crate::io::series::DataFile)],
    index: &crate::io::series::DataFile,
    window: &crate::estimate::Window,
    frequency: crate::market::sampling::Frequency,
) -> Option<String> {
    let mut index_gap = None;
    let sparse: Vec<String> = (peers.iter())
        .filter_map(|(name, file)| {
            let (gap, of_index) = sparse_peer(file, index, window, frequency)?;
            index_gap = Some(of_index);
            Some(format!(
                "{name} ({}) every {}",
                file.path,
                crate::error::rounded(gap, 1)
            ))
        })
        .collect();
    let index_gap = index_gap?;
    (!sparse.is_empty()).then(|| {
        format!(
            "Calendar days between a peer's prices in the window (the median gap), against {} \
             on average for the index: {}. \
             Weekly or monthly prices among the index's daily ones, or a share that seldom \
             trades? A period's price may then be days older than the index's, which \
             misaligns the returns (under daily returns most days have none; \
             beta.max_stale_days drops stale periods); give prices for every trading day, or \
             choose beta.frequency to match.",
            crate::error::rounded(index_gap, 1),
            sparse.join("; ")
        )
    })
}

/// A peer's calendar days per price in the window and the index's, when the peer's are sparse
/// for the returns asked of it: the median gap between its consecutive prices (so that a late
/// listing or a long suspension does not count) above 3 days and above 1.5 times the index's
/// mean gap, and either above 1.5 times the calendar days of one return period of `frequency`
/// or, at the median sample point, more than 2 days old (Friday prices at month-ends). Found by
/// review: month-end prices under monthly returns, sampled in full, were noted, and a daily
/// peer with a long suspension was said to have a price every 3.1 days.
pub fn sparse_peer(
    file: &crate::io::series::DataFile,
    index: &crate::io::series::DataFile,
    window: &crate::estimate::Window,
    frequency: crate::market::sampling::Frequency,
) -> Option<(f64, f64)> {
    let bounds = (window.start(), window.end());
    let index_gap = super::prices::mean_gap(&index.series.dates, bounds).unwrap_or(1.0);
    let gap = super::prices::median_gap(&file.series.dates, bounds)?;
    let period = 365.25 / frequency.periods_per_year();
    let stale = || {
        super::prices::median_staleness(&file.series.dates, window.period_ends())
            .is_some_and(|days| days > 2.0)
    };
    (gap > 3.0 && gap > 1.5 * index_gap && (gap > 1.5 * period || stale()))
        .then_some((gap, index_gap))
}

/// Why a peer lost its returns when its prices are sparse ([`sparse_peer`]), to follow the
/// refusal's counts, or nothing (found by review: a peer of weekly prices in a daily case was
/// refused with "peer price missing" alone).
pub fn sparse_prices_hint(
    file: &crate::io::series::DataFile,
    index: &crate::io::series::DataFile,
    window: &crate::estimate::Window,
    frequency: crate::market::sampling::Frequency,
) -> String {
    match sparse_peer(file, index, window, frequency) {
        Some((gap, index_gap)) => format!(
            " Its prices in the window come every {} calendar days (the median gap), the \
             index's every {} on average: give the peer's price for every trading day, or \
             choose beta.frequency to match its prices.",
            crate::error::rounded(gap, 1),
            crate::error::rounded(index_gap, 1)
        ),
        None => String::new(),
    }
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
    beta: &crate::case::BetaSettings,
) -> Option<String> {
    let frequency = beta.frequency;
    let period = crate::case::label(&frequency);
    // What sets the window's length, in the words of how the settings give it (found by
    // review: a span such as "18m" was told about a lookback counted in periods).
    let remedy = match (&beta.window_start, &beta.lookback) {
        (Some(_), _) => "beta.window_start sets its first date",
        (None, crate::case::Lookback::Periods(_)) => {
            "a lookback counted in periods keeps its count when the frequency changes \
             (beta.lookback)"
        }
        (None, _) => "a longer span in beta.lookback (\"5y\") widens it",
    };
    let years = (end - start).num_days() as f64 / 365.25;
    // Counted in periods, so that two years of months (24) or of weeks (104) is not short,
    // whatever calendar days they span.
    let counted = periods as f64 / frequency.periods_per_year();
    (counted < SHORT_WINDOW_YEARS - 1e-9).then(|| {
        format!(
            "The return window, {periods} {period} returns from {start} to {end}, spans {} \
             years: less than the two to five years betas are usually estimated over (common \
             practice), so it rests on one phase of the market; {remedy}.",
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
pub const STALE_END_DAYS: i64 = 7;

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
    notes.extend(unused_lag_note(beta));
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

/// The late-response check's settings under another estimator than OLS, which never reads them
/// (found by review: its threshold and an exclusion by its flag passed without a word under
/// Dimson).
fn unused_lag_note(beta: &crate::case::BetaSettings) -> Option<String> {
    use crate::beta::BetaMethod;
    let method = match beta.method {
        BetaMethod::Ols => return None,
        BetaMethod::Dimson => "Dimson",
        BetaMethod::ScholesWilliams => "Scholes–Williams",
    };
    let lagged = crate::beta::diagnostics::PeerFlag::LaggedResponse;
    let mut unused = Vec::new();
    if beta.flag_lag_p_value != crate::case::BetaSettings::default().flag_lag_p_value {
        unused.push(format!("beta.flag_lag_p_value = {}", beta.flag_lag_p_value));
    }
    if beta.exclude_flags.contains(&lagged) {
        unused.push("\"lagged_response\" in beta.exclude_flags".to_string());
    }
    (!unused.is_empty()).then(|| {
        format!(
            "{} {} not used: the check of a price that reacts a period late runs under OLS only, \
             and the method is {method} (beta.method), which takes the index's previous-period \
             return in.",
            unused.join(" and "),
            if unused.len() == 1 { "is" } else { "are" }
        )
    })
}
