//! `summary.md` of `hurdle universe`: what was run (the window, the estimator, the flags and
//! the exclusion rule, the overrides), the industry table for people, the counts, the notes and
//! the cautions. Rendered from the [`UniverseResult`]; computes nothing.

use std::fmt::Write as _;

use super::{estimated_count, excluded_by_flag, nonzero_counts};
use crate::report::format::{fixed, label, plain_text, table_cell};
use crate::universe::industries::IndustryResult;
use crate::universe::UniverseResult;

/// A figure to three decimals, or a dash.
fn shown(value: Option<f64>) -> String {
    value
        .filter(|v| v.is_finite())
        .map_or_else(|| "–".to_string(), |v| fixed(v, 3))
}

/// The industry table for people: counts, the levered betas' median and quartiles, the median
/// D/E and the unlevered aggregates.
fn industry_table(out: &mut String, r: &UniverseResult) {
    table_header(out, r);
    for i in &r.industries {
        table_row(out, i);
    }
}

/// The industry table's header and rule.
fn table_header(out: &mut String, r: &UniverseResult) {
    let s = &r.settings;
    let _ = writeln!(
        *out,
        "| Industry | Securities | Estimated | Excluded | Not estimated | Flagged | Median β | β quartiles | Median D/E | Median βU | βU quartiles | Industry βU{} ({}) |",
        // The industry's figure is of the operations' betas when asked for, while the median
        // beside it is of the unlevered betas (found by review: the header did not say so).
        if s.leverage.operations_beta {
            " of operations"
        } else {
            ""
        },
        label(&s.leverage.aggregation)
    );
    out.push_str("|---|---:|---:|---:|---:|---:|---:|---|---:|---:|---|---:|\n");
}

/// One row of the industry table (an industry, or the listed peer set).
fn table_row(out: &mut String, i: &IndustryResult) {
    let levered = i.levered.as_ref();
    // The quartiles of the levered and (found by review: asked for by a reviewer) the
    // unlevered betas.
    let quartiles = |summary: Option<&crate::universe::industries::Summary>| {
        summary.map_or_else(
            || "–".to_string(),
            |l| {
                format!(
                    "{} – {}",
                    fixed(l.dispersion.lower_quartile, 3),
                    fixed(l.dispersion.upper_quartile, 3)
                )
            },
        )
    };
    let _ = writeln!(
        *out,
        "| {} | {} | {} | {} | {} | {} | {} | {} | {} | {} | {} | {} |",
        table_cell(plain_text(i.industry.clone())),
        i.securities,
        i.estimated,
        i.excluded_total,
        i.not_estimated_total,
        i.flagged_total,
        shown(levered.map(|l| l.dispersion.median)),
        quartiles(levered),
        shown(i.median_debt_to_equity),
        shown(i.unlevered.as_ref().map(|u| u.dispersion.median)),
        quartiles(i.unlevered.as_ref()),
        shown(i.unlevered_beta),
    );
}

/// The listed peer set beside its home industry: its row, the industries its members carry,
/// and where its unlevered beta lies among the home industry's.
fn peer_set_section(out: &mut String, r: &UniverseResult) {
    let Some(p) = &r.peer_set else { return };
    let _ = writeln!(out, "\n## The listed peer set\n");
    let mut industries: Vec<String> = (p.industries.iter())
        .map(|(label, n)| format!("{} {n}", plain_text(label.clone())))
        .collect();
    if p.without_industry > 0 {
        industries.push(format!("{} in no industry", p.without_industry));
    }
    let ids = |list: &[String]| {
        crate::universe::notes::first_ids(&list.iter().map(String::as_str).collect::<Vec<_>>())
    };
    let left_out = match p.left_out.as_slice() {
        [] => String::new(),
        list => format!(" ({} not: {})", list.len(), plain_text(ids(list))),
    };
    let _ = writeln!(
        out,
        "{} listed in universe.peer_set: {}; {} of them estimated and not excluded{left_out}. \
         Their industries: {}.\n",
        crate::universe::securities_count(p.securities.len()),
        plain_text(ids(&p.securities)),
        p.figures.estimated,
        industries.join(", ")
    );
    table_header(out, r);
    table_row(out, &p.figures);
    let _ = writeln!(out, "\n{}", placed(r, p));
}

