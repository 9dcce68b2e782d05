//! The words of the universe's chart: its legend, caption and description, and its row
//! labels set in two lines (apart from `chart.rs`, which draws).

use crate::report::figures::frame::Mark;
use crate::report::figures::style::{BAND, INK, MUTED, NEUTRAL, PRIMARY};
use crate::report::format::fixed;
use crate::stats::Aggregation;
use crate::universe::UniverseResult;

use super::{Drawn, Row, BAND_FROM, INTERVAL_FROM};

/// The legend: the marks this part draws.
pub(super) fn legend(rows: &[Row], drawn: Drawn) -> Vec<(Mark, String)> {
    let counts: Vec<usize> = rows.iter().map(|r| drawn.count(r.industry)).collect();
    let short = drawn.short();
    let mut items = Vec::new();
    if counts.iter().any(|&n| n >= BAND_FROM) {
        items.push((Mark::Swatch(BAND), format!("{short}, interquartile range")));
    }
    if (rows.iter()).any(|r| {
        drawn
            .summary(r.industry)
            .is_some_and(|s| s.median_interval.is_some())
    }) {
        items.push((Mark::Interval(PRIMARY), "median's 95% CI".to_string()));
    }
    if counts.iter().any(|&n| n >= INTERVAL_FROM) {
        items.push((Mark::Dot(PRIMARY), format!("median {short}")));
    }
    if counts.iter().any(|&n| (1..INTERVAL_FROM).contains(&n)) {
        items.push((
            Mark::Dot(NEUTRAL),
            format!("median {short} of under six, no CI"),
        ));
    }
    if rows
        .iter()
        .any(|r| drawn.levered_median(r.industry).is_some())
    {
        items.push((Mark::Ring(MUTED), drawn.ring()));
    }
    if drawn.aggregation != Aggregation::Median
        && rows.iter().any(|r| r.industry.unlevered_beta.is_some())
    {
        items.push((
            Mark::Triangle(INK),
            format!("{} {short}, relevered by a case", drawn.aggregation.noun()),
        ));
    }
    items
}

/// The width of `text` at the label size in units of the average character (0.6 em, see
/// `frame::CHAR_EM`): East Asian wide characters count about 1.7 (a full em), capitals 1.2.
fn label_units(text: &str) -> f64 {
    text.chars()
        .map(|c| match c {
            '\u{1100}'..='\u{115F}'
            | '\u{2E80}'..='\u{A4CF}'
            | '\u{AC00}'..='\u{D7A3}'
            | '\u{F900}'..='\u{FAFF}'
            | '\u{FE30}'..='\u{FE4F}'
            | '\u{FF00}'..='\u{FF60}'
            | '\u{FFE0}'..='\u{FFE6}'
            | '\u{20000}'..='\u{3FFFD}' => 1.7,
            c if c.is_uppercase() => 1.2,
            _ => 1.0,
        })
        .sum()
}

/// A label set in at most two lines of `width` units ([`label_units`]), broken between words;
/// the count in brackets is never broken or cut, and ends the last line. What does not fit is
/// cut at the end of the last line (a word longer than a line is cut too). The second element
/// says whether anything was cut.
pub(super) fn label_lines(label: &str, width: f64) -> (Vec<String>, bool) {
    let (name, count) = match label.rsplit_once(" (") {
        Some((name, count)) => (name, format!("({count}")),
        None => (label, String::new()),
    };
    let fits = |line: &str| label_units(line) <= width;
    let tokens = name.split_whitespace().map(str::to_string);
    let mut lines: Vec<String> = Vec::new();
    for token in tokens.chain((!count.is_empty()).then(|| count.clone())) {
        match lines.last_mut() {
            Some(line) if fits(&format!("{line} {token}")) => {
                line.push(' ');
                line.push_str(&token);
            }
            _ => lines.push(token),
        }
    }
    if lines.len() <= 2 && lines.iter().all(|l| fits(l)) {
        return (lines, false);
    }
    // Cut: the first line as it is (shortened if one word overruns it), the rest on the
    // second, shortened, with the count after it.
    let shorten = |text: &str, tail: &str| {
        let mut kept: String = text.to_string();
        while !kept.is_empty() && !fits(&format!("{}…{tail}", kept.trim_end())) {
            kept.pop();
        }
        format!("{}…{tail}", kept.trim_end())
    };
    let first = match fits(&lines[0]) || lines[0] == count {
        true => lines[0].clone(),
        false => shorten(&lines[0], ""),
    };
    let rest = lines[1..].join(" ");
    let rest = rest
        .strip_suffix(count.as_str())
        .unwrap_or(&rest)
        .trim_end();
    let tail = match count.is_empty() {
        true => String::new(),
        false => format!(" {count}"),
    };
    let second = match fits(&format!("{rest}{tail}")) {
        true => format!("{rest}{tail}"),
        false => shorten(rest, &tail),
    };
    (vec![first, second], true)
}

