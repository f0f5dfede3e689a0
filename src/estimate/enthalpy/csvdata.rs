//! The CSV data files of the estimates (bundled tables and the user's own): records with their
//! line numbers, columns found by name, a value column whose header carries its unit
//! (`dHf [kJ/mol]`), and errors that name file, line and column.

use crate::case::units::{Dimension, parse_unit};
use crate::estimate::error::EstimateError;

const MOLAR_ENERGY: Dimension = Dimension::new(2.0, 1.0, -2.0, 0.0, -1.0);

/// One record: its line in the file and its trimmed fields.
#[derive(Debug, Clone)]
pub struct Record {
    pub line: u64,
    pub fields: Vec<String>,
}

/// A CSV file read whole: the header, the records, and where it came from.
#[derive(Debug, Clone)]
pub struct DataTable {
    pub file: String,
    pub header_line: u64,
    pub header: Vec<String>,
    pub records: Vec<Record>,
}

impl DataTable {
    /// Reads `text` (lines starting with `#` are comments); `file` names it in errors.
    pub fn read(text: &str, file: &str) -> Result<DataTable, EstimateError> {
        let mut reader = csv::ReaderBuilder::new()
            .comment(Some(b'#'))
            .trim(csv::Trim::All)
            .from_reader(text.as_bytes());
        let headers = reader.headers().map_err(|e| csv_error(file, &e))?.clone();
        let header_line = leading_skipped_lines(text) + 1;
        let header: Vec<String> = headers.iter().map(str::to_string).collect();
        let mut records = Vec::new();
        for result in reader.records() {
            let record = result.map_err(|e| csv_error(file, &e))?;
            let line = record.position().map_or(0, |p| p.line());
            records.push(Record {
                line,
                fields: record.iter().map(str::to_string).collect(),
            });
        }
        Ok(DataTable {
            file: file.to_string(),
            header_line,
            header,
            records,
        })
    }

    /// An error at `line`, `column` (0-based index; printed 1-based).
    pub fn error(&self, line: u64, column: usize, message: impl Into<String>) -> EstimateError {
        EstimateError::DataFile {
            file: self.file.clone(),
            line,
            column: column + 1,
            message: message.into(),
        }
    }

    /// Refuses any column not in `accepted` (the value column is matched by its key alone).
    pub fn check_columns(&self, accepted: &[&str], value_key: &str) -> Result<(), EstimateError> {
        for (i, name) in self.header.iter().enumerate() {
            let known = accepted.iter().any(|a| a.eq_ignore_ascii_case(name))
                || value_header_unit(name, value_key).is_some();
            if !known {
                return Err(self.error(
                    self.header_line,
                    i,
                    format!(
                        "unknown column \"{name}\"; accepted: {}, {value_key} [unit]",
                        accepted.join(", ")
                    ),
                ));
            }
        }
        Ok(())
    }

    /// The index of column `name`, if present.
    pub fn column(&self, name: &str) -> Option<usize> {
        self.header
            .iter()
            .position(|h| h.eq_ignore_ascii_case(name))
    }

    /// The index of column `name`; an error naming the header line if it is missing.
    pub fn required_column(&self, name: &str) -> Result<usize, EstimateError> {
        self.column(name).ok_or_else(|| {
            self.error(
                self.header_line,
                0,
                format!(
                    "no column \"{name}\" in the header ({}); required",
                    self.header.join(",")
                ),
            )
        })
    }

