//! Typed errors. Every message names the field path, the value, the allowed range and the fix.

use std::fmt;

/// A case that cannot be run, with the field at fault.
#[derive(Debug, Clone, PartialEq)]
pub struct CaseError {
    /// Dotted path of the field (`foils.1.chord`), or `case` for the whole file.
    pub path: String,
    /// The offending value as written.
    pub value: String,
    /// The allowed range or form.
    pub allowed: String,
    /// How to fix it.
    pub fix: String,
}

impl CaseError {
    /// A new error.
    pub fn new(path: impl Into<String>, value: impl Into<String>, allowed: impl Into<String>, fix: impl Into<String>) -> Self {
        CaseError { path: path.into(), value: value.into(), allowed: allowed.into(), fix: fix.into() }
    }

    /// Converts a JSON parse error.
    pub fn from_serde(err: serde_json::Error) -> Self {
        CaseError::new("case", "", "a JSON case file (see design)", err.to_string())
    }
}

impl fmt::Display for CaseError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} = {}: allowed {}; {}", self.path, self.value, self.allowed, self.fix)
    }
}

impl std::error::Error for CaseError {}
