//! Errors that name the place: the file, the rule, the line, the position.

use std::fmt;
use std::path::PathBuf;

/// Everything that can go wrong in descry's library.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    #[error(transparent)]
    Ruleset(#[from] RulesetError),
    #[error("{path}: {message}")]
    Input { path: PathBuf, message: String },
    #[error("{path}: no column named \"{column}\"; the columns are: {}", available.join(", "))]
    MissingColumn {
        path: PathBuf,
        column: String,
        available: Vec<String>,
    },
    #[error("{path}: {message}")]
    Output { path: PathBuf, message: String },
    #[error("{0}")]
    Usage(String),
}

pub type Result<T, E = Error> = std::result::Result<T, E>;

/// A problem in a ruleset, located as precisely as the problem allows.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RulesetError {
    /// The ruleset file, or `<inline>` for rulesets built from text.
    pub file: String,
    /// The rule, e.g. `[[count]] "cylinders"`.
    pub rule: Option<String>,
    /// 1-based line in the file, when known.
    pub line: Option<usize>,
    /// The pattern and the 0-based byte offset in it, for pattern errors.
    pub pattern: Option<(String, usize)>,
    pub message: String,
    /// What to do about it.
    pub hint: Option<String>,
}

impl RulesetError {
    pub fn new(file: &str, message: impl Into<String>) -> Self {
        RulesetError {
            file: file.to_owned(),
            rule: None,
            line: None,
            pattern: None,
            message: message.into(),
            hint: None,
        }
    }

    pub fn rule(mut self, rule: impl Into<String>) -> Self {
        self.rule = Some(rule.into());
        self
    }

    pub fn line(mut self, line: Option<usize>) -> Self {
        self.line = line;
        self
    }

    pub fn at(mut self, pattern: &str, offset: usize) -> Self {
        self.pattern = Some((pattern.to_owned(), offset));
        self
    }

    pub fn hint(mut self, hint: impl Into<String>) -> Self {
        self.hint = Some(hint.into());
        self
    }
}

impl fmt::Display for RulesetError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.file)?;
        if let Some(line) = self.line {
            write!(f, ":{line}")?;
        }
        if let Some(rule) = &self.rule {
            write!(f, ": rule {rule}")?;
        }
        write!(f, ": {}", self.message)?;
        if let Some((pattern, offset)) = &self.pattern {
            let column = pattern[..*offset.min(&pattern.len())].chars().count();
            write!(
                f,
                " (pattern position {offset})\n    {pattern}\n    {}^",
                " ".repeat(column)
            )?;
        }
        if let Some(hint) = &self.hint {
            write!(f, "\n  hint: {hint}")?;
        }
        Ok(())
    }
}

impl std::error::Error for RulesetError {}
