//! Reading and validating the bench's input files: the corpus of posts, the
//! queries, the graded judgments and ranked runs (layouts in the spec's
//! formats.md). First stage of the data flow: everything downstream works on
//! the validated values defined here and never sees a file.
//!
//! Every reader validates the whole file, lists every bad line (capped, see
//! [`crate::error::Problems`]) and returns one error naming the file and lines.

mod corpus;
mod judgments;
mod lang_code;
mod queries;
mod runs;
mod text;

pub use corpus::{read_corpus, read_corpus_metered, Post};
pub use judgments::{
    judgments_layout, read_judgments, read_judgments_or_none, CsvColumns, Judgments,
    JudgmentsLayout,
};
pub use lang_code::LangCode;
pub use queries::{read_queries, Query};
pub use runs::{format_shortest, read_run, write_run, RankedDoc, Run};
pub use text::{declared_separator, utf8_message};

/// Hex SHA-256 of a file's bytes, streamed (reports record it for every
/// file they read).
pub fn sha256_of(path: &std::path::Path) -> crate::error::Result<String> {
    use sha2::{Digest, Sha256};
    use std::io::Read;
    let io = |e| crate::error::Error::io(path, e);
    let mut file = std::fs::File::open(path).map_err(io)?;
    let mut hasher = Sha256::new();
    let mut buf = vec![0u8; 1 << 16];
    loop {
        let n = file.read(&mut buf).map_err(io)?;
        if n == 0 {
            break;
        }
        hasher.update(buf.get(..n).unwrap_or_default());
    }
    Ok(hex(&hasher.finalize()))
}

/// Hex SHA-256 of bytes in memory (the canonical text of parsed inputs).
pub fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::{Digest, Sha256};
    hex(&Sha256::digest(bytes))
}

/// Bytes (a digest) as lower-case hex, two digits a byte.
pub fn hex(digest: &[u8]) -> String {
    digest.iter().map(|b| format!("{b:02x}")).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sha256_of_a_known_string() {
        // SHA-256("abc") from FIPS 180-2, appendix B.1.
        let dir = tempfile::tempdir().expect("temp dir");
        let path = dir.path().join("abc.txt");
        std::fs::write(&path, "abc").expect("written");
        assert_eq!(
            sha256_of(&path).expect("readable"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
        assert_eq!(
            sha256_hex(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }
}
