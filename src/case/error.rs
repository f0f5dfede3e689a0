//! Errors of the case layer: a file that cannot be read, or inputs that cannot be accepted.

use super::positions::Position;
use std::fmt;

/// One input problem, placed in the file and named by its key path.
#[derive(Debug, Clone, PartialEq)]
pub struct InputError {
    pub file: String,
    pub position: Position,
    /// Key path such as `reactions[0].activation_energy`; empty for the whole file.
    pub path: String,
    pub message: String,
    /// What would be accepted instead.
    pub accepted: String,
}

impl fmt::Display for InputError {
    fn fmt(&self, f: &mut fmt::Formatter) -> fmt::Result {
        let Position { line, column } = self.position;
        write!(f, "{}:{line}:{column}: ", self.file)?;
        if !self.path.is_empty() {
            write!(f, "{}: ", self.path)?;
        }
        write!(f, "{}", self.message)?;
        if !self.accepted.is_empty() {
            write!(f, "; accepted: {}", self.accepted)?;
        }
        Ok(())
    }
}

#[derive(Debug, thiserror::Error)]
pub enum CaseError {
    #[error("{file}: cannot read the case file: {source}")]
    Read {
        file: String,
        source: std::io::Error,
    },
    #[error("{}", list(.0))]
    Invalid(Vec<InputError>),
}

fn list(errors: &[InputError]) -> String {
    let lines: Vec<String> = errors.iter().map(|e| e.to_string()).collect();
    let count = match errors.len() {
        1 => "1 error".to_string(),
        n => format!("{n} errors"),
    };
    format!(
        "{}\n{count} in the case; nothing was computed",
        lines.join("\n")
    )
}
