//! Peer names a reader and an override can tell apart: no white space around them, none
//! repeating another when capitals, the encoding of accented letters and soft hyphens are set
//! aside (the fold `hurdle init` numbers names by, too).

/// A peer's name must be told apart from the others by a reader and by an override that names
/// it (`peer.NAME.…`): no white space around it (`"Alder "` prints as `"Alder"`, which an
/// override then cannot find),
/// and no earlier peer's name, also when the two differ only in capitals.
pub(crate) fn distinct_name<'a>(
    i: usize,
    name: &str,
    earlier: impl Iterator<Item = &'a str>,
) -> std::result::Result<(), String> {
    if name.trim() != name {
        return Err(format!(
            "peer.{i}.name = \"{name}\" has white space around it, which no table shows and \
             no override naming the peer (`peer.NAME.…`) can match; remove it"
        ));
    }
    // Capitals aside, and accented letters however they are encoded (é as one character or as
    // e and a combining accent, which read the same; Unicode's canonical composition, NFC;
    // found by review).
    // A soft hyphen, which shows only where a line breaks, is left out too (found by review:
    // `Bren\u{ad}vale` beside `Brenvale` gave two rows that read alike).
    let fold = name_fold;
    let folded = fold(name);
    match earlier.enumerate().find(|(_, e)| fold(e) == folded) {
        // Two names that differ beyond ASCII capitals look the same: each is written out
        // (found by review: the message showed two identical strings, also for the Kelvin sign
        // and K).
        Some((j, other)) if !other.eq_ignore_ascii_case(name) => Err(format!(
            "peer.{i}.name = \"{}\" repeats peer.{j}.name (\"{}\"), written out here: they \
             read alike (a letter encoded otherwise, as one character or as a letter and a \
             combining accent, a capital, a soft hyphen); peer names must be unique, also when \
             capitals are ignored and accented letters are encoded otherwise",
            spelled_out(name),
            spelled_out(other)
        )),
        Some((j, other)) => Err(format!(
            "peer.{i}.name = \"{name}\" repeats peer.{j}.name (\"{other}\"); peer names must be \
             unique, also when capitals are ignored and accented letters are encoded otherwise"
        )),
        None => Ok(()),
    }
}

/// A peer name as two names are compared: capitals aside, accented letters however they are
/// encoded (NFC), soft hyphens left out ([`distinct_name`]; `hurdle init` numbers names that
/// fold alike).
pub(crate) fn name_fold(text: &str) -> String {
    use unicode_normalization::UnicodeNormalization;
    (text.nfc().filter(|&c| c != '\u{ad}'))
        .collect::<String>()
        .to_lowercase()
}

/// `text` with every character beyond ASCII written as its code point (`e\u{301}cole`).
fn spelled_out(text: &str) -> String {
    (text.chars())
        .map(|c| match c.is_ascii() {
            true => c.to_string(),
            false => c.escape_unicode().to_string(),
        })
        .collect()
}
