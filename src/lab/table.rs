//! A table of measurements from a CSV file: named columns with their units (values held in
//! SI), `# key: value` metadata from the top of the file, every problem placed at file:row:column.
//!
//! The format:
//! ```text
//! # any comment
//! # sample_mass: 4.2 mg
//! time [min], temperature [degC], heat_flow [mW]
//! 0.0, 30.0, 0.012
//! ```
//! * Lines that start with `#` are comments wherever they are. Before the header, a comment of
//!   the form `# key: value` is metadata; its value is also parsed as a quantity when it is one.
//! * The first other line is the header: `name [unit]` per column, the unit parsed by
//!   `crate::case::units::parse_unit` (so `degC`, `min`, `W/g`, `mW`, `kJ/(kg*K)`...). A name
//!   without brackets is a dimensionless column. Names match case-insensitively, with spaces
//!   and underscores alike (`Heat flow` is `heat_flow`).
//! * The delimiter is found from the header: `,` if it has one, else `;`, else a tab. Numbers
//!   take a decimal point (`1.5`); a decimal comma is not accepted (a `1,5` cell is an error).
//! * A UTF-8 byte-order mark is skipped; LF and CRLF line ends are both read; blank lines are
//!   skipped. Quoted fields follow RFC 4180 (the `csv` crate).
//! * Errors: an empty file, a file of comments only, a header without data rows, a cell that is
//!   not a finite number, a row with too few or too many cells, a unit that does not parse, a
//!   repeated column name, text that is not UTF-8. Each names file:row:column (row = line of the
//!   file; column = field, 1-based) and what would be accepted; all bad cells are reported at once.

use super::error::{LabError, PlacedError};
use crate::case::units::{Dimension, Quantity, Unit, parse_quantity, parse_unit};
use std::path::Path;

/// How a header should look, quoted in errors.
const HEADER_EXAMPLE: &str =
    "a header line of `name [unit]` cells, e.g. `time [min], temperature [degC], heat_flow [mW]`";

/// One column: its name, unit and values converted to SI on read.
#[derive(Debug, Clone, PartialEq)]
pub struct Column {
    /// The name as written in the header, trimmed (`heat_flow`).
    pub name: String,
    /// The unit as written between the brackets (`mW`); empty for a dimensionless column.
    pub unit_text: String,
    pub unit: Unit,
    /// Values in SI units (K for temperatures, s for times, W for heat flows...).
    pub values: Vec<f64>,
    /// Field number in the header (1-based), for placing errors about the column.
    pub field: usize,
}

impl Column {
    pub fn dimension(&self) -> Dimension {
        self.unit.dimension
    }

    /// `name [unit]` as in the header.
    pub fn label(&self) -> String {
        if self.unit_text.is_empty() {
            self.name.clone()
        } else {
            format!("{} [{}]", self.name, self.unit_text)
        }
    }

    /// A value back in the column's own unit (degC, min...).
    pub fn in_own_unit(&self, value_si: f64) -> f64 {
        (value_si - self.unit.offset) / self.unit.factor
    }
}

/// One `# key: value` line from the top of the file.
#[derive(Debug, Clone, PartialEq)]
pub struct Metadata {
    pub key: String,
    /// The value as written, trimmed.
    pub text: String,
    /// The value as a quantity, when it parses as one (`4.2 mg`, `10 K/min`, `3`).
    pub quantity: Option<Quantity>,
    /// Line of the file (1-based).
    pub row: usize,
    /// Character where the value starts (1-based).
    pub column: usize,
}

/// A column the caller needs: looked up by name, or else as the only column of a fitting
/// dimension; `accepted_units` is quoted in errors (`"mW, W, W/g, W/kg"`).
#[derive(Debug, Clone, Copy)]
pub struct Wanted<'a> {
    pub name: &'a str,
    pub dimensions: &'a [Dimension],
    pub accepted_units: &'a str,
}

/// A table read from a CSV file.
#[derive(Debug, Clone, PartialEq)]
pub struct Table {
    /// The file name used in errors.
    pub file: String,
    pub columns: Vec<Column>,
    pub metadata: Vec<Metadata>,
    /// Line of the header (1-based).
    pub header_row: usize,
    /// Line of the file of each data row (1-based), in order.
    pub rows: Vec<usize>,
}