/// Where the peer set's figure lies among its home industry's, in words.
fn placed(r: &UniverseResult, p: &crate::universe::peer_set::PeerSetResult) -> String {
    let leverage = &r.settings.leverage;
    let what = match leverage.operations_beta {
        true => "beta of the operations",
        false => "unlevered beta",
    };
    let tie = match p.tied_with.as_slice() {
        [] => String::new(),
        others => format!(
            " (as many of the set carry {}; the first label in byte order is taken)",
            plain_text(others.join(", "))
        ),
    };
    match (
        &p.home_industry,
        p.figures.unlevered_beta,
        p.share_of_home_below,
    ) {
        (Some(home), Some(own), Some(share)) => {
            let home = plain_text(home.clone());
            // The share's reach when the set's own figures are among the home industry's
            // (found by review: "either end" could not show).
            let reach = match p.share_of_home_below_range {
                Some([low, high]) if low == high => format!(
                    " The set's own {} figures are all of them, so the share can only be {}.",
                    p.home_members,
                    crate::report::format::percent(low, 0)
                ),
                Some([low, high]) => format!(
                    " The set's own {} figures are among them, so the share can only lie \
                     between {} and {}: read it against that range, not against 0% and 100%.",
                    p.home_members,
                    crate::report::format::percent(low, 0),
                    crate::report::format::percent(high, 0)
                ),
                None => String::new(),
            };
            format!(
                "The set's {what} ({}) is {}; its home industry, {home}{tie}, has {}, and {} of \
             {home}'s {} figures lie below the set's (ties count half): a set drawn from its \
             industry's middle lies near 50%, one near either end of what the share can reach \
             says its peers are not typical of their industry.{reach}",
                label(&leverage.aggregation),
                fixed(own, 3),
                shown(p.home_unlevered_beta),
                crate::report::format::percent(share, 0),
                p.home_count
            )
        }
        (None, _, _) => "No listed security has an industry label, so there is no industry to \
                         set the peer set beside."
            .into(),
        _ => format!("The set, or its home industry, has no {what} to compare."),
    }
}

/// What the betas were measured against and from which files, in words: the index by name and
/// file, the risk-free series, the panel and its layout, the attributes and the column that
/// groups the industries (found by review: the summary named none of them, only "the index").
/// The files' SHA-256 are in `result.json`.
fn inputs(r: &UniverseResult) -> String {
    let f = &r.files;
    let a = &r.settings.attributes;
    // A file of its own, or a wide table's column (`market.csv`, column `Index`).
    let place = |file: &crate::io::series::DataFile| match file.places.is_empty() {
        true => code(&file.path),
        false => format!("{}, column {}", code(&file.path), code(&file.column)),
    };
    let risk_free = match &f.risk_free {
        Some(series) => format!("risk-free series {}", place(series)),
        None => "no risk-free series".to_string(),
    };
    format!(
        "Inputs: index {} ({}, {} to {}); {risk_free}; prices {} ({} layout, {} securities); \
         attributes {} ({} rows), industries from its column {}. Each file's SHA-256 is in \
         result.json.",
        code(&r.settings.market.index.name),
        place(&f.index),
        f.index.first_date,
        f.index.last_date,
        code(&f.panel.path),
        label(&f.panel.layout),
        f.panel.securities,
        code(&f.attributes.path),
        f.attributes.rows,
        code(&a.industry_column),
    )
}

/// Text as a code span, so that Markdown shows a name, path or override as written.
fn code(text: &str) -> String {
    crate::report::format::code_span(text.to_string())
}

/// The settings that shape the betas beyond the estimator, in words: the returns, the
/// adjustment (the table's levered β is the raw one, βU is unlevered from the adjusted one) and
/// the debt betas.
fn return_and_beta_settings(r: &UniverseResult) -> String {
    let s = &r.settings;
    let returns = format!(
        "Returns: {}, {}.",
        label(&s.beta.returns),
        if r.window.excess_returns {
            "in excess of the risk-free series"
        } else {
            "not in excess of a risk-free rate (no risk-free series)"
        }
    );
    let adjustment = match (s.beta.adjustment, &r.vasicek_prior) {
        (crate::beta::Adjustment::Blume, _) => format!(
            "Adjustment: Blume, weight {} on the raw beta; the table's levered β is the raw \
             estimate and βU is unlevered from the adjusted beta.",
            fixed(s.beta.blume_weight, 2)
        ),
        (crate::beta::Adjustment::Vasicek, Some(prior)) => format!(
            "Adjustment: Vasicek, toward a {} prior of mean {} and variance {}; the table's \
             levered β is the raw estimate and βU is unlevered from the shrunk beta.",
            prior.source,
            fixed(prior.mean, 3),
            fixed(prior.variance, 4)
        ),
        (crate::beta::Adjustment::Vasicek, None) => {
            "Adjustment: Vasicek, but no security was estimated to give it a prior.".to_string()
        }
        (crate::beta::Adjustment::None, _) => {
            "Adjustment: none; βU is unlevered from the raw beta.".to_string()
        }
    };
    let debt = match s.leverage.debt_beta_source {
        crate::capital::leverage::DebtBetaSource::Given => format!(
            "Debt betas: {} for every security{}.",
            fixed(s.leverage.debt_beta, 2),
            if s.leverage.formula == crate::capital::leverage::Formula::Hamada {
                " (Hamada, which assumes riskless debt, does not use it)"
            } else {
                ""
            }
        ),
        _ => "Debt betas: none (riskless debt).".to_string(),
    };
    format!("{returns} {adjustment} {debt}")
}

