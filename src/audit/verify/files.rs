//! The file checks of a verification: each input file the receipt records against the one the
//! rerun read, as unchanged, changed, no longer read or new since the receipt (a renamed
//! peer's file paired), with the path it is read from now when that moved.

use serde::Serialize;
use serde_json::Value;

/// The state of one input file.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FileCheck {
    pub role: String,
    /// The path the receipt records (the rerun's for a file the receipt does not have).
    pub path: String,
    /// The path the rerun read, when it differs from `path` (a renamed or moved file).
    pub current_path: Option<String>,
    /// `null` for a file the receipt does not have.
    pub recorded_sha256: Option<String>,
    /// `null` for a file the case no longer reads.
    pub current_sha256: Option<String>,
    /// `unchanged`, `changed`, `dropped` (no longer read), `added` (not in the receipt: new
    /// since, or its entry removed from the receipt) or `unrecorded` (the receipt names the
    /// file without its SHA-256).
    pub status: &'static str,
    pub unchanged: bool,
    /// For a changed data file, what else the receipt records of it that differs now (its
    /// rows, first and last dates): "rows 61 → 64", "last date 2026-09-30 → 2026-12-31". These
    /// are reported here, with the file, and not again as figures.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub changes: Vec<String>,
}

impl FileCheck {
    /// The check with what changed in a changed file (its rows, dates, sheet and column).
    pub fn with_changes(self, changes: Vec<String>) -> FileCheck {
        FileCheck { changes, ..self }
    }

    /// The check of one role from what the receipt records and what the rerun read, each a
    /// (path, SHA-256) when present.
    pub fn new(
        role: String,
        recorded: Option<(String, String)>,
        current: Option<(String, String)>,
    ) -> FileCheck {
        let status = match (&recorded, &current) {
            (Some((_, was)), _) if was.is_empty() => "unrecorded",
            (Some((_, was)), Some((_, now))) if was == now => "unchanged",
            (Some(_), Some(_)) => "changed",
            (Some(_), None) => "dropped",
            (None, _) => "added",
        };
        let (recorded_path, recorded_sha256) = recorded.unzip();
        // A hash the receipt does not record is none, not an empty one.
        let recorded_sha256 = recorded_sha256.filter(|hash| !hash.is_empty());
        let (current_path, current_sha256) = current.unzip();
        let path = recorded_path
            .clone()
            .or(current_path.clone())
            .unwrap_or_default();
        FileCheck {
            role,
            current_path: current_path.filter(|now| recorded_path.is_some_and(|was| was != *now)),
            path,
            recorded_sha256,
            current_sha256,
            status,
            unchanged: status == "unchanged",
            changes: Vec::new(),
        }
    }

    /// The check in words: `unchanged`, `CHANGED (recorded …, now …)`, `no longer read
    /// (recorded …)`, `NEW since the receipt (now …)`, with the new path of a moved file.
    pub fn describe(&self) -> String {
        let short = |hash: &Option<String>| hash.clone().unwrap_or_default();
        let state = match self.status {
            "unchanged" => "unchanged".to_string(),
            "changed" => format!(
                "CHANGED (recorded {}, now {})",
                short(&self.recorded_sha256),
                short(&self.current_sha256)
            ),
            "dropped" => format!(
                "NO LONGER READ by the case (recorded {})",
                short(&self.recorded_sha256)
            ),
            "unrecorded" => format!(
                "NOT HASHED in the receipt (it names the file without its SHA-256, so the \
                 file cannot be checked; now {})",
                short(&self.current_sha256)
            ),
            _ => format!(
                "NOT IN THE RECEIPT (a file the case reads since, or an entry removed from \
                 the receipt; now {})",
                short(&self.current_sha256)
            ),
        };
        let state = match self.changes.is_empty() {
            true => state,
            false => format!("{state}; {}", self.changes.join(", ")),
        };
        match &self.current_path {
            Some(now) => format!("{state}; read now from {now}"),
            None => state,
        }
    }
}

