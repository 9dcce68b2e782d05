//! The counts the summary gives and the notes a reviewer should see: securities left out and
//! why, attribute rows without prices, placeholder industry labels, an index that covers less
//! than the window. Apart from `mod.rs`, which computes the figures these describe.

mod attributes;
mod lists;
mod prices;

use lists::ids_where;
pub use lists::{case_twins, first_ids, first_of, shown_id};

use std::collections::BTreeMap;

use super::industries::IndustryResult;
use super::{
    securities, securities_count, Counts, Missing, NotEstimated, SecurityResult, UniverseInputs,
    FLAGS,
};
use crate::beta::diagnostics::PeerFlag;
use crate::beta::BetaMethod;

/// An industry resting on fewer securities than this is named in a note as fragile.
const FEW_SECURITIES: usize = 3;

/// The counts of the summary and the notes a reviewer should see.
pub(super) fn counts_and_notes(
    inputs: &UniverseInputs,
    (securities, industries): (&[SecurityResult], &[IndustryResult]),
    window: &crate::estimate::Window,
) -> (Counts, Vec<String>) {
    let panel = &inputs.panel;
    let strays: Vec<&str> = inputs
        .attributes
        .records()
        .iter()
        .filter(|r| panel.position(&r.security).is_none())
        .map(|r| r.security.as_str())
        .collect();
    // As in a case, window_start sets the window and lookback is not used; said when an
    // override names either (a file cannot write both), where one may have meant the other.
    let universe = &inputs.universe;
    let sets = |key: &str| {
        (universe.overrides.iter()).any(|o| o.split('=').next().map(str::trim) == Some(key))
    };
    let mut notes: Vec<String> = crate::case::sanity::window_note(&universe.settings.beta)
        .filter(|_| sets("beta.window_start") || sets("beta.lookback"))
        .into_iter()
        .chain(crate::case::sanity::unused_beta_notes(
            &universe.settings.beta,
        ))
        .collect();
    notes.splice(0..0, index_coverage_note(&inputs.index, window));
    notes.extend(crate::case::sanity::index_cadence_note(
        &inputs.index,
        window,
        (prices::panel_gap(securities), "median security"),
    ));
    // As a case notes it (found by review: `--set beta.frequency=daily` over a lookback of 60
    // made a window of 60 days without a word).
    notes.extend(crate::case::sanity::short_window_note(
        (window.start(), window.end()),
        window.period_ends().len(),
        &universe.settings.beta,
    ));
    notes.extend(attributes::thousands_notes(inputs));
    notes.extend(strays_note(inputs, &strays));
    notes.extend(named_notes(securities));
    let net = inputs.universe.settings.leverage.debt_measure
        == crate::capital::leverage::DebtMeasure::Net;
    notes.extend(attributes::cash_heavy_note(securities, net));
    notes.extend(ended_early_note(securities, window));
    notes.extend(prices::pattern_notes(securities));
    notes.extend(prices::same_returns_note(panel));
    notes.extend(attributes::missing_note(securities));
    notes.extend(attributes::units_note(securities));
    notes.extend(attributes::whole_file_notes(
        securities,
        &inputs.attributes.file.path,
    ));
    notes.extend(no_industry_note(securities));
    notes.extend(placeholder_industries_note(securities));
    notes.extend(label_twins_note(securities));
    notes.extend(encoded_twins_note(inputs.panel.securities()));
    let counts = counts(securities, strays.len());
    let method = inputs.universe.settings.beta.method;
    notes.extend(flagged_notes(
        securities,
        (&counts.flagged, counts.flagged_total),
        method,
    ));
    let threshold = inputs.universe.settings.beta.flag_lag_p_value;
    notes.extend(prices::late_response_note(securities, threshold));
    let operations = inputs.universe.settings.leverage.operations_beta;
    notes.extend(industry_notes(industries, operations));
    (counts, notes)
}

