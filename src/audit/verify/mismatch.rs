//! One figure that differs between a receipt and its rerun, and how a reader sees it: where it
//! is (its path and the entry it belongs to), both values, the difference of two numbers, and
//! which side lacks it when one does.

use serde::Serialize;
use serde_json::Value;

/// One figure that differs.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Mismatch {
    /// JSON path, e.g. `peers[2].beta`.
    pub path: String,
    /// The name of the list entry the figure belongs to, as the receipt records it (a peer's
    /// `name`, a leave-one-out row's `peer`), so a reader need not count positions.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub item: Option<String>,
    pub recorded: Value,
    pub recomputed: Value,
    /// The side that lacks the figure altogether (not `null`: absent), when one does; the
    /// other side's value is then shown alone.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub absent_from: Option<Absent>,
}

/// Which side of a comparison lacks a figure: the receipt (a figure deleted from it, or one a
/// later version writes) or the rerun (a figure added to the receipt, or one this version no
/// longer writes).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Absent {
    Receipt,
    Rerun,
}

/// Paths of figures drawn only for the charts (each fitted line's points, the histogram's
/// bins, the waterfall's bars, the rows the residual chart marks): they move with the
/// estimates and are listed after every other figure, and a terminal may count them.
const CHART_FIGURES: [&str; 4] = [
    ".fitted_line.",
    "uncertainty.histogram.",
    "reconciliation.waterfall[",
    ".large_studentised_residual_rows",
];

impl Mismatch {
    /// Where the mismatch is listed: the case's settings first (the inputs that changed), then
    /// the headline figures, then the others in the receipt's order, then the chart figures.
    pub fn rank(&self) -> u8 {
        const HEADLINE: [&str; 3] = ["wacc", "cost_of_equity", "cost_of_debt_after_tax"];
        if self.path.starts_with("settings.") || self.path.starts_with("case.overrides") {
            0
        } else if HEADLINE.contains(&self.path.as_str()) {
            1
        } else if self.is_chart_figure() {
            3
        } else {
            2
        }
    }

    /// A universe receipt's order: the settings and overrides first, then the securities'
    /// own figures (what moved), then the industry table and counts they feed (found by
    /// review: a changed lookback was listed after every industry and security line).
    pub fn universe_rank(&self) -> u8 {
        if self.path.starts_with("settings.") || self.path.starts_with("universe.overrides") {
            0
        } else if self.path.starts_with("securities") {
            1
        } else {
            2
        }
    }

    /// Whether the figure is drawn only for a chart ([`CHART_FIGURES`]).
    pub fn is_chart_figure(&self) -> bool {
        CHART_FIGURES.iter().any(|part| self.path.contains(part))
    }
}

/// Longest JSON text shown whole for a section or a list; a longer one is shown by its size.
const SHOWN_WHOLE: usize = 160;

/// A value as a reader sees it: its JSON text, or for a long section or list its size ("a
/// section of 57 figures", found by review: a deleted section printed as one line of 4,900
/// characters). The verification's JSON keeps the whole value.
pub fn shown(value: &Value) -> String {
    let text = value.to_string();
    if text.len() <= SHOWN_WHOLE {
        return text;
    }
    let figures = leaves(value);
    let plural = |n: usize, word: &str| format!("{n} {word}{}", if n == 1 { "" } else { "s" });
    match value {
        Value::Object(_) => format!("a section of {}", plural(figures, "figure")),
        Value::Array(items) => format!(
            "a list of {} {} ({})",
            items.len(),
            if items.len() == 1 { "entry" } else { "entries" },
            plural(figures, "figure")
        ),
        _ => text,
    }
}

/// How many leaves (numbers, texts, flags, nulls) a value holds.
fn leaves(value: &Value) -> usize {
    match value {
        Value::Object(map) => map.values().map(leaves).sum(),
        Value::Array(items) => items.iter().map(leaves).sum(),
        _ => 1,
    }
}

impl Mismatch {
    /// The path with the entry's name after it: `peers[0].beta ("Brenvale Fluid Systems")`.
    pub fn place(&self) -> String {
        match &self.item {
            Some(item) => format!("{} (\"{item}\")", self.path),
            None => self.path.clone(),
        }
    }

    /// For two numbers, their difference (recomputed − recorded) and its size relative to the
    /// recorded figure: `; difference 1.2e-3 (+0.11% of the recorded figure)`. Empty otherwise.
    pub fn difference(&self) -> String {
        match (self.recorded.as_f64(), self.recomputed.as_f64()) {
            // A recorded figure so small (a subnormal) that the share overflows is given
            // without it (found by review: "+inf%").
            (Some(a), Some(b)) if ((b - a) / a.abs()).is_finite() => {
                let share = (b - a) / a.abs() * 100.0;
                // A share that four decimals would show as 0.0000% is given in exponent form
                // (found by review: a real mismatch read "-0.0000% of the recorded figure").
                let share = match share.abs() >= 5e-5 {
                    true => format!("{share:+.4}"),
                    false => format!("{share:+.2e}"),
                };
                format!(
                    "; difference {:.4e} ({share}% of the recorded figure)",
                    b - a
                )
            }
            (Some(a), Some(b)) => format!("; difference {:.4e}", b - a),
            _ => String::new(),
        }
    }

    /// Whether the difference is in the run's notes (sentences for the reader), which are
    /// compared as sets of sentences: each differing note is one entry, on one side only.
    pub fn is_note(&self) -> bool {
        self.path == "notes" || self.path.ends_with(".notes")
    }

    /// The difference in words, after its place: `wacc: recorded 0.07 recomputed 0.08;
    /// difference …`, `wacc: absent from the receipt; recomputed 0.08`, `notes: only in the
    /// rerun: "…"`.
    pub fn describe(&self) -> String {
        let place = self.place();
        let (recorded, recomputed) = (shown(&self.recorded), shown(&self.recomputed));
        match (self.absent_from, self.is_note()) {
            (Some(Absent::Receipt), true) => format!("{place}: only in the rerun: {recomputed}"),
            (Some(Absent::Rerun), true) => format!("{place}: only in the receipt: {recorded}"),
            (Some(Absent::Receipt), false) => {
                format!("{place}: absent from the receipt; recomputed {recomputed}")
            }
            (Some(Absent::Rerun), false) => {
                format!("{place}: recorded {recorded}; not written by the rerun")
            }
            (None, _) => format!(
                "{place}: recorded {recorded} recomputed {recomputed}{}",
                self.difference()
            ),
        }
    }

    /// Whether the figure is a sentence under one of [`super::WORDING_KEYS`] (a note, a
    /// description of a setting), by the last key of its path.
    pub fn is_sentence(&self) -> bool {
        let last = self.path.rsplit('.').next().unwrap_or("");
        let key = last.split('[').next().unwrap_or(last);
        super::WORDING_KEYS.contains(&key) && self.absent_from.is_none_or(|_| self.is_note())
    }

    /// A wording difference in words: a note on one side only as [`Mismatch::describe`] puts
    /// it, a reworded description as `worded differently {path}: recorded "…" now "…"`.
    pub fn wording(&self) -> String {
        match self.absent_from {
            Some(_) => self.describe(),
            None => format!(
                "worded differently {}: recorded {} now {}",
                self.place(),
                shown(&self.recorded),
                shown(&self.recomputed)
            ),
        }
    }
}
