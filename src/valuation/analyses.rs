//! The records of the reviewer's analyses that a valuation carries: the sensitivity grid, the
//! Monte Carlo interval and the bridge to a claimed build-up. `audit` computes them; they live
//! here, below it, so the one result value can hold them without the valuation depending on the
//! audit layer.

use serde::Serialize;

use super::Valuation;
use crate::capital::cost;
use crate::case::Metric;

/// One axis: a case key path and its values.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Axis {
    pub key: String,
    pub values: Vec<f64>,
}

impl Axis {
    /// The `--set` assignment of value `i`, in exponent form beyond 1e15 and below 1e-6 (found
    /// by review: 1e297 written out as a 298-digit whole number, which the case reader refuses),
    /// except a whole number a whole-number key can take (below 2⁶³), written out (found by
    /// review: a seed of 5e16 read as a number with decimals, "not a whole number").
    pub fn assignment(&self, i: usize) -> String {
        let value = self.values[i];
        match value.fract() == 0.0 && value.abs() < 9.2e18 {
            true => format!("{}={}", self.key, value as i64),
            false => format!("{}={}", self.key, crate::error::compact(value)),
        }
    }
}

/// A computed grid; `cells[r][c]` is the metric at row value `r` and column value `c`, or
/// `None` (`null`) where the case refuses those two values (listed in `refused` with why).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Grid {
    pub metric: Metric,
    pub rows: Axis,
    pub columns: Axis,
    pub cells: Vec<Vec<Option<f64>>>,
    /// `[row, column]` of the cell whose two values are the case's own (it reproduces the
    /// case's figure); `null` when an axis does not hold the case's value.
    pub base_cell: Option<[usize; 2]>,
    /// The cells the case refuses, in row-major order; absent from `result.json` when every
    /// cell was computed (so a receipt written before this field verifies unchanged).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub refused: Vec<RefusedCell>,
}

/// A grid cell whose two values the case refuses: a low ERP at which a debt beta read from the
/// credit spread exceeds a peer's equity beta, a window too short to estimate, …
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RefusedCell {
    pub row: usize,
    pub column: usize,
    pub reason: String,
}

impl Grid {
    /// The computed cells' figures, row by row.
    pub fn computed(&self) -> impl Iterator<Item = f64> + '_ {
        self.cells.iter().flatten().flatten().copied()
    }

    /// The keys of the axes along which no computed figure changes (each axis with at least
    /// two values, and at least two computed cells to compare along it): a key the case does not
    /// use (Newey–West lags with classical standard errors), or one that does not reach the
    /// figure over the values tried (a peer's debt away from the median).
    pub fn unmoved_axes(&self) -> Vec<&str> {
        let along_rows = (0..self.columns.values.len())
            .map(|c| self.cells.iter().map(move |row| row[c]).collect::<Vec<_>>());
        let along_columns = self.cells.iter().cloned();
        let unmoved = |mut lines: Box<dyn Iterator<Item = Vec<Option<f64>>> + '_>| {
            let mut compared = false;
            let flat = lines.all(|line| {
                let values: Vec<f64> = line.into_iter().flatten().collect();
                compared |= values.len() > 1;
                values.windows(2).all(|pair| pair[0] == pair[1])
            });
            flat && compared
        };
        let mut keys = Vec::new();
        if self.rows.values.len() > 1 && unmoved(Box::new(along_rows)) {
            keys.push(self.rows.key.as_str());
        }
        if self.columns.values.len() > 1 && unmoved(Box::new(along_columns)) {
            keys.push(self.columns.key.as_str());
        }
        keys
    }

    /// Why the case refuses cell (`row`, `column`), if it does.
    pub fn refusal(&self, row: usize, column: usize) -> Option<&str> {
        self.refused
            .iter()
            .find(|refused| refused.row == row && refused.column == column)
            .map(|refused| refused.reason.as_str())
    }
}

