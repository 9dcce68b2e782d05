//! A CSV file as blocks of whole records: one thread reads the file a few megabytes at a time,
//! hashes every byte for the receipt and cuts each block at the last line end outside quotes
//! (the rest starts the next block), while the caller parses the block before; a block without a
//! double quote can further be cut into pieces at any line end, one per core.

use std::fs::File;
use std::io::Read;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::mpsc::{channel, sync_channel, Receiver, SyncSender};

use sha2::{Digest, Sha256};

use super::Source;
use crate::error::{Error, Result};

/// Calls `each(block, is_first, has_quote)` on consecutive blocks of whole records, read (and
/// hashed) by a second thread while `each` works, and returns the SHA-256 of every byte read.
/// `has_quote` is false only when the block holds no double quote. The progress bar shows the
/// bytes read and, when given, how many securities the caller has `finished`.
pub(super) fn scan_blocks(
    source: &Source,
    (block_bytes, finished): (&AtomicUsize, Option<&AtomicUsize>),
    mut each: impl FnMut(&[u8], bool, bool) -> Result<()>,
) -> Result<String> {
    std::thread::scope(|scope| {
        let (blocks, blocks_in) = sync_channel(2);
        let (spares, spares_in) = channel();
        let reader = source.spawn(scope, move || {
            read_blocks(source, block_bytes, blocks, spares_in)
        })?;
        let mut first = true;
        let mut outcome = Ok(());
        let total = std::fs::metadata(&source.file).map_or(0, |m| m.len());
        let name = source
            .file
            .file_name()
            .unwrap_or_default()
            .to_string_lossy();
        let mut progress = crate::progress::Progress::of_bytes(&format!("reading {name}"), total);
        for (block, quoted) in blocks_in.iter() {
            if let Some(finished) = finished {
                progress.relabel(super::reading_label(&name, finished));
            }
            // A stop request (Ctrl-C) ends the reading between two blocks.
            outcome =
                (progress.advance(block.len() as u64)).and_then(|()| each(&block, first, quoted));
            first = false;
            if outcome.is_err() {
                break;
            }
            // The reader may have finished; then the buffer is simply dropped.
            let _ = spares.send(block);
        }
        drop(blocks_in);
        let sha256 = reader.join().expect("the block reader does not panic");
        outcome?;
        let sha256 = sha256?;
        if first {
            return Err(source.file_error("is empty (no header, no rows)".into()));
        }
        Ok(sha256)
    })
}

/// The reader stage: sends blocks of whole records (of about `block_bytes`, which the consumer
/// may raise once it has seen the header), reusing the buffers sent back, and returns the
/// SHA-256 of the file (empty when the receiver stopped early).
fn read_blocks(
    source: &Source,
    block_bytes: &AtomicUsize,
    blocks: SyncSender<(Vec<u8>, bool)>,
    spares: Receiver<Vec<u8>>,
) -> Result<String> {
    let io_error = |action: &'static str| {
        move |e: std::io::Error| Error::Io {
            path: source.file.clone(),
            action,
            source: e,
        }
    };
    let mut file = File::open(&source.file).map_err(io_error("cannot open the panel file"))?;
    let mut hasher = Sha256::new();
    let mut carry: Vec<u8> = Vec::new();
    loop {
        let mut buffer = spares.try_recv().unwrap_or_default();
        buffer.clear();
        buffer.extend_from_slice(&carry);
        // A record longer than a block doubles the read until it fits.
        let wanted = block_bytes.load(Ordering::Relaxed).max(2 * carry.len()) - carry.len();
        let read = (&mut file)
            .take(wanted as u64)
            .read_to_end(&mut buffer)
            .map_err(io_error("cannot read the panel file"))?;
        hasher.update(&buffer[carry.len()..]);
        let at_end = read < wanted;
        // One scan for quotes serves both the cut and the parse (a superset of the block).
        let quoted = memchr::memchr(b'"', &buffer).is_some();
        // Empty lines after the last row are no rows (the hash above is of every byte): a
        // block's own trailing empty lines wait in the carry for the next block, which either
        // brings more rows (the lines were between rows, and are refused there) or ends the file
        // (found by review: empty lines across a block's end were refused).
        let whole = match at_end {
            true => &buffer[..],
            false => &buffer[..last_record_end_in(&buffer, quoted).unwrap_or(0)],
        };
        let end = crate::io::sanity::without_trailing_empty_records(whole).len();
        carry.clear();
        carry.extend_from_slice(&buffer[end..]);
        buffer.truncate(end);
        if !buffer.is_empty() && blocks.send((buffer, quoted)).is_err() {
            return Ok(String::new());
        }
        if at_end {
            return Ok(super::hex(&hasher.finalize()));
        }
    }
}

