//! Typed errors. Every message names the field path, the value, the allowed range and the fix.
//!
//! A [`CaseError`] prints as one line:
//!
//! ```text
//! foils.1.chord = -0.1: allowed 0.001 to 10 m; set a positive chord in metres (e.g. 0.1)
//! ```
//!
//! Errors without a field (the file cannot be read, or is not JSON) say what went wrong, where,
//! and how to fix it, on one line as well.

use std::fmt;

/// What kind of problem a [`CaseError`] reports.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum ErrorKind {
    /// The case file could not be read (missing, unreadable, not UTF-8).
    Io,
    /// The text is not valid JSON; `path` holds `line L, column C`.
    Syntax,
    /// A key that the case format does not know.
    UnknownKey,
    /// The same key written twice in one object.
    DuplicateKey,
    /// A value of the wrong JSON type (a string where a number belongs, ...).
    WrongType,
    /// A required key is absent.
    Missing,
    /// A value outside its allowed range (including non-finite numbers and unknown names).
    OutOfRange,
    /// Values that are each fine but contradict one another (e.g. a time step for a flapping case).
    Inconsistent,
    /// Foils overlap or touch during their motion.
    Overlap,
}

/// A case that cannot be run, with the field at fault.
#[derive(Debug, Clone, PartialEq)]
pub struct CaseError {
    /// What kind of problem this is.
    pub kind: ErrorKind,
    /// Dotted path of the field (`foils.1.chord`), or `case` for the whole file.
    /// For [`ErrorKind::Io`] the file path; for [`ErrorKind::Syntax`] `line L, column C`.
    pub path: String,
    /// The offending value as written.
    pub value: String,
    /// The allowed range or form.
    pub allowed: String,
    /// How to fix it.
    pub fix: String,
}

/// Longest value echoed in a message; longer values (whole objects) are shortened with `...`.
const MAX_VALUE_CHARS: usize = 80;

impl CaseError {
    /// A new error of kind [`ErrorKind::OutOfRange`]; change the kind with [`CaseError::with_kind`].
    pub fn new(
        path: impl Into<String>,
        value: impl Into<String>,
        allowed: impl Into<String>,
        fix: impl Into<String>,
    ) -> Self {
        CaseError {
            kind: ErrorKind::OutOfRange,
            path: path.into(),
            value: value.into(),
            allowed: allowed.into(),
            fix: fix.into(),
        }
    }

    /// The same error with another kind.
    pub fn with_kind(mut self, kind: ErrorKind) -> Self {
        self.kind = kind;
        self
    }

    /// The case file at `path` could not be read; `reason` is the operating system's reason.
    pub fn io(path: impl Into<String>, reason: &std::io::Error) -> Self {
        CaseError::new(
            path,
            "",
            "a readable UTF-8 JSON case file",
            format!("cannot read it: {reason}"),
        )
        .with_kind(ErrorKind::Io)
    }

    /// Converts a JSON parse error.
    ///
    /// Syntax errors keep serde_json's line and column. Data errors (unknown key, wrong type,
    /// missing key, duplicate key) are recognised from serde_json's message and given their kind;
    /// serde_json does not know the field path, so [`crate::Case::from_json`] walks the JSON tree
    /// first and reports path-precise errors before it ever reaches this conversion.
    pub fn from_serde(err: serde_json::Error) -> Self {
        let at = if err.line() > 0 {
            format!("line {}, column {}", err.line(), err.column())
        } else {
            "case".to_string()
        };
        let full = err.to_string();
        // serde_json appends " at line L column C"; drop it, `at` carries it.
        let msg = match full.rfind(" at line ") {
            Some(i) => full[..i].to_string(),
            None => full,
        };
        match err.classify() {
            serde_json::error::Category::Syntax => CaseError::new(
                at,
                "",
                "JSON text",
                format!("{msg}; fix the JSON syntax there (quotes around keys, commas between items, no trailing comma)"),
            )
            .with_kind(ErrorKind::Syntax),
            serde_json::error::Category::Eof => CaseError::new(
                at,
                "",
                "JSON text",
                format!("{msg}; the file ends early: close every {{ and [ and finish the last value"),
            )
            .with_kind(ErrorKind::Syntax),
            serde_json::error::Category::Io => CaseError::new("case", "", "a readable case file", msg)
                .with_kind(ErrorKind::Io),
            serde_json::error::Category::Data => Self::from_data_message(&msg, &at),
        }
    }