/// Percentiles of the simulated WACC.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Uncertainty {
    pub draws: u32,
    pub seed: u64,
    pub beta_distribution: &'static str,
    pub equity_risk_premium_range: Option<[f64; 2]>,
    pub risk_free_rate_range: Option<[f64; 2]>,
    pub point_estimate: f64,
    /// `None` when an aggregated peer's beta has 2 or fewer degrees of freedom: its draws have
    /// no finite variance, so their mean does not settle.
    pub mean: Option<f64>,
    pub p05: f64,
    pub p25: f64,
    pub p50: f64,
    pub p75: f64,
    pub p95: f64,
    /// Whether the point estimate lies outside the 5th to 95th percentile of the draws (stated
    /// rate ranges can move the interval away from the case's own rates).
    pub point_outside_interval: bool,
    /// `"correlated"` or `"independent"` (`uncertainty.beta_errors`).
    pub beta_errors: crate::case::BetaErrors,
    /// Correlation of the peers' beta errors, peer order (the identity when drawn independently).
    pub beta_error_correlation: Vec<Vec<f64>>,
    /// The interval that also resamples the peer set.
    pub peer_set: PeerSetInterval,
    /// The WACC without each peer that enters the aggregation, in peer order.
    pub leave_one_out: Vec<LeaveOneOut>,
    /// The WACC with each excluded peer put back, in peer order, and with every one put back
    /// (a last row named "all N excluded peers", when there are two or more): what each
    /// exclusion is worth. Absent when no peer is excluded.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub put_back: Vec<LeaveOneOut>,
    /// A leave-one-out change above this (decimal) names the peer as influential.
    pub influence_threshold: f64,
    /// The WACC under the usual alternative frequencies and windows (empty when turned off).
    pub specifications: Vec<Specification>,
    /// The estimation-error draws binned, for the memo's chart (see `audit::histogram`).
    pub histogram: Histogram,
}

/// Percentiles of the WACC when each draw resamples the peers (with replacement, among those
/// aggregated) and draws their betas from their joint sampling distribution.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PeerSetInterval {
    /// Draws that gave a WACC: under a peer-median target, a resample whose peers' median D/E
    /// is below 0 (net debt) gives none; a resample of one repeated peer under a cross-sectional
    /// Vasicek prior counts at its limit, the unadjusted betas.
    pub draws: u32,
    pub mean: f64,
    pub p05: f64,
    pub p25: f64,
    pub p50: f64,
    pub p75: f64,
    pub p95: f64,
}

/// The case's WACC without one peer (or, in `put_back`, with an excluded one).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LeaveOneOut {
    pub peer: String,
    /// `null` when leaving the peer out leaves no peer to aggregate.
    pub wacc: Option<f64>,
    /// `wacc` less the case's WACC, in basis points.
    pub change_bp: Option<f64>,
    /// Whether |change| is above `influence_threshold`.
    pub influential: bool,
    /// Why `wacc` is `null` when a peer is left (absent otherwise, and when no peer is left):
    /// a cross-sectional Vasicek prior from the one peer that remains.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub reason: Option<String>,
}

/// The WACC under one alternative specification of the return window.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Specification {
    pub frequency: crate::market::sampling::Frequency,
    /// The window: a span such as `"3y"`, or the case's own `beta.lookback`.
    pub window: String,
    /// The `--set` assignments that give this row, so anyone can rerun it.
    pub overrides: Vec<String>,
    /// Whether this is (the closest row to) the case's own choice.
    pub case_choice: bool,
    /// `null` when the data cannot support it (`reason` says why).
    pub wacc: Option<f64>,
    pub reason: Option<String>,
}

/// The components of a WACC build-up.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct BuildUp {
    pub risk_free_rate: f64,
    pub equity_risk_premium: f64,
    /// Relevered (equity) beta.
    pub beta: f64,
    /// Sum of the additional equity premiums.
    pub premiums: f64,
    pub cost_of_debt_pre_tax: f64,
    pub tax_rate: f64,
    pub equity_weight: f64,
    pub debt_weight: f64,
    /// Preferred equity and lease liabilities (0 when a side has neither): in the WACC so the
    /// bridge and `implied` use the case's own formula, and moved with the weights group.
    pub preferred_weight: f64,
    pub preferred_cost: f64,
    pub lease_weight: f64,
    pub lease_cost_pre_tax: f64,
}

