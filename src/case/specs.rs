//! The one place a case becomes the spec types of the computing layers: the estimation spec that
//! `estimate` takes, the estimator spec of `beta`, and the capital spec and peer figures that
//! `capital::chain` takes. Nothing below `case` reads a case file; everything it needs from one
//! passes through here.

use crate::beta::diagnostics::FlagRule;
use crate::beta::EstimatorSpec;
use crate::capital::chain::{CapitalSpec, Component, PeerCapital, PremiumSpec, TargetSpec};
use crate::capital::debt::{DebtSource, DebtSpec, SpreadTable};
use crate::estimate::{EstimationSpec, RollingSpec};

use super::schema::{BetaSettings, CaseFile, PeerSpec};

/// The estimator of `[beta]`.
pub fn estimator(beta: &BetaSettings) -> EstimatorSpec {
    EstimatorSpec {
        method: beta.method,
        std_errors: beta.std_errors,
        newey_west_lags: beta.newey_west_lags,
        dimson_lags: beta.dimson_lags,
        dimson_leads: beta.dimson_leads,
    }
}

/// Everything that decides the peers' estimates. Two cases with equal specs (and the same price
/// files) have the same estimates, so a what-if that leaves it unchanged reuses them.
pub fn estimation(settings: &CaseFile) -> EstimationSpec {
    let beta = &settings.beta;
    let valuation_date = settings.case.valuation_date.0;
    let lookback = beta.lookback_periods(valuation_date);
    let (window, min_observations) = beta.rolling(lookback);
    EstimationSpec {
        frequency: beta.frequency,
        weekday: beta.weekday,
        returns: beta.returns,
        max_stale_days: beta.max_stale_days,
        window_end: beta.window_end_date(valuation_date),
        lookback,
        min_observations: beta.min_observations,
        estimator: estimator(beta),
        flags: FlagRule {
            observations_share: beta.flag_observations_share,
            r_squared_floor: beta.flag_r_squared_floor,
            stale_share: beta.flag_stale_share,
            zero_return_share: beta.flag_zero_return_share,
            lag_p_value: beta.flag_lag_p_value,
            exclude: beta.exclude_flags.clone(),
        },
        rolling_betas: true,
        case_extras: true,
        lag_response: true,
        rolling: RollingSpec {
            window,
            step: beta.rolling_step,
            min_observations,
        },
    }
}

/// The capital chain's spec: adjustment, leverage, target, rates, premiums, other components and
/// the cost-of-debt source with its table.
pub fn capital<'a>(settings: &'a CaseFile, debt_table: Option<&'a SpreadTable>) -> CapitalSpec<'a> {
    let (beta, leverage, market) = (&settings.beta, &settings.leverage, &settings.market);
    let premiums = &settings.premiums;
    CapitalSpec {
        adjustment: beta.adjustment,
        blume_weight: beta.blume_weight,
        vasicek_prior: beta.vasicek_prior_mean.zip(beta.vasicek_prior_variance),
        formula: leverage.formula,
        aggregation: leverage.aggregation,
        trim_fraction: leverage.trim_fraction,
        operations_beta: leverage.operations_beta,
        debt_measure: leverage.debt_measure,
        debt_beta_source: leverage.debt_beta_source,
        debt_beta: leverage.debt_beta,
        target: settings
            .stated_target_debt_to_equity()
            .map_or(TargetSpec::PeerMedian, TargetSpec::DebtToEquity),
        tax_rate: settings.target.tax_rate,
        risk_free_rate: market.risk_free_rate,
        equity_risk_premium: market.equity_risk_premium,
        premiums: PremiumSpec {
            size: premiums.size,
            country: premiums.country,
            company_specific: premiums.company_specific,
            country_method: premiums.country_method,
            country_exposure: premiums.country_exposure,
        },
        preferred: Component {
            weight: settings.preferred.weight,
            cost: settings.preferred.cost,
        },
        leases: Component {
            weight: settings.leases.weight,
            cost: settings.leases.cost_pre_tax,
        },
        debt: debt_spec(&settings.debt),
        debt_table,
    }
}

/// One peer's figures for the chain, with its raw beta and whether it enters the aggregates.
pub fn peer_capital(
    peer: &PeerSpec,
    raw_beta: f64,
    beta_std_error: f64,
    included: bool,
) -> PeerCapital {
    PeerCapital {
        raw_beta,
        beta_std_error,
        equity_value: peer.equity_value,
        debt: peer.debt,
        cash: peer.cash,
        tax_rate: peer.tax_rate,
        own_debt_beta: peer.debt_beta,
        own_cost_of_debt: peer.cost_of_debt,
        included,
    }
}

/// The `[debt]` section as the capital layer's [`DebtSpec`]: what its source needs, which
/// `validate` has required (a given yield, a rating, EBIT and interest expense).
fn debt_spec(debt: &super::DebtSettings) -> DebtSpec<'_> {
    match debt.source {
        DebtSource::Given => DebtSpec::Given(debt.cost_pre_tax.expect("validate() requires it")),
        DebtSource::Rating => {
            DebtSpec::Rating(debt.rating.as_deref().expect("validate() requires it"))
        }
        DebtSource::Coverage => DebtSpec::Coverage {
            ebit: debt.ebit.expect("validate() requires it"),
            interest_expense: debt.interest_expense.expect("validate() requires it"),
        },
    }
}