/// The flags' thresholds, the exclusion rule, the staleness limit and the overrides applied, in
/// words (found by review: the summary said how many were excluded but not by which flags, and
/// read as if staleness had been measured when no limit was set).
fn flags_and_overrides(r: &UniverseResult) -> String {
    let b = &r.settings.beta;
    let pct = crate::report::format::exact_percent;
    let excluded: Vec<&str> = b.exclude_flags.iter().map(|f| f.name()).collect();
    let rule = match excluded.as_slice() {
        [] => "none leaves a security out of the aggregates (beta.exclude_flags is empty)".into(),
        names => format!(
            "{} {} a security out of the aggregates (beta.exclude_flags)",
            names.join(", "),
            if names.len() == 1 { "leaves" } else { "leave" }
        ),
    };
    let stale = match b.max_stale_days {
        Some(days) => format!(
            "Staleness limit: a price older than {days} calendar days at a period's end is \
             dropped as stale."
        ),
        None => "Staleness limit: none (beta.max_stale_days), so no price is dropped as stale: \
                 stale_share is 0 for every security and stale_prices cannot be raised; \
                 repeated prices still show in zero_return_share and zero_returns."
            .into(),
    };
    let lag = match b.method {
        crate::beta::BetaMethod::Ols => format!(
            ", lagged_response for a positive slope on the index's return of the period before \
             with a two-sided p-value below {} (the regression on the index's current and \
             previous-period returns, Dimson 1979 with one lag: lag_slope and its statistics in \
             securities.csv)",
            crate::error::compact(b.flag_lag_p_value)
        ),
        _ => String::new(),
    };
    let overrides = match r.universe.overrides.as_slice() {
        [] => String::new(),
        list => {
            let shown: Vec<String> = list.iter().map(|o| code(o)).collect();
            format!(
                " Overrides applied to the universe file: {} (result.json records them).",
                shown.join(", ")
            )
        }
    };
    format!(
        "Flags: too_few_observations below {} of the window's periods with a return (a \
         security below beta.min_observations returns is not estimated, counted under the same \
         name), low_r_squared below an R² of {}, stale_prices above {} of periods stale, \
         zero_returns above {} of returns exactly zero{lag}; {rule}. {stale}{overrides}",
        pct(b.flag_observations_share),
        crate::error::compact(b.flag_r_squared_floor),
        pct(b.flag_stale_share),
        pct(b.flag_zero_return_share),
    )
}

