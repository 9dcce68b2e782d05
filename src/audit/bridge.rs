//! Bridge between two WACCs: which inputs explain the gap.
//!
//! Both sides are reduced to the components of the textbook build-up (risk-free rate, equity
//! risk premium, relevered beta, premiums, pre-tax cost of debt, tax rate, weights) — a side is
//! either a case (run through the valuation) or a claimed build-up given as a small TOML file.
//! The sequential bridge replaces one group at a time, in the order of [`Group::ALL`]; its steps
//! telescope to the whole difference, but each step depends on the order. The Shapley value
//! (Shapley 1953, "A value for n-person games", Contributions to the Theory of Games II) averages
//! each group's contribution over all 7! orders, computed exactly from the 2⁷ subsets: it is
//! order-independent, sums to the whole difference (efficiency) and gives equal shares to groups
//! that act alike (symmetry).

use std::path::Path;

use serde::Deserialize;

use crate::capital::cost;
use crate::case::read_case;
use crate::error::{Error, Result};
use crate::io::series::sha256_hex;
pub use crate::valuation::analyses::{Bridge, BuildUp, Group, Side, Step};
use crate::valuation::{load_inputs, value, Valuation};

mod case_notes;
mod claim_notes;
pub use case_notes::{asset_beta_note, case_notes, scaled_premium_notes};
pub use claim_notes::claim_notes;

/// `[claimed]`: a build-up handed over by someone else.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct ClaimedFile {
    claimed: Claimed,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct Claimed {
    #[serde(default = "default_claim_label")]
    label: String,
    #[serde(default)]
    wacc: Option<f64>,
    /// The date the build-up speaks for, when it says.
    #[serde(default)]
    as_of: Option<crate::case::CaseDate>,
    /// The currency the build-up's rates are in, when it says.
    #[serde(default)]
    currency: Option<String>,
    risk_free_rate: f64,
    equity_risk_premium: f64,
    beta: f64,
    #[serde(default)]
    premiums: f64,
    cost_of_debt_pre_tax: f64,
    tax_rate: f64,
    #[serde(default)]
    debt_to_equity: Option<f64>,
    #[serde(default)]
    debt_to_capital: Option<f64>,
    /// Preferred equity's and lease liabilities' shares of total capital, with their costs, as
    /// a case's `[preferred]` and `[leases]` give them (the lease cost defaults to the pre-tax
    /// cost of debt, as a case's does).
    #[serde(default)]
    preferred_weight: f64,
    #[serde(default)]
    preferred_cost: Option<f64>,
    #[serde(default)]
    lease_weight: f64,
    #[serde(default)]
    lease_cost_pre_tax: Option<f64>,
    /// The cost of equity the claim states, when it states one: recorded and checked against
    /// its components, never used in place of them (found by review: a bank's one-pager
    /// states its Ke, which could not be written down).
    #[serde(default)]
    cost_of_equity: Option<f64>,
}

/// The preferred and lease terms of a claim as (weight, cost) pairs, checked as a case's are:
/// weights in [0, 1) summing below 1, a preferred cost whenever its weight is above 0, and no
/// cost given for a component the claim does not hold (it would be read by nothing).
fn other_components(claimed: &Claimed) -> std::result::Result<[(f64, f64); 2], String> {
    let (wp, wl) = (claimed.preferred_weight, claimed.lease_weight);
    for (key, weight) in [("preferred_weight", wp), ("lease_weight", wl)] {
        if !(0.0..1.0).contains(&weight) {
            return Err(format!("claimed.{key} = {weight} is outside [0, 1)"));
        }
        // The bound a case's [preferred] and [leases] have (README, "Sanity rules").
        let most = crate::case::sanity::MAX_COMPONENT_WEIGHT;
        if weight > most {
            return Err(format!(
                "claimed.{key} = {weight} is above {most}: a component that large is the main \
                 financing; a case would refuse it, so the two sides could not be compared on \
                 one footing"
            ));
        }
    }
    if wp + wl >= 1.0 {
        return Err(format!(
            "claimed.preferred_weight + claimed.lease_weight = {wp} + {wl} leaves no room for \
             equity and debt: the two must sum below 1"
        ));
    }
    for (key, weight, cost) in [
        ("preferred", wp, claimed.preferred_cost),
        ("lease", wl, claimed.lease_cost_pre_tax),
    ] {
        if weight == 0.0 && cost.is_some() {
            let cost_key = if key == "lease" {
                "lease_cost_pre_tax"
            } else {
                "preferred_cost"
            };
            return Err(format!(
                "claimed.{cost_key} is given but claimed.{key}_weight is 0 or absent: give the \
                 weight too, or drop the cost"
            ));
        }
    }
    let preferred_cost = match claimed.preferred_cost {
        Some(cost) => cost,
        None if wp > 0.0 => {
            return Err(format!(
                "claimed.preferred_weight = {wp} needs claimed.preferred_cost (the cost of \
                 preferred equity, e.g. its dividend / price)"
            ))
        }
        None => 0.0,
    };
    let lease_cost = match (wl > 0.0, claimed.lease_cost_pre_tax) {
        (true, None) => claimed.cost_of_debt_pre_tax,
        (_, cost) => cost.unwrap_or(0.0),
    };
    Ok([(wp, preferred_cost), (wl, lease_cost)])
}

