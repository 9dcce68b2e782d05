//! Helpers shared by the integration tests. Each test binary compiles this module and uses a
//! subset of it, so every item carries `allow(dead_code)` for the binaries that do not.

pub mod svg;

use std::fs;
use std::path::Path;
use std::process::{Command, Output};

/// The shipped demo case folder and its case file.
#[allow(dead_code)]
pub const DEMO_DIR: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/cases/quillmarsh");
#[allow(dead_code)]
pub const DEMO_CASE: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/cases/quillmarsh/case.toml");

/// Runs the built `hurdle` binary.
#[allow(dead_code)]
pub fn hurdle(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_hurdle"))
        .args(args)
        .output()
        .expect("hurdle runs")
}

/// `hurdle run CASE --out OUT --set …` for each of `sets`, which must succeed; its result.json.
#[allow(dead_code)]
pub fn run_case_with(case: &Path, out: &Path, sets: &[&str]) -> serde_json::Value {
    let mut args = vec![
        "run",
        case.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ];
    for set in sets {
        args.extend(["--set", set]);
    }
    let output = hurdle(&args);
    assert!(output.status.success(), "{sets:?}: {output:?}");
    serde_json::from_slice(&fs::read(out.join("result.json")).unwrap()).unwrap()
}

/// A receipt of this version made to read as one `version` wrote: `tool.version` set and every
/// key a later version began to write taken out (`hurdle::audit::verify::keys_added_after`),
/// as that version's receipt lacks them (verify refuses a receipt holding a key its version
/// never wrote).
#[allow(dead_code)]
pub fn relabel(receipt: &mut serde_json::Value, version: &str) {
    receipt["tool"]["version"] = version.into();
    for key in hurdle::audit::verify::keys_added_after(version) {
        remove_path(receipt, &key.split('.').collect::<Vec<_>>());
    }
}

/// Removes the key at `path` (`peers[]` a segment for every entry of the list `peers`).
#[allow(dead_code)]
fn remove_path(value: &mut serde_json::Value, path: &[&str]) {
    let Some((first, rest)) = path.split_first() else {
        return;
    };
    let (name, each) = match first.strip_suffix("[]") {
        Some(name) => (name, true),
        None => (*first, false),
    };
    let Some(object) = value.as_object_mut() else {
        return;
    };
    if rest.is_empty() && !each {
        object.remove(name);
        return;
    }
    let Some(child) = object.get_mut(name) else {
        return;
    };
    match (each, child.as_array_mut()) {
        (true, Some(items)) if rest.is_empty() => items.clear(),
        (true, Some(items)) => items.iter_mut().for_each(|item| remove_path(item, rest)),
        _ => remove_path(child, rest),
    }
}

/// A number in a JSON value by its dotted path (`weights.equity`).
#[allow(dead_code)]
pub fn number(v: &serde_json::Value, path: &str) -> f64 {
    path.split('.')
        .fold(v, |v, key| &v[key])
        .as_f64()
        .unwrap_or_else(|| panic!("{path} is not a number"))
}

/// Runs tests/reference/check_regressions.py (numpy, scipy and the textbook formulas) on a
/// run's output folder; asserts that it ran, rebuilt every return from the case's own files (a
/// part it reports NOT RECOMPUTED would fall back on hurdle's returns.csv) and found no
/// mismatch, and returns its report. `label` names the configuration in a failure message.
#[allow(dead_code)]
pub fn reference_check(out: &Path, label: &str) -> String {
    let script = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/reference/check_regressions.py"
    );
    let output = Command::new("python3")
        .arg(script)
        .arg(out)
        .output()
        .expect("python3 must be installed for the reference check");
    let stdout = String::from_utf8_lossy(&output.stdout).into_owned();
    assert!(
        output.status.success() && stdout.contains(" 0 failed"),
        "{label}: reference check failed (install numpy and scipy: python3 -m pip install numpy scipy)\n{stdout}\n{}",
        String::from_utf8_lossy(&output.stderr)
    );
    assert!(
        !stdout.contains("NOT RECOMPUTED"),
        "{label}: the reference check used hurdle's own returns for a part\n{stdout}"
    );
    stdout
}

