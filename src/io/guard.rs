//! Third-party decoders run under a guard. polars' Parquet decoder trusts the sizes and offsets
//! a file's pages state and, on some corrupt files, panics (a failed assertion in
//! `polars-parquet`'s primitive and float decoders, found by the universe fuzz target in
//! `tests/fuzz.rs`); calamine does the same on some damaged `.xls` workbooks (a slice offset
//! past the end) instead of returning an error. Inside [`decoding`] such a panic becomes an
//! error message, so a corrupt file gets exit 2 and a message naming it, like any other bad
//! input; the binary's panic hook asks [`is_guarded`] and stays quiet about it.

use std::panic::{catch_unwind, AssertUnwindSafe, PanicHookInfo};
use std::sync::atomic::{AtomicUsize, Ordering};

/// Guards running now (on any thread): polars decodes on its own pool, whose threads panic.
static RUNNING: AtomicUsize = AtomicUsize::new(0);

/// Runs `decode` (a call into polars' Parquet reader or calamine); a panic inside it is returned
/// as the text of an error: "the decoder stopped on corrupt data (…)".
pub fn decoding<T>(decode: impl FnOnce() -> T) -> Result<T, String> {
    RUNNING.fetch_add(1, Ordering::SeqCst);
    let outcome = catch_unwind(AssertUnwindSafe(decode));
    RUNNING.fetch_sub(1, Ordering::SeqCst);
    outcome.map_err(|payload| {
        let reason = payload
            .downcast_ref::<String>()
            .map(String::as_str)
            .or_else(|| payload.downcast_ref::<&str>().copied())
            .unwrap_or("no reason given");
        format!("the decoder stopped on corrupt data ({reason})")
    })
}

/// The crates whose panics a guard expects: polars (Parquet) and calamine (workbooks).
const GUARDED: [&str; 2] = ["/polars", "/calamine"];

/// Whether a panic is one [`decoding`] turns into an error: raised in a guarded crate's code
/// while a guard runs. Other panics (a bug in hurdle) are reported as usual.
pub fn is_guarded(info: &PanicHookInfo<'_>) -> bool {
    RUNNING.load(Ordering::SeqCst) > 0
        && info
            .location()
            .is_some_and(|place| GUARDED.iter().any(|c| place.file().contains(c)))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_panic_inside_becomes_its_message_and_a_value_passes_through() {
        assert_eq!(decoding(|| 7), Ok(7));
        let message = decoding(|| -> u8 { panic!("offset past the end") }).unwrap_err();
        assert_eq!(
            message,
            "the decoder stopped on corrupt data (offset past the end)"
        );
    }
}