/// Written with each other component's weight and cost only when the side holds it (weight
/// above 0, its cost then always, 0 included), so a receipt of a build-up without them reads
/// as before.
impl Serialize for BuildUp {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        use serde::ser::SerializeMap;
        let mut map = serializer.serialize_map(None)?;
        let fields = [
            ("risk_free_rate", self.risk_free_rate),
            ("equity_risk_premium", self.equity_risk_premium),
            ("beta", self.beta),
            ("premiums", self.premiums),
            ("cost_of_debt_pre_tax", self.cost_of_debt_pre_tax),
            ("tax_rate", self.tax_rate),
            ("equity_weight", self.equity_weight),
            ("debt_weight", self.debt_weight),
        ];
        for (key, value) in fields {
            map.serialize_entry(key, &value)?;
        }
        let others = [
            (
                "preferred_weight",
                "preferred_cost",
                self.preferred_weight,
                self.preferred_cost,
            ),
            (
                "lease_weight",
                "lease_cost_pre_tax",
                self.lease_weight,
                self.lease_cost_pre_tax,
            ),
        ];
        for (weight_key, cost_key, weight, cost) in others {
            if weight > 0.0 {
                map.serialize_entry(weight_key, &weight)?;
                map.serialize_entry(cost_key, &cost)?;
            }
        }
        map.end()
    }
}

impl BuildUp {
    pub fn cost_of_equity(&self) -> f64 {
        cost::capm_cost_of_equity(
            self.risk_free_rate,
            self.beta,
            self.equity_risk_premium,
            self.premiums,
        )
    }

    /// The WACC of these components, by the one WACC formula ([`cost::wacc`]).
    pub fn wacc(&self) -> f64 {
        cost::wacc(&cost::WaccTerms {
            equity_weight: self.equity_weight,
            cost_of_equity: self.cost_of_equity(),
            debt_weight: self.debt_weight,
            cost_of_debt_after_tax: cost::after_tax_cost_of_debt(
                self.cost_of_debt_pre_tax,
                self.tax_rate,
            ),
            preferred_weight: self.preferred_weight,
            preferred_cost: self.preferred_cost,
            lease_weight: self.lease_weight,
            lease_cost_after_tax: cost::after_tax_cost_of_debt(
                self.lease_cost_pre_tax,
                self.tax_rate,
            ),
        })
    }
}

/// The input groups of the bridge, in the order the sequential bridge replaces them.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Group {
    RiskFreeRate,
    EquityRiskPremium,
    Beta,
    Premiums,
    CostOfDebt,
    TaxRate,
    Weights,
}

impl Group {
    pub const ALL: [Group; 7] = [
        Group::RiskFreeRate,
        Group::EquityRiskPremium,
        Group::Beta,
        Group::Premiums,
        Group::CostOfDebt,
        Group::TaxRate,
        Group::Weights,
    ];

    /// The group's name for people (the memo, the chart, the workbook); the CSV and the
    /// terminal keep its key (`risk_free_rate`).
    pub fn title(self) -> &'static str {
        match self {
            Group::RiskFreeRate => "Risk-free rate",
            Group::EquityRiskPremium => "Equity risk premium",
            Group::Beta => "Relevered beta",
            Group::Premiums => "Additional premiums",
            Group::CostOfDebt => "Pre-tax cost of debt",
            Group::TaxRate => "Tax rate",
            Group::Weights => "Capital weights",
        }
    }

    /// Copies this group's components from `from` into `into`.
    pub fn take(self, from: &BuildUp, into: &mut BuildUp) {
        match self {
            Group::RiskFreeRate => into.risk_free_rate = from.risk_free_rate,
            Group::EquityRiskPremium => into.equity_risk_premium = from.equity_risk_premium,
            Group::Beta => into.beta = from.beta,
            Group::Premiums => into.premiums = from.premiums,
            Group::CostOfDebt => into.cost_of_debt_pre_tax = from.cost_of_debt_pre_tax,
            Group::TaxRate => into.tax_rate = from.tax_rate,
            Group::Weights => {
                into.equity_weight = from.equity_weight;
                into.debt_weight = from.debt_weight;
                into.preferred_weight = from.preferred_weight;
                into.preferred_cost = from.preferred_cost;
                into.lease_weight = from.lease_weight;
                into.lease_cost_pre_tax = from.lease_cost_pre_tax;
            }
        }
    }

    /// The figure that stands for this group in `build_up`, for showing the two sides: the
    /// rate, the relevered beta, the premiums' sum, the pre-tax cost of debt, the tax rate, or
    /// for the weights the equity weight.
    pub fn figure(self, build_up: &BuildUp) -> f64 {
        match self {
            Group::RiskFreeRate => build_up.risk_free_rate,
            Group::EquityRiskPremium => build_up.equity_risk_premium,
            Group::Beta => build_up.beta,
            Group::Premiums => build_up.premiums,
            Group::CostOfDebt => build_up.cost_of_debt_pre_tax,
            Group::TaxRate => build_up.tax_rate,
            Group::Weights => build_up.equity_weight,
        }
    }
}

