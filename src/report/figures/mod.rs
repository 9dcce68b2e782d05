//! Charts of a valuation, as SVG files, and the self-contained HTML report that shows them.
//!
//! A reviewer looks before reading: each peer's regression with its fitted line and band, the
//! peers' betas with their intervals, the rolling betas, the sensitivity grid as a heat map, the
//! Monte Carlo WACC as a histogram and the bridge to a claimed WACC as a waterfall. Every chart
//! draws numbers read from the [`Valuation`] (the library computes and stores each figure,
//! including the band, the histogram and the waterfall bars); nothing here computes one. The
//! charts are drawn with plotters' SVG backend in hurdle's own style ([`style`]); [`report`]
//! turns the memo and the charts into one HTML file.

pub mod axes;
pub mod betas;
pub mod canvas;
pub mod frame;
pub mod markdown;
pub mod reconciliation;
pub mod regression;
pub mod report;
pub mod sensitivity;
pub mod stability;
pub mod style;
pub mod uncertainty;

use serde::Serialize;

use crate::error::Result;
use crate::valuation::Valuation;

/// The folder, inside the output folder, that holds the charts.
pub const FOLDER: &str = "figures";

/// The charts' file names in the output folder (a regression chart's continues with its number
/// and the peer's slug; the betas and stability charts of many peers go on in parts 2, 3, … as
/// `betas-2.svg`, `stability-2.svg`, …); [`is_chart_name`] recognises exactly these.
pub const BETAS: &str = "figures/betas.svg";
pub const STABILITY: &str = "figures/stability.svg";
pub const BETAS_PART_PREFIX: &str = "figures/betas-";
pub const STABILITY_PART_PREFIX: &str = "figures/stability-";
pub const SENSITIVITY: &str = "figures/sensitivity.svg";
pub const UNCERTAINTY: &str = "figures/uncertainty.svg";
pub const RECONCILIATION: &str = "figures/reconciliation.svg";
pub const REGRESSION_PREFIX: &str = "figures/regression-";

/// Which chart a figure is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Kind {
    Regression,
    Betas,
    Stability,
    Sensitivity,
    Uncertainty,
    Reconciliation,
}

/// One drawn chart.
#[derive(Debug, Clone)]
pub struct Figure {
    pub kind: Kind,
    /// Path relative to the output folder, e.g. `figures/betas.svg`.
    pub file_name: String,
    pub title: String,
    /// What is drawn and from which figures (also inside the SVG, under the plot).
    pub caption: String,
    /// The peer of a regression chart.
    pub peer: Option<String>,
    /// The SVG document.
    pub svg: String,
}

/// Draws every chart the valuation supports, in the order the memo shows them: the peers'
/// betas, each peer's regression, the rolling betas, then the sensitivity grid, the Monte Carlo
/// histogram and the reconciliation waterfall when the valuation holds them.
pub fn draw_all(valuation: &Valuation) -> Result<Vec<Figure>> {
    use rayon::prelude::*;
    // Each chart is drawn on its own, so they are drawn side by side, kept in this order.
    // A chart of many peers comes in parts (the betas and the rolling betas), so each draw
    // gives one figure or several.
    type Draw<'a> = Box<dyn Fn() -> Result<Vec<Figure>> + Send + Sync + 'a>;
    let one = |figure: Result<Figure>| figure.map(|f| vec![f]);
    // The regression charts' drawn names, told apart once for all of them.
    let titles = regression::drawn_names(valuation);
    let mut draws: Vec<Draw> = vec![Box::new(|| betas::draw(valuation))];
    for (index, title) in titles.iter().enumerate() {
        draws.push(Box::new(move || {
            one(regression::draw(valuation, (index, title)))
        }));
    }
    // A rolling beta over time needs two windows at least; with none anywhere (a rolling window
    // as long as the estimation window) there is no chart, and the memo's stability section
    // gives each peer's reason.
    if stability::has_lines(valuation) {
        draws.push(Box::new(|| stability::draw(valuation)));
    }
    if let Some(grid) = &valuation.sensitivity {
        draws.push(Box::new(move || one(sensitivity::draw(valuation, grid))));
    }
    if let Some(uncertainty) = &valuation.uncertainty {
        draws.push(Box::new(move || one(uncertainty::draw(uncertainty))));
    }
    if let Some(bridge) = &valuation.reconciliation {
        draws.push(Box::new(move || one(reconciliation::draw(bridge))));
    }
    let drawn: Vec<Vec<Figure>> = draws.par_iter().map(|draw| draw()).collect::<Result<_>>()?;
    Ok(drawn.into_iter().flatten().collect())
}

/// A link to a chart, as the memo template sees it.
#[derive(Debug, Clone, Default, Serialize)]
pub struct Link {
    pub path: String,
    pub title: String,
    pub caption: String,
    pub peer: Option<String>,
}

