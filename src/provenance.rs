//! Provenance: the SHA-256 of every input, recorded in each results file
//! and report so that a reader can check which data produced them.

use sha2::{Digest, Sha256};

/// Lowercase hex SHA-256 of some bytes.
pub fn sha256_hex(bytes: &[u8]) -> String {
    let digest = Sha256::digest(bytes);
    digest.iter().map(|b| format!("{b:02x}")).collect()
}

/// SHA-256 (hex) and length of everything `reader` yields, read in
/// blocks of 1 MiB.
pub fn sha256_of_reader(mut reader: impl std::io::Read) -> std::io::Result<(String, u64)> {
    let mut hasher = Sha256::new();
    let mut buf = vec![0u8; 1 << 20];
    let mut total = 0u64;
    loop {
        let n = reader.read(&mut buf)?;
        if n == 0 {
            break;
        }
        hasher.update(&buf[..n]);
        total += n as u64;
    }
    let hex = hasher
        .finalize()
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect();
    Ok((hex, total))
}

/// A data file as read for the build.
#[derive(Debug, Clone)]
pub struct Input {
    /// The path as written in the block (relative to the document's folder).
    pub path: String,
    /// SHA-256 of the file, in hex.
    pub sha256: String,
    pub size: u64,
    /// The bytes, unless the file was streamed past (see `data::scan`);
    /// shared, so that a pass that needs them owned (a Parquet decoder)
    /// takes no copy.
    pub bytes: Option<bytes::Bytes>,
}

impl Input {
    pub fn loaded(path: &str, bytes: Vec<u8>) -> Input {
        Input {
            path: path.to_string(),
            sha256: sha256_hex(&bytes),
            size: bytes.len() as u64,
            bytes: Some(bytes::Bytes::from(bytes)),
        }
    }
}
