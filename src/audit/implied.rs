//! Implied inputs: which value of one input reproduces a claimed WACC.
//!
//! The WACC is evaluated over a plausible range of the chosen input (a scan of 64 equal
//! intervals), every interval where it crosses the claim is counted, and the first crossing is
//! narrowed by bisection until the bracket is as small as doubles allow. Bisection is chosen
//! over faster methods because it cannot leave its bracket. A claim no value in the range
//! reaches is reported with the WACC range found, never forced. A value the case refuses (an ERP
//! below the 0.001 a debt beta read from the credit spread needs, or low enough that such a debt
//! beta exceeds a peer's equity beta) is left out of the scan and counted, not taken for an
//! error of the whole search. Inputs that are case keys are
//! varied through the valuation (the same computation as `--set`, reusing the peers' estimates,
//! which none of these keys moves); the relevered beta, which is not a case key, through the
//! build-up of [`super::bridge::BuildUp`], whose WACC is the case's own formula.

use serde::Serialize;

mod cautions;
mod range;
mod scan;

use super::bridge::Side;
use crate::capital::leverage::{CapitalStructure, DebtTerms, Formula};
use crate::case::{with_overrides, CountryMethod, TargetSource};
use crate::error::{compact, Error, Result};
use crate::valuation::{cost_of_capital, estimates_for, Inputs, PeerEstimates, Valuation};
use range::{in_key_units, plan_intervals, search_range};
use scan::{solve, Scan};

mod held;
use held::{held_between, Figures};
pub use held::{held_inputs, Held};

/// An input that can be solved for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Target {
    Erp,
    Beta,
    CostOfDebt,
    DebtToEquity,
    RiskFree,
    SizePremium,
}

impl std::str::FromStr for Target {
    type Err = String;

    fn from_str(text: &str) -> std::result::Result<Self, Self::Err> {
        Ok(match text {
            "erp" => Target::Erp,
            "beta" => Target::Beta,
            "cost_of_debt" => Target::CostOfDebt,
            "debt_to_equity" => Target::DebtToEquity,
            "risk_free" => Target::RiskFree,
            "size_premium" => Target::SizePremium,
            other => {
                return Err(format!(
                    "`{other}` cannot be solved for; choose one of erp, beta, cost_of_debt, \
                     debt_to_equity, risk_free, size_premium"
                ))
            }
        })
    }
}

impl Target {
    /// Every input that can be solved for, in the order a table of them lists them.
    pub const ALL: [Target; 6] = [
        Target::RiskFree,
        Target::Erp,
        Target::Beta,
        Target::SizePremium,
        Target::CostOfDebt,
        Target::DebtToEquity,
    ];

    /// The value of this input a claimed build-up states, in the unit the case is solved in
    /// (`by_capital`: a structure as debt to capital, D/(D+E)); `None` for the size premium,
    /// which a build-up holds only within its premiums' total, and for a structure without
    /// equity.
    pub fn in_build_up(self, b: &super::bridge::BuildUp, by_capital: bool) -> Option<f64> {
        match self {
            Target::RiskFree => Some(b.risk_free_rate),
            Target::Erp => Some(b.equity_risk_premium),
            Target::Beta => Some(b.beta),
            Target::CostOfDebt => Some(b.cost_of_debt_pre_tax),
            Target::SizePremium => None,
            Target::DebtToEquity if by_capital => {
                let capital = b.debt_weight + b.equity_weight;
                (capital > 0.0).then(|| b.debt_weight / capital)
            }
            Target::DebtToEquity => {
                (b.equity_weight > 0.0).then(|| b.debt_weight / b.equity_weight)
            }
        }
    }

    /// The range searched unless the user gives one. These bounds are hurdle's choice, not a
    /// published convention: each is wide enough to hold any value a practitioner would defend
    /// (an ERP up to 20%, a beta up to 5, …) so that a claim is not missed, and narrow enough that
    /// the 64-interval scan stays fine-grained; `--range` changes them.
    pub fn default_range(self) -> (f64, f64) {
        match self {
            Target::Erp => (0.0, 0.20),
            Target::Beta => (0.0, 5.0),
            Target::CostOfDebt => (0.0, 0.30),
            Target::DebtToEquity => (0.0, 10.0),
            Target::RiskFree => (-0.02, 0.20),
            Target::SizePremium => (-0.05, 0.20),
        }
    }
}