fn default_claim_label() -> String {
    "claimed".to_string()
}

/// A file with neither a `[case]` nor a `[claimed]` table is named as such, with its top-level
/// keys, instead of being read as a case that lacks everything.
fn neither_case_nor_claim(table: &toml::Table) -> std::result::Result<(), String> {
    if table.contains_key("case") {
        return Ok(());
    }
    let keys: Vec<&str> = table.keys().map(String::as_str).collect();
    Err(format!(
        "is neither a case file (no [case] table) nor a claimed build-up (no [claimed] table); \
         its top-level keys are: {}",
        if keys.is_empty() {
            "none".to_string()
        } else {
            keys.join(", ")
        }
    ))
}

/// What a case side is beyond its build-up, for telling two cases apart (a case rolled forward
/// against its earlier self): its date, window, peers and unlevered beta. A claim has none.
#[derive(Debug, Clone, PartialEq)]
pub struct CaseFacts {
    pub valuation_date: chrono::NaiveDate,
    pub frequency: String,
    pub window: (chrono::NaiveDate, chrono::NaiveDate),
    /// The peers in the aggregate, in the case's order.
    pub peers_included: Vec<String>,
    pub unlevered_beta: f64,
    pub target_debt_to_equity: f64,
    /// The pre-tax cost of debt is the risk-free rate plus a spread (a rating or coverage
    /// table), so the rate moves it too.
    pub debt_on_risk_free: bool,
    /// The case's resolved settings, as its receipt records them under `settings`.
    pub settings: serde_json::Value,
    /// Each data file's role and SHA-256.
    pub files: Vec<(String, String)>,
    /// A country premium scaled by the relevered beta, as applied, and that beta.
    pub beta_scaled_country: Option<(f64, f64)>,
}

impl CaseFacts {
    /// What differs between two cases' inputs, in words: each setting with both values
    /// (`leverage.formula "hamada" → "harris-pringle"`), then each data file of one role read
    /// on both sides whose bytes differ (found by review: a gap from a formula, an adjustment
    /// or edited prices was shown with nothing naming its cause).
    pub fn differences(&self, to: &CaseFacts) -> (Vec<String>, Vec<String>) {
        // Every difference, a key set on the second side only among them (found by review:
        // those were left out), each list entry named without verify's word for the sides.
        let found = super::verify::compare(&self.settings, &to.settings, 0.0);
        let settings = (found
            .mismatches
            .iter()
            .chain(&found.wording)
            .chain(&found.added))
        .map(|m| {
            let shown = |v: &serde_json::Value| match v.is_null() {
                true => "none".to_string(),
                false => super::verify::shown(v),
            };
            let place = m.place().replace(" (rerun)", "");
            format!("{place} {} → {}", shown(&m.recorded), shown(&m.recomputed))
        })
        .collect();
        // One file read for several roles (a wide table) is one file, its roles in words.
        let mut files: Vec<(Vec<&str>, (&str, &str))> = Vec::new();
        for (role, sha256) in &self.files {
            let Some((_, other)) = (to.files.iter()).find(|(r, h)| r == role && h != sha256) else {
                continue;
            };
            let hashes = (sha256.as_str(), other.as_str());
            match files.iter_mut().find(|(_, h)| *h == hashes) {
                Some((roles, _)) => roles.push(role),
                None => files.push((vec![role], hashes)),
            }
        }
        let files = (files.iter())
            .map(|(roles, _)| super::verify::roles_in_words(roles))
            .collect();
        (settings, files)
    }
}