/// The wide-table form of the demo case (`hurdle-demo-data` writes it beside the demo).
#[allow(dead_code)]
pub const WIDE_DIR: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/cases/quillmarsh-wide");

/// Copies the wide-table demo case folder into `to`, without any previous run's `output/`.
#[allow(dead_code)]
pub fn copy_wide_case(to: &Path) {
    copy_tree(Path::new(WIDE_DIR), to, true);
}

/// A `date,price` file's text with every price multiplied by `factor` (the header and any line
/// without a comma as they are): the same returns, so the same beta, from other bytes.
#[allow(dead_code)]
pub fn scaled_prices(text: &str, factor: f64) -> String {
    text.lines()
        .enumerate()
        .map(|(i, line)| match (i, line.split_once(',')) {
            (0, _) | (_, None) => format!("{line}\n"),
            (_, Some((date, price))) => {
                format!("{date},{}\n", price.parse::<f64>().unwrap() * factor)
            }
        })
        .collect()
}

/// A `date,price` file's text with every price multiplied by `factor` and by a small
/// deterministic jitter of up to ±1% that `seed` varies: a peer of its own, whose returns are
/// near the source's but not the same (a scaled copy with the same returns is refused as one
/// firm counted twice, since 0.10.0).
#[allow(dead_code)]
pub fn varied_prices(text: &str, factor: f64, seed: usize) -> String {
    text.lines()
        .enumerate()
        .map(|(i, line)| match (i, line.split_once(',')) {
            (0, _) | (_, None) => format!("{line}\n"),
            (_, Some((date, price))) => {
                let jitter = 1.0 + 0.001 * (((i * 37 + seed * 11) % 21) as f64 - 10.0);
                let price = price.parse::<f64>().unwrap() * factor * jitter;
                format!("{date},{price:.6}\n")
            }
        })
        .collect()
}

/// Copies the demo case folder into `to`, without any previous run's `output/`.
#[allow(dead_code)]
pub fn copy_demo_case(to: &Path) {
    copy_tree(Path::new(DEMO_DIR), to, true);
}

/// Copies the case folder `cases/<name>` into `to`, without any previous run's `output/`.
#[allow(dead_code)]
pub fn copy_case(name: &str, to: &Path) {
    let cases = Path::new(DEMO_DIR)
        .parent()
        .expect("cases/ holds the demo case");
    copy_tree(&cases.join(name), to, true);
}

fn copy_tree(from: &Path, to: &Path, top: bool) {
    fs::create_dir_all(to).unwrap();
    for entry in fs::read_dir(from).unwrap() {
        let entry = entry.unwrap();
        if top && entry.file_name() == "output" {
            continue;
        }
        let target = to.join(entry.file_name());
        if entry.file_type().unwrap().is_dir() {
            copy_tree(&entry.path(), &target, false);
        } else {
            fs::copy(entry.path(), &target).unwrap();
        }
    }
}

/// A copy of the demo case in `<root>/case/` to break one thing in; outputs go to `<root>/out`.
#[allow(dead_code)]
pub struct Sandbox {
    pub root: tempfile::TempDir,
}

#[allow(dead_code)]
impl Sandbox {
    pub fn new() -> Sandbox {
        let root = tempfile::tempdir().expect("create a temporary folder");
        copy_demo_case(&root.path().join("case"));
        Sandbox { root }
    }

    /// A path under the case folder.
    pub fn path(&self, relative: &str) -> std::path::PathBuf {
        self.root.path().join("case").join(relative)
    }

    pub fn read(&self, relative: &str) -> String {
        fs::read_to_string(self.path(relative)).unwrap()
    }

    pub fn write(&self, relative: &str, contents: impl AsRef<[u8]>) {
        let path = self.path(relative);
        fs::create_dir_all(path.parent().unwrap()).unwrap();
        fs::write(path, contents).unwrap();
    }

