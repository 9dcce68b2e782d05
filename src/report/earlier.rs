//! What earlier runs left in an output folder. A finished run's receipt: what it records of its
//! case ([`earlier_receipt`]), so that a run replacing it can say it was another valuation, and
//! whether it is hurdle's ([`holds_an_earlier_run`]), before its optional files are taken away.
//! The temporary folders (`.hurdle-staging-*`) a run killed outright leaves behind: each run
//! locks its own ([`hold`]), and a later run removes those nobody holds that have not changed
//! for a minute ([`remove_abandoned`]). Kept apart from [`super::staging`], which calls these
//! when a stage begins; `hurdle init`'s [`super::new_file`] locks its folder the same way.

use std::fs;
use std::path::Path;

use head::receipt_head;

mod head;

/// What the receipt an earlier run left in a folder records of its case: enough to say, when a
/// new run replaces it, that it was another valuation (a case rolled forward into last
/// quarter's folder, or another case's run into this one).
#[derive(Debug, Clone, PartialEq)]
pub struct EarlierReceipt {
    /// A universe's receipt (`kind = "universe"`), whose file is `case_file` here.
    pub universe: bool,
    /// The case file's SHA-256 and the `--set` overrides the run applied (empty for a
    /// universe's receipt).
    pub case_sha256: String,
    pub overrides: Vec<String>,
    /// The SHA-256 of every input file a case's receipt lists (empty for a universe's).
    pub file_hashes: Vec<String>,
    pub case_file: String,
    pub title: String,
    pub valuation_date: String,
    pub wacc: Option<f64>,
    /// The peers' names in the case's order (empty for a universe's receipt), which name the
    /// regression charts that run drew.
    pub peers: Vec<String>,
    /// The version that wrote the receipt (`tool.version`; empty when it has none).
    pub version: String,
}

/// The version before which regression charts were named otherwise (`regression-NN-.svg` for
/// a name without Latin letters, accented names spelt another way).
const CHART_NAMES_SETTLED: [u64; 3] = [0, 6, 0];

impl EarlierReceipt {
    /// Whether `name` (under `figures/`) is a case chart this receipt's run drew: a chart named
    /// as a run names them, and a regression chart only under the name of one of its peers in
    /// its place (found by review: a user's `regression-09-mine.svg` was taken for a run's).
    /// A universe's run draws none.
    pub fn drew_case_chart(&self, name: &str) -> bool {
        if self.universe || !super::figures::is_chart_name(name) {
            return false;
        }
        if !name.starts_with(super::figures::REGRESSION_PREFIX) {
            return true;
        }
        let named = |(i, peer): (usize, &String)| super::figures::regression_file_name(i, peer);
        if self.peers.iter().enumerate().map(named).any(|n| n == name) {
            return true;
        }
        // An older version's names: any place the receipt's peers fill (found by review: the
        // check by today's names left a 0.5.0 run's `regression-01-.svg` beside the new memo).
        let place = (name[super::figures::REGRESSION_PREFIX.len()..].get(..2))
            .and_then(|digits| digits.parse::<usize>().ok());
        self.written_before(CHART_NAMES_SETTLED)
            && place.is_some_and(|n| (1..=self.peers.len()).contains(&n))
    }

    /// Whether the receipt's version is before `version` (or unknown).
    fn written_before(&self, version: [u64; 3]) -> bool {
        crate::audit::verify::version_numbers(&self.version)
            .is_none_or(|parts| parts.as_slice() < version.as_slice())
    }

    /// Whether this receipt is of another valuation than the case `now` ran: a universe's, or
    /// a case of another title, valuation date or case file name (the folders the path was
    /// typed from do not count: the same case is run from its own folder and from above it).
    pub fn of_another_valuation(&self, now: &crate::valuation::records::CaseRecord) -> bool {
        let name = |path: &str| Path::new(path).file_name().map(|n| n.to_owned());
        self.universe
            || self.valuation_date != now.valuation_date.to_string()
            || self.title != now.title
            || name(&self.case_file) != name(&now.file)
    }