impl Table {
    /// Reads and parses a file; `file` in errors is the path as given.
    pub fn read(path: &Path) -> Result<Table, LabError> {
        let file = path.display().to_string();
        let bytes = std::fs::read(path).map_err(|source| LabError::Read {
            file: file.clone(),
            source,
        })?;
        Table::parse_bytes(&bytes, &file)
    }

    /// Parses bytes that should be UTF-8 text.
    pub fn parse_bytes(bytes: &[u8], file: &str) -> Result<Table, LabError> {
        match std::str::from_utf8(bytes) {
            Ok(text) => Table::parse(text, file),
            Err(e) => {
                let before = &bytes[..e.valid_up_to()];
                let row = 1 + before.iter().filter(|b| **b == b'\n').count();
                Err(LabError::at(
                    file,
                    row,
                    0,
                    "the file is not UTF-8 text",
                    "a UTF-8 (or plain ASCII) CSV file",
                ))
            }
        }
    }

    /// Parses CSV text; `file` names it in errors.
    pub fn parse(text: &str, file: &str) -> Result<Table, LabError> {
        let text = text.strip_prefix('\u{feff}').unwrap_or(text);
        let Some((header_row, header_line)) = find_header(text) else {
            return Err(LabError::at(
                file,
                1,
                0,
                "no header line: the file is empty or has only comments",
                HEADER_EXAMPLE,
            ));
        };
        let metadata = read_metadata(text, header_row, file)?;
        let delimiter = delimiter_of(header_line);
        let (records_text, line_of) = without_comments(text);
        let mut records = csv::ReaderBuilder::new()
            .has_headers(false)
            .flexible(true)
            .trim(csv::Trim::All)
            .delimiter(delimiter)
            .from_reader(records_text.as_bytes())
            .into_records();
        let line = |position: Option<&csv::Position>| {
            position
                .and_then(|p| line_of.get((p.line() as usize).saturating_sub(1)))
                .copied()
                .unwrap_or(0)
        };
        let header = match records.next() {
            Some(Ok(record)) => record,
            Some(Err(e)) => return Err(csv_error(file, header_row, &e)),
            None => {
                return Err(LabError::at(file, 1, 0, "no header line", HEADER_EXAMPLE));
            }
        };
        let mut columns = parse_header(&header, header_row, file)?;
        let mut rows = Vec::new();
        let mut errors = Vec::new();
        for record in records {
            let record = match record {
                Ok(r) => r,
                Err(e) => {
                    let row = line(e.position());
                    errors.push(placed_csv_error(file, row, &e));
                    continue;
                }
            };
            let row = line(record.position());
            read_row(&record, row, &mut columns, file, &mut errors);
            rows.push(row);
        }
        if !errors.is_empty() {
            return Err(LabError::Invalid(errors));
        }
        if rows.is_empty() {
            return Err(LabError::at(
                file,
                header_row,
                0,
                "the header is not followed by any data row",
                "one row of numbers per line after the header",
            ));
        }
        Ok(Table {
            file: file.to_string(),
            columns,
            metadata,
            header_row,
            rows,
        })
    }

    /// Number of data rows.
    pub fn len(&self) -> usize {
        self.rows.len()
    }

    pub fn is_empty(&self) -> bool {
        self.rows.is_empty()
    }

    /// The column of that name (case-insensitive, spaces and underscores alike), if any.
    /// An exact match (spaces and underscores alike) wins over a case-insensitive one, so `t`
    /// and `T` can both be columns; a case-insensitive match must be the only one.
    pub fn column(&self, name: &str) -> Option<&Column> {
        let wanted = same_spelling(name);
        if let Some(exact) = self
            .columns
            .iter()
            .find(|c| same_spelling(&c.name) == wanted)
        {
            return Some(exact);
        }
        let folded = normalise(name);
        let mut matches = self.columns.iter().filter(|c| normalise(&c.name) == folded);
        match (matches.next(), matches.next()) {
            (Some(only), None) => Some(only),
            _ => None,
        }
    }

