//! A world holding one summary file, `s.csv`, in memory, and the log
//! relative error the accuracy tests report; shared by the tests of
//! summary input.

use sheaf::compile::World;

/// The one file `s.csv`; every other path is missing.
pub struct Memory(pub String);

impl World for Memory {
    fn read(&self, path: &str) -> std::io::Result<Vec<u8>> {
        if path == "s.csv" {
            Ok(self.0.as_bytes().to_vec())
        } else {
            Err(std::io::Error::from(std::io::ErrorKind::NotFound))
        }
    }
    fn display(&self, path: &str) -> String {
        path.to_string()
    }
}

/// Log relative error against a certified value, capped at 15 digits.
pub fn lre(got: f64, certified: f64) -> f64 {
    if got == certified {
        return 15.0;
    }
    (-((got - certified) / certified).abs().log10()).min(15.0)
}
