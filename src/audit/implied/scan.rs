//! The scan behind `implied`: the WACC at evenly spaced values across the range (65, more
//! over a widened default range), the values the case
//! refuses left out (with the edge of the refusals found by bisection), every interval that
//! crosses the claim narrowed by bisection to adjacent doubles, and the cases of no crossing
//! (a claim met at a value searched, an input that does not move the WACC).

use super::REPRODUCED;
use crate::error::{Error, Result};

/// Narrows `[a, b]`, whose ends' gaps to `claimed` differ in sign (`gap_a` at `a`, nonzero), to
/// adjacent doubles; returns the end whose WACC is nearer the claim.
fn bisect(
    wacc_at: &dyn Fn(f64) -> Result<f64>,
    (mut a, mut gap_a): (f64, f64),
    mut b: f64,
    claimed: f64,
) -> Result<f64> {
    for _ in 0..200 {
        let mid = 0.5 * (a + b);
        if mid <= a || mid >= b {
            break;
        }
        let gap_mid = wacc_at(mid)? - claimed;
        if gap_mid == 0.0 {
            return Ok(mid);
        }
        if (gap_mid < 0.0) == (gap_a < 0.0) {
            (a, gap_a) = (mid, gap_mid);
        } else {
            b = mid;
        }
    }
    let gap_b = wacc_at(b)? - claimed;
    Ok(if gap_a.abs() <= gap_b.abs() { a } else { b })
}

/// The scan's values and gaps (WACC less the claim; `None` where the case refuses), with the
/// edge of every refused stretch added: where the case starts or stops refusing between two
/// scan values, the accepted side is searched up to the edge, found by bisection, so a claim
/// met just inside the accepted values is not lost to the refused scan value beside it.
fn with_refusal_edges(
    wacc_at: &dyn Fn(f64) -> Result<f64>,
    xs: &[f64],
    gaps: &[Option<f64>],
    claimed: f64,
) -> Vec<(f64, Option<f64>)> {
    let mut points: Vec<(f64, Option<f64>)> =
        xs.iter().copied().zip(gaps.iter().copied()).collect();
    for i in 0..xs.len() - 1 {
        let edge = match (gaps[i], gaps[i + 1]) {
            (None, Some(gap)) => accepted_edge(wacc_at, xs[i], (xs[i + 1], gap + claimed)),
            (Some(gap), None) => accepted_edge(wacc_at, xs[i + 1], (xs[i], gap + claimed)),
            _ => None,
        };
        if let Some((x, wacc)) = edge {
            points.push((x, Some(wacc - claimed)));
        }
    }
    points.sort_by(|a, b| a.0.total_cmp(&b.0));
    points
}

/// The accepted value nearest the refused value `refused`, between it and `accepted` (with its
/// WACC), by bisection to adjacent doubles; `None` when no value between them is accepted
/// (the accepted scan value is itself the edge).
fn accepted_edge(
    wacc_at: &dyn Fn(f64) -> Result<f64>,
    mut refused: f64,
    (mut accepted, mut wacc): (f64, f64),
) -> Option<(f64, f64)> {
    let start = accepted;
    for _ in 0..200 {
        let mid = 0.5 * (refused + accepted);
        if mid == refused || mid == accepted {
            break;
        }
        match wacc_at(mid) {
            Ok(w) => (accepted, wacc) = (mid, w),
            Err(_) => refused = mid,
        }
    }
    (accepted != start).then_some((accepted, wacc))
}

/// What the scan found: the solution (if any), the number of crossing intervals, the lowest and
/// highest WACC seen, and the values the case refused.
pub(super) struct Scan {
    pub(super) value: Option<f64>,
    /// The roots of the other crossing intervals, ascending.
    pub(super) others: Vec<f64>,
    /// Whether every value the case accepts gives the claim within [`REPRODUCED`].
    pub(super) flat: bool,
    pub(super) crossings: usize,
    pub(super) wacc_min: f64,
    pub(super) wacc_max: f64,
    pub(super) refused: usize,
    pub(super) refused_range: Option<(f64, f64)>,
    pub(super) refused_at_edge: Option<(f64, String)>,
    pub(super) searched: usize,
}