    /// The value column `key [unit]` and the factor from its unit to kJ/mol.
    pub fn molar_energy_column(&self, key: &str) -> Result<(usize, f64), EstimateError> {
        let Some((index, unit)) = self
            .header
            .iter()
            .enumerate()
            .find_map(|(i, h)| value_header_unit(h, key).map(|u| (i, u)))
        else {
            return Err(self.error(
                self.header_line,
                0,
                format!(
                    "no value column \"{key} [unit]\" in the header ({}); write e.g. \"{key} [kJ/mol]\"",
                    self.header.join(",")
                ),
            ));
        };
        let parsed = parse_unit(unit).map_err(|e| {
            self.error(
                self.header_line,
                index,
                format!("unit \"{unit}\": {}", e.message),
            )
        })?;
        if parsed.affine || !parsed.dimension.approx_eq(&MOLAR_ENERGY) {
            return Err(self.error(
                self.header_line,
                index,
                format!(
                    "unit \"{unit}\" is not an energy per amount of substance; accepted e.g. kJ/mol, kcal/mol, J/mol"
                ),
            ));
        }
        Ok((index, parsed.factor / 1000.0))
    }

    /// Field `column` of `record` ("" when the record is short).
    pub fn field<'r>(&self, record: &'r Record, column: usize) -> &'r str {
        record.fields.get(column).map_or("", String::as_str)
    }

    /// Field `column` of `record` as a finite number times `factor`.
    pub fn number(
        &self,
        record: &Record,
        column: usize,
        factor: f64,
    ) -> Result<f64, EstimateError> {
        let text = self.field(record, column);
        match text.parse::<f64>() {
            Ok(v) if v.is_finite() => Ok(v * factor),
            _ => Err(self.error(
                record.line,
                column,
                format!(
                    "\"{text}\" is not a number; write the value alone (its unit is in the header), e.g. -92.3"
                ),
            )),
        }
    }
}

/// The lines before the header that the reader skips: comments (`#`) and blank lines.
fn leading_skipped_lines(text: &str) -> u64 {
    text.lines()
        .take_while(|l| l.starts_with('#') || l.trim().is_empty())
        .count() as u64
}

/// "dHf [kJ/mol]" with key "dHf" -> Some("kJ/mol").
fn value_header_unit<'h>(header: &'h str, key: &str) -> Option<&'h str> {
    let head = header.get(..key.len())?;
    if !head.eq_ignore_ascii_case(key) {
        return None;
    }
    let rest = header[key.len()..].trim();
    rest.strip_prefix('[')?.strip_suffix(']').map(str::trim)
}

fn csv_error(file: &str, error: &csv::Error) -> EstimateError {
    let line = error.position().map_or(0, |p| p.line());
    let message = match error.kind() {
        csv::ErrorKind::UnequalLengths {
            expected_len, len, ..
        } => format!("{len} fields where the header has {expected_len}"),
        csv::ErrorKind::Utf8 { .. } => "not valid UTF-8 text".to_string(),
        _ => error.to_string(),
    };
    EstimateError::DataFile {
        file: file.to_string(),
        line,
        column: 1,
        message,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lines_skip_comments_and_count_from_one() {
        let t = DataTable::read("# note\nspecies,dHf [kcal/mol]\nHCl,-22.06\n", "f.csv").unwrap();
        assert_eq!(t.header_line, 2);
        assert_eq!(t.records[0].line, 3);
        let (col, factor) = t.molar_energy_column("dHf").unwrap();
        assert_eq!(col, 1);
        assert!((factor - 4.184).abs() < 1e-12);
        let v = t.number(&t.records[0], col, factor).unwrap();
        assert!((v - (-22.06 * 4.184)).abs() < 1e-9);
    }

    #[test]
    fn wrong_units_and_short_rows_name_line_and_column() {
        let t = DataTable::read("species,dHf [kJ/kg]\nA,1\n", "f.csv").unwrap();
        let e = t.molar_energy_column("dHf").unwrap_err().to_string();
        assert!(e.starts_with("f.csv:1:2:"), "{e}");
        let e = DataTable::read("a,b\n1,2\n3\n", "f.csv")
            .unwrap_err()
            .to_string();
        assert!(e.starts_with("f.csv:3:1:"), "{e}");
        let t = DataTable::read("a,dHf [kJ/mol]\nx,abc\n", "f.csv").unwrap();
        let e = t.number(&t.records[0], 1, 1.0).unwrap_err().to_string();
        assert!(e.starts_with("f.csv:2:2:"), "{e}");
    }
}
