//! A world whose one data file claims to be huge, so that every build
//! streams it and reads it again for its checks; shared by the tests of the
//! bounded paths.

use sheaf::compile::World;
use std::io::Read;
use std::sync::atomic::{AtomicUsize, Ordering};

/// A file in memory that claims to be huge, so that every build streams it.
/// With `changed_after`, the file's bytes change once it has been opened
/// that many times (a file rewritten while a build reads it).
pub struct Huge {
    pub data: Vec<u8>,
    pub opened: AtomicUsize,
    pub changed_after: Option<usize>,
}

impl Huge {
    pub fn new(data: Vec<u8>) -> Huge {
        Huge {
            data,
            opened: AtomicUsize::new(0),
            changed_after: None,
        }
    }
}

impl World for Huge {
    fn read(&self, _path: &str) -> std::io::Result<Vec<u8>> {
        Ok(self.data.clone())
    }

    fn open(&self, _path: &str) -> std::io::Result<(Box<dyn Read + Send>, u64)> {
        let times = self.opened.fetch_add(1, Ordering::SeqCst);
        let mut bytes = self.data.clone();
        if self.changed_after.is_some_and(|n| times >= n) {
            // One digit of the last value, same size: only the hash can tell.
            let at = bytes.len() - 2;
            bytes[at] = if bytes[at] == b'1' { b'2' } else { b'1' };
        }
        Ok((Box::new(std::io::Cursor::new(bytes)), 1 << 40))
    }

    /// Without opening, so that `opened` counts the passes only.
    fn probe(&self, _path: &str) -> std::io::Result<u64> {
        Ok(1 << 40)
    }

    fn display(&self, path: &str) -> String {
        path.to_string()
    }
}

/// A deterministic scramble in [0, 1) (no clock, no random crate).
pub fn scramble(i: u64) -> f64 {
    let x = i
        .wrapping_mul(6_364_136_223_846_793_005)
        .wrapping_add(1_442_695_040_888_963_407);
    (x >> 11) as f64 / (1u64 << 53) as f64
}

/// How row `i`'s value is written in the invented large files: missing
/// (`NA`) one row in 997, with a fourth decimal (outside the exact sums)
/// one in 500, else on the 0.001 grid.
pub fn cell(i: u64, y: f64) -> String {
    if i % 997 == 3 {
        "NA".to_string()
    } else if i % 500 == 1 {
        format!("{y:.4}")
    } else {
        format!("{y:.3}")
    }
}