/// How close the WACC at a solution must come to the claim for the claim to count as
/// reproduced: bisection on a continuous WACC ends on adjacent doubles, where the gap is the
/// slope times an ulp (about 1e-15 for every key's slope); a WACC that jumps across the claim
/// (a spread table's rating step, for one) leaves a gap of the jump's size. 1e-10 (a millionth
/// of a basis point) lies far between the two.
pub const REPRODUCED: f64 = 1e-10;

/// The answer to "which value gives this WACC".
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Implied {
    pub target: Target,
    /// The case key varied (`"relevered beta"` for the beta).
    pub key: String,
    pub claimed_wacc: f64,
    pub base_value: f64,
    pub base_wacc: f64,
    pub range: (f64, f64),
    /// The solution, or `None` when no value in the range reproduces the claim.
    pub value: Option<f64>,
    /// The WACC at the solution.
    pub achieved_wacc: Option<f64>,
    /// How many scan intervals cross the claim (more than one: several values fit).
    pub crossings: usize,
    /// The value found in each crossing interval after the first (ascending): the other values
    /// that reproduce the claim.
    pub other_values: Vec<f64>,
    /// Whether every value searched that the case accepts gives the claim: the input does not
    /// move the WACC under the case's settings (`value` is then the case's own).
    pub does_not_move: bool,
    /// The lowest and highest WACC seen over the scan (over the values the case accepts).
    pub wacc_min: f64,
    pub wacc_max: f64,
    /// How many of the scan's values the case refuses (for example an ERP at which a debt beta
    /// read from the credit spread exceeds a peer's equity beta), the lowest and highest of them,
    /// and the reason at the refused value next to an accepted one (where the case starts or
    /// stops refusing). No crossing is looked for next to a refused value.
    pub refused: usize,
    pub refused_range: Option<(f64, f64)>,
    pub refused_at_edge: Option<(f64, String)>,
    /// How many values the scan evaluated (its intervals plus one).
    pub searched: usize,
    /// The case's own cost of equity, which a solved cost of debt should stay below.
    pub base_cost_of_equity: f64,
    /// The case's risk-free rate, which a solved cost of debt should stay above, and its
    /// pre-tax cost of debt when the case gives it (a table's cost moves with the rate), which
    /// a solved risk-free rate should stay below.
    pub base_risk_free_rate: f64,
    pub base_cost_of_debt: Option<f64>,
    /// The highest D/E of the peers the case aggregates, which a solved target D/E above it
    /// extrapolates the formula beyond, as the run's caution says of a case's target.
    pub peers_highest_debt_to_equity: f64,
    /// The lowest and the highest unlevered beta (of the operations, when the case aggregates
    /// those) among the peers the case aggregates: a solved beta whose unlevered equivalent
    /// lies outside is none of these peers'.
    pub peers_unlevered_range: (f64, f64),
    /// Whether the case's leases, weighted, take their cost from the pre-tax cost of debt (no
    /// `leases.cost_pre_tax`), so a solved cost of debt moves the leases' cost with it.
    pub lease_cost_is_cost_of_debt: bool,
    /// For the relevered beta: the aggregate unlevered beta that relevers to the value found at
    /// the case's target structure, with the case's own aggregate beside it
    /// ([`UnleveredEquivalent`]); `None` for every other target or when nothing was found.
    pub unlevered_equivalent: Option<UnleveredEquivalent>,
    /// The case's other inputs, each with its value at the answer when it moved there.
    pub held: Vec<Held>,
}

/// A solved relevered beta taken back to the asset beta it implies: the case's formula run
/// backwards at the case's target D/E, tax rate and subject debt terms, so a reader can set it
/// beside the peers' unlevered betas.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct UnleveredEquivalent {
    pub formula: Formula,
    pub debt_to_equity: f64,
    pub tax_rate: f64,
    /// The case's own aggregate unlevered beta.
    pub case_unlevered: f64,
    /// The unlevered beta that relevers to the solved beta.
    pub unlevered: f64,
    /// Whether the case relevers the betas of the operations (`leverage.operations_beta`), so
    /// that both figures are of the operations.
    pub operations: bool,
}