    /// Classifies a serde data error from its message (the forms serde's derive writes).
    fn from_data_message(msg: &str, at: &str) -> Self {
        let quoted: Vec<&str> = msg.split('`').skip(1).step_by(2).collect();
        let first = quoted.first().copied().unwrap_or("").to_string();
        if let Some(rest) = msg.strip_prefix("unknown field ") {
            let allowed = match rest.find("expected ") {
                Some(i) => rest[i + "expected ".len()..].replace('`', ""),
                None => "the keys of the case format".to_string(),
            };
            CaseError::new(
                first.clone(),
                "",
                allowed,
                format!("remove `{first}` or correct its spelling ({at})"),
            )
            .with_kind(ErrorKind::UnknownKey)
        } else if msg.starts_with("missing field ") {
            CaseError::new(
                first.clone(),
                "(missing)",
                "a value",
                format!("add `{first}` ({at})"),
            )
            .with_kind(ErrorKind::Missing)
        } else if msg.starts_with("duplicate field ") {
            CaseError::new(
                first.clone(),
                "(written twice)",
                "each key once per object",
                format!("delete one of the two `{first}` entries ({at})"),
            )
            .with_kind(ErrorKind::DuplicateKey)
        } else if let Some(rest) = msg.strip_prefix("invalid type: ") {
            let (found, expected) = match rest.split_once(", expected ") {
                Some((f, e)) => (f.to_string(), e.to_string()),
                None => (rest.to_string(), "another type".to_string()),
            };
            CaseError::new(
                at,
                found,
                expected,
                "write the value with the expected type",
            )
            .with_kind(ErrorKind::WrongType)
        } else if let Some(rest) = msg.strip_prefix("unknown variant ") {
            let allowed = match rest.find("expected ") {
                Some(i) => rest[i + "expected ".len()..].replace('`', "\""),
                None => "one of the listed names".to_string(),
            };
            CaseError::new(
                at,
                format!("\"{first}\""),
                allowed,
                "use one of the allowed names",
            )
        } else {
            CaseError::new(at, "", "a valid case", msg.to_string())
        }
    }
}

/// `text` on one line (control characters become spaces).
fn flat(text: &str) -> String {
    text.chars()
        .map(|c| if c.is_control() { ' ' } else { c })
        .collect()
}

/// Shortens `text` to at most [`MAX_VALUE_CHARS`] characters and keeps it on one line.
fn one_line(text: &str) -> String {
    let flat = flat(text);
    if flat.chars().count() > MAX_VALUE_CHARS {
        let head: String = flat.chars().take(MAX_VALUE_CHARS - 3).collect();
        format!("{head}...")
    } else {
        flat
    }
}

impl fmt::Display for CaseError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let path = flat(&self.path);
        let value = one_line(&self.value);
        let allowed = flat(&self.allowed);
        let fix = flat(&self.fix);
        match self.kind {
            ErrorKind::Io => write!(f, "case file {path}: {fix}; check the path and permissions"),
            ErrorKind::Syntax => write!(f, "case file is not valid JSON at {path}: {fix}"),
            _ if value.is_empty() => write!(f, "{path}: allowed {allowed}; {fix}"),
            _ => write!(f, "{path} = {value}: allowed {allowed}; {fix}"),
        }
    }
}

impl std::error::Error for CaseError {}