impl CaseFacts {
    fn of(valuation: &crate::valuation::Valuation) -> CaseFacts {
        let cost = &valuation.cost;
        CaseFacts {
            valuation_date: valuation.case.valuation_date,
            frequency: crate::case::label(&valuation.sampling.frequency),
            window: (
                valuation.sampling.window_start,
                valuation.sampling.window_end,
            ),
            peers_included: (valuation.peers.iter())
                .filter(|p| p.excluded_reason.is_none())
                .map(|p| p.name.clone())
                .collect(),
            unlevered_beta: cost.beta.unlevered,
            target_debt_to_equity: cost.target.debt_to_equity,
            debt_on_risk_free: cost.cost_of_debt.risk_free_rate.is_some(),
            settings: serde_json::to_value(&valuation.settings).unwrap_or_default(),
            // The data files, and the spread table the cost of debt was read from (found by
            // review: an edited spread went unnamed).
            files: (valuation.files.iter())
                .map(|f| (f.role.clone(), f.sha256.clone()))
                .chain(
                    (cost.cost_of_debt.table.iter())
                        .map(|t| ("spread table".to_string(), t.sha256.clone())),
                )
                .collect(),
            beta_scaled_country: (cost.premiums.country_method
                == crate::capital::cost::CountryMethod::BetaScaled
                && cost.premiums.country_applied != 0.0)
                .then_some((cost.premiums.country_applied, cost.beta.relevered)),
        }
    }
}

/// Reads one side: a TOML file with a `[claimed]` table, or else a case file (which is run).
pub fn read_side(path: &Path, written: &str) -> Result<Side> {
    Ok(read_side_with_facts(path, written)?.0)
}

/// A case file as a side: run, and its build-up, date and facts taken from the valuation.
fn case_side(path: &Path, written: &str) -> Result<(Side, Option<CaseFacts>)> {
    let valuation = value(&load_inputs(read_case(path, &[])?)?, "")?;
    // Built whole: the file as the user wrote it, the case's date and currency.
    let side = Side {
        source: written.to_string(),
        as_of: Some(valuation.case.valuation_date.to_string()),
        currency: Some(valuation.case.currency.clone()),
        ..Side::from_valuation(&valuation.case.title, &valuation)
    };
    Ok((side, Some(CaseFacts::of(&valuation))))
}

/// [`read_side`], with the facts of a case side.
pub fn read_side_with_facts(path: &Path, written: &str) -> Result<(Side, Option<CaseFacts>)> {
    let fail = |message: String| Error::Case {
        file: path.to_path_buf(),
        message,
    };
    let bytes = std::fs::read(path).map_err(|source| Error::Io {
        path: path.to_path_buf(),
        action: "cannot read",
        source,
    })?;
    let text = crate::case::sanity::toml_text(&bytes).map_err(fail)?;
    crate::case::sanity::empty_or_csv(&text).map_err(fail)?;
    let table: toml::Table =
        toml::from_str(&text).map_err(|e| fail(crate::error::toml_error(&e, &text)))?;
    if !table.contains_key("claimed") {
        neither_case_nor_claim(&table).map_err(fail)?;
        return case_side(path, written);
    }
    crate::case::sanity::check_claimed_text(&text).map_err(fail)?;
    missing_components(&table).map_err(fail)?;
    let claimed = toml::from_str::<ClaimedFile>(&text)
        .map_err(|e| fail(crate::error::toml_error(&e, &text)))?
        .claimed;
    check_claim_words(&claimed).map_err(fail)?;
    let debt_to_equity = claimed_debt_to_equity(&claimed).map_err(fail)?;
    if !(0.0..1.0).contains(&claimed.tax_rate) {
        return Err(fail(format!(
            "claimed.tax_rate = {} is outside [0, 1)",
            claimed.tax_rate
        )));
    }
    let [(preferred_weight, preferred_cost), (lease_weight, lease_cost_pre_tax)] =
        other_components(&claimed).map_err(fail)?;
    let (equity_weight, debt_weight) =
        cost::weights_with_other_components(debt_to_equity, preferred_weight + lease_weight);
    let build_up = BuildUp {
        risk_free_rate: claimed.risk_free_rate,
        equity_risk_premium: claimed.equity_risk_premium,
        beta: claimed.beta,
        premiums: claimed.premiums,
        cost_of_debt_pre_tax: claimed.cost_of_debt_pre_tax,
        tax_rate: claimed.tax_rate,
        equity_weight,
        debt_weight,
        preferred_weight,
        preferred_cost,
        lease_weight,
        lease_cost_pre_tax,
    };
    let side = Side {
        label: claimed.label,
        source: written.to_string(),
        sha256: sha256_hex(&bytes),
        wacc: build_up.wacc(),
        stated_wacc: claimed.wacc,
        build_up,
        computed: false,
        as_of: claimed.as_of.map(|d| d.to_string()),
        currency: claimed.currency,
        debt_to_capital: claimed.debt_to_capital,
        stated_cost_of_equity: claimed.cost_of_equity,
    };
    Ok((side, None))
}