/// `summary.md`: what was run, the industry table, the counts and the cautions.
pub(super) fn summary(r: &UniverseResult, charts: &[super::chart::Chart]) -> String {
    let s = &r.settings;
    let mut out = String::new();
    // The user's title shown as written (found by review: `*draft*` was emphasised and a
    // closing ` #` dropped).
    let title = if r.universe.title.is_empty() {
        "Industry betas".to_string()
    } else {
        plain_text(r.universe.title.clone())
    };
    let _ = writeln!(out, "# {title}\n");
    let _ = writeln!(
        out,
        "Valuation date {}. Return window {} to {} ({} {} periods, at least {} usable returns \
         per security). Estimator: {}; standard errors: {}. Unlevering: {}, with each firm's own \
         D/E ({} debt){}. Industry unlevered beta: the {}{}.\n",
        r.universe.valuation_date,
        r.window.window_start,
        r.window.window_end,
        r.window.periods,
        label(&r.window.frequency),
        r.window.min_observations,
        r.estimator.method_description,
        r.estimator.std_errors_description,
        r.formula_source,
        label(&s.leverage.debt_measure),
        // Harris–Pringle has no tax term (found by review: "and tax rate" said otherwise).
        match s.leverage.formula.uses_tax_rate() {
            true => " and tax rate",
            false => ", no tax rate (the formula has none)",
        },
        aggregation_words(s.leverage.aggregation, s.leverage.trim_fraction),
        if s.leverage.operations_beta {
            " of the betas of the operations (cash at a beta of zero)"
        } else {
            " of the unlevered betas"
        },
    );
    let _ = writeln!(out, "{}\n", inputs(r));
    let _ = writeln!(out, "{}\n", return_and_beta_settings(r));
    let _ = writeln!(out, "{}\n", flags_and_overrides(r));
    let c = &r.counts;
    let why_not = match nonzero_counts(&c.not_estimated) {
        reasons if reasons.is_empty() => reasons,
        reasons => format!(" ({reasons})"),
    };
    let _ = writeln!(
        out,
        "{} with prices; {}, {} excluded by \
         beta.exclude_flags{}, {} not estimated{why_not}; {} with an unlevered beta (those \
         excluded by flag among them). \"Estimated\" counts the securities that enter an industry's \
         figures; \"Flagged\" those of them that carry a flag (securities.csv names each).\n",
        crate::universe::securities_count(c.securities),
        estimated_count(c.estimated, c.estimated_without_industry),
        c.excluded,
        excluded_by_flag(c),
        c.not_estimated_total,
        c.unlevered
    );
    industry_table(&mut out, r);
    chart_links(&mut out, r, charts);
    peer_set_section(&mut out, r);
    // A heading of their own, so that with a peer set the notes do not read as about the set
    // (found by review).
    if !r.notes.is_empty() {
        out.push_str("\n## Notes\n");
    }
    out.push('\n');
    // A note names securities and labels as the files give them: a bracket or a `<` there
    // would open a link or raw HTML in a Markdown viewer, so each is escaped outside the notes'
    // own code spans (found by review).
    for note in &r.notes {
        let _ = writeln!(out, "- {}", crate::report::format::prose(note.clone()));
    }
    out.push_str(&cautions(r));
    out
}

/// The chart of the industry table, each part as an image (the SVG files beside it), with what
/// it draws in words that follow the settings.
fn chart_links(out: &mut String, r: &UniverseResult, charts: &[super::chart::Chart]) {
    let Some(first) = charts.first() else {
        return;
    };
    let drawn = super::chart::Drawn::of(r);
    let parts = match charts.len() {
        1 => format!("`{}`", first.file_name),
        2 => format!("`{}` and one more part", first.file_name),
        n => format!("`{}` and {} more parts", first.file_name, n - 1),
    };
    let figure = match drawn.aggregation {
        crate::stats::Aggregation::Median => String::new(),
        other => format!(", the industry's {} (triangle)", other.noun()),
    };
    let _ = writeln!(
        out,
        "\nThe industries drawn ({parts}): for each, the median of its {} with its 95% \
         interval, their quartiles{figure} and {}; the table's βU columns are of the unlevered \
         betas{}; a mark beyond the axis is drawn at its edge, its value written there.\n",
        drawn.betas(),
        drawn.ring_words(),
        match drawn.operations {
            true => ", the chart's of the betas of the operations",
            false => "",
        }
    );
    for c in charts {
        let _ = writeln!(out, "![{}]({})\n", plain_text(c.title.clone()), c.file_name);
    }
}

