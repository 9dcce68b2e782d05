//! The lower layers' problems in a case's and a universe's words: the estimators, the Vasicek
//! adjustment and the cost-of-debt lookups state what is wrong in figures and know nothing of
//! the files that set them; this module adds the key to change (`beta.newey_west_lags`,
//! `debt.rating`), which only the case layer knows. A universe shares the case's `[beta]` keys,
//! so its messages come from here too.

use crate::beta::vasicek::PriorUnavailable;
use crate::capital::debt::{DebtProblem, DebtSource};
use crate::error::EstimatorProblem;

/// An estimator's problem with the setting that would solve it.
pub fn estimator_problem(problem: &EstimatorProblem) -> String {
    let remedy = match *problem {
        // Given, the lags are the user's to lower; by the rule, the window is too short.
        EstimatorProblem::NeweyWestLags { given: true, .. } => {
            "lower beta.newey_west_lags".to_string()
        }
        EstimatorProblem::NeweyWestLags { lags, .. } => format!(
            "the Newey–West (1994) rule floor(4·(N/100)^(2/9)) chose {lags}; give \
             beta.newey_west_lags a smaller value or lengthen the window"
        ),
        // Scholes–Williams always takes one lag and one lead: only more observations help.
        EstimatorProblem::ShiftedColumns {
            scholes_williams: true,
            ..
        } => "Scholes–Williams always uses one lag and one lead: lengthen the window, or supply \
              the missing prices"
            .to_string(),
        EstimatorProblem::ShiftedColumns { .. } => {
            "lower beta.dimson_lags / beta.dimson_leads, or lengthen the window".to_string()
        }
        EstimatorProblem::ScholesWilliamsDivisor { .. } => {
            "use beta.method = \"dimson\"".to_string()
        }
    };
    format!("{problem}; {remedy}")
}

/// Why a security is not estimated when its estimator refused its settings: the message an
/// estimator's error carries (`regression: …`) with the setting to change.
pub fn estimator_failure(problem: &EstimatorProblem) -> String {
    format!("regression: {}", estimator_problem(problem))
}

/// A cross-sectional Vasicek prior that `noun` (peers, securities) cannot give.
pub fn prior_unavailable(problem: PriorUnavailable, noun: &str) -> String {
    format!(
        "beta.adjustment = \"vasicek\" needs at least two included {noun} with different betas \
         for a cross-sectional prior ({} included); state beta.vasicek_prior_mean and \
         beta.vasicek_prior_variance instead",
        problem.included
    )
}

/// A cost of debt its table cannot give, with the `[debt]` keys that set it.
pub fn debt_problem(problem: &DebtProblem) -> String {
    match problem {
        DebtProblem::NoTable(source) => {
            let source = match source {
                DebtSource::Given => "given",
                DebtSource::Rating => "rating",
                DebtSource::Coverage => "coverage",
            };
            format!("debt.source = \"{source}\" needs its spread table")
        }
        DebtProblem::TableNotRead => "the cost-of-debt spread table was not read".to_string(),
        DebtProblem::RatingNotInTable {
            rating,
            table,
            ratings,
        } => format!(
            "debt.rating = \"{rating}\" is not in the table {table} (ratings: {})",
            ratings.join(", ")
        ),
        DebtProblem::CoverageBelowTable {
            coverage,
            lowest,
            table,
        } => format!(
            "interest coverage {coverage} (debt.ebit / debt.interest_expense) is below the lowest \
             min_coverage {lowest} in the table {table}"
        ),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // The messages the estimators and lookups wrote themselves before their wording moved here
    // (hurdle 0.8.0, word for word): the move changed no message.
    #[test]
    fn the_messages_read_as_before() {
        let nw = |given| EstimatorProblem::NeweyWestLags {
            lags: 12,
            observations: 40,
            given,
        };
        assert_eq!(
            estimator_problem(&nw(true)),
            "Newey–West lags 12 are at least N/4 = 10 for N = 40 observations; lower \
             beta.newey_west_lags"
        );
        assert_eq!(
            estimator_problem(&nw(false)),
            "Newey–West lags 12 are at least N/4 = 10 for N = 40 observations; the Newey–West \
             (1994) rule floor(4·(N/100)^(2/9)) chose 12; give beta.newey_west_lags a smaller \
             value or lengthen the window"
        );
        let shifted = |scholes_williams| EstimatorProblem::ShiftedColumns {
            columns: 3,
            observations: 10,
            scholes_williams,
        };
        assert_eq!(
            estimator_problem(&shifted(false)),
            "3 lagged and led index columns are at least N/4 = 2.5 for N = 10 observations; \
             lower beta.dimson_lags / beta.dimson_leads, or lengthen the window"
        );
        assert_eq!(
            estimator_problem(&shifted(true)),
            "3 lagged and led index columns are at least N/4 = 2.5 for N = 10 observations; \
             Scholes–Williams always uses one lag and one lead: lengthen the window, or supply \
             the missing prices"
        );
        let divisor = EstimatorProblem::ScholesWilliamsDivisor {
            rho: -0.45,
            divisor: 0.1,
            floor: 0.2,
            observations: 30,
        };
        assert_eq!(
            estimator_problem(&divisor),
            "the index's first-order autocorrelation over these 30 returns is -0.450, so the \
             Scholes-Williams divisor 1 + 2ρ is 0.100, below 0.2: the beta divides the slopes by \
             it and would be unbounded (an index return that moves against its own last one \
             this strongly is not the non-synchronous trading the method corrects); use \
             beta.method = \"dimson\""
        );
        assert_eq!(
            prior_unavailable(PriorUnavailable { included: 1 }, "peers"),
            "beta.adjustment = \"vasicek\" needs at least two included peers with different \
             betas for a cross-sectional prior (1 included); state beta.vasicek_prior_mean and \
             beta.vasicek_prior_variance instead"
        );
        let rating = DebtProblem::RatingNotInTable {
            rating: "BB+".into(),
            table: "spreads.csv".into(),
            ratings: vec!["AAA".into(), "BBB".into()],
        };
        assert_eq!(
            debt_problem(&rating),
            "debt.rating = \"BB+\" is not in the table spreads.csv (ratings: AAA, BBB)"
        );
        let coverage = DebtProblem::CoverageBelowTable {
            coverage: -0.25,
            lowest: 0.0,
            table: "coverage.csv".into(),
        };
        assert_eq!(
            debt_problem(&coverage),
            "interest coverage -0.25 (debt.ebit / debt.interest_expense) is below the lowest \
             min_coverage 0 in the table coverage.csv"
        );
        assert_eq!(
            debt_problem(&DebtProblem::NoTable(DebtSource::Rating)),
            "debt.source = \"rating\" needs its spread table"
        );
    }
}