/// The records' cut, for the tests: whether a quote is present is found here.
#[cfg(test)]
fn last_record_end(bytes: &[u8]) -> Option<usize> {
    last_record_end_in(bytes, bytes.contains(&b'"'))
}

/// Just past the last line end that lies outside double quotes (CSV doubles a quote inside a
/// quoted field, so quote parity tells inside from outside); `quoted` says whether `bytes`
/// hold a double quote at all.
fn last_record_end_in(bytes: &[u8], quoted: bool) -> Option<usize> {
    if !quoted {
        return memchr::memrchr(b'\n', bytes).map(|p| p + 1);
    }
    let mut inside = false;
    let mut end = None;
    for (i, &b) in bytes.iter().enumerate() {
        if b == b'"' {
            inside = !inside;
        } else if b == b'\n' && !inside {
            end = Some(i + 1);
        }
    }
    end
}

/// Lines in a piece: its line ends (memchr's vectorised count), and a last line without one.
pub(super) fn line_count(bytes: &[u8]) -> usize {
    let ends = memchr::memchr_iter(b'\n', bytes).count();
    ends + usize::from(bytes.last().is_some_and(|&b| b != b'\n'))
}

/// `bytes` cut into at most `parts` pieces of about equal size, each ending at a line end (the
/// last at the end of `bytes`); for a block without quotes, where every line end ends a record.
pub(super) fn split_at_line_ends(bytes: &[u8], parts: usize) -> Vec<&[u8]> {
    let mut pieces = Vec::with_capacity(parts);
    let mut start = 0;
    for k in 1..parts {
        let target = (bytes.len() * k / parts).max(start);
        match memchr::memchr(b'\n', &bytes[target..]) {
            Some(at) if target + at + 1 < bytes.len() => {
                pieces.push(&bytes[start..target + at + 1]);
                start = target + at + 1;
            }
            _ => break,
        }
    }
    pieces.push(&bytes[start..]);
    pieces
}

#[cfg(test)]
mod tests {
    use super::*;

    // RFC 4180: a line end inside a quoted field belongs to the field.
    #[test]
    fn records_end_only_outside_quotes() {
        assert_eq!(last_record_end(b"a,b\n1,2\n3,"), Some(8));
        assert_eq!(last_record_end(b"a,b\n\"x\ny\",2\n\"z\n"), Some(12));
        assert_eq!(last_record_end(b"no line end"), None);
    }

    #[test]
    fn pieces_end_at_line_ends_and_cover_the_block() {
        let block = b"a,1\nbb,2\nccc,3\ndddd,4\n";
        for parts in 1..6 {
            let pieces = split_at_line_ends(block, parts);
            assert!(pieces.len() <= parts);
            assert_eq!(pieces.concat(), block);
            assert!(pieces.iter().all(|p| p.ends_with(b"\n")));
        }
        assert_eq!(line_count(b"a\nb"), 2);
        assert_eq!(line_count(b"a\nb\n"), 2);
        assert_eq!(line_count(b""), 0);
    }
}