/// The chart's caption: what each mark is and which columns of `industries.csv` it draws.
pub(super) fn caption(result: &UniverseResult, drawn: Drawn) -> String {
    let betas = drawn.betas();
    let stem = drawn.stem();
    let figure = match drawn.aggregation {
        Aggregation::Median => "the median, the figure a case would relever".to_string(),
        other => format!(
            "the {} (triangle; leverage.aggregation), the figure a case would relever",
            other.noun()
        ),
    };
    let (ring, ring_column) = match drawn.adjustment {
        Some(name) => (
            format!(
                "the median of the {name}-adjusted levered betas (the betas unlevered) of all its \
                 estimated securities"
            ),
            "median_shrunk_beta",
        ),
        None => (
            "the median levered β of all its estimated securities".to_string(),
            "median_beta",
        ),
    };
    format!(
        "For each industry, the median of its securities' {betas} (dot; lighter when fewer than \
         six, which give no interval) with the median's distribution-free confidence interval \
         of at least 95% (whisker), the interquartile range of those betas (band, from four) \
         and {ring} (ring); in brackets, how many of the industry's securities the {betas} rest \
         on. Unlevered by {}; the industry figure is {figure}, and the rows run from the \
         highest figure down{}. The grey line marks β = 1, the index; a mark beyond the axis \
         is drawn at its edge and its value written there, after its symbol (● the median, ○ \
         the ring, ▲ the triangle) or its name (whisker, band). Figures: industries.csv (median_{stem}, \
         median_{stem}_ci_low, median_{stem}_ci_high, lower_quartile_{stem}, \
         upper_quartile_{stem}, {stem}_count, securities, {ring_column}, unlevered_beta).",
        result.formula_source,
        match result.peer_set.is_some() {
            true => ", after the listed peer set (its figures by the same rules)",
            false => "",
        },
    )
}

/// Every drawn row in words, for the SVG's description (a screen reader's table).
pub(super) fn data_summary(rows: &[Row], labels: &[String], drawn: Drawn) -> String {
    (rows.iter().zip(labels))
        .map(|(r, name)| {
            let levered =
                (drawn.levered_median(r.industry)).map_or("none".to_string(), |v| fixed(v, 3));
            let Some(s) = drawn.summary(r.industry) else {
                return format!("{name}: no {}; {} {levered}.", drawn.betas(), drawn.ring());
            };
            let d = &s.dispersion;
            let interval = s.median_interval.map_or(String::new(), |[low, high]| {
                format!(" (95% CI {} to {})", fixed(low, 3), fixed(high, 3))
            });
            let figure = r
                .industry
                .unlevered_beta
                .map_or("none".to_string(), |v| fixed(v, 3));
            format!(
                "{name}: median {}{interval}, quartiles {} to {}, {} {levered}, industry figure \
                 {figure}.",
                fixed(d.median, 3),
                fixed(d.lower_quartile, 3),
                fixed(d.upper_quartile, 3),
                drawn.ring(),
            )
        })
        .collect::<Vec<_>>()
        .join(" ")
}

#[cfg(test)]
mod tests {
    use super::*;

    // Worked by hand at a width of 20 units (an average character 1, a capital 1.2, a CJK
    // character 1.7): the count always ends the last line; a third line's words are cut.
    #[test]
    fn labels_take_two_lines_and_keep_their_count() {
        let (lines, cut) = label_lines("Pumps and flow control (14 of 14)", 20.0);
        assert_eq!(lines, ["Pumps and flow", "control (14 of 14)"]);
        assert!(!cut);
        // A name that fits one line but not with its count: the count takes the second.
        let (lines, cut) = label_lines("Water and power utilities (7 of 7)", 26.0);
        assert_eq!(lines, ["Water and power utilities", "(7 of 7)"]);
        assert!(!cut);
        let (lines, cut) = label_lines(
            "Diversified financials consumer finance western europe (3 of 9)",
            20.0,
        );
        assert_eq!(lines.len(), 2);
        assert!(lines[1].ends_with("… (3 of 9)"), "{lines:?}");
        assert!(cut);
        assert!(lines.iter().all(|l| label_units(l) <= 20.0), "{lines:?}");
        // Twelve CJK characters are 20.4 units: one is cut.
        let (lines, cut) = label_lines("電子部品電子部品電子部品 (2 of 2)", 20.0);
        assert!(
            cut && lines.iter().all(|l| label_units(l) <= 20.0),
            "{lines:?}"
        );
        assert_eq!(label_units("AB"), 2.4);
    }
}
