//! One table of keys per `key: value` section (front matter, `anova` and
//! `power` blocks): the parser dispatches from the table and the hint for an
//! unknown key lists the table, so the two cannot drift apart.

use super::block::SpecError;
use super::keyvalue::Entry;

/// Reads one entry into the section being built.
pub type Handler<T> = fn(&Entry, &mut T) -> Result<(), SpecError>;

/// The keys a section accepts, each with the handler that reads it.
pub struct KeyTable<T: 'static> {
    /// The section as a hint names it: "an anova block", "the front matter".
    pub section: &'static str,
    /// The message for a key not in the table, before the key itself.
    pub unknown: &'static str,
    pub keys: &'static [(&'static str, Handler<T>)],
}

impl<T> KeyTable<T> {
    /// Every accepted key, in the table's order.
    pub fn names(&self) -> Vec<&'static str> {
        self.keys.iter().map(|(k, _)| *k).collect()
    }

    pub fn accepts(&self, key: &str) -> bool {
        self.keys.iter().any(|(k, _)| *k == key)
    }

    /// Reads every entry with its key's handler; returns every problem, an
    /// unknown key included, in the entries' order.
    pub fn apply(&self, entries: &[Entry], target: &mut T) -> Vec<SpecError> {
        let mut errors = Vec::new();
        for e in entries {
            match self.keys.iter().find(|(k, _)| *k == e.key) {
                Some((_, read)) => {
                    if let Err(x) = read(e, target) {
                        errors.push(x);
                    }
                }
                None => errors.push(self.unknown_key(e)),
            }
        }
        errors
    }

    fn unknown_key(&self, e: &Entry) -> SpecError {
        let names = self.names();
        let hint = match crate::diag::nearest(&e.key, names.iter().copied()) {
            Some(k) => format!("did you mean `{k}`?"),
            None => format!("{} takes {}", self.section, names.join(", ")),
        };
        SpecError {
            line: e.line,
            column: e.key_column,
            message: format!("{} `{}`", self.unknown, e.key),
            hint: Some(hint),
        }
    }
}

#[cfg(test)]
#[path = "keytable_tests.rs"]
mod tests;