/// One side of a comparison.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Side {
    pub label: String,
    /// The file it came from, as given, and its SHA-256 (for a computed case, its case file,
    /// as `case.file` and `case.sha256` record it; empty before 0.17.0 for the case being run).
    pub source: String,
    pub sha256: String,
    pub build_up: BuildUp,
    /// The WACC of the build-up's components.
    pub wacc: f64,
    /// The WACC the claim states, when it states one.
    pub stated_wacc: Option<f64>,
    /// Whether this side is a case hurdle computed (its `stated_wacc` is the case's own WACC),
    /// not a claim that states one.
    #[serde(skip)]
    pub computed: bool,
    /// The date the side speaks for: a case's valuation date, a claim's `as_of` when it gives
    /// one. Written when present (the case's own side leaves it to `case.valuation_date`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub as_of: Option<String>,
    /// The currency the side's rates are in: a claim's `currency` when it gives one (written
    /// then), a case's `case.currency` for the notes only.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub currency: Option<String>,
    /// A claim's `debt_to_capital` as it gives it, read as D/(D + E) (its notes say so when
    /// the claim also holds preferred equity or leases, where "of capital" reads two ways).
    #[serde(skip)]
    pub debt_to_capital: Option<f64>,
    /// The cost of equity a claim states beside its components, when it states one (since
    /// 0.17.0): recorded, and noted when the components give another; the bridge uses them.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stated_cost_of_equity: Option<f64>,
}

impl Side {
    /// The WACC the side stands for: the one it states, else its components'.
    pub fn headline_wacc(&self) -> f64 {
        self.stated_wacc.unwrap_or(self.wacc)
    }

    /// The stated WACC less the components' when a claim states one that differs from them by
    /// what a rate to three decimals of a percent shows (half a tenth of a basis point, 5e-6);
    /// `None` otherwise, and for a computed case, whose stated WACC is its own.
    pub fn stated_gap(&self) -> Option<f64> {
        let gap = self.stated_wacc.filter(|_| !self.computed)? - self.wacc;
        (gap.abs() >= 5e-6).then_some(gap)
    }

    /// The side's relevered beta taken back to an asset beta at its own D/E and tax rate by
    /// Hamada's formula, βL / (1 + (1 − t)·D/E), riskless debt: the part of the bridge's beta line
    /// that is not leverage, comparable across sides of different D/E (found by review: a beta
    /// line of +47 bp between asset betas of 0.784 and 0.786 was all leverage, unsaid). `None`
    /// without equity.
    pub fn asset_beta(&self) -> Option<f64> {
        let b = &self.build_up;
        (b.equity_weight > 0.0).then(|| {
            crate::capital::leverage::Formula::Hamada.unlever_with(
                b.beta,
                crate::capital::leverage::CapitalStructure {
                    debt_to_equity: b.debt_weight / b.equity_weight,
                    tax_rate: b.tax_rate,
                },
                crate::capital::leverage::DebtTerms {
                    debt_beta: 0.0,
                    cost_of_debt: 0.0,
                },
            )
        })
    }

