//! Implied inputs: which value of one input reproduces a claimed WACC.
//!
//! The WACC is evaluated over a plausible range of the chosen input (a scan of 64 equal
//! intervals), every interval where it crosses the claim is counted, and the first crossing is
//! narrowed by bisection until the bracket is as small as doubles allow. Bisection is chosen
//! over faster methods because it cannot leave its bracket. A claim no value in the range
//! reaches is reported with the WACC range found, never forced. Inputs that are case keys are
//! varied through the valuation (the same computation as `--set`, reusing the peers' estimates,
//! which none of these keys moves); the relevered beta, which is not a case key, through the
//! build-up of [`super::bridge::BuildUp`], whose WACC is the case's own formula.

use serde::Serialize;

use super::bridge::Side;
use crate::case::{with_overrides, CountryMethod, TargetSource};
use crate::error::{Error, Result};
use crate::valuation::{cost_of_capital, estimates_for, Inputs, PeerEstimates, Valuation};

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
    /// The lowest and highest WACC seen over the scan.
    pub wacc_min: f64,
    pub wacc_max: f64,
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
    let (low, high) = range.unwrap_or_else(|| target.default_range());
    // Every default range passes, so a failing range is the user's; the command line names it.
    if !(low.is_finite() && high.is_finite() && low < high) {
        return Err(Error::Argument {
            option: format!(
                "search range {}..{}",
                crate::error::compact(low),
                crate::error::compact(high)
            ),
            message: "the range must be LOW..HIGH with finite LOW < HIGH".into(),
        });
    }
    refuse_unsolvable(inputs, target)?;
    let settings = &inputs.case.settings;
    let by_capital = target == Target::DebtToEquity && settings.target.debt_to_equity.is_none();
    let (key, base_value) = match target {
        Target::Erp => ("market.equity_risk_premium", base.cost.equity_risk_premium),
        Target::RiskFree => ("market.risk_free_rate", base.cost.risk_free_rate),
        Target::CostOfDebt => ("debt.cost_pre_tax", base.cost.cost_of_debt_pre_tax),
        Target::SizePremium => ("premiums.size", base.cost.premiums.size),
        Target::DebtToEquity if by_capital => {
            ("target.debt_to_capital", base.cost.target.debt_to_capital)
        }
        Target::DebtToEquity => ("target.debt_to_equity", base.cost.target.debt_to_equity),
        Target::Beta => ("relevered beta", base.cost.beta.relevered),
    };
    crate::valuation::sanity::check_search_range(
        if by_capital {
            "target.debt_to_equity"
        } else {
            key
        },
        low,
        high,
    )?;
    // A debt-to-capital case is solved in debt-to-capital, over the same D/E range mapped.
    let (low, high) = if by_capital {
        (low / (1.0 + low), high / (1.0 + high))
    } else {
        (low, high)
    };
    let build_up = Side::from_valuation("base", base).build_up;
    let wacc_at = |x: f64| -> Result<f64> {
        if target == Target::Beta {
            return Ok(super::bridge::BuildUp {
                beta: x,
                ..build_up
            }
            .wacc());
        }
        let case = with_overrides(&inputs.case, &[format!("{key}={x}")])?;
        let estimates = estimates_for(&case, inputs, estimates)?;
        Ok(cost_of_capital(&case, inputs, &estimates)?.wacc)
    };
    let (value, crossings, wacc_min, wacc_max) = solve(&wacc_at, low, high, claimed)?;
    let achieved_wacc = value.map(wacc_at).transpose()?;
    Ok(Implied {
        target,
        key: key.to_string(),
        claimed_wacc: claimed,
        base_value,
        base_wacc: base.cost.wacc,
        range: (low, high),
        value,
        achieved_wacc,
        crossings,
        wacc_min,
        wacc_max,
    })
}

/// Refuses a target the case cannot be solved for, saying why.
fn refuse_unsolvable(inputs: &Inputs, target: Target) -> Result<()> {
    let settings = &inputs.case.settings;
    if target == Target::CostOfDebt && settings.debt.source != crate::case::DebtSource::Given {
        return Err(Error::Case {
            file: inputs.case.path.clone(),
            message: "the cost of debt comes from a spread table (debt.source); solve for it \
                      with --set debt.source=given"
                .into(),
        });
    }
    if target == Target::DebtToEquity && settings.target.source != TargetSource::Explicit {
        return Err(Error::Case {
            file: inputs.case.path.clone(),
            message: format!(
                "target.source = {}: the target structure is not a ratio of the case, so none can \
                 be solved for; use --set target.source=explicit",
                crate::case::label(&settings.target.source)
            ),
        });
    }
    // The build-up holds the premiums fixed; a country premium scaled by beta moves with it.
    if target == Target::Beta && settings.premiums.country_method == CountryMethod::BetaScaled {
        return Err(Error::Case {
            file: inputs.case.path.clone(),
            message: "premiums.country_method = \"beta-scaled\" scales the country premium by the \
                      beta being solved for; solve for another input"
                .into(),
        });
    }
    Ok(())
}

/// Scans `wacc_at` over [low, high] for crossings of `claimed` and narrows the first by
/// bisection: the solution (if any), the number of crossing intervals, and the lowest and highest
/// WACC seen.
fn solve(
    wacc_at: &dyn Fn(f64) -> Result<f64>,
    low: f64,
    high: f64,
    claimed: f64,
) -> Result<(Option<f64>, usize, f64, f64)> {
    const INTERVALS: usize = 64;
    let xs: Vec<f64> = (0..=INTERVALS)
        .map(|i| low + (high - low) * i as f64 / INTERVALS as f64)
        .collect();
    let gaps = xs
        .iter()
        .map(|&x| Ok(wacc_at(x)? - claimed))
        .collect::<Result<Vec<f64>>>()?;
    // An interval crosses when the claim lies at its left end or strictly inside it; a root on
    // its right end belongs to the next interval (or to the last one, at the range's end).
    let crossing = |i: usize| {
        gaps[i] == 0.0
            || (gaps[i + 1] != 0.0 && (gaps[i] < 0.0) != (gaps[i + 1] < 0.0))
            || (i + 1 == INTERVALS && gaps[i + 1] == 0.0)
    };
    let crossings = (0..INTERVALS).filter(|&i| crossing(i)).count();
    let wacc_min = gaps.iter().fold(f64::INFINITY, |m, g| m.min(g + claimed));
    let wacc_max = gaps
        .iter()
        .fold(f64::NEG_INFINITY, |m, g| m.max(g + claimed));
    let mut value = None;
    if let Some(i) = (0..INTERVALS).find(|&i| crossing(i)) {
        let (mut a, mut b, mut gap_a) = (xs[i], xs[i + 1], gaps[i]);
        for _ in 0..200 {
            let mid = 0.5 * (a + b);
            if mid <= a || mid >= b {
                break;
            }
            let gap_mid = wacc_at(mid)? - claimed;
            if gap_mid == 0.0 {
                (a, b) = (mid, mid);
                break;
            }
            if (gap_mid < 0.0) == (gap_a < 0.0) {
                (a, gap_a) = (mid, gap_mid);
            } else {
                b = mid;
            }
        }
        let gap_b = wacc_at(b)? - claimed;
        value = Some(if gap_a.abs() <= gap_b.abs() { a } else { b });
    }
    Ok((value, crossings, wacc_min, wacc_max))
}