    /// The columns of one dimension, in header order (e.g. "the temperature column").
    pub fn columns_with_dimension(&self, dimension: Dimension) -> Vec<&Column> {
        self.columns
            .iter()
            .filter(|c| c.dimension().approx_eq(&dimension))
            .collect()
    }

    /// The column a caller needs: by name, else the only column whose dimension is one of the
    /// wanted ones. A named column of the wrong dimension, or no fitting column, is an error
    /// that lists the columns there are and the units accepted.
    pub fn require(&self, wanted: &Wanted) -> Result<&Column, LabError> {
        if let Some(column) = self.column(wanted.name) {
            self.check_dimension(column, wanted.dimensions, wanted.accepted_units)?;
            return Ok(column);
        }
        let fitting: Vec<&Column> = self
            .columns
            .iter()
            .filter(|c| fits(c.dimension(), wanted.dimensions))
            .collect();
        if let [only] = fitting.as_slice() {
            return Ok(only);
        }
        let why = if fitting.is_empty() {
            "and no column has a fitting unit".to_string()
        } else {
            let names: Vec<String> = fitting.iter().map(|c| c.label()).collect();
            format!("and several columns could be it ({})", names.join(", "))
        };
        Err(LabError::at(
            &self.file,
            self.header_row,
            0,
            format!(
                "no column `{}` {why}; the columns are: {}",
                wanted.name,
                self.labels()
            ),
            format!(
                "a column `{} [unit]` with unit {}",
                wanted.name, wanted.accepted_units
            ),
        ))
    }

    /// An error placed at the column's header cell unless its dimension is one of `expected`.
    pub fn check_dimension(
        &self,
        column: &Column,
        expected: &[Dimension],
        accepted_units: &str,
    ) -> Result<(), LabError> {
        if fits(column.dimension(), expected) {
            return Ok(());
        }
        let unit = if column.unit_text.is_empty() {
            "no unit".to_string()
        } else {
            format!("unit `{}`", column.unit_text)
        };
        Err(LabError::at(
            &self.file,
            self.header_row,
            column.field,
            format!(
                "column `{}` has {unit} ({}), which does not fit",
                column.name,
                column.dimension().describe()
            ),
            format!("`{} [unit]` with unit {accepted_units}", column.name),
        ))
    }

    /// The metadata line of that key (case-insensitive, spaces and underscores alike).
    pub fn metadata(&self, key: &str) -> Option<&Metadata> {
        let wanted = normalise(key);
        self.metadata.iter().find(|m| normalise(&m.key) == wanted)
    }

    /// The SI value of a metadata quantity, None when the key is absent; a value that is not a
    /// quantity of one of the expected dimensions is an error placed at the value.
    pub fn metadata_si(
        &self,
        key: &str,
        expected: &[Dimension],
        accepted: &str,
    ) -> Result<Option<f64>, LabError> {
        let Some(entry) = self.metadata(key) else {
            return Ok(None);
        };
        match &entry.quantity {
            Some(q) if fits(q.dimension, expected) => Ok(Some(q.value_si)),
            _ => Err(LabError::at(
                &self.file,
                entry.row,
                entry.column,
                format!(
                    "`{}: {}` is not a quantity that fits",
                    entry.key, entry.text
                ),
                format!("`# {}: <number> <unit>` with unit {accepted}", entry.key),
            )),
        }
    }

    /// An error placed at a data row (index into `rows`) and a column.
    pub fn error_at_row(
        &self,
        index: usize,
        column: &Column,
        message: impl Into<String>,
        accepted: impl Into<String>,
    ) -> LabError {
        let row = self.rows.get(index).copied().unwrap_or(self.header_row);
        LabError::at(&self.file, row, column.field, message, accepted)
    }

    /// `name [unit]` of every column, comma-separated.
    pub fn labels(&self) -> String {
        let labels: Vec<String> = self.columns.iter().map(|c| c.label()).collect();
        labels.join(", ")
    }
}