    /// The build-up of a computed valuation.
    pub fn from_valuation(label: &str, valuation: &Valuation) -> Side {
        let c = &valuation.cost;
        let build_up = BuildUp {
            risk_free_rate: c.risk_free_rate,
            equity_risk_premium: c.equity_risk_premium,
            beta: c.beta.relevered,
            premiums: c.premiums.total,
            cost_of_debt_pre_tax: c.cost_of_debt_pre_tax,
            tax_rate: c.target.tax_rate,
            equity_weight: c.weights.equity,
            debt_weight: c.weights.debt,
            preferred_weight: c.weights.preferred,
            preferred_cost: held(c.weights.preferred, c.other_capital_costs.preferred_cost),
            lease_weight: c.weights.leases,
            lease_cost_pre_tax: held(c.weights.leases, c.other_capital_costs.lease_cost_pre_tax),
        };
        Side {
            label: label.to_string(),
            source: valuation.case.file.clone(),
            sha256: valuation.case.sha256.clone(),
            wacc: build_up.wacc(),
            stated_wacc: Some(c.wacc),
            build_up,
            computed: true,
            as_of: None,
            currency: None,
            debt_to_capital: None,
            stated_cost_of_equity: None,
        }
    }
}

/// A component's cost as the build-up holds it: 0 for a component the case does not hold (a
/// lease cost defaults to the cost of debt even at weight 0), which moves no WACC.
fn held(weight: f64, cost: f64) -> f64 {
    if weight > 0.0 {
        cost
    } else {
        0.0
    }
}

/// One step of the sequential bridge.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Step {
    pub group: Group,
    pub wacc_before: f64,
    pub wacc_after: f64,
    pub contribution: f64,
    /// The group's Shapley value: its order-independent share of the difference.
    pub shapley: f64,
}

/// The bridge from one WACC to another.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Bridge {
    pub from: Side,
    pub to: Side,
    /// `to.wacc − from.wacc`, the difference the steps explain.
    pub difference: f64,
    pub steps: Vec<Step>,
    /// `to.stated_wacc − to.wacc`: what the claim's own components do not explain.
    pub unexplained: Option<f64>,
    /// `from.stated_wacc − from.wacc`: what a claim on the starting side does not explain
    /// with its own components (0 for a case, whose build-up includes preferred equity and
    /// leases).
    pub unexplained_from: Option<f64>,
    /// The bridge as waterfall bars, by Shapley value (see `audit::waterfall`).
    pub waterfall: Vec<WaterfallBar>,
    /// The gap between the two WACCs as stated (a claim's `wacc`, else its components'), which
    /// the unexplained parts and the steps add up to, as in `bridge.csv` and the memo's table
    /// (added in 0.15.0; found by review: the terminal's and the memo's totals were the
    /// components' gap).
    pub stated_difference: f64,
}

impl Bridge {
    /// Whether the two sides' structures differ (their D/E, read from the weights' cross
    /// products, to 1e-12 relative: preferred equity on one side may leave rounding): the beta
    /// line then carries a relevering as well as the weights line.
    pub fn structures_differ(&self) -> bool {
        let (from, to) = (&self.from.build_up, &self.to.build_up);
        let (a, b) = (
            from.debt_weight * to.equity_weight,
            to.debt_weight * from.equity_weight,
        );
        (a - b).abs() > 1e-12 * a.abs().max(b.abs())
    }
}

/// Bin edges (one more than the counts) and counts of the values in each bin.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Histogram {
    pub edges: Vec<f64>,
    pub counts: Vec<u32>,
    /// The bin width (the round step the edges are multiples of).
    pub bin_width: f64,
}

/// What a bar stands for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum BarKind {
    /// A WACC itself, drawn from zero.
    Total,
    /// An input group's Shapley value.
    Group,
    /// What no input group explains.
    Residue,
}

/// One bar: it runs from `start` to `end` (WACC levels; `start` is 0 for a total).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WaterfallBar {
    pub label: String,
    pub kind: BarKind,
    pub start: f64,
    pub end: f64,
    /// The step's size, as computed (a group's Shapley value, a residue), which the chart
    /// writes at the bar's end; `None` for a total.
    pub change: Option<f64>,
}