/// A claim's currency, date and label as a case's are held: a currency named plainly, a date
/// in the years a case may hold (found by review: 0001-01-01 and 9999-12-31 were accepted), a
/// label on one visible line (a label holding a line break put a heading into the memo).
fn check_claim_words(claimed: &Claimed) -> std::result::Result<(), String> {
    if let Some(currency) = &claimed.currency {
        if currency.trim().is_empty() {
            return Err("claimed.currency is empty; leave it out or name the currency".into());
        }
        crate::case::sanity::plain_label("claimed.currency", currency)?;
    }
    if let Some(date) = claimed.as_of {
        crate::case::sanity::date_in_years("claimed.as_of", date)?;
    }
    crate::case::sanity::visible_one_line("claimed.label", &claimed.label)
}

/// Every component a claimed build-up lacks, named at once (found by review: a one-page claim
/// of a WACC and a beta was told of one missing key per run, under the case file's section).
fn missing_components(table: &toml::Table) -> std::result::Result<(), String> {
    let Some(claimed) = table.get("claimed").and_then(toml::Value::as_table) else {
        return Ok(());
    };
    let mut missing: Vec<&str> = REQUIRED_COMPONENTS
        .into_iter()
        .filter(|k| !claimed.contains_key(*k))
        .collect();
    if !claimed.contains_key("debt_to_equity") && !claimed.contains_key("debt_to_capital") {
        missing.push("debt_to_equity (or debt_to_capital)");
    }
    match missing.as_slice() {
        [] => Ok(()),
        keys => Err(format!(
            "[claimed] lacks {}: a bridge needs every component of the build-up (README, Claimed \
             build-up files); a WACC alone is given to `hurdle implied` as a number instead",
            keys.join(", ")
        )),
    }
}

/// The keys a claimed build-up must give (besides its structure).
const REQUIRED_COMPONENTS: [&str; 5] = [
    "risk_free_rate",
    "equity_risk_premium",
    "beta",
    "cost_of_debt_pre_tax",
    "tax_rate",
];

/// The claim's D/E, from `debt_to_equity` or `debt_to_capital` (exactly one of them, in range).
fn claimed_debt_to_equity(claimed: &Claimed) -> std::result::Result<f64, String> {
    match (claimed.debt_to_equity, claimed.debt_to_capital) {
        (Some(de), None) if de >= 0.0 => Ok(de),
        (None, Some(dc)) if (0.0..1.0).contains(&dc) => {
            Ok(crate::capital::cost::debt_to_equity_from_capital(dc))
        }
        (Some(_), Some(_)) => {
            Err("[claimed] gives both debt_to_equity and debt_to_capital; keep one".into())
        }
        (None, None) => Err("[claimed] needs debt_to_equity or debt_to_capital".into()),
        (Some(v), None) => Err(format!("claimed.debt_to_equity = {v} is negative")),
        (None, Some(v)) => Err(format!("claimed.debt_to_capital = {v} is outside [0, 1)")),
    }
}

/// The notes on a claim set beside a case's valuation `base`: their dates, their currencies
/// (a case's being its valuation date and `case.currency`), and the claim's figures that fail
/// the plausibility checks. `run`'s `[reconcile]` says them beside its bridge, and `implied
/// --claim` (`solving`) beside the value it solves for.
pub fn notes_beside_case(base: &Valuation, claimed: &Side, solving: bool) -> Vec<String> {
    // The case's date speaks for its side in the note only; the bridge's record of the side
    // keeps no date (a case's is in the receipt already).
    let dated = Side {
        as_of: Some(base.case.valuation_date.to_string()),
        currency: Some(base.case.currency.clone()),
        ..Side::from_valuation("this case", base)
    };
    let currency = match solving {
        true => currency_note_then(
            &dated,
            claimed,
            "a value solved for absorbs that part too, so put the claim in the case's currency \
             first (its rates carried by the Fisher relation) before reading the value as \
             judgement",
        ),
        false => currency_note(&dated, claimed),
    };
    let pair = dates_note(&dated, claimed).into_iter().chain(currency);
    pair.chain(claim_notes(claimed)).collect()
}