fn fits(dimension: Dimension, expected: &[Dimension]) -> bool {
    expected.iter().any(|d| d.approx_eq(&dimension))
}

/// Spaces and underscores alike, case kept.
fn same_spelling(name: &str) -> String {
    name.trim().replace(' ', "_")
}

/// Spaces and underscores alike, case folded.
fn normalise(name: &str) -> String {
    name.trim()
        .chars()
        .map(|c| {
            if c == ' ' {
                '_'
            } else {
                c.to_ascii_lowercase()
            }
        })
        .collect()
}

/// The lines that are neither blank nor comments, joined, and the file line of each.
fn without_comments(text: &str) -> (String, Vec<usize>) {
    let mut kept = String::with_capacity(text.len());
    let mut line_of = Vec::new();
    for (i, line) in text.lines().enumerate() {
        if line.trim().is_empty() || is_comment(line) {
            continue;
        }
        kept.push_str(line);
        kept.push('\n');
        line_of.push(i + 1);
    }
    (kept, line_of)
}

fn is_comment(line: &str) -> bool {
    line.starts_with('#')
}

/// The first line that is neither blank nor a comment: (line number, text).
fn find_header(text: &str) -> Option<(usize, &str)> {
    text.lines()
        .enumerate()
        .find(|(_, line)| !line.trim().is_empty() && !is_comment(line))
        .map(|(i, line)| (i + 1, line))
}

/// `# key: value` comments above the header.
fn read_metadata(text: &str, header_row: usize, file: &str) -> Result<Vec<Metadata>, LabError> {
    let mut found: Vec<Metadata> = Vec::new();
    for (i, line) in text.lines().enumerate().take(header_row - 1) {
        let Some(entry) = metadata_line(line, i + 1) else {
            continue;
        };
        if let Some(first) = found
            .iter()
            .find(|m| normalise(&m.key) == normalise(&entry.key))
        {
            return Err(LabError::at(
                file,
                entry.row,
                1,
                format!(
                    "metadata key `{}` repeated (first on line {})",
                    entry.key, first.row
                ),
                "each `# key: value` once",
            ));
        }
        found.push(entry);
    }
    Ok(found)
}

fn metadata_line(line: &str, row: usize) -> Option<Metadata> {
    let body = line.strip_prefix('#')?;
    let (key, value) = body.split_once(':')?;
    let key = key.trim();
    let key_ok = !key.is_empty()
        && key
            .chars()
            .all(|c| c.is_alphanumeric() || c == '_' || c == ' ' || c == '-');
    if !key_ok {
        return None;
    }
    let text = value.trim().to_string();
    let leading = value.chars().take_while(|c| c.is_whitespace()).count();
    let column = line
        .find(':')
        .map_or(1, |at| line[..at].chars().count() + 2 + leading);
    let quantity = parse_quantity(&text).ok();
    Some(Metadata {
        key: key.to_string(),
        text,
        quantity,
        row,
        column,
    })
}

/// `,` if the header has one, else `;`, else a tab, else `,` (a single column).
fn delimiter_of(header: &str) -> u8 {
    [b',', b';', b'\t']
        .into_iter()
        .find(|d| header.as_bytes().contains(d))
        .unwrap_or(b',')
}

fn parse_header(
    record: &csv::StringRecord,
    row: usize,
    file: &str,
) -> Result<Vec<Column>, LabError> {
    let mut errors = Vec::new();
    let mut columns: Vec<Column> = Vec::new();
    for (i, cell) in record.iter().enumerate() {
        let field = i + 1;
        match header_cell(cell) {
            Err(message) => {
                errors.push(PlacedError::new(file, row, field, message, HEADER_EXAMPLE))
            }
            Ok((name, unit_text)) => match unit_of(&unit_text) {
                Err(message) => errors.push(PlacedError::new(
                    file,
                    row,
                    field,
                    format!("column `{name}`: unit `{unit_text}` does not parse: {message}"),
                    "a unit of the case file, e.g. min, s, h, degC, K, mW, W/g, kg, bar",
                )),
                Ok(unit) => {
                    if let Some(first) = columns
                        .iter()
                        .find(|c| same_spelling(&c.name) == same_spelling(&name))
                    {
                        errors.push(PlacedError::new(
                            file,
                            row,
                            field,
                            format!("column `{name}` repeated (first is column {})", first.field),
                            "each column name once",
                        ));
                    }
                    columns.push(Column {
                        name,
                        unit_text,
                        unit,
                        values: Vec::new(),
                        field,
                    });
                }
            },
        }
    }
    if errors.is_empty() {
        Ok(columns)
    } else {
        Err(LabError::Invalid(errors))
    }
}

