//! Library error type.
//!
//! Every error that bad input can cause carries what a user needs to fix it: the
//! file, the line (when known), the key path and the offending value, plus a hint
//! where one helps (for example the nearest valid key for a misspelt one).

use std::fmt;
use std::path::PathBuf;

/// Where in an input file something went wrong.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Location {
    pub file: Option<PathBuf>,
    pub line: Option<usize>,
    pub key: Option<String>,
}

impl fmt::Display for Location {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        // A command-line option (`--horizon`) has no file: name the option.
        if let (None, Some(k)) = (&self.file, &self.key) {
            if k.starts_with("--") {
                return write!(f, "option `{k}`");
            }
        }
        let file = self
            .file
            .as_ref()
            .map(|p| p.display().to_string())
            .unwrap_or_else(|| "<input>".to_string());
        write!(f, "{file}")?;
        if let Some(line) = self.line {
            write!(f, ":{line}")?;
        }
        if let Some(key) = &self.key {
            write!(f, ": key `{key}`")?;
        }
        Ok(())
    }
}

/// A number as the user would have written it: plain between 10⁻³ and 10⁶,
/// scientific outside (`1e308`, not 309 digits).
fn short(x: f64) -> String {
    if x == 0.0 || !x.is_finite() || (1e-3..1e6).contains(&x.abs()) {
        format!("{x}")
    } else {
        format!("{x:e}")
    }
}

/// A distribution parameter outside its family's domain (raised by `dist`).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{family}: parameter `{param}` = {} is invalid: {reason}", short(*.value))]
pub struct DistError {
    pub family: &'static str,
    pub param: &'static str,
    pub value: f64,
    pub reason: &'static str,
}

/// All library errors.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// A belief file, design file or table failed validation.
    #[error("{loc}: {msg}{}", hint.as_ref().map(|h| format!("\n  hint: {h}")).unwrap_or_default())]
    Input {
        loc: Location,
        msg: String,
        hint: Option<String>,
    },
    /// A distribution was given parameters outside its domain.
    #[error(transparent)]
    Dist(#[from] DistError),
    /// Reading or writing a file failed.
    #[error("{path}: {source}")]
    Io {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },
    /// A limit (draws, memory, rows) would be exceeded.
    #[error("{0}")]
    Limit(String),
    /// A numerical procedure failed in a way the input does not explain.
    #[error("numerical failure: {0}")]
    Numeric(String),
    /// A fault inside priorsmith (a value that could not be serialised, a
    /// poisoned lock): a bug to report, not something the input explains.
    #[error("internal error: {0}")]
    Internal(String),
    /// The work was cancelled (Ctrl-C, or a binding's interrupt).
    #[error("cancelled")]
    Cancelled,
}

pub type Result<T> = std::result::Result<T, Error>;

impl Error {
    pub fn input(loc: Location, msg: impl Into<String>) -> Self {
        Error::Input {
            loc,
            msg: msg.into(),
            hint: None,
        }
    }

    pub fn with_hint(self, h: impl Into<String>) -> Self {
        match self {
            Error::Input { loc, msg, .. } => Error::Input {
                loc,
                msg,
                hint: Some(h.into()),
            },
            other => other,
        }
    }

    pub fn io(path: impl Into<PathBuf>, source: std::io::Error) -> Self {
        Error::Io {
            path: path.into(),
            source,
        }
    }

    /// Fill in the file name of an input error that lacks one.
    pub fn in_file(self, file: &std::path::Path) -> Self {
        match self {
            Error::Input { mut loc, msg, hint } => {
                if loc.file.is_none() {
                    loc.file = Some(file.to_path_buf());
                }
                Error::Input { loc, msg, hint }
            }
            other => other,
        }
    }
}

/// Damerau-free Levenshtein distance, for "did you mean" hints.
pub fn edit_distance(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    let mut cur = vec![0; b.len() + 1];
    for i in 1..=a.len() {
        cur[0] = i;
        for j in 1..=b.len() {
            let cost = usize::from(a[i - 1] != b[j - 1]);
            cur[j] = (prev[j] + 1).min(cur[j - 1] + 1).min(prev[j - 1] + cost);
        }
        std::mem::swap(&mut prev, &mut cur);
    }
    prev[b.len()]
}

/// The valid name nearest to `bad`, if it is plausibly a typo of it.
pub fn nearest<'a>(bad: &str, valid: impl IntoIterator<Item = &'a str>) -> Option<&'a str> {
    let lower = bad.to_lowercase();
    valid
        .into_iter()
        .map(|v| (edit_distance(&lower, &v.to_lowercase()), v))
        .filter(|(d, v)| *d <= 2.max(v.len() / 3))
        .min_by_key(|(d, _)| *d)
        .map(|(_, v)| v)
}

/// A hint listing the valid choices, leading with the nearest one.
pub fn choice_hint(bad: &str, valid: &[&str]) -> String {
    let list = valid.join(", ");
    match nearest(bad, valid.iter().copied()) {
        Some(n) => format!("did you mean `{n}`? valid: {list}"),
        None => format!("valid: {list}"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn suggests_nearest_key() {
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(
            nearest("quantiels", ["quantiles", "distribution", "histogram"]),
            Some("quantiles")
        );
        assert_eq!(nearest("zzzzzz", ["mean", "sd"]), None);
    }
}