/// The checks of one file that several series are read from (a wide table holding the index,
/// the risk-free series and the peers): the same path, state and hashes, reported once (found
/// by review: one edited cell of a wide table was reported as ten changed files).
pub struct FileGroup<'a> {
    /// The roles, in words: `index, risk_free and 8 peers`.
    pub roles: String,
    pub check: &'a FileCheck,
    /// What else differs of the file, by role when the roles differ in it (one column's rows
    /// changed, the others' not).
    pub changes: Vec<String>,
}

impl FileGroup<'_> {
    /// The group's state in words, as [`FileCheck::describe`] gives one check's.
    pub fn describe(&self) -> String {
        (self.check.clone())
            .with_changes(self.changes.clone())
            .describe()
    }
}

/// The checks grouped by file: each file once, in the order of its first check.
pub fn by_file(checks: &[FileCheck]) -> Vec<FileGroup<'_>> {
    let same = |a: &FileCheck, b: &FileCheck| {
        (a.path == b.path && a.current_path == b.current_path && a.status == b.status)
            && (a.recorded_sha256 == b.recorded_sha256 && a.current_sha256 == b.current_sha256)
    };
    let mut groups: Vec<Vec<&FileCheck>> = Vec::new();
    for check in checks {
        match groups.iter_mut().find(|group| same(group[0], check)) {
            Some(group) => group.push(check),
            None => groups.push(vec![check]),
        }
    }
    (groups.into_iter())
        .map(|group| {
            let roles: Vec<&str> = group.iter().map(|c| c.role.as_str()).collect();
            let changes = match group.iter().all(|c| c.changes == group[0].changes) {
                true => group[0].changes.clone(),
                false => (group.iter())
                    .flat_map(|c| {
                        c.changes
                            .iter()
                            .map(|change| format!("{}: {change}", c.role))
                    })
                    .collect(),
            };
            FileGroup {
                roles: roles_in_words(&roles),
                check: group[0],
                changes,
            }
        })
        .collect()
}

/// Roles in words: up to three by name, else the other roles by name and the peers counted.
pub(crate) fn roles_in_words(roles: &[&str]) -> String {
    if roles.len() <= 3 {
        return roles.join(", ");
    }
    let (peers, others): (Vec<&str>, Vec<&str>) =
        roles.iter().partition(|r| r.starts_with("peer:"));
    let mut parts: Vec<String> = others.iter().map(|r| r.to_string()).collect();
    match peers.len() {
        0 => {}
        1 => parts.push(peers[0].to_string()),
        n => parts.push(format!("{n} peers")),
    }
    match parts.split_last() {
        Some((last, rest)) if !rest.is_empty() => format!("{} and {last}", rest.join(", ")),
        _ => parts.join(""),
    }
}

/// What the receipt records of a data file beside its hash, as the comparison names it.
const DESCRIBED: [(&str, &str); 5] = [
    ("rows", "rows"),
    ("first_date", "first date"),
    ("last_date", "last date"),
    ("sheet", "sheet"),
    ("column", "column"),
];

/// A changed data file's recorded rows and dates against the rerun's, where they differ.
fn changes(recorded: &Value, now: &crate::io::series::DataFile) -> Vec<String> {
    let current = serde_json::to_value(now).unwrap_or(Value::Null);
    let shown = |v: &Value| match v {
        Value::String(text) => text.clone(),
        other => other.to_string(),
    };
    (DESCRIBED.iter())
        .filter(|(key, _)| recorded[key] != current[key])
        .map(|(key, words)| {
            format!(
                "{words} {} → {}",
                shown(&recorded[key]),
                shown(&current[key])
            )
        })
        .collect()
}