/// `name [unit]` -> (name, unit); `name` alone -> (name, "").
fn header_cell(cell: &str) -> Result<(String, String), String> {
    let cell = cell.trim();
    let (name, unit) = match cell.find('[') {
        None => {
            if cell.contains(']') {
                return Err(format!("`{cell}` has a `]` without `[`"));
            }
            (cell, "")
        }
        Some(open) => {
            let rest = &cell[open + 1..];
            let Some(close) = rest.find(']') else {
                return Err(format!("`{cell}`: the unit's `[` is not closed by `]`"));
            };
            if !rest[close + 1..].trim().is_empty() {
                return Err(format!("`{cell}`: text after the unit's `]`"));
            }
            (&cell[..open], &rest[..close])
        }
    };
    let name = name.trim();
    if name.is_empty() {
        return Err(format!("`{cell}`: the column has no name"));
    }
    Ok((name.to_string(), unit.trim().to_string()))
}

fn unit_of(text: &str) -> Result<Unit, String> {
    if text.is_empty() {
        return Ok(Unit {
            factor: 1.0,
            offset: 0.0,
            dimension: Dimension::NONE,
            affine: false,
        });
    }
    parse_unit(text).map_err(|e| e.message)
}

fn read_row(
    record: &csv::StringRecord,
    row: usize,
    columns: &mut [Column],
    file: &str,
    errors: &mut Vec<PlacedError>,
) {
    let expected = columns.len();
    if record.len() != expected {
        let (what, field) = if record.len() < expected {
            ("too few", record.len() + 1)
        } else {
            ("too many", expected + 1)
        };
        errors.push(PlacedError::new(
            file,
            row,
            field,
            format!(
                "{what} cells: {} where the header has {expected}",
                record.len()
            ),
            format!("one number per column of the header ({expected})"),
        ));
        return;
    }
    for (column, cell) in columns.iter_mut().zip(record.iter()) {
        match cell_value(cell, column) {
            Ok(v) => column.values.push(v),
            Err((message, accepted)) => {
                errors.push(PlacedError::new(file, row, column.field, message, accepted));
            }
        }
    }
}

fn cell_value(cell: &str, column: &Column) -> Result<f64, (String, String)> {
    let accepted = || {
        format!(
            "a finite number with a decimal point, e.g. 1.5 or 2e-3 (in {})",
            if column.unit_text.is_empty() {
                "no unit".to_string()
            } else {
                column.unit_text.clone()
            }
        )
    };
    if cell.is_empty() {
        return Err((
            format!("empty cell in column `{}`", column.name),
            accepted(),
        ));
    }
    let Ok(number) = cell.parse::<f64>() else {
        let shown: String = cell.chars().take(24).collect();
        return Err((
            format!("`{shown}` in column `{}` is not a number", column.name),
            accepted(),
        ));
    };
    let si = number * column.unit.factor + column.unit.offset;
    if !si.is_finite() {
        return Err((
            format!(
                "`{cell}` in column `{}` is not a finite number",
                column.name
            ),
            accepted(),
        ));
    }
    Ok(si)
}

fn placed_csv_error(file: &str, row: usize, e: &csv::Error) -> PlacedError {
    PlacedError::new(
        file,
        row,
        0,
        format!("the line cannot be read as CSV: {e}"),
        "comma-, semicolon- or tab-separated cells; quotes closed on the same line",
    )
}

fn csv_error(file: &str, row: usize, e: &csv::Error) -> LabError {
    LabError::Invalid(vec![placed_csv_error(file, row, e)])
}