/// How many securities went where; `strays` attribute rows have no prices in the panel.
fn counts(securities: &[SecurityResult], strays: usize) -> Counts {
    let count = |f: &dyn Fn(&SecurityResult) -> bool| securities.iter().filter(|s| f(s)).count();
    Counts {
        securities: securities.len(),
        estimated: count(&|s| s.aggregated()),
        estimated_without_industry: count(&|s| s.aggregated() && s.industry.is_none()),
        not_estimated_total: count(&|s| s.not_estimated.is_some()),
        flagged: FLAGS
            .iter()
            .map(|f| (f.name(), count(&|s| s.aggregated() && s.flags.contains(f))))
            .collect(),
        flagged_total: count(&|s| s.aggregated() && !s.flags.is_empty()),
        not_estimated: NotEstimated::ALL
            .iter()
            .map(|&r| (r.name(), count(&|s| s.not_estimated == Some(r))))
            .collect(),
        excluded: count(&|s| s.estimate.is_some() && s.excluded_reason.is_some()),
        excluded_by_flag: (FLAGS.iter())
            .map(|f| {
                let excluded =
                    |s: &SecurityResult| s.estimate.is_some() && s.excluding_flags.contains(f);
                (f.name(), count(&excluded))
            })
            .collect(),
        missing: Missing::ALL
            .iter()
            .map(|&m| (m.name(), count(&|s| s.missing.contains(&m))))
            .collect(),
        unlevered: count(&|s| s.unlevered_beta.is_some()),
        attributes_not_in_panel: strays,
    }
}

/// The attribute rows whose security the panel does not hold, by id.
fn strays_note(inputs: &UniverseInputs, strays: &[&str]) -> Option<String> {
    (!strays.is_empty()).then(|| {
        format!(
            "{} in the attributes ({}) {} no prices in the panel and {} left out: {}{}",
            securities_count(strays.len()),
            inputs.attributes.file.path,
            if strays.len() == 1 { "has" } else { "have" },
            if strays.len() == 1 { "is" } else { "are" },
            first_ids(strays),
            case_twins(strays, inputs.panel.securities())
        )
    })
}

/// The securities without an industry, by id: listed, in no industry.
fn no_industry_note(securities: &[SecurityResult]) -> Option<String> {
    let without = ids_where(securities, |s| s.industry.is_none());
    (!without.is_empty()).then(|| {
        let (have, they, are, enter) = match without.len() {
            1 => ("has", "it", "is", "enters"),
            _ => ("have", "they", "are", "enter"),
        };
        format!(
            "{} {have} no industry (no attributes row or an empty label): {they} {are} listed in \
             securities.csv but {enter} no industry: {}",
            securities_count(without.len()),
            first_ids(&without)
        )
    })
}

