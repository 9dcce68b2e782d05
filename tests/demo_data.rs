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