/// The name of `side` in a note on the pair (`from`, `to`): its label, or its file when the
/// two carry one title (a case and its rolled-forward self).
fn name_in_pair(from: &Side, to: &Side, side: &Side) -> String {
    match from.label == to.label && !side.source.is_empty() {
        true => side.source.clone(),
        false => side.label.clone(),
    }
}

/// A note when the two sides' rates are in different currencies (each side's `currency`, a
/// case's being its `case.currency`): a nominal rate carries its currency's expected inflation
/// (Fisher 1930), so part of the gap is the currencies', which no input group of the bridge
/// names. `None` when either side does not say.
pub fn currency_note(from: &Side, to: &Side) -> Option<String> {
    currency_note_then(
        from,
        to,
        "the bridge compares the two build-ups as given, so put them in one currency first (a \
         claim's rates carried by the Fisher relation, or a case whose own inputs are in the \
         claim's currency) before reading the steps as judgement",
    )
}

/// [`currency_note`] with `remedy` after the reason: what the reader does about it.
fn currency_note_then(from: &Side, to: &Side, remedy: &str) -> Option<String> {
    let (Some(a), Some(b)) = (&from.currency, &to.currency) else {
        return None;
    };
    (a.trim().to_lowercase() != b.trim().to_lowercase()).then(|| {
        format!(
            "{} is in {a} and {} in {b}: each rate carries its own currency's expected \
             inflation, so part of the gap is the currencies', not the inputs' judgement; \
             {remedy}.",
            name_in_pair(from, to, from),
            name_in_pair(from, to, to)
        )
    })
}

/// A note when the two sides speak for different dates (a claim's `as_of`, a case's valuation
/// date): rates and premiums move between dates, so part of the gap is the date's.
pub fn dates_note(from: &Side, to: &Side) -> Option<String> {
    let (Some(a), Some(b)) = (&from.as_of, &to.as_of) else {
        return None;
    };
    let name = |side: &Side| name_in_pair(from, to, side);
    (a != b).then(|| {
        format!(
            "{} is as of {a} and {} as of {b}: rates, premiums and prices move between the two \
             dates, so part of the gap between them is the dates'.",
            name(from),
            name(to)
        )
    })
}

/// Bridges `from` to `to`.
pub fn bridge(from: &Side, to: &Side) -> Bridge {
    let shapley = shapley_values(&from.build_up, &to.build_up);
    let mut current = from.build_up;
    let mut steps = Vec::with_capacity(Group::ALL.len());
    for (k, group) in Group::ALL.into_iter().enumerate() {
        let before = current.wacc();
        group.take(&to.build_up, &mut current);
        let after = current.wacc();
        steps.push(Step {
            group,
            wacc_before: before,
            wacc_after: after,
            contribution: after - before,
            shapley: shapley[k],
        });
    }
    let unexplained = to.stated_wacc.map(|stated| stated - to.wacc);
    let unexplained_from = from.stated_wacc.map(|stated| stated - from.wacc);
    let stated = Side::headline_wacc;
    Bridge {
        from: from.clone(),
        to: to.clone(),
        difference: to.wacc - from.wacc,
        waterfall: super::waterfall::waterfall(from, to, &steps, unexplained, unexplained_from),
        steps,
        unexplained,
        unexplained_from,
        stated_difference: stated(to) - stated(from),
    }
}