/// The notes on securities that are aggregated although they carry a flag (none is listed in
/// `beta.exclude_flags`, or not theirs): how many by flag, and by name those that trade thinly,
/// whose OLS betas lean toward zero (Scholes and Williams 1977; Dimson 1979).
fn flagged_notes(
    securities: &[SecurityResult],
    (flagged, total): (&BTreeMap<&'static str, usize>, usize),
    method: BetaMethod,
) -> Vec<String> {
    if total == 0 {
        return Vec::new();
    }
    let by_flag: Vec<String> = (flagged.iter())
        .filter(|(_, &n)| n > 0)
        .map(|(flag, n)| format!("{flag} {n}"))
        .collect();
    let (carry, enter, them) = match total {
        1 => (
            "carries",
            "it enters its industry's figures, if it has one,",
            "it",
        ),
        _ => (
            "carry",
            "each enters its industry's figures, if it has one,",
            "them",
        ),
    };
    let mut notes = vec![format!(
        "{} estimated and not excluded {carry} a flag ({}): {enter} as estimated; the flags \
         column of securities.csv names {them}, and a flag listed in beta.exclude_flags leaves \
         its securities out.",
        securities_count(total),
        by_flag.join(", "),
    )];
    let thin = ids_where(securities, |s| {
        s.aggregated()
            && (s.flags.contains(&PeerFlag::ZeroReturns)
                || s.flags.contains(&PeerFlag::StalePrices))
    });
    if !thin.is_empty() {
        let remedy = match method {
            BetaMethod::Ols => {
                "; an OLS beta of a thinly traded share leans toward zero (Scholes and Williams \
                 1977; Dimson 1979): beta.method = \"dimson\" or \"scholes-williams\", or the \
                 flag in beta.exclude_flags, answers it"
            }
            _ => "",
        };
        notes.push(format!(
            "{} estimated and not excluded {} thinly (zero_returns or stale_prices): \
             {}{remedy}.",
            securities_count(thin.len()),
            if thin.len() == 1 { "trades" } else { "trade" },
            first_ids(&thin)
        ));
    }
    notes
}

/// The notes on industries whose figures are fragile: resting on fewer than
/// [`FEW_SECURITIES`] securities, or mostly on flagged ones.
fn industry_notes(industries: &[IndustryResult], operations: bool) -> Vec<String> {
    let list = |rows: Vec<String>| {
        let more = if rows.len() > 10 { ", …" } else { "" };
        format!("{}{more}", rows[..rows.len().min(10)].join(", "))
    };
    let few: Vec<String> = (industries.iter())
        .filter(|i| i.estimated > 0 && i.estimated < FEW_SECURITIES)
        .map(|i| format!("{} ({})", shown_id(&i.industry), i.estimated))
        .collect();
    let mostly: Vec<String> = (industries.iter())
        .filter(|i| i.estimated > 0 && 2 * i.flagged_total > i.estimated)
        .map(|i| {
            let industry = shown_id(&i.industry);
            format!("{industry} ({} of {})", i.flagged_total, i.estimated)
        })
        .collect();
    let mut notes = Vec::new();
    let none: Vec<String> = (industries.iter())
        .filter(|i| i.estimated == 0)
        .map(|i| {
            format!(
                "{} ({})",
                shown_id(&i.industry),
                securities_count(i.securities)
            )
        })
        .collect();
    if !none.is_empty() {
        notes.push(format!(
            "{} no security estimated and aggregated, and so no figure: {}.",
            if none.len() == 1 {
                "1 industry has".to_string()
            } else {
                format!("{} industries have", none.len())
            },
            list(none)
        ));
    }
    if !few.is_empty() {
        notes.push(format!(
            "{} on fewer than {FEW_SECURITIES} securities estimated and aggregated, so {}: {}.",
            if few.len() == 1 {
                "1 industry rests".to_string()
            } else {
                format!("{} industries rest", few.len())
            },
            if few.len() == 1 {
                "its figures say little about the industry"
            } else {
                "their figures say little about those industries"
            },
            list(few)
        ));
    }
    notes.extend(few_unlevered_note(industries, operations, &list));
    if !mostly.is_empty() {
        notes.push(format!(
            "{} {} on securities more than half of which carry a flag (flagged of aggregated): \
             {}.",
            mostly.len(),
            if mostly.len() == 1 {
                "industry's figures rest"
            } else {
                "industries' figures rest"
            },
            list(mostly)
        ));
    }
    notes
}

/// The note on industries with enough securities estimated but fewer than [`FEW_SECURITIES`]
/// with an unlevered beta (or a beta of the operations, when the industry's figure is of
/// those): the figure rests on those few (found by review: an industry's unlevered beta rested
/// on one security of seven without a word). `list` shortens a long list as the other notes do.
fn few_unlevered_note(
    industries: &[IndustryResult],
    operations: bool,
    list: &dyn Fn(Vec<String>) -> String,
) -> Option<String> {
    let unlevered_count = |i: &IndustryResult| {
        let summary = if operations {
            &i.operations
        } else {
            &i.unlevered
        };
        summary.as_ref().map_or(0, |u| u.dispersion.count)
    };
    let few_unlevered: Vec<String> = (industries.iter())
        .filter(|i| i.estimated >= FEW_SECURITIES && unlevered_count(i) < FEW_SECURITIES)
        .map(|i| {
            let industry = shown_id(&i.industry);
            format!("{industry} ({} of {})", unlevered_count(i), i.estimated)
        })
        .collect();
    if few_unlevered.is_empty() {
        return None;
    }
    Some(format!(
        "{} unlevered figures rest on fewer than {FEW_SECURITIES} securities, the other \
             securities estimated having no {} (a figure missing, securities.csv's `missing`, \
             or an unlevering issue, its `unlevering_issue`); those with one, of those \
             estimated: {}.",
        if few_unlevered.len() == 1 {
            "1 industry's".to_string()
        } else {
            format!("{} industries'", few_unlevered.len())
        },
        if operations {
            "beta of the operations"
        } else {
            "unlevered beta"
        },
        list(few_unlevered)
    ))
}

/// [`crate::case::sanity::index_coverage_note`], in a universe's words.
fn index_coverage_note(
    index: &crate::io::series::DataFile,
    window: &crate::estimate::Window,
) -> Option<String> {
    crate::case::sanity::index_coverage_note(index, window, "security", "dropped_index_missing")
}

/// Industry labels that usually stand for a missing classification in an export.
const PLACEHOLDER_LABELS: [&str; 9] = ["na", "n/a", "#n/a", "null", "none", "nan", "-", "--", "?"];

/// A note on industries whose label looks like a placeholder ("N/A", "-"): the label is used as
/// written, so its securities form an industry of their own, which the reader should know.
fn placeholder_industries_note(securities: &[SecurityResult]) -> Option<String> {
    let mut labels: Vec<&str> = securities
        .iter()
        .filter_map(|s| s.industry.as_deref())
        .filter(|l| PLACEHOLDER_LABELS.contains(&l.trim().to_lowercase().as_str()))
        .collect();
    labels.sort_unstable();
    labels.dedup();
    let count = securities
        .iter()
        .filter(|s| s.industry.as_deref().is_some_and(|l| labels.contains(&l)))
        .count();
    (count > 0).then(|| {
        let shown: Vec<String> = labels.iter().map(|l| format!("\"{l}\"")).collect();
        format!(
            "{} {} an industry label that usually marks a missing classification ({}); labels \
             are used as written, so each such label is an industry of its own: give a real \
             label, or leave the cell empty to keep {} out of every industry.",
            securities_count(count),
            if count == 1 { "has" } else { "have" },
            shown.join(", "),
            if count == 1 { "the security" } else { "them" },
        )
    })
}

/// The notes that name securities whose figures say more about the data than about a firm:
/// those not estimated as `flat_prices` or `copies_index`, and those with an unlevering issue.
fn named_notes(securities: &[SecurityResult]) -> Vec<String> {
    let not_estimated_as = |reason: NotEstimated, what: &str| {
        let ids = ids_where(securities, |s| s.not_estimated == Some(reason));
        (
            ids,
            format!("{what}, and so no estimate ({})", reason.name()),
        )
    };
    let mut named = vec![
        // Named too (found by review: counted, but named only in securities.csv).
        not_estimated_as(
            NotEstimated::TooFewObservations,
            "fewer usable returns in the window than beta.min_observations (listed late, \
             delisted early, or thinly traded)",
        ),
        not_estimated_as(
            NotEstimated::PriceJump,
            "a price that moves by more than a factor of 3 between two rows in the window (an \
             unadjusted split or a bad price)",
        ),
        not_estimated_as(
            NotEstimated::FlatPrices,
            "prices that never move over the window",
        ),
        not_estimated_as(
            NotEstimated::CopiesIndex,
            "returns the index explains with R² above 0.999, or the index's prices on every \
             date both have (the index itself or a fund tracking it)",
        ),
        // Named too (found by review: counted only); securities.csv's
        // `not_estimated_detail` says why for each.
        not_estimated_as(
            NotEstimated::EstimatorFailed,
            "returns the estimator could not fit under the settings (securities.csv's \
             not_estimated_detail says why)",
        ),
    ];
    for (issue, what) in securities::UNLEVERING_ISSUES {
        let ids = ids_where(securities, |s| s.unlevering_issue == Some(issue));
        named.push((ids, format!("{what} ({issue})")));
    }
    named
        .iter()
        .filter(|(ids, _)| !ids.is_empty())
        .map(|(ids, what)| {
            format!(
                "{} {} {what}: {}",
                securities_count(ids.len()),
                if ids.len() == 1 { "has" } else { "have" },
                first_ids(ids)
            )
        })
        .collect()
}

/// The securities estimated whose prices end before the window's last period and more than
/// `STALE_END_DAYS` before its end (the case's rules for a peer's file,
/// `case::sanity::file_end_notes`; a daily window's last day missed is not noted): delisted, suspended or merged, or a file
/// not brought up to date; their betas describe an earlier part of the window than the others'
/// and their attributes may describe a firm that no longer trades (found by review: five
/// securities that stopped 15 months before the valuation date were aggregated at their
/// attributes' market values, flagged only for too few observations).
fn ended_early_note(
    securities: &[SecurityResult],
    window: &crate::estimate::Window,
) -> Option<String> {
    let (opens, end) = (window.last_period_opens(), window.end());
    let days = crate::case::sanity::window::STALE_END_DAYS;
    let ended = ids_where(securities, |s| {
        s.estimate.is_some()
            && s.price_dates
                .is_some_and(|(_, last)| last <= opens && (end - last).num_days() > days)
    });
    let (has, their, describe) = match ended.len() {
        1 => ("has", "its", "its beta describes"),
        _ => ("have", "their", "their betas describe"),
    };
    (!ended.is_empty()).then(|| {
        format!(
            "{} estimated {has} no price in the window's last {days} days (to {end}; \
             last_price_date in securities.csv): delisted, suspended or merged, or {their} \
             prices not brought up to date; {describe} an earlier part of the window and \
             {their} attributes may not describe a firm that trades at the valuation date: {}",
            securities_count(ended.len()),
            first_ids(&ended)
        )
    })
}

/// A note on panel ids that differ only in how their accented letters are encoded (é as one
/// character or as e and a combining accent; Unicode's canonical composition, NFC, makes them
/// one text): ids are matched exactly, so each is a security of its own (found by review: two
/// such ids were listed as two securities with no word said). Only ids beyond ASCII can differ
/// so.
fn encoded_twins_note(ids: &[String]) -> Option<String> {
    use unicode_normalization::UnicodeNormalization;
    let mut by_text: BTreeMap<String, Vec<&str>> = BTreeMap::new();
    for id in ids.iter().filter(|id| !id.is_ascii()) {
        by_text.entry(id.nfc().collect()).or_default().push(id);
    }
    let twins: Vec<String> = (by_text.values())
        .filter(|group| group.len() > 1)
        .map(|group| {
            group
                .iter()
                .map(|id| format!("{id:?}"))
                .collect::<Vec<_>>()
                .join(" and ")
        })
        .collect();
    (!twins.is_empty()).then(|| {
        format!(
            "Panel ids that differ only in how accented letters are encoded are separate \
             securities, as ids are matched exactly: {}; write each id one way in every file.",
            twins.join("; ")
        )
    })
}

/// A note on industry labels that differ only in capitals or surrounding spaces ("Alpha Works"
/// and "alpha works"): labels are used as written, so each is an industry of its own, which
/// is seldom meant (found by review: split silently, while ids that differ so are noted).
fn label_twins_note(securities: &[SecurityResult]) -> Option<String> {
    let mut labels: Vec<&str> = securities
        .iter()
        .filter_map(|s| s.industry.as_deref())
        .collect();
    labels.sort_unstable();
    labels.dedup();
    let mut by_key: BTreeMap<String, Vec<&str>> = BTreeMap::new();
    for label in labels {
        use unicode_normalization::UnicodeNormalization;
        // Runs of white space (a no-break space too) as one space (found by review: labels
        // differing inside in spaces were not named, though the note says so).
        let spaced: Vec<&str> = label
            .split(char::is_whitespace)
            .filter(|w| !w.is_empty())
            .collect();
        let key: String = spaced.join(" ").nfc().collect();
        by_key.entry(key.to_lowercase()).or_default().push(label);
    }
    let twins: Vec<String> = (by_key.values())
        .filter(|group| group.len() > 1)
        .map(|group| {
            let quoted: Vec<String> = group.iter().map(|l| format!("{l:?}")).collect();
            quoted.join(" and ")
        })
        .collect();
    (!twins.is_empty()).then(|| {
        format!(
            "Industry labels that differ only in capitals, spaces or how accented letters are \
             encoded are separate industries, as labels are used as written: {}; write one label \
             for one industry.",
            twins.join("; ")
        )
    })
}

#[cfg(test)]
mod tests {
    use super::{case_twins, encoded_twins_note, first_ids};

    // Three ids read as three: one holding a comma or a quote is quoted, between typographic
    // quotes, so nothing in it is escaped.
    #[test]
    fn ids_holding_a_comma_or_a_quote_are_quoted() {
        assert_eq!(
            first_ids(&["SEC\"0032", "SEC,0031", "SEC0013"]),
            "“SEC\"0032”, “SEC,0031”, SEC0013"
        );
        let many: Vec<String> = (0..12).map(|i| format!("S{i}")).collect();
        let many: Vec<&str> = many.iter().map(String::as_str).collect();
        assert!(first_ids(&many).ends_with("S9, …"));
    }

    // An attribute id that a panel id matches but for capitals, or but for how its accented
    // letters are encoded (U+00E9, or e and U+0301: one text under Unicode's canonical
    // composition, Annex #15), is named beside its twin with the difference that separates them.
    #[test]
    fn twins_are_named_with_what_separates_them() {
        let panel = ["S02".to_string(), "Soci\u{e9}t\u{e9}".to_string()];
        let capitals = case_twins(&["s02"], &panel);
        assert!(
            capitals.contains("only in capitals (S02 for s02)"),
            "{capitals}"
        );
        let encoded = case_twins(&["Socie\u{301}te\u{301}"], &panel);
        assert!(
            encoded.contains("only in how accented letters are encoded (Soci\u{e9}t\u{e9} for"),
            "{encoded}"
        );
        let mixed = case_twins(&["s02", "Socie\u{301}te\u{301}"], &panel);
        assert!(mixed.contains("in capitals, in how accented"), "{mixed}");
        let both = case_twins(&["socie\u{301}te\u{301}"], &panel);
        assert!(both.contains("in capitals, in how accented"), "{both}");
        assert_eq!(case_twins(&["S03"], &panel), "");
        // A column of ids stored as numbers loses its leading zeros: 000101 read as 101.
        let panel = ["101".to_string(), "S02".to_string()];
        let zeros = case_twins(&["000101"], &panel);
        assert!(
            zeros.contains("only in leading zeros (101 for 000101)")
                && zeros.contains("store ids as text"),
            "{zeros}"
        );
        let several = case_twins(&["000101", "s02"], &panel);
        assert!(
            several.contains("only in capitals, in leading zeros, or in both"),
            "{several}"
        );
    }

    // Two ids that are one text under NFC (U+00E9, or e and U+0301) are named together; ASCII
    // ids and ids that merely share letters are not.
    #[test]
    fn panel_ids_differing_only_in_encoding_are_named() {
        let ids: Vec<String> = ["Soci\u{e9}t\u{e9}", "Socie\u{301}te\u{301}", "S01", "s01"]
            .iter()
            .map(|s| s.to_string())
            .collect();
        let note = encoded_twins_note(&ids).unwrap();
        assert!(
            // Rust's Debug quoting shows the combining accent as its escape.
            note.contains("\"Soci\u{e9}t\u{e9}\" and \"Socie\\u{301}te\\u{301}\""),
            "{note}"
        );
        assert_eq!(encoded_twins_note(&ids[2..]), None);
    }
}
