//! The shipped demo case is exactly what the seeded generator produces, so anyone can
//! regenerate it (`hurdle-demo-data`) and so no file in `cases/quillmarsh/` (or in its
//! wide-table form, `cases/quillmarsh-wide/`) is hand-made data.

use hurdle::demo::{generate, SEED};
use hurdle::demo_wide::{generate_wide, FOLDER};

#[test]
fn shipped_demo_files_equal_the_generator_output() {
    let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/cases/quillmarsh");
    for (relative, expected) in generate(SEED) {
        let path = format!("{dir}/{relative}");
        let shipped = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{path}: {e}"));
        assert!(
            shipped == expected,
            "{path} differs from the generator's output; rerun hurdle-demo-data"
        );
    }
}

#[test]
fn the_generator_is_deterministic_and_seed_dependent() {
    assert_eq!(generate(SEED), generate(SEED));
    assert_ne!(generate(SEED)[0].1, generate(SEED + 1)[0].1);
}

#[test]
fn shipped_wide_demo_files_equal_the_generator_output() {
    let dir = format!("{}/cases/{FOLDER}", env!("CARGO_MANIFEST_DIR"));
    for (relative, expected) in generate_wide(SEED) {
        let path = format!("{dir}/{relative}");
        let shipped = std::fs::read(&path).unwrap_or_else(|e| panic!("{path}: {e}"));
        assert!(
            shipped == expected,
            "{path} differs from the generator's output; rerun hurdle-demo-data"
        );
    }
}

#[test]
fn the_wide_generator_is_deterministic() {
    assert_eq!(generate_wide(SEED), generate_wide(SEED));
}

#[path = "common/mod.rs"]
mod common;

// The demo market, as README's command makes it (`hurdle-demo-data` writes it beside the case,
// `hurdle universe` reads it), sets the case's peer set beside its industry with the case's own
// figures: each peer's beta and unlevered beta, and the set's unlevered beta, equal `hurdle run`'s
// on the demo case to the last bit (the same prices, window and settings through one estimate
// layer; README, "universe.peer_set"). Its invented securities show what the summary notes.
#[test]
fn the_demo_market_sets_the_case_peers_beside_their_industry() {
    let root = tempfile::tempdir().unwrap();
    let case_dir = root.path().join("q");
    let made = std::process::Command::new(env!("CARGO_BIN_EXE_hurdle-demo-data"))
        .arg(&case_dir)
        .output()
        .unwrap();
    assert!(made.status.success(), "{made:?}");
    let market = root.path().join("q-market");
    for (relative, expected) in hurdle::demo_market::generate_market(SEED) {
        assert!(
            std::fs::read(market.join(&relative)).unwrap() == expected,
            "{relative}"
        );
    }
    let universe = common::hurdle(&["universe", market.join("universe.toml").to_str().unwrap()]);
    assert!(universe.status.success(), "{universe:?}");
    let stdout = String::from_utf8_lossy(&universe.stdout);
    for note in ["DM-009", "DM-017", "DM-027", "missing_tax_rate 1"] {
        assert!(stdout.contains(note), "{note} not in {stdout}");
    }
    let read = |path: std::path::PathBuf| -> serde_json::Value {
        serde_json::from_slice(&std::fs::read(path).unwrap()).unwrap()
    };
    let tables = read(market.join("output/result.json"));
    let case = common::run_case_with(&case_dir.join("case.toml"), &root.path().join("out"), &[]);
    let peers = case["peers"].as_array().unwrap();
    assert_eq!(peers.len(), 8);
    for peer in peers {
        let name = peer["name"].as_str().unwrap();
        let security = (tables["securities"].as_array().unwrap().iter())
            .find(|s| s["security"] == name)
            .unwrap_or_else(|| panic!("{name} not in the universe"));
        assert_eq!(security["industry"], hurdle::demo_market::PEER_INDUSTRY);
        for figure in ["beta", "observations", "unlevered_beta"] {
            assert_eq!(security[figure], peer[figure], "{name}: {figure}");
        }
    }
    assert_eq!(
        tables["peer_set"]["figures"]["unlevered_beta"],
        case["beta"]["unlevered"]
    );
}
