//! The one error type of the estimate layer: what is wrong with an equation, a species, a data
//! file or a list of bonds, and what would be accepted.

/// Everything that stops an estimate.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum EstimateError {
    #[error("equation \"{text}\": {message}")]
    Equation { text: String, message: String },
    #[error(
        "unknown species {names}; the table holds: {known}. Give your own values with --data FILE, a CSV file with the header `species,phase,formula,dHf [kJ/mol],source` (formula and source may be empty), one row per species and phase; a phase is written after the name as (g), (l), (s) or (aq)"
    )]
    UnknownSpecies { names: String, known: String },
    #[error("{species}({phase}) is not in the table; it holds {species} as: {held}")]
    UnknownPhase {
        species: String,
        phase: String,
        held: String,
    },
    #[error(
        "{species} is in the table as {held} and none of them is marked as the standard state: write the phase, e.g. {species}({first})"
    )]
    AmbiguousPhase {
        species: String,
        held: String,
        first: String,
    },
    #[error("the equation does not balance: {elements} (products minus reactants)")]
    Unbalanced { elements: String },
    #[error("{file}:{line}:{column}: {message}")]
    DataFile {
        file: String,
        line: u64,
        column: usize,
        message: String,
    },
    #[error("cannot read {file}: {message}")]
    DataFileRead { file: String, message: String },
    #[error("bundled table {table} is broken: {message}")]
    Bundled { table: String, message: String },
    #[error("{0}")]
    Bonds(String),
    #[error("--prefer: {0}")]
    Preference(String),
}

impl EstimateError {
    /// True when the input was at fault (exit status 2); false for a broken bundled table.
    pub fn is_bad_input(&self) -> bool {
        !matches!(self, EstimateError::Bundled { .. })
    }
}
