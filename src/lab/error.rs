//! Errors of the lab layer: a data file that cannot be read, input placed at file:row:column,
//! and analyses that cannot be carried out on well-formed data.

use std::fmt;

/// Most placed errors listed in one message; the rest are counted.
const MAX_LISTED: usize = 20;

/// One input problem, placed in a data file.
///
/// `row` is the line of the file (1-based, comments and blank lines counted); `column` is the
/// field of that line (1-based, as separated by the delimiter), or, on a `# key: value` line, the
/// character where the value starts. 0 means "the whole file" or "the whole line".
#[derive(Debug, Clone, PartialEq)]
pub struct PlacedError {
    pub file: String,
    pub row: usize,
    pub column: usize,
    pub message: String,
    /// What would be accepted instead.
    pub accepted: String,
}

impl PlacedError {
    pub fn new(
        file: &str,
        row: usize,
        column: usize,
        message: impl Into<String>,
        accepted: impl Into<String>,
    ) -> PlacedError {
        PlacedError {
            file: file.to_string(),
            row,
            column,
            message: message.into(),
            accepted: accepted.into(),
        }
    }
}

impl fmt::Display for PlacedError {
    fn fmt(&self, f: &mut fmt::Formatter) -> fmt::Result {
        write!(
            f,
            "{}:{}:{}: {}",
            self.file, self.row, self.column, self.message
        )?;
        if !self.accepted.is_empty() {
            write!(f, "; accepted: {}", self.accepted)?;
        }
        Ok(())
    }
}

#[derive(Debug, thiserror::Error)]
pub enum LabError {
    /// The file could not be opened or read (exit 2: bad input).
    #[error("{file}: cannot read the data file: {source}")]
    Read {
        file: String,
        source: std::io::Error,
    },
    /// Input that cannot be accepted, each problem placed (exit 2: bad input).
    #[error("{}", list(.0))]
    Invalid(Vec<PlacedError>),
    /// Well-formed data on which an analysis cannot be carried out, e.g. no exotherm found
    /// (exit 1: the computation failed); the message says what was tried.
    #[error("{file}: {message}")]
    Analysis { file: String, message: String },
}

impl LabError {
    /// One placed problem.
    pub fn at(
        file: &str,
        row: usize,
        column: usize,
        message: impl Into<String>,
        accepted: impl Into<String>,
    ) -> LabError {
        LabError::Invalid(vec![PlacedError::new(file, row, column, message, accepted)])
    }

    pub fn analysis(file: &str, message: impl Into<String>) -> LabError {
        LabError::Analysis {
            file: file.to_string(),
            message: message.into(),
        }
    }

    /// 2 for bad input, 1 for a failed analysis (the codes of `cli::AppError`).
    pub fn exit_code(&self) -> u8 {
        match self {
            LabError::Read { .. } | LabError::Invalid(_) => 2,
            LabError::Analysis { .. } => 1,
        }
    }
}

fn list(errors: &[PlacedError]) -> String {
    let mut lines: Vec<String> = errors
        .iter()
        .take(MAX_LISTED)
        .map(|e| e.to_string())
        .collect();
    if errors.len() > MAX_LISTED {
        lines.push(format!("... and {} more", errors.len() - MAX_LISTED));
    }
    let count = match errors.len() {
        1 => "1 error".to_string(),
        n => format!("{n} errors"),
    };
    format!(
        "{}\n{count} in the data; nothing was computed",
        lines.join("\n")
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_placed_error_reads_file_row_column_message_accepted() {
        let e = PlacedError::new("scan.csv", 7, 3, "`x` is not a number", "a number");
        assert_eq!(
            e.to_string(),
            "scan.csv:7:3: `x` is not a number; accepted: a number"
        );
    }

    #[test]
    fn a_long_list_is_cut_and_counted() {
        let errors: Vec<PlacedError> = (1..=25)
            .map(|r| PlacedError::new("f.csv", r, 1, "bad", ""))
            .collect();
        let text = LabError::Invalid(errors).to_string();
        assert!(text.contains("... and 5 more"), "{text}");
        assert!(text.contains("25 errors in the data"), "{text}");
        assert_eq!(LabError::analysis("f", "m").exit_code(), 1);
    }
}
