//! Text that is not UTF-8 CSV: what a file given where CSV text belongs is (a workbook, Parquet,
//! UTF-16 or UTF-32 text), the first byte that is not UTF-8 with its line, and whether two
//! names differ only in how their accented letters are encoded. Used by every reader of CSV
//! text (price and yield files, panels, attributes) and by the column-name hints.

/// What a file given where CSV text belongs is, by its first bytes (the formats' published
/// signatures): an Excel workbook (.xlsx is a ZIP archive, "PK\x03\x04"; .xls an OLE compound
/// file, D0 CF 11 E0), a Parquet file ("PAR1"), text saved as UTF-32 (byte-order mark
/// FF FE 00 00 or 00 00 FE FF) or as UTF-16 (a byte-order mark FF FE or FE FF, as "Unicode
/// text" exports write, or none, the first two characters then each a letter and a zero byte;
/// Unicode 15.0, section 23.8).
pub fn binary_kind(bytes: &[u8]) -> Option<&'static str> {
    if bytes.starts_with(b"PK\x03\x04") {
        Some("a workbook or another ZIP archive (.xlsx, .ods)")
    } else if bytes.starts_with(&[0xD0, 0xCF, 0x11, 0xE0]) {
        Some("an old Excel workbook (.xls)")
    } else if bytes.starts_with(b"PAR1") {
        Some("a Parquet file")
    } else if bytes.starts_with(&[0xFF, 0xFE, 0, 0]) || bytes.starts_with(&[0, 0, 0xFE, 0xFF]) {
        Some("text saved as UTF-32")
    } else if bytes.starts_with(&[0xFF, 0xFE]) || bytes.starts_with(&[0xFE, 0xFF]) {
        Some("text saved as UTF-16 (\"Unicode text\")")
    } else if let [a, b, c, d, ..] = bytes {
        // Without a byte-order mark, ASCII text in UTF-16 has a zero byte beside every letter
        // (found by review: read as a header of one field holding zero bytes); CSV text never
        // holds a zero byte.
        let little = *a != 0 && *b == 0 && *c != 0 && *d == 0;
        let big = *a == 0 && *b != 0 && *c == 0 && *d != 0;
        (little || big)
            .then_some("text saved as UTF-16 (\"Unicode text\", without a byte-order mark)")
    } else {
        None
    }
}

/// The first byte of `bytes` that is not UTF-8 text, as (its line from 0, the message naming
/// its byte within the line): for readers whose parser says only "invalid utf-8" (found by
/// review: a panel or attributes file saved in Latin-1 was named by neither line nor byte).
pub(crate) fn first_non_utf8(bytes: &[u8]) -> Option<(usize, String)> {
    let at = std::str::from_utf8(bytes).err()?.valid_up_to();
    let before = &bytes[..at];
    let line = before.iter().filter(|&&b| b == b'\n').count();
    let start = before
        .iter()
        .rposition(|&b| b == b'\n')
        .map_or(0, |i| i + 1);
    Some((line, not_utf8(at - start + 1, bytes[at])))
}

/// The message for a byte that is not UTF-8 text, at its 1-based column in its line.
pub(crate) fn not_utf8(column: usize, byte: u8) -> String {
    format!("byte {column} (0x{byte:02X}) is not UTF-8 text; save the file as UTF-8 (plain text)")
}

/// Whether two texts differ only in Unicode normalisation (the canonical composition, NFC, of
/// Unicode Standard Annex #15): an accented letter as one character or as a letter and a
/// combining accent, which look alike but compare unequal.
pub fn same_text(a: &str, b: &str) -> bool {
    use unicode_normalization::UnicodeNormalization;
    a != b && a.nfc().eq(b.nfc())
}

#[cfg(test)]
mod tests {
    use super::*;

    // Byte-order marks as Unicode 15.0, section 23.8, lists them (UTF-32 LE FF FE 00 00 before
    // UTF-16 LE FF FE, which it begins with), and "date" in UTF-16 without a mark: 64 00 61 00
    // (little-endian) or 00 64 00 61 (big-endian). Plain CSV text is none of them.
    #[test]
    fn text_in_other_encodings_is_named() {
        let kind = |bytes: &[u8]| binary_kind(bytes).unwrap_or("");
        assert_eq!(
            kind(&[0xFF, 0xFE, 0, 0, 0x64, 0, 0, 0]),
            "text saved as UTF-32"
        );
        assert!(kind(&[0xFF, 0xFE, 0x64, 0]).contains("UTF-16"));
        assert!(kind(&[0x64, 0, 0x61, 0]).contains("UTF-16"));
        assert!(kind(&[0, 0x64, 0, 0x61]).contains("UTF-16"));
        assert_eq!(binary_kind(b"date,price\n"), None);
    }

    // Unicode Standard Annex #15: U+00E9 (é) and U+0065 U+0301 (e and a combining acute) have
    // the same canonical composition; equal texts, or letters that differ, are not twins.
    #[test]
    fn same_text_sees_through_normalisation_only() {
        assert!(same_text("Soci\u{e9}t\u{e9}", "Socie\u{301}te\u{301}"));
        assert!(!same_text("Soci\u{e9}t\u{e9}", "Soci\u{e9}t\u{e9}"));
        assert!(!same_text("Societe", "Soci\u{e9}t\u{e9}"));
    }
}