/// Whether the mismatch at `path` is a field of a recorded data file (`files[3].rows`) that
/// its file check already reports: any field of a file whose bytes changed (the check lists
/// its rows and dates), and the path of a file read, unchanged, from another place (the check
/// says where from).
pub(super) fn reported_with_its_file(path: &str, recorded: &Value, checks: &[FileCheck]) -> bool {
    let Some((index, field)) = path
        .strip_prefix("files[")
        .and_then(|rest| rest.split_once("]."))
    else {
        return false;
    };
    let Ok(index) = index.parse::<usize>() else {
        return false;
    };
    let Some(role) = recorded["files"][index]["role"].as_str() else {
        return false;
    };
    (checks.iter().find(|c| c.role == role)).is_some_and(|check| match check.status {
        "changed" => true,
        _ => field == "path" && check.current_path.is_some(),
    })
}

/// Each input file the receipt records, with its recorded and current SHA-256: the data files,
/// then the spread table the cost of debt was read from and the claimed build-up the case
/// reconciles to, when the receipt has them.
pub(super) fn file_checks(recorded: &Value, rerun: &crate::valuation::Valuation) -> Vec<FileCheck> {
    let mut current: Vec<(String, (String, String))> = rerun
        .files
        .iter()
        .map(|f| (f.role.clone(), (f.path.clone(), f.sha256.clone())))
        .collect();
    let mut listed: Vec<(String, &Value)> = recorded["files"]
        .as_array()
        .map(|list| {
            let role = |f: &Value| f["role"].as_str().unwrap_or("").to_string();
            list.iter().map(|f| (role(f), f)).collect()
        })
        .unwrap_or_default();
    const SPREAD_TABLE: &str = "spread table";
    const CLAIMED: &str = "claimed build-up";
    if let Some(table) = &rerun.cost.cost_of_debt.table {
        current.push((
            SPREAD_TABLE.into(),
            (table.path.clone(), table.sha256.clone()),
        ));
    }
    if let Some(bridge) = &rerun.reconciliation {
        current.push((
            CLAIMED.into(),
            (bridge.to.source.clone(), bridge.to.sha256.clone()),
        ));
    }
    // The path under `path`, the hash under `sha256` (a claimed file names its path `source`).
    let table = &recorded["cost_of_debt"]["table"];
    if table.is_object() {
        listed.push((SPREAD_TABLE.into(), table));
    }
    let claimed = &recorded["reconciliation"]["to"];
    if claimed.is_object() {
        listed.push((CLAIMED.into(), claimed));
    }
    let now = |role: &str| {
        current
            .iter()
            .find(|(r, _)| r == role)
            .map(|(_, f)| f.clone())
    };
    let mut checks: Vec<FileCheck> = (listed.iter())
        .map(|(role, f)| {
            // A missing hash is kept empty: the check says the receipt has none.
            let sha256 = f["sha256"].as_str().unwrap_or("").to_string();
            let path = f["path"].as_str().or(f["source"].as_str()).unwrap_or("");
            let check = FileCheck::new(role.clone(), Some((path.to_string(), sha256)), now(role));
            let changed = (check.status == "changed")
                .then(|| rerun.files.iter().find(|d| d.role == *role))
                .flatten();
            match changed {
                Some(file) => check.with_changes(changes(f, file)),
                None => check,
            }
        })
        .collect();
    // Files the case reads now that the receipt does not have (a peer added since), unless
    // they are the bytes of a file no longer read under its role (a peer renamed): one check.
    for (role, file) in &current {
        if listed.iter().any(|(r, _)| r == role) {
            continue;
        }
        let renamed = (checks.iter_mut())
            .find(|c| c.status == "dropped" && c.recorded_sha256.as_deref() == Some(&file.1));
        match renamed {
            Some(check) => {
                let was = (check.path.clone(), file.1.clone());
                *check = FileCheck::new(
                    format!("{role} (was {})", check.role),
                    Some(was),
                    Some(file.clone()),
                );
            }
            None => checks.push(FileCheck::new(role.clone(), None, Some(file.clone()))),
        }
    }
    checks
}