#[cfg(test)]
mod tests {
    use super::*;

    const SCAN: &str = "# a DSC scan\n# sample_mass: 4.2 mg\n# operator: nobody\n\
time [min], temperature [degC], heat_flow [mW]\n0, 30, 0.5\n# a comment inside\n1.5, 45, -1e-2\n";

    fn errors(text: &str) -> Vec<PlacedError> {
        match Table::parse(text, "scan.csv") {
            Err(LabError::Invalid(list)) => list,
            other => panic!("expected placed errors, got {other:?}"),
        }
    }

    #[test]
    fn reads_columns_in_si_with_units_and_rows() {
        let t = Table::parse(SCAN, "scan.csv").unwrap();
        assert_eq!(t.len(), 2);
        assert_eq!(t.header_row, 4);
        assert_eq!(t.rows, vec![5, 7]);
        let time = t.column("time").unwrap();
        assert_eq!(time.unit_text, "min");
        assert_eq!(time.values, vec![0.0, 90.0]);
        // 30 degC = 303.15 K (NIST SP 811).
        let temp = t.column("Temperature").unwrap();
        assert!((temp.values[0] - 303.15).abs() < 1e-12);
        assert!((temp.in_own_unit(temp.values[1]) - 45.0).abs() < 1e-12);
        let flow = t.column("heat flow").unwrap();
        assert!((flow.values[0] - 5e-4).abs() < 1e-15);
        assert_eq!(flow.label(), "heat_flow [mW]");
    }

    #[test]
    fn metadata_values_parse_as_quantities_where_they_can() {
        let t = Table::parse(SCAN, "scan.csv").unwrap();
        let mass = t.metadata("sample_mass").unwrap();
        assert_eq!(mass.row, 2);
        assert_eq!(mass.column, 16);
        assert!((mass.quantity.as_ref().unwrap().value_si - 4.2e-6).abs() < 1e-18);
        assert_eq!(t.metadata("operator").unwrap().text, "nobody");
        assert!(t.metadata("operator").unwrap().quantity.is_none());
        assert_eq!(
            t.metadata_si("sample_mass", &[Dimension::MASS], "mg, g")
                .unwrap(),
            Some(4.2e-6)
        );
        assert_eq!(
            t.metadata_si("missing", &[Dimension::MASS], "mg").unwrap(),
            None
        );
        let e = t
            .metadata_si("operator", &[Dimension::MASS], "mg, g")
            .unwrap_err();
        assert!(e.to_string().starts_with("scan.csv:3:13:"), "{e}");
    }

    #[test]
    fn finds_columns_by_dimension_and_names_what_exists_when_missing() {
        let text = "t [s]; T [K]; q [W/g]\n0; 300; 1\n";
        let t = Table::parse(text, "s.csv").unwrap();
        let specific = Dimension::new(2.0, 0.0, -3.0, 0.0, 0.0);
        let wanted = Wanted {
            name: "heat_flow",
            dimensions: &[specific],
            accepted_units: "W/g, W/kg",
        };
        assert_eq!(t.require(&wanted).unwrap().name, "q");
        assert_eq!(
            t.columns_with_dimension(Dimension::TEMPERATURE)[0].name,
            "T"
        );
        let missing = Wanted {
            name: "dosed",
            dimensions: &[Dimension::MASS],
            accepted_units: "kg, g",
        };
        let e = t.require(&missing).unwrap_err().to_string();
        assert!(e.starts_with("s.csv:1:0: no column `dosed`"), "{e}");
        assert!(
            e.contains("t [s], T [K], q [W/g]") && e.contains("kg, g"),
            "{e}"
        );
        // A named column of the wrong dimension is placed at its header cell.
        let wrong = Wanted {
            name: "T",
            dimensions: &[Dimension::TIME],
            accepted_units: "s, min",
        };
        let e = t.require(&wrong).unwrap_err().to_string();
        assert!(e.starts_with("s.csv:1:2: column `T` has unit `K`"), "{e}");
    }