impl UnleveredEquivalent {
    /// The unlevered beta behind `relevered` under the structure and formula of `base`.
    pub fn of(base: &Valuation, relevered: f64) -> Self {
        let cost = &base.cost;
        let structure = CapitalStructure {
            debt_to_equity: cost.target.debt_to_equity,
            tax_rate: cost.target.tax_rate,
        };
        let debt = DebtTerms {
            debt_beta: cost.subject_debt_beta,
            cost_of_debt: cost.cost_of_debt_pre_tax,
        };
        let formula = cost.beta.formula;
        UnleveredEquivalent {
            formula,
            debt_to_equity: structure.debt_to_equity,
            tax_rate: structure.tax_rate,
            case_unlevered: cost.beta.unlevered,
            unlevered: formula.unlever_with(relevered, structure, debt),
            operations: cost.beta.uses_operations_beta,
        }
    }
}

impl Implied {
    /// Whether the solution's WACC equals the claim (within [`REPRODUCED`]); `false` when no
    /// value was found or the WACC jumps across the claim at the value found.
    pub fn reproduces(&self) -> bool {
        self.achieved_wacc
            .is_some_and(|wacc| (wacc - self.claimed_wacc).abs() <= REPRODUCED)
    }

    /// Whether the WACC over the range searched is flat to the three decimals of a percent a
    /// reader is shown (a spread under 5e-6): the input barely moves it under the case's
    /// settings (an ERP of about 0 with the beta solved for, a beta of about 0 with the ERP;
    /// found by review: "runs from 3.614% to 3.614%").
    pub fn wacc_flat(&self) -> bool {
        self.wacc_max - self.wacc_min < 5e-6
    }

    /// The value found less the case's own: in basis points for a rate or premium, as a plain
    /// difference for a beta or a D/E (found by review: the command line computed it).
    pub fn change(&self) -> Option<Change> {
        let delta = self.value? - self.base_value;
        Some(
            match self.key.contains("beta") || self.key.contains("debt_to_") {
                true => Change::Ratio(delta),
                false => Change::BasisPoints(delta * 1e4),
            },
        )
    }
}

/// An implied value's change from the case's, in the unit a reviewer reads it in.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Change {
    BasisPoints(f64),
    Ratio(f64),
}

/// Solves for `target` so that the WACC equals `claimed`.
pub fn implied(
    inputs: &Inputs,
    estimates: &PeerEstimates,
    base: &Valuation,
    target: Target,
    claimed: f64,
    range: Option<(f64, f64)>,
) -> Result<Implied> {
    let (low, high) = search_range(range, target)?;
    refuse_unsolvable(inputs, target)?;
    let settings = &inputs.case.settings;
    let by_capital = target == Target::DebtToEquity && settings.target.debt_to_equity.is_none();
    let (key, base_value) = key_and_base_value(target, by_capital, base);
    let (widened, intervals) =
        plan_intervals((low, high), range.is_some(), key, by_capital, base_value);
    let (low, high) = in_key_units(widened, key, by_capital)?;
    let build_up = Side::from_valuation("base", base).build_up;
    // A country premium scaled by beta moves with the beta solved for (found by review: such a
    // case was refused); the other premiums stay as the case has them.
    let premiums = crate::case::specs::capital(settings, None).premiums;
    let scaled = settings.premiums.country_method == CountryMethod::BetaScaled;
    let figures = Figures::of(&base.cost);
    let figures_at = |x: f64| -> Result<Figures> {
        if target == Target::Beta {
            let premiums = match scaled {
                true => premiums.total_applied(x),
                false => build_up.premiums,
            };
            let wacc = super::bridge::BuildUp {
                beta: x,
                premiums,
                ..build_up
            }
            .wacc();
            return Ok(figures.at_beta(wacc, x, premiums));
        }
        // In exponent form beyond 1e15 (300 digits are no TOML number).
        let case = with_overrides(&inputs.case, &[format!("{key}={}", compact(x))])?;
        let estimates = estimates_for(&case, inputs, estimates)?;
        Ok(Figures::of(&cost_of_capital(&case, inputs, &estimates)?))
    };
    let wacc_at = |x: f64| figures_at(x).map(|f| f.wacc);
    let scan = solve(&wacc_at, (low, high), intervals, claimed)?;
    let value = chosen_value(&scan, base_value, &wacc_at, claimed);
    let at_answer = value.map(figures_at).transpose()?;
    let achieved_wacc = at_answer.map(|f| f.wacc);
    let held = held_between(inputs, &figures, at_answer.as_ref(), Some(target));
    Ok(Implied {
        target,
        key: key.to_string(),
        claimed_wacc: claimed,
        base_value,
        base_wacc: base.cost.wacc,
        range: (low, high),
        value,
        achieved_wacc,
        crossings: scan.crossings,
        other_values: scan.others,
        does_not_move: scan.flat,
        wacc_min: scan.wacc_min,
        wacc_max: scan.wacc_max,
        refused: scan.refused,
        refused_range: scan.refused_range,
        refused_at_edge: scan.refused_at_edge,
        searched: scan.searched,
        base_cost_of_equity: base.cost.cost_of_equity,
        base_risk_free_rate: base.cost.risk_free_rate,
        base_cost_of_debt: given_cost_of_debt(base, settings),
        lease_cost_is_cost_of_debt: lease_cost_is_cost_of_debt(settings),
        peers_highest_debt_to_equity: highest_peer_debt_to_equity(base),
        peers_unlevered_range: peers_unlevered_range(base),
        unlevered_equivalent: value
            .filter(|_| target == Target::Beta)
            .map(|beta| UnleveredEquivalent::of(base, beta)),
        held,
    })
}