/// The charts by kind, for the memo template (`figures.betas.path`, `figures.regression[i]`);
/// every key is present, `null` or empty when the chart was not drawn. A chart in parts has its
/// first part under its own key and the others, in order, under `…_continued`.
#[derive(Debug, Clone, Default, Serialize)]
pub struct Index {
    pub betas: Option<Link>,
    pub betas_continued: Vec<Link>,
    pub regression: Vec<Link>,
    pub stability: Option<Link>,
    pub stability_continued: Vec<Link>,
    pub sensitivity: Option<Link>,
    pub uncertainty: Option<Link>,
    pub reconciliation: Option<Link>,
}

/// The index of `figures`.
pub fn index(figures: &[Figure]) -> Index {
    let mut index = Index::default();
    for figure in figures {
        let link = Link {
            path: figure.file_name.clone(),
            title: figure.title.clone(),
            caption: figure.caption.clone(),
            peer: figure.peer.clone(),
        };
        match figure.kind {
            Kind::Regression => index.regression.push(link),
            Kind::Betas if index.betas.is_some() => index.betas_continued.push(link),
            Kind::Betas => index.betas = Some(link),
            Kind::Stability if index.stability.is_some() => index.stability_continued.push(link),
            Kind::Stability => index.stability = Some(link),
            Kind::Sensitivity => index.sensitivity = Some(link),
            Kind::Uncertainty => index.uncertainty = Some(link),
            Kind::Reconciliation => index.reconciliation = Some(link),
        }
    }
    index
}

/// Whether `name` (relative to the output folder) is named as `hurdle run` names a chart: one
/// of the fixed names above, a later part `figures/betas-N.svg` or `figures/stability-N.svg`, or
/// `figures/regression-NN-<slug>.svg`. A run takes away such a file of an earlier run that it
/// does not draw again (so a smaller peer set leaves no part of a larger one behind); any other
/// file in the folder is left alone.
pub fn is_chart_name(name: &str) -> bool {
    if [BETAS, STABILITY, SENSITIVITY, UNCERTAINTY, RECONCILIATION].contains(&name) {
        return true;
    }
    let part = [BETAS_PART_PREFIX, STABILITY_PART_PREFIX]
        .iter()
        .find_map(|prefix| name.strip_prefix(prefix)?.strip_suffix(".svg"));
    if let Some(number) = part {
        // As a run writes them: no leading zero (`betas-2.svg`, never `betas-02.svg`).
        return number.parse::<usize>().is_ok_and(|n| n >= 2)
            && number.bytes().all(|b| b.is_ascii_digit())
            && !number.starts_with('0');
    }
    let Some(rest) = name
        .strip_prefix(REGRESSION_PREFIX)
        .and_then(|rest| rest.strip_suffix(".svg"))
    else {
        return false;
    };
    let digits = rest.bytes().take_while(u8::is_ascii_digit).count();
    let slug = &rest[digits..];
    digits >= 2
        && (slug.is_empty()
            || slug.strip_prefix('-').is_some_and(|s| {
                s.bytes()
                    .all(|b| b.is_ascii_lowercase() || b.is_ascii_digit() || b == b'-')
            }))
}

/// The file name of peer `index`'s (from 0) regression chart: `figures/regression-NN-<slug>.svg`
/// with NN its place in the case, or `figures/regression-NN.svg` when the name leaves no slug
/// (a name written in Greek, Cyrillic or CJK letters, say). NN alone tells the charts apart.
pub fn regression_file_name(index: usize, name: &str) -> String {
    match slug(name) {
        slug if slug.is_empty() => format!("{REGRESSION_PREFIX}{:02}.svg", index + 1),
        slug => format!("{REGRESSION_PREFIX}{:02}-{slug}.svg", index + 1),
    }
}

/// A file-name part from a peer's name: lower-case ASCII letters and digits, other runs of
/// characters as one hyphen, at most 40 characters; empty when the name has no Latin letter or
/// digit.
pub fn slug(name: &str) -> String {
    let mut out = String::new();
    for c in name.chars() {
        if c.is_ascii_alphanumeric() {
            out.push(c.to_ascii_lowercase());
        } else if let Some(letters) = latin_letters(c) {
            out.push_str(letters);
        } else if !out.ends_with('-') && !out.is_empty() {
            out.push('-');
        }
    }
    let mut out: String = out.trim_end_matches('-').chars().take(40).collect();
    while out.ends_with('-') {
        out.pop();
    }
    out
}