/// Scans `wacc_at` over [low, high] for crossings of `claimed` and narrows the first by
/// bisection. A value the case refuses (an error) is left out: an interval with a refused end
/// is not searched. Every value refused returns the first error.
pub(super) fn solve(
    wacc_at: &dyn Fn(f64) -> Result<f64>,
    (low, high): (f64, f64),
    intervals: usize,
    claimed: f64,
) -> Result<Scan> {
    let xs: Vec<f64> = (0..=intervals)
        .map(|i| low + (high - low) * i as f64 / intervals as f64)
        .collect();
    let mut gaps: Vec<Option<f64>> = Vec::with_capacity(xs.len());
    let mut refusals: Vec<(usize, Error)> = Vec::new();
    for &x in &xs {
        match wacc_at(x) {
            Ok(wacc) => gaps.push(Some(wacc - claimed)),
            Err(error) => {
                gaps.push(None);
                refusals.push((gaps.len() - 1, error));
            }
        }
    }
    if refusals.len() == xs.len() {
        return Err(refusals.swap_remove(0).1);
    }
    let points = with_refusal_edges(wacc_at, &xs, &gaps, claimed);
    let seen = || points.iter().filter_map(|(_, g)| *g).map(|g| g + claimed);
    let wacc_min = seen().fold(f64::INFINITY, f64::min);
    let wacc_max = seen().fold(f64::NEG_INFINITY, f64::max);
    let Solutions {
        value,
        others,
        flat,
        crossings,
    } = solutions(wacc_at, &points, claimed)?;
    Ok(Scan {
        value,
        others,
        flat,
        crossings,
        wacc_min,
        wacc_max,
        refused: refusals.len(),
        searched: xs.len(),
        refused_range: refusals
            .first()
            .zip(refusals.last())
            .map(|((first, _), (last, _))| (xs[*first], xs[*last])),
        refused_at_edge: refusals
            .iter()
            .find(|(i, _)| {
                let accepted = |j: usize| gaps.get(j).is_some_and(Option::is_some);
                accepted(i + 1) || (*i > 0 && accepted(i - 1))
            })
            .map(|(i, error)| (xs[*i], crate::audit::reason(error))),
    })
}

/// What the scan's points (value, WACC less the claim; `None` where refused) give: the lowest
/// value that reproduces the claim, the others, how many intervals cross, and whether every
/// accepted value gives the claim.
struct Solutions {
    value: Option<f64>,
    others: Vec<f64>,
    flat: bool,
    crossings: usize,
}

fn solutions(
    wacc_at: &dyn Fn(f64) -> Result<f64>,
    points: &[(f64, Option<f64>)],
    claimed: f64,
) -> Result<Solutions> {
    let last = points.len() - 1;
    // An interval crosses when the claim lies at its left end or strictly inside it; a root on
    // its right end belongs to the next interval (or to the last one, at the range's end).
    let crossing = |j: usize| match (points[j].1, points[j + 1].1) {
        (Some(left), Some(right)) => {
            left == 0.0
                || (right != 0.0 && (left < 0.0) != (right < 0.0))
                || (j + 1 == last && right == 0.0)
        }
        _ => false,
    };
    let crossings = (0..last).filter(|&j| crossing(j)).count();
    // A crossing interval's ends are both accepted, so its left gap is there.
    let first = (0..last)
        .find(|&j| crossing(j))
        .and_then(|j| points[j].1.map(|gap| (j, gap)));
    let root = |j: usize, gap: f64| match gap {
        // The claim is the WACC at a scan value itself; bisecting from a zero gap would walk
        // away from it.
        0.0 => Ok(points[j].0),
        _ => bisect(wacc_at, (points[j].0, gap), points[j + 1].0, claimed),
    };
    // The WACC at every accepted value within REPRODUCED of the claim: the input does not move
    // it (found by review: 65 "intervals" were said to cross for a cost of debt at D/E = 0).
    let accepted: Vec<f64> = points.iter().filter_map(|(_, gap)| *gap).collect();
    let flat = accepted.iter().all(|g| g.abs() <= REPRODUCED);
    let (value, crossings) = match first {
        // Any value fits; the case's own is given (`case_value_if_it_meets`).
        _ if flat => (points.iter().find(|(_, g)| g.is_some()).map(|&(x, _)| x), 1),
        Some((j, gap)) => (Some(root(j, gap)?), crossings),
        // No crossing, but the WACC at a scan value (a range's end, say) within REPRODUCED of
        // the claim: that value reproduces it (found by review: a claim 4e-12 beyond the
        // WACC at D/E = 0 was reported out of reach while the range printed contained it).
        None => {
            let close = (points.iter()).find(|(_, gap)| gap.is_some_and(|g| g.abs() <= REPRODUCED));
            // The points are in ascending order: the lowest such value, as for crossings.
            (close.map(|&(x, _)| x), usize::from(close.is_some()))
        }
    };
    // Every other crossing's root that reproduces the claim (not a jump across it), so a
    // reader sees each value that fits (found by review: only the lowest was given, the case's
    // own value lying nearer another).
    let mut others = Vec::new();
    if first.is_some() && !flat {
        for j in (0..last).filter(|&j| crossing(j)).skip(1) {
            if let Some(gap) = points[j].1 {
                let x = root(j, gap)?;
                if wacc_at(x).is_ok_and(|w| (w - claimed).abs() <= REPRODUCED) {
                    others.push(x);
                }
            }
        }
    }
    Ok(Solutions {
        value,
        others,
        flat,
        crossings,
    })
}