/// The value to report from `scan`: any value fits an input that does not move the WACC, so the
/// case's own when it gives the claim; else the scan's, or the case's own when that is the
/// same value to rounding ([`case_value_if_it_meets`]).
fn chosen_value(
    scan: &Scan,
    base_value: f64,
    wacc_at: &dyn Fn(f64) -> Result<f64>,
    claimed: f64,
) -> Option<f64> {
    match scan.flat {
        true if wacc_at(base_value).is_ok_and(|w| (w - claimed).abs() <= REPRODUCED) => {
            Some(base_value)
        }
        _ => scan
            .value
            .map(|x| case_value_if_it_meets(x, base_value, wacc_at, claimed)),
    }
}

/// The case's pre-tax cost of debt when the case gives it (a table's moves with the rate).
fn given_cost_of_debt(base: &Valuation, settings: &crate::case::CaseFile) -> Option<f64> {
    (settings.debt.source == crate::case::DebtSource::Given)
        .then_some(base.cost.cost_of_debt_pre_tax)
}

/// Whether the case's leases, weighted, take their cost from the cost of debt.
fn lease_cost_is_cost_of_debt(settings: &crate::case::CaseFile) -> bool {
    settings.leases.weight > 0.0 && settings.leases.cost_pre_tax.is_none()
}

/// The lowest and highest unlevered beta (of the operations, when the case aggregates those)
/// among the peers the case aggregates.
fn peers_unlevered_range(base: &Valuation) -> (f64, f64) {
    let operations = base.cost.beta.uses_operations_beta;
    (base.peers.iter())
        .filter(|p| p.excluded_reason.is_none())
        .map(|p| match operations {
            true => p.operations_beta,
            false => p.unlevered_beta,
        })
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(low, high), b| {
            (low.min(b), high.max(b))
        })
}

/// The highest D/E among the peers the case aggregates.
fn highest_peer_debt_to_equity(base: &Valuation) -> f64 {
    (base.peers.iter())
        .filter(|p| p.excluded_reason.is_none())
        .map(|p| p.debt_to_equity)
        .fold(f64::NEG_INFINITY, f64::max)
}

/// A claim the case's own value already meets is answered with that value, not with the double
/// next to it where the bisection stopped (0.39999999999999813 for 0.4): `found` when it is not
/// within a billionth of `base` (or of a rate's unit near zero, for a case value of 0) or
/// `base` does not reproduce the claim.
fn case_value_if_it_meets(
    found: f64,
    base: f64,
    wacc_at: &dyn Fn(f64) -> Result<f64>,
    claimed: f64,
) -> f64 {
    let near = (found - base).abs() <= 1e-9 * base.abs().max(1e-3);
    match near && matches!(wacc_at(base), Ok(w) if (w - claimed).abs() <= REPRODUCED) {
        true => base,
        false => found,
    }
}