    #[test]
    fn bad_cells_are_all_placed_by_row_and_column() {
        let text = "time [min],temperature [degC]\n0,30\nx,31\n2,\n3,inf\n4,1,9\n5\n";
        let list = errors(text);
        let places: Vec<(usize, usize)> = list.iter().map(|e| (e.row, e.column)).collect();
        assert_eq!(places, vec![(3, 1), (4, 2), (5, 2), (6, 3), (7, 2)]);
        assert!(
            list[0]
                .message
                .contains("`x` in column `time` is not a number")
        );
        assert!(list[3].message.contains("too many cells"));
        assert!(list[4].message.contains("too few cells"));
        assert!(list[0].accepted.contains("min"));
    }

    #[test]
    fn bad_units_and_headers_are_placed_in_the_header() {
        let list = errors("# c\ntime [fortnights], T [degC\n1,2\n");
        assert_eq!((list[0].row, list[0].column), (2, 1));
        assert!(list[0].message.contains("unit `fortnights` does not parse"));
        assert_eq!((list[1].row, list[1].column), (2, 2));
        let list = errors("a [s], a [s]\n1,2\n");
        assert!(list[0].message.contains("repeated"));
        let list = errors(" [s]\n1\n");
        assert!(list[0].message.contains("no name"));
    }

    #[test]
    fn never_panics_on_degenerate_files() {
        for text in ["", "\u{feff}", "# only\n# comments: 3 s\n", "\n\n  \n"] {
            let list = errors(text);
            assert_eq!(list[0].row, 1);
            assert!(list[0].message.contains("no header line"), "{text:?}");
        }
        let list = errors("time [s]\n# nothing\n");
        assert!(list[0].message.contains("not followed by any data row"));
        let bytes = b"time [s]\n1\n\xff\n";
        match Table::parse_bytes(bytes, "b.csv") {
            Err(LabError::Invalid(list)) => assert_eq!(list[0].row, 3),
            other => panic!("{other:?}"),
        }
        // An unclosed quote at the end of the file closes there (csv crate behaviour).
        let t = Table::parse("a [s]\n\"1\n", "q.csv").unwrap();
        assert_eq!(t.column("a").unwrap().values, vec![1.0]);
    }

    #[test]
    fn bom_crlf_semicolons_tabs_and_quotes_are_read() {
        let crlf = "\u{feff}# m: 2 g\r\ntime [s];temperature [K]\r\n0;300\r\n1;301\r\n";
        let t = Table::parse(crlf, "c.csv").unwrap();
        assert_eq!(t.rows, vec![3, 4]);
        assert_eq!(t.column("temperature").unwrap().values, vec![300.0, 301.0]);
        assert_eq!(
            t.metadata_si("m", &[Dimension::MASS], "g").unwrap(),
            Some(2e-3)
        );
        let tabs = Table::parse("x [s]\ty\n1\t2\n", "t.csv").unwrap();
        assert_eq!(tabs.column("y").unwrap().values, vec![2.0]);
        let quoted = Table::parse("\"a [s]\",b\n\"1\",2\n", "q.csv").unwrap();
        assert_eq!(quoted.column("a").unwrap().values, vec![1.0]);
        // A decimal comma under semicolons is refused, not misread.
        let list = errors("a [s];b\n1,5;2\n");
        assert_eq!((list[0].row, list[0].column), (2, 1));
    }

    #[test]
    fn a_repeated_metadata_key_is_an_error() {
        let list = errors("# m: 1 g\n# M: 2 g\na\n1\n");
        assert_eq!(list[0].row, 2);
    }

    #[test]
    fn an_unreadable_file_is_a_read_error() {
        let e = Table::read(Path::new("/nonexistent/scan.csv")).unwrap_err();
        assert!(matches!(e, LabError::Read { .. }));
        assert_eq!(e.exit_code(), 2);
    }

    proptest::proptest! {
        /// Any text, however broken, gives a table or placed errors, never a panic.
        #[test]
        fn arbitrary_text_never_panics(text in "(?s)[#a-z0-9 ,;\\[\\]\\.\\-\"\r\n:eE]{0,200}") {
            let _ = Table::parse(&text, "p.csv");
        }
    }
}