    /// Whether this receipt was written from the same case file, `--set` overrides and price
    /// files (`prices`, their SHA-256) as a command now reading them: else the outputs beside
    /// it no longer follow it.
    pub fn of_the_same_inputs<'a>(
        &self,
        (case_sha256, overrides): (&str, &[String]),
        prices: impl IntoIterator<Item = &'a str>,
    ) -> bool {
        !self.universe
            && self.case_sha256 == case_sha256
            && self.overrides == overrides
            && (prices.into_iter()).all(|hash| self.file_hashes.iter().any(|h| h == hash))
    }
}

/// The earlier run's receipt in `dir`, when there is one (a universe's too, whose case fields
/// are empty): read once for both uses, the notice and [`super::stale_run_outputs`].
pub fn earlier_receipt(dir: &Path) -> Option<EarlierReceipt> {
    let bytes = fs::read(dir.join("result.json")).ok()?;
    let receipt = receipt_head(&bytes)?;
    if receipt["tool"]["name"] != env!("CARGO_PKG_NAME") {
        return None;
    }
    Some(EarlierReceipt {
        universe: receipt["kind"] == "universe",
        case_sha256: (receipt["case"]["sha256"].as_str())
            .unwrap_or_default()
            .to_string(),
        overrides: (receipt["case"]["overrides"].as_array())
            .map(|list| {
                (list.iter())
                    .filter_map(|o| o.as_str().map(str::to_string))
                    .collect()
            })
            .unwrap_or_default(),
        file_hashes: (receipt["files"].as_array().into_iter().flatten())
            .filter_map(|f| f["sha256"].as_str().map(str::to_string))
            .collect(),
        case_file: (receipt["case"]["file"].as_str())
            .or(receipt["universe"]["file"].as_str())
            .unwrap_or_default()
            .to_string(),
        title: receipt["case"]["title"]
            .as_str()
            .unwrap_or_default()
            .to_string(),
        valuation_date: (receipt["case"]["valuation_date"].as_str())
            .unwrap_or_default()
            .to_string(),
        wacc: receipt["wacc"].as_f64(),
        peers: (receipt["peers"].as_array().into_iter().flatten())
            .filter_map(|p| p["name"].as_str().map(str::to_string))
            .collect(),
        version: (receipt["tool"]["version"].as_str())
            .unwrap_or_default()
            .to_string(),
    })
}

/// Whether `dir` holds the receipt of an earlier hurdle run (a `result.json` whose `tool.name`
/// is hurdle): only then are files there named as hurdle names its optional outputs taken to be
/// that run's, and taken away when a run does not write them again. A folder of the user's own
/// with a `report.html` in it keeps it.
pub fn holds_an_earlier_run(dir: &Path) -> bool {
    let Ok(bytes) = fs::read(dir.join("result.json")) else {
        return false;
    };
    receipt_head(&bytes).is_some_and(|receipt| receipt["tool"]["name"] == env!("CARGO_PKG_NAME"))
}

/// Whether `dir` holds a `result.json` that is no hurdle receipt (another tool's file, or one
/// cut short): a run replaces it, and says so (found by review: it was replaced without a
/// word, while another run's receipt was named).
pub fn holds_a_foreign_result(dir: &Path) -> bool {
    dir.join("result.json").is_file() && !holds_an_earlier_run(dir)
}

/// A temporary folder opened and locked for as long as the returned file lives (an advisory
/// lock, released when the process ends however it ends), so that a later run can tell a folder
/// in use from one a killed run left ([`remove_abandoned`]). `None` where folders cannot be
/// locked.
pub(crate) fn hold(folder: &Path) -> Option<fs::File> {
    let file = fs::File::open(folder).ok()?;
    file.try_lock().ok()?;
    Some(file)
}

/// How long a temporary folder must have been left untouched before a later run removes it:
/// a run in progress locks its folder at once ([`hold`]), but a folder made a moment ago may not
/// be locked yet.
pub(crate) const ABANDONED_AFTER: std::time::Duration = std::time::Duration::from_secs(60);