/// The case key `target` varies (`target.debt_to_capital` for a case that gives its target
/// that way; the relevered beta is not a key) and its value in `base`.
pub fn key_and_base_value(
    target: Target,
    by_capital: bool,
    base: &Valuation,
) -> (&'static str, f64) {
    match target {
        Target::Erp => ("market.equity_risk_premium", base.cost.equity_risk_premium),
        Target::RiskFree => ("market.risk_free_rate", base.cost.risk_free_rate),
        Target::CostOfDebt => ("debt.cost_pre_tax", base.cost.cost_of_debt_pre_tax),
        Target::SizePremium => ("premiums.size", base.cost.premiums.size),
        Target::DebtToEquity if by_capital => {
            ("target.debt_to_capital", base.cost.target.debt_to_capital)
        }
        Target::DebtToEquity => ("target.debt_to_equity", base.cost.target.debt_to_equity),
        Target::Beta => ("relevered beta", base.cost.beta.relevered),
    }
}

/// Refuses a target the case cannot be solved for, saying why.
fn refuse_unsolvable(inputs: &Inputs, target: Target) -> Result<()> {
    let settings = &inputs.case.settings;
    if target == Target::CostOfDebt && settings.debt.source != crate::case::DebtSource::Given {
        return Err(Error::Case {
            file: inputs.case.path.clone(),
            message: "the cost of debt comes from a spread table (debt.source); to solve for it, \
                      set debt.source = \"given\""
                .into(),
        });
    }
    if target == Target::DebtToEquity && settings.target.source != TargetSource::Explicit {
        return Err(Error::Case {
            file: inputs.case.path.clone(),
            message: format!(
                "target.source = {}: the target structure is not a ratio of the case, so none can \
                 be solved for; set target.source = \"explicit\"",
                crate::case::label(&settings.target.source)
            ),
        });
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::range::INTERVALS;
    use super::*;

    // A line WACC = 0.05 + 0.5·x, refused below x = 0.3: the claim 0.25 has the root x = 0.4
    // (algebra). The scan over [0, 1] has 65 values i/64, of which those below 0.3 (i ≤ 19,
    // 20 values) are refused; bisection ends on adjacent doubles, so the root is met to a few
    // ulps (1e-15 absolute).
    #[test]
    fn refused_values_are_left_out_of_the_scan() {
        let wacc_at = |x: f64| -> Result<f64> {
            if x < 0.3 {
                Err(Error::Regression(format!("refused at {x}")))
            } else {
                Ok(0.05 + 0.5 * x)
            }
        };
        let scan = solve(&wacc_at, (0.0, 1.0), INTERVALS, 0.25).unwrap();
        assert!((scan.value.unwrap() - 0.4).abs() < 1e-15);
        assert_eq!(scan.crossings, 1);
        assert_eq!(scan.refused, 20);
        // Refused from x = 0 to 19/64; the edge is 19/64, next to the accepted 20/64.
        assert_eq!(scan.refused_range, Some((0.0, 19.0 / 64.0)));
        assert_eq!(scan.refused_at_edge.as_ref().unwrap().0, 19.0 / 64.0);
        // The lowest WACC is at the refusal's edge, x = 0.3 (found by bisection to adjacent
        // doubles, so 0.05 + 0.5·0.3 = 0.2 to an ulp or two).
        assert!((scan.wacc_min - 0.2).abs() < 1e-15, "{}", scan.wacc_min);
        assert!((scan.wacc_max - 0.55).abs() < 1e-15);
        // A claim met between the edge and the first accepted scan value, 20/64 = 0.3125: at
        // x = 0.305 (WACC 0.2025), which no scan value brackets.
        let scan = solve(&wacc_at, (0.0, 1.0), INTERVALS, 0.2025).unwrap();
        assert!((scan.value.unwrap() - 0.305).abs() < 1e-15);
        // A claim only a refused value could meet is not found, and the scan says what it saw.
        let scan = solve(&wacc_at, (0.0, 1.0), INTERVALS, 0.10).unwrap();
        assert_eq!((scan.value, scan.crossings), (None, 0));
        // Every value refused: the first refusal is the error.
        let message = solve(&wacc_at, (0.0, 0.2), INTERVALS, 0.1)
            .err()
            .unwrap()
            .to_string();
        assert_eq!(message, "regression: refused at 0");
    }

    // A cubic WACC = 0.05 + (x − 0.21)(x − 0.52)(x − 0.83) has the claim 0.05 at its three roots
    // (algebra; none is a scan value i/64): the lowest is the answer and the other two are
    // listed, each to a few ulps (bisection ends on adjacent doubles). Found by review: only
    // the lowest was given.
    #[test]
    fn every_value_that_fits_is_given() {
        let wacc_at = |x: f64| -> Result<f64> { Ok(0.05 + (x - 0.21) * (x - 0.52) * (x - 0.83)) };
        let scan = solve(&wacc_at, (0.0, 1.0), INTERVALS, 0.05).unwrap();
        assert_eq!(scan.crossings, 3);
        assert!((scan.value.unwrap() - 0.21).abs() < 1e-15);
        assert_eq!(scan.others.len(), 2);
        assert!((scan.others[0] - 0.52).abs() < 1e-15 && (scan.others[1] - 0.83).abs() < 1e-15);
    }

    // A claim within REPRODUCED of the WACC at the range's end, just outside the range of WACCs,
    // is reproduced by that end (found by review: a claim 4e-12 beyond the WACC at D/E = 0 was
    // reported out of reach). The line 0.05 + 0.5·x on [0, 1]: at x = 0 the WACC is 0.05.
    #[test]
    fn an_input_that_moves_nothing_is_said_to() {
        // A WACC of 0.05 whatever x: every value gives the claim; no crossing is counted and
        // no other value listed (found by review: 65 "intervals" and 63 others).
        let wacc_at = |_: f64| -> Result<f64> { Ok(0.05) };
        let scan = solve(&wacc_at, (0.0, 1.0), INTERVALS, 0.05).unwrap();
        assert!(scan.flat && scan.others.is_empty());
        assert_eq!((scan.value, scan.crossings), (Some(0.0), 1));
        // A cubic: not flat.
        let wacc_at = |x: f64| -> Result<f64> { Ok(0.05 + (x - 0.21) * (x - 0.52) * (x - 0.83)) };
        assert!(!solve(&wacc_at, (0.0, 1.0), INTERVALS, 0.05).unwrap().flat);
    }

    #[test]
    fn a_claim_within_the_tolerance_of_an_end_is_met_there() {
        let wacc_at = |x: f64| -> Result<f64> { Ok(0.05 + 0.5 * x) };
        let scan = solve(&wacc_at, (0.0, 1.0), INTERVALS, 0.05 - 4e-12).unwrap();
        assert_eq!((scan.value, scan.crossings), (Some(0.0), 1));
        // Beyond the tolerance it is not.
        let scan = solve(&wacc_at, (0.0, 1.0), INTERVALS, 0.05 - 1e-9).unwrap();
        assert_eq!((scan.value, scan.crossings), (None, 0));
    }

    // A claim that is the WACC at a scan value (x = 32/64 = 0.5 of the 65 values over [0, 1])
    // is answered with that value exactly, not walked away from.
    #[test]
    fn a_claim_met_at_a_scan_value_is_that_value() {
        let wacc_at = |x: f64| -> Result<f64> { Ok(0.05 + 0.5 * x) };
        let claimed = wacc_at(0.5).unwrap();
        let scan = solve(&wacc_at, (0.0, 1.0), INTERVALS, claimed).unwrap();
        assert_eq!(scan.value, Some(0.5));
        assert_eq!(scan.crossings, 1);
    }

    // A WACC that jumps across the claim (0.25 below x = 0.4, 0.5 above; the claim 0.3 in the
    // gap) gives the jump's place, where the WACC is a whole step away from the claim: the
    // answer must not count as reproduced.
    #[test]
    fn a_jump_across_the_claim_is_not_a_reproduction() {
        let wacc_at = |x: f64| -> Result<f64> { Ok(if x < 0.4 { 0.25 } else { 0.5 }) };
        let scan = solve(&wacc_at, (0.0, 1.0), INTERVALS, 0.3).unwrap();
        let value = scan.value.unwrap();
        // Bisection closes on the step to adjacent doubles.
        assert!((value - 0.4).abs() < 1e-15, "{value}");
        let achieved = wacc_at(value).unwrap();
        assert!((achieved - 0.3).abs() > REPRODUCED);
    }
}
