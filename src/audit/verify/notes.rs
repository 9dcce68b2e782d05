//! The verification's notes on versions: the figures a later version adds, named once each,
//! and which version wrote the receipt beside the one verifying it. Apart from `verify.rs`,
//! which compares.

use super::{compare, Verification};

impl Verification {
    /// The figures this version adds, in words (empty when there are none): not in the
    /// receipt another version wrote, so not compared.
    pub fn added_note(&self) -> String {
        if self.added_by_this_version.is_empty() {
            return String::new();
        }
        // One line per key a version added, however many list entries hold it (found by
        // review: a list cut after eight entries hid the additions that mattered).
        let mut groups: Vec<(String, usize)> = Vec::new();
        for entry in &self.added_by_this_version {
            let key = compare::without_positions(entry.split(" (").next().unwrap_or(entry));
            match groups.iter_mut().find(|(k, _)| *k == key) {
                Some((_, n)) => *n += 1,
                None => groups.push((key, 1)),
            }
        }
        let shown: Vec<String> = (groups.iter())
            .map(|(key, n)| match n {
                1 => key.clone(),
                n => format!("{key} ({n} entries)"),
            })
            .collect();
        let securities = match groups.iter().any(|(key, _)| key == "securities") {
            true => {
                " The receipt holds no figure of any single security, so no security's beta \
                 was verified; its counts and industry table were."
            }
            false => "",
        };
        let list = &self.added_by_this_version;
        format!(
            "{} figure{} that hurdle {} writes and the receipt, written by hurdle {}, does not \
             have (not compared; they do not count against the verification): {}.{securities}",
            list.len(),
            if list.len() == 1 { "" } else { "s" },
            self.current_tool_version,
            self.recorded_tool_version,
            shown.join(", ")
        )
    }

    /// Which version wrote the receipt, beside this one, when they differ: "written by hurdle
    /// 0.3.0, verified with 0.4.0"; for a receipt newer than this verifier, that the figures its
    /// version added show as mismatches here; empty for the same version.
    pub fn versions_note(&self) -> String {
        let (recorded, current) = (&self.recorded_tool_version, &self.current_tool_version);
        if recorded == current {
            return String::new();
        }
        if recorded.is_empty() {
            return format!(
                "written by a version of hurdle the receipt does not name, verified with {current}"
            );
        }
        let newer = compare::version(recorded)
            .zip(compare::version(current))
            .is_some_and(|(r, c)| r > c);
        match newer {
            true => format!(
                "written by hurdle {recorded}, newer than this hurdle {current}: figures that \
                 version added show here as mismatches recomputed as null; verify with hurdle \
                 {recorded} or later"
            ),
            false => format!("written by hurdle {recorded}, verified with {current}"),
        }
    }
}