/// Removes the temporary folders (`.hurdle-staging-*`) beside `dir` and inside it that a run
/// killed outright left behind (found by review: a run killed by SIGKILL or a power cut left
/// its temporary folder for good): a folder is removed only when nobody holds its lock and it
/// has not changed for [`ABANDONED_AFTER`]. Called with `dir` locked, so no other run is
/// writing into `dir`; a folder that cannot be read, locked or removed is left as it is.
pub(crate) fn remove_abandoned(dir: &Path) {
    let parent = dir
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    for folder in [parent, dir] {
        let Ok(entries) = fs::read_dir(folder) else {
            continue;
        };
        for entry in entries.flatten() {
            let name = entry.file_name();
            let ours = name.to_string_lossy().starts_with(".hurdle-staging-");
            let is_folder = entry.file_type().is_ok_and(|t| t.is_dir());
            let untouched = (entry.metadata().and_then(|m| m.modified()).ok())
                .and_then(|changed| changed.elapsed().ok())
                .is_some_and(|age| age >= ABANDONED_AFTER);
            if ours && is_folder && untouched && hold(&entry.path()).is_some() {
                let _ = fs::remove_dir_all(entry.path());
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::valuation::records::CaseRecord;

    fn receipt() -> EarlierReceipt {
        EarlierReceipt {
            universe: false,
            case_sha256: "c0".into(),
            overrides: vec!["market.equity_risk_premium=0.05".into()],
            file_hashes: vec!["a1".into(), "b2".into()],
            case_file: "deals/q3/case.toml".into(),
            title: "Q3".into(),
            valuation_date: "2026-09-30".into(),
            wacc: Some(0.07),
            peers: vec!["Alder Pumps".into(), "Ωμέγα".into()],
            version: "0.18.0".into(),
        }
    }

    // A regression chart counts as the run's only under one of its peers' names in its place
    // (README, `figures/*.svg`); the run's fixed and numbered charts count; a universe's run
    // drew no case chart.
    #[test]
    fn a_chart_counts_as_the_earlier_runs_only_under_its_own_names() {
        let earlier = receipt();
        assert!(earlier.drew_case_chart("figures/regression-01-alder-pumps.svg"));
        assert!(earlier.drew_case_chart("figures/regression-02.svg"));
        assert!(!earlier.drew_case_chart("figures/regression-02-alder-pumps.svg"));
        assert!(!earlier.drew_case_chart("figures/regression-09-mine.svg"));
        assert!(earlier.drew_case_chart("figures/betas.svg"));
        assert!(earlier.drew_case_chart("figures/betas-2.svg"));
        assert!(!earlier.drew_case_chart("figures/my-chart.svg"));
        let universe = EarlierReceipt {
            universe: true,
            ..receipt()
        };
        assert!(!universe.drew_case_chart("figures/betas.svg"));
        // A 0.5.0 run named a Greek peer's chart `regression-02-.svg`: any place its peers fill
        // counts, none beyond them.
        let older = EarlierReceipt {
            version: "0.5.0".into(),
            ..receipt()
        };
        assert!(older.drew_case_chart("figures/regression-02-.svg"));
        assert!(!older.drew_case_chart("figures/regression-03-alder-pumps.svg"));
        assert!(!earlier.drew_case_chart("figures/regression-02-.svg"));
    }

    // The same valuation is told by title, date and the case file's name, not the folders it
    // was typed from; the same inputs by the case's hash, the overrides and every price file's
    // hash among the receipt's.
    #[test]
    fn another_valuation_and_the_same_inputs_are_told_apart() {
        let earlier = receipt();
        let now = CaseRecord {
            file: "case.toml".into(),
            sha256: "c0".into(),
            overrides: Vec::new(),
            title: "Q3".into(),
            subject: String::new(),
            valuation_date: chrono::NaiveDate::from_ymd_opt(2026, 9, 30).unwrap(),
            currency: "EUR".into(),
        };
        assert!(!earlier.of_another_valuation(&now));
        let retitled = CaseRecord {
            title: "Q4".into(),
            ..now.clone()
        };
        assert!(earlier.of_another_valuation(&retitled));
        let overrides = earlier.overrides.clone();
        assert!(earlier.of_the_same_inputs(("c0", &overrides), ["b2", "a1"]));
        assert!(!earlier.of_the_same_inputs(("c0", &overrides), ["a1", "z9"]));
        assert!(!earlier.of_the_same_inputs(("c1", &overrides), ["a1"]));
        assert!(!earlier.of_the_same_inputs(("c0", &[]), ["a1"]));
    }
}