/// The cautions every table carries, then those its settings call for.
fn cautions(r: &UniverseResult) -> String {
    let s = &r.settings;
    let mut out = String::from(
        "\n## Cautions\n\n\
- A discount rate is a judgement; these tables inform it and do not replace it. Check every \
  figure before relying on it.\n\
- Every beta is an estimate with sampling error: securities.csv gives each one's standard \
  error and 95% confidence interval, and industries.csv each median's distribution-free 95% \
  interval (`median_*_ci_low`, `median_*_ci_high`; empty below six values). An industry \
  figure resting on few securities is fragile; the counts say how many each rests on.\n\
- The median's interval is the order-statistic one (Conover, Practical Nonparametric \
  Statistics, section 3.2), which assumes the betas are independent draws. Betas estimated \
  over one window against one index share their industry's shocks, so their errors move \
  together and the interval is then too narrow. With fewer than about fifteen values its \
  order statistics reach the extremes (the minimum and maximum from six to eight), so it covers \
  more than 95% and its width is not comparable across industries of different sizes.\n\
- Industry figures move with the return frequency, the window and the estimator: daily \
  returns of thinly or late-traded securities bias their betas toward zero, which weekly or \
  monthly returns and the Dimson or Scholes–Williams estimators (beta.method) guard against.\n\
- The panel holds the securities the file holds: firms delisted, merged or failed within the \
  window are in it only if the file includes them, and a panel of today's listed firms leans \
  toward survivors.\n\
- Prices, attributes and industry labels are used as supplied; hurdle does not check them \
  against any other source. A security's industry is the label in the attributes file.\n\
- Unlevering assumes the formula's view of debt and taxes (see the formula's source); market \
  values of equity and book or market debt are whatever the attributes file holds. Each firm \
  is unlevered at the one D/E the attributes give, while its beta reflects its leverage over \
  the whole window.\n\
- The median of the unlevered betas relevered at the median D/E is not the median levered \
  beta: a median of ratios is not a ratio of medians, and each column rests on its own \
  securities (the `*_count` columns).\n",
    );
    let excludes = |flag| s.beta.exclude_flags.contains(&flag);
    if excludes(crate::beta::diagnostics::PeerFlag::LowRSquared) {
        out.push_str(
            "- Leaving out securities with a low R² selects on the beta itself (for a given \
             residual risk a low R² goes with a beta near zero), so the industry figures lean \
             away from low betas.\n",
        );
    }
    match s.beta.adjustment {
        // A stated prior is the user's; only one taken from the cross-section pools industries.
        crate::beta::Adjustment::Vasicek if s.beta.vasicek_prior_mean.is_none() => out.push_str(
            "- Vasicek's prior is taken from every security estimated and not excluded, across industries, so \
             it pulls each industry toward the market-wide mean, the more so the noisier its \
             betas. Its variance is the sample variance of the estimated betas, which holds \
             their sampling error too (its expectation is the true betas' variance plus the \
             mean SE²), so it shrinks less than an empirical-Bayes prior would. Shrinkage does \
             not correct a thin trader's beta biased toward zero, whose small standard error \
             leaves it nearly where it is, and such betas enter the prior unless their flag is \
             listed in beta.exclude_flags.\n",
        ),
        crate::beta::Adjustment::Blume => out.push_str(
            "- Blume's adjustment pulls each levered beta toward 1 before it is unlevered, so \
             each unlevered beta moves toward what a levered beta of 1 unlevers to at that \
             firm's D/E, not toward an average unlevered beta.\n",
        ),
        _ => {}
    }
    out.push_str(&statistical_cautions(s));
    out
}

/// The cautions the aggregation and the rolling betas call for (found by review: figures shown
/// without the caveats a statistician would add).
fn statistical_cautions(s: &crate::universe::settings::UniverseFile) -> String {
    let mut out = String::new();
    match s.leverage.aggregation {
        crate::stats::Aggregation::TrimmedMean => out.push_str(
            "- The trimmed mean cuts a whole number of values from each end: an industry with \
             fewer securities than one over leverage.trim_fraction has none cut, and its \
             trimmed mean is its mean (result.json's `trimmed_each_end` gives each industry's \
             count).\n",
        ),
        crate::stats::Aggregation::MarketCapWeighted => out.push_str(
            "- A market-cap-weighted mean can rest on one or two large firms, flagged or not: \
             industries.csv's `market_cap_weighted_*_effective_count` says how many equal \
             weights an industry's market values are worth (Kish's effective sample size, \
             (Σw)²/Σw²; near 1 when one firm dominates), and the mean is then about as \
             fragile as a mean of that many betas. Compare it with the industry's median \
             before relying on it.\n",
        ),
        _ => {}
    }
    if s.universe.rolling {
        out.push_str(
            "- The rolling betas' range and trend carry no test: successive windows share all \
             but one period's returns, so the trend's own regression t-statistic would be far \
             too large, and a range wider than a full-window interval is what sampling error \
             alone gives over many overlapping windows.\n",
        );
    }
    out
}

/// The industry statistic in words: its noun (found by review: the setting's own token, "the
/// market-cap-weighted of"), with a trimmed mean's share cut from each end.
fn aggregation_words(aggregation: crate::stats::Aggregation, trim: f64) -> String {
    match aggregation {
        crate::stats::Aggregation::TrimmedMean => format!(
            "trimmed mean ({} cut from each end, rounded down to whole securities)",
            crate::report::format::exact_percent(trim)
        ),
        other => other.noun().to_string(),
    }
}
