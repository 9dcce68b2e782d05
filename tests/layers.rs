//! The library's layers import one way, down the pipeline (DEVELOPERS.md, "Architecture"): a
//! module may use only the modules above it in this order. This reads every source file and
//! fails on an import that points the other way, so an import circle cannot come back.

use std::path::Path;

/// The layers in pipeline order; `error` and `demo` sit beside them.
const LAYERS: [&str; 12] = [
    "io",
    "panel",
    "market",
    "stats",
    "beta",
    "estimate",
    "capital",
    "case",
    "valuation",
    "universe",
    "audit",
    "report",
];

fn rust_files(dir: &Path, out: &mut Vec<std::path::PathBuf>) {
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

#[test]
fn no_layer_imports_a_later_one() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut violations = Vec::new();
    for (rank, layer) in LAYERS.iter().enumerate() {
        let mut files = Vec::new();
        rust_files(&src.join(layer), &mut files);
        assert!(!files.is_empty(), "src/{layer} holds no source");
        for file in files {
            let text = std::fs::read_to_string(&file).unwrap();
            for (later_rank, later) in LAYERS.iter().enumerate().skip(rank + 1) {
                let needle = format!("crate::{later}::");
                let needle_bare = format!("crate::{later};");
                if text.contains(&needle) || text.contains(&needle_bare) {
                    violations.push(format!(
                        "{} (layer {rank}, {layer}) imports {later} (layer {later_rank})",
                        file.strip_prefix(&src).unwrap().display()
                    ));
                }
            }
        }
    }
    assert!(violations.is_empty(), "{}", violations.join("\n"));
}

/// Every long option of the command line, read from the binary's own help (every subcommand).
fn command_line_flags() -> Vec<String> {
    let help = |args: &[&str]| {
        let output = std::process::Command::new(env!("CARGO_BIN_EXE_hurdle"))
            .args(args)
            .arg("--help")
            .output()
            .expect("run hurdle --help");
        String::from_utf8(output.stdout).unwrap()
    };
    let top = help(&[]);
    // The subcommands are listed under "Commands:", one per line, name first.
    let commands: Vec<String> = top
        .lines()
        .skip_while(|l| !l.starts_with("Commands:"))
        .skip(1)
        .take_while(|l| l.starts_with("  "))
        .filter_map(|l| l.split_whitespace().next().map(str::to_string))
        .filter(|c| c != "help")
        .collect();
    assert!(
        commands.len() >= 9,
        "subcommands read from --help: {commands:?}"
    );
    let mut flags: Vec<String> = commands
        .iter()
        .flat_map(|c| flag_tokens(&help(&[c])))
        .filter(|f| f != "--help" && f != "--version")
        .collect();
    flags.sort();
    flags.dedup();
    flags
}

/// The `--name` tokens of `text` (a name of lowercase letters and hyphens).
fn flag_tokens(text: &str) -> Vec<String> {
    let bytes = text.as_bytes();
    let mut found = Vec::new();
    let mut i = 0;
    while let Some(at) = text[i..].find("--").map(|k| i + k) {
        let before_ok =
            at == 0 || !(bytes[at - 1].is_ascii_alphanumeric() || bytes[at - 1] == b'-');
        let end = at
            + 2
            + bytes[at + 2..]
                .iter()
                .take_while(|b| b.is_ascii_lowercase() || **b == b'-')
                .count();
        if before_ok && end > at + 2 && bytes[at + 2].is_ascii_lowercase() {
            found.push(text[at..end].trim_end_matches('-').to_string());
        }
        i = end.max(at + 2);
    }
    found
}

// Issue rule: the library never names a command-line flag; the command line words the library's
// errors in its own terms (`cli::render_error`, the hints of `cli/init.rs` and `cli/implied.rs`).
// Outside the check: `cli/` and `main.rs` (the command line itself), `report/` (the memo, the
// charts and the workbook tell their reader how to rerun a figure with the tool) and `demo.rs`
// (the demo case's comments, a document for the user); comments and unit tests everywhere.
#[test]
fn no_library_message_names_a_command_line_flag() {
    let flags = command_line_flags();
    for expected in ["--set", "--case", "--range", "--out", "--sheet", "--index"] {
        assert!(
            flags.iter().any(|f| f == expected),
            "{expected} not in {flags:?}"
        );
    }
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    rust_files(&src, &mut files);
    let mut violations = Vec::new();
    for file in files {
        let relative = file
            .strip_prefix(&src)
            .unwrap()
            .to_string_lossy()
            .replace('\\', "/");
        if relative.starts_with("cli/")
            || relative.starts_with("report/")
            || relative == "main.rs"
            || relative == "demo.rs"
        {
            continue;
        }
        let text = std::fs::read_to_string(&file).unwrap();
        let code = text.split("#[cfg(test)]").next().unwrap_or("");
        for (n, line) in code.lines().enumerate() {
            let line = line.split("//").next().unwrap_or("");
            for token in flag_tokens(line) {
                if flags.contains(&token) {
                    violations.push(format!("src/{relative}:{}: {token}", n + 1));
                }
            }
        }
    }
    assert!(violations.is_empty(), "{}", violations.join("\n"));
}

// The scanner itself, on known text (so the check above cannot pass by finding nothing).
#[test]
fn flag_tokens_finds_long_options_only() {
    assert_eq!(
        flag_tokens("use --set a=b, --risk-free X; a--b, ---x, -- y, --Z"),
        ["--set", "--risk-free"]
    );
}