/// The plain letters a file name writes for a Latin letter with a diacritic or a ligature
/// (Ø → o, ß → ss), so `Wexcombe-Ørsby` keeps its letters in a chart's file name; `None` for
/// anything else.
fn latin_letters(c: char) -> Option<&'static str> {
    const FOLDS: [(&str, &str); 19] = [
        ("àáâãäåāăą", "a"),
        ("çćĉċč", "c"),
        ("ďđð", "d"),
        ("èéêëēĕėęě", "e"),
        ("ĝğġģ", "g"),
        ("ĥħ", "h"),
        ("ìíîïĩīĭįı", "i"),
        ("ĵ", "j"),
        ("ķĸ", "k"),
        ("ĺļľŀł", "l"),
        ("ñńņňŉŋ", "n"),
        ("òóôõöøōŏő", "o"),
        ("ŕŗř", "r"),
        ("śŝşšșſ", "s"),
        ("ţťŧț", "t"),
        ("ùúûüũūŭůűų", "u"),
        ("ŵ", "w"),
        ("ýÿŷ", "y"),
        ("źżž", "z"),
    ];
    const LIGATURES: [(char, &str); 5] = [
        ('ß', "ss"),
        ('æ', "ae"),
        ('œ', "oe"),
        ('þ', "th"),
        ('ĳ', "ij"),
    ];
    let lower = c.to_lowercase().next()?;
    if let Some((_, letters)) = LIGATURES.iter().find(|(l, _)| *l == lower) {
        return Some(letters);
    }
    let (_, letter) = FOLDS.iter().find(|(set, _)| set.contains(lower))?;
    Some(letter)
}

/// An estimator's name as a reader writes it.
pub fn method_name(method: crate::beta::BetaMethod) -> &'static str {
    match method {
        crate::beta::BetaMethod::Ols => "OLS",
        crate::beta::BetaMethod::Dimson => "Dimson",
        crate::beta::BetaMethod::ScholesWilliams => "Scholes–Williams",
    }
}

/// A kind of standard errors as a reader writes it.
pub fn std_errors_name(kind: crate::stats::least_squares::StdErrors) -> &'static str {
    match kind {
        crate::stats::least_squares::StdErrors::Classical => "classical",
        crate::stats::least_squares::StdErrors::Hc1 => "HC1 robust",
        crate::stats::least_squares::StdErrors::NeweyWest => "Newey–West",
    }
}

/// "per month", "per week", … for axis titles.
pub fn per_period(valuation: &Valuation) -> &'static str {
    match crate::report::format::label(&valuation.sampling.frequency).as_str() {
        "daily" => "per day",
        "weekly" => "per week",
        "quarterly" => "per quarter",
        _ => "per month",
    }
}

#[cfg(test)]
mod tests {
    use super::{is_chart_name, slug};

    #[test]
    fn chart_names_are_recognised_and_nothing_else() {
        for name in [
            "figures/betas.svg",
            "figures/regression-01-brenvale-fluid-systems.svg",
            "figures/regression-12.svg",
            "figures/reconciliation.svg",
            "figures/betas-2.svg",
            "figures/stability-12.svg",
        ] {
            assert!(is_chart_name(name), "{name}");
        }
        for name in [
            "figures/notes.txt",
            "figures/my-betas.svg",
            "figures/regression-1-a.svg",
            "figures/regression-01-Upper.svg",
            "figures/sub/betas.svg",
            "figures/stability-1.svg",
            "figures/stability-x.svg",
            "figures/betas-+2.svg",
            "figures/betas-02.svg",
            "betas.svg",
            "report.html",
        ] {
            assert!(!is_chart_name(name), "{name}");
        }
    }

    #[test]
    fn slugs_are_safe_file_names() {
        assert_eq!(slug("Brenvale Fluid Systems"), "brenvale-fluid-systems");
        assert_eq!(slug("  Ö&Co. (holdings)"), "o-co-holdings");
        assert_eq!(slug("Wexcombe-Ørsby Straße"), "wexcombe-orsby-strasse");
        assert_eq!(slug("Żółw Ýmir"), "zolw-ymir");
        // Letters of Icelandic, Maltese, Esperanto, Latvian, Welsh, Sami and Dutch names, by
        // their usual Latin transcriptions (from memory): ð d, ħ h, ĵ j, ķ k, ŵ w, ŋ n, ĳ ij.
        assert_eq!(slug("Ðaðir Ħamrun Ĵaŭdo"), "dadir-hamrun-jaudo");
        assert_eq!(slug("Ķekava Ŵyn Ŋaat Ĳssel"), "kekava-wyn-naat-ijssel");
        assert_eq!(slug("***"), "");
    }

    // README: `regression-NN-<peer>.svg`, NN the peer's place in the case from 01. A name
    // without a Latin letter or digit (Greek, CJK) has no slug: the file is `regression-NN.svg`,
    // not `regression-NN-.svg` (found by review), still a chart's name to a later run.
    #[test]
    fn a_name_without_latin_letters_gives_the_place_alone() {
        use super::regression_file_name;
        assert_eq!(
            regression_file_name(0, "Brenvale Fluid Systems"),
            "figures/regression-01-brenvale-fluid-systems.svg"
        );
        assert_eq!(
            regression_file_name(9, "Ωμέγα Δέλτα"),
            "figures/regression-10.svg"
        );
        assert_eq!(
            regression_file_name(10, "霧港測器計装"),
            "figures/regression-11.svg"
        );
        assert_eq!(
            regression_file_name(11, "Ωmega Δelta"),
            "figures/regression-12-mega-elta.svg"
        );
        for name in [
            "figures/regression-10.svg",
            "figures/regression-12-mega-elta.svg",
        ] {
            assert!(is_chart_name(name), "{name}");
        }
    }
}
