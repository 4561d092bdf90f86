//! Reading input text with a size cap: a scenario, a flux table, a run-folder file. A file
//! that is larger than any real input (or endless, such as `/dev/zero`) is refused after
//! reading at most the cap, with a clear error, instead of filling memory.

use std::io::Read;
use std::path::Path;

/// Largest scenario or flux-table file read, bytes (16 MiB; the demo scenario is about 4 KiB).
pub const MAX_INPUT_BYTES: u64 = 16 << 20;

/// Largest run-folder file read back (summary, settings, checkpoint, manifest, sweep), bytes
/// (256 MiB).
pub const MAX_RUN_FILE_BYTES: u64 = 256 << 20;

fn mib(n: u64) -> String {
    format!("{} MiB", n >> 20)
}

/// Read at most `limit` bytes of text from `r`; more is an `InvalidData` error naming `what`.
pub fn read_text_limited(mut r: impl Read, limit: u64, what: &str) -> std::io::Result<String> {
    let mut buf = Vec::new();
    r.by_ref()
        .take(limit.saturating_add(1))
        .read_to_end(&mut buf)?;
    if buf.len() as u64 > limit {
        return Err(std::io::Error::new(
            std::io::ErrorKind::InvalidData,
            format!(
                "it is larger than {}, the limit for {what}; is it the right file?",
                mib(limit)
            ),
        ));
    }
    String::from_utf8(buf).map_err(|e| {
        std::io::Error::new(
            std::io::ErrorKind::InvalidData,
            format!(
                "it is not UTF-8 text (invalid byte at offset {})",
                e.utf8_error().valid_up_to()
            ),
        )
    })
}

/// Read a text file of at most `limit` bytes. Folders are refused with their own message.
pub fn read_text_capped(path: &Path, limit: u64, what: &str) -> std::io::Result<String> {
    let f = std::fs::File::open(path)?;
    if f.metadata()?.is_dir() {
        return Err(std::io::Error::new(
            std::io::ErrorKind::InvalidInput,
            "it is a folder, not a file",
        ));
    }
    read_text_limited(f, limit, what)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cap_is_enforced_and_exact_size_passes() {
        let e = read_text_limited(std::io::repeat(b'a'), 1000, "a test").unwrap_err();
        assert!(e.to_string().contains("larger than"), "{e}");
        assert_eq!(read_text_limited(&b"abc"[..], 3, "t").unwrap(), "abc");
        assert!(read_text_limited(&[0xff, 0xfe][..], 10, "t").is_err());
    }
}