    /// Replaces the single occurrence of `from` in a case-folder file.
    pub fn edit(&self, relative: &str, from: &str, to: &str) {
        let text = self.read(relative);
        assert_eq!(
            text.matches(from).count(),
            1,
            "`{from}` must occur once in {relative}"
        );
        self.write(relative, text.replacen(from, to, 1));
    }

    /// Replaces the single occurrence of `from` in case.toml.
    pub fn edit_case(&self, from: &str, to: &str) {
        self.edit("case.toml", from, to);
    }

    /// Rewrites every line of a file (1-based line numbers).
    pub fn map_lines(&self, relative: &str, f: impl Fn(usize, &str) -> String) {
        let text = self.read(relative);
        let lines: Vec<String> = text.lines().enumerate().map(|(i, l)| f(i + 1, l)).collect();
        self.write(relative, lines.join("\n") + "\n");
    }

    /// Replaces line `line` (1-based) of a file.
    pub fn set_line(&self, relative: &str, line: usize, to: &str) {
        self.map_lines(relative, |n, l| {
            if n == line {
                to.to_string()
            } else {
                l.to_string()
            }
        });
    }

    /// Replaces the value (second field) on line `line`, keeping the date.
    pub fn set_value(&self, relative: &str, line: usize, value: &str) {
        self.map_lines(relative, |n, l| match (n == line, l.split_once(',')) {
            (true, Some((date, _))) => format!("{date},{value}"),
            _ => l.to_string(),
        });
    }

    /// Applies `f` to the value (second field) of every data row.
    pub fn map_values(&self, relative: &str, f: impl Fn(f64) -> f64) {
        self.map_lines(relative, |n, l| match (n > 1, l.split_once(',')) {
            (true, Some((date, value))) => format!("{date},{}", f(value.parse().unwrap())),
            _ => l.to_string(),
        });
    }
}

/// Every file and folder under `dir`, by relative path, with the SHA-256 of each file's bytes
/// (folders as "folder"): equal before and after a run means nothing was changed or added.
#[allow(dead_code)]
pub fn tree_hashes(dir: &Path) -> std::collections::BTreeMap<std::path::PathBuf, String> {
    fn walk(
        base: &Path,
        dir: &Path,
        out: &mut std::collections::BTreeMap<std::path::PathBuf, String>,
    ) {
        for entry in fs::read_dir(dir).unwrap() {
            let path = entry.unwrap().path();
            let relative = path.strip_prefix(base).unwrap().to_path_buf();
            if path.is_dir() {
                out.insert(relative, "folder".into());
                walk(base, &path, out);
            } else {
                out.insert(
                    relative,
                    hurdle::io::series::sha256_hex(&fs::read(&path).unwrap()),
                );
            }
        }
    }
    let mut out = std::collections::BTreeMap::new();
    walk(dir, dir, &mut out);
    out
}

/// Silences the panic messages of polars' Parquet decoder that the library's guard turns into
/// errors (`hurdle::io::guard`), as the binary does; other panics print as usual.
#[allow(dead_code)]
pub fn quiet_guarded_panics() {
    static ONCE: std::sync::Once = std::sync::Once::new();
    ONCE.call_once(|| {
        let default_hook = std::panic::take_hook();
        std::panic::set_hook(Box::new(move |info| {
            if !hurdle::io::guard::is_guarded(info) {
                default_hook(info);
            }
        }));
    });
}

/// Runs `python3 -c script args…` (numpy and scipy installed, as README's test command does)
/// and reads the JSON it prints: reference values from the general-purpose libraries.
#[allow(dead_code)]
pub fn python_json<T: serde::de::DeserializeOwned>(script: &str, args: &[&str]) -> T {
    let output = Command::new("python3")
        .arg("-c")
        .arg(script)
        .args(args)
        .output()
        .expect("python3 with scipy must be installed (python3 -m pip install numpy scipy)");
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    serde_json::from_slice(&output.stdout).unwrap()
}