/// Exact Shapley values of the groups for the game v(S) = WACC with the groups in S taken from
/// `to` and the rest from `from`, minus v(∅).
pub fn shapley_values(from: &BuildUp, to: &BuildUp) -> Vec<f64> {
    let n = Group::ALL.len();
    let worth: Vec<f64> = (0..1usize << n)
        .map(|mask| {
            let mut mixed = *from;
            for (k, group) in Group::ALL.into_iter().enumerate() {
                if mask & (1 << k) != 0 {
                    group.take(to, &mut mixed);
                }
            }
            mixed.wacc()
        })
        .collect();
    let factorial = |m: usize| (1..=m).map(|v| v as f64).product::<f64>();
    (0..n)
        .map(|k| {
            (0..1usize << n)
                .filter(|mask| mask & (1 << k) == 0)
                .map(|mask| {
                    let s = mask.count_ones() as usize;
                    let weight = factorial(s) * factorial(n - s - 1) / factorial(n);
                    weight * (worth[mask | (1 << k)] - worth[mask])
                })
                .sum()
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn base() -> BuildUp {
        BuildUp {
            risk_free_rate: 0.035,
            equity_risk_premium: 0.055,
            beta: 1.05,
            premiums: 0.01,
            cost_of_debt_pre_tax: 0.058,
            tax_rate: 0.25,
            equity_weight: 1.0 / 1.4,
            debt_weight: 0.4 / 1.4,
            ..BuildUp::default()
        }
    }

    fn side(build_up: BuildUp) -> Side {
        Side {
            label: "x".into(),
            source: String::new(),
            sha256: String::new(),
            wacc: build_up.wacc(),
            stated_wacc: None,
            build_up,
            computed: false,
            as_of: None,
            currency: None,
            debt_to_capital: None,
            stated_cost_of_equity: None,
        }
    }

    // Telescoping: the sequential steps sum to the whole difference. Shapley efficiency
    // (Shapley 1953): the values sum to v(N) − v(∅) too. 1e-15: seven additions of numbers
    // below 0.1 leave a few ulps.
    #[test]
    fn steps_and_shapley_values_sum_to_the_difference() {
        let a = base();
        let b = BuildUp {
            risk_free_rate: 0.042,
            equity_risk_premium: 0.06,
            beta: 1.2,
            premiums: 0.0,
            cost_of_debt_pre_tax: 0.065,
            tax_rate: 0.3,
            equity_weight: 0.6,
            debt_weight: 0.4,
            ..BuildUp::default()
        };
        let bridge = bridge(&side(a), &side(b));
        let steps: f64 = bridge.steps.iter().map(|s| s.contribution).sum();
        let shapley: f64 = bridge.steps.iter().map(|s| s.shapley).sum();
        assert!((steps - bridge.difference).abs() < 1e-15);
        assert!((shapley - bridge.difference).abs() < 1e-15);
        assert!((bridge.difference - (b.wacc() - a.wacc())).abs() < 1e-15);
    }

    // A component the side holds is written with its cost, 0 included; one it does not hold is
    // not written at all (so receipts of build-ups without them read as before).
    #[test]
    fn other_components_are_written_when_held() {
        let held = BuildUp {
            preferred_weight: 0.1,
            preferred_cost: 0.0,
            ..base()
        };
        let json = serde_json::to_value(held).unwrap();
        assert_eq!(json["preferred_weight"], 0.1);
        assert_eq!(json["preferred_cost"], 0.0);
        assert!(json.get("lease_weight").is_none() && json.get("lease_cost_pre_tax").is_none());
        let json = serde_json::to_value(base()).unwrap();
        assert_eq!(json.as_object().unwrap().len(), 8, "{json}");
    }

    // Symmetry (Shapley 1953): rf and ERP enter Ke as rf + β·ERP; with β = 1 in both sides and
    // equal changes in rf and ERP, the two groups are interchangeable players and must get
    // equal values. Dummy player: a group that does not change gets 0.
    #[test]
    fn shapley_values_are_symmetric_and_zero_for_dummies() {
        let a = BuildUp {
            beta: 1.0,
            ..base()
        };
        let b = BuildUp {
            risk_free_rate: a.risk_free_rate + 0.01,
            equity_risk_premium: a.equity_risk_premium + 0.01,
            ..a
        };
        let values = shapley_values(&a, &b);
        // 1e-16: each value is a difference of WACCs near 0.07 (ulp 1.4e-17), averaged over the
        // orders, so symmetric or dummy players agree with each other or with 0 to a few ulps.
        assert!((values[0] - values[1]).abs() < 1e-16);
        assert!(values[2..].iter().all(|v| v.abs() < 1e-16), "{values:?}");
        // Additive game: each value is the group's own effect, wE·0.01 (textbook: Shapley
        // values of an additive game are the stand-alone effects).
        assert!((values[0] - a.equity_weight * 0.01).abs() < 1e-15);
    }
}
