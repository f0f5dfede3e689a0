//! The table of standard enthalpies of formation: the bundled values (one row per species,
//! phase and source), the user's own from a CSV file, the lookup of a species as written, and
//! the choice of one value per species by an order of sources.

use super::csvdata::{DataTable, Record};
use super::formula::{Composition, parse_formula};
use super::phased::{Phase, split_phase};
use crate::case::equation::parse_equation;
use crate::estimate::error::EstimateError;
use std::collections::BTreeMap;

const BUNDLED: &str = include_str!("../data/formation.csv");
const BUNDLED_NAME: &str = "src/estimate/data/formation.csv";

/// The order in which sources are preferred when no `--prefer` is given, after the user's own
/// values: ATcT (the most recent, self-consistent thermochemical network), then NIST-JANAF,
/// then CRC, then NASA TM-4513, then Yaws; an element's standard state (0 by definition) has
/// no other source anyway.
pub const DEFAULT_SOURCE_ORDER: [&str; 6] = ["ATcT", "JANAF", "CRC", "NASA", "Yaws", "definition"];

const COLUMNS: [&str; 6] = [
    "species",
    "phase",
    "formula",
    "source",
    "standard_state",
    "aliases",
];
const VALUE_KEY: &str = "dHf";

/// One value of ΔfH°(298.15 K) and where it comes from.
#[derive(Debug, Clone, PartialEq)]
pub struct SourcedValue {
    pub kj_mol: f64,
    pub source: String,
    /// Set for the user's own values: "file:line".
    pub user_origin: Option<String>,
}

/// Everything held for one species in one phase.
#[derive(Debug, Clone, PartialEq)]
pub struct Entry {
    pub species: String,
    pub phase: Phase,
    pub formula: Option<String>,
    pub composition: Option<Composition>,
    pub standard_state: bool,
    pub values: Vec<SourcedValue>,
}

impl Entry {
    /// The lowest and highest value held.
    pub fn range(&self) -> (f64, f64) {
        self.values
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
                (lo.min(v.kj_mol), hi.max(v.kj_mol))
            })
    }
}

/// Why a phase was used for a species.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PhaseBasis {
    /// Written in the equation.
    Given,
    /// The only phase the table holds for the species.
    OnlyPhase,
    /// The table holds several; the standard state at 298.15 K and 1 bar was used.
    StandardState,
}

impl PhaseBasis {
    pub fn describe(self) -> &'static str {
        match self {
            PhaseBasis::Given => "as written",
            PhaseBasis::OnlyPhase => "only phase in the table",
            PhaseBasis::StandardState => "standard state at 298.15 K",
        }
    }
}

/// The formation table: entries by (species, phase), and the aliases of species names.
#[derive(Debug, Clone, Default)]
pub struct FormationTable {
    entries: BTreeMap<(String, Phase), Entry>,
    aliases: BTreeMap<String, String>,
}

impl FormationTable {
    /// The bundled table alone.
    pub fn bundled() -> Result<FormationTable, EstimateError> {
        let mut table = FormationTable::default();
        table
            .add_file(BUNDLED, BUNDLED_NAME, false)
            .map_err(|e| EstimateError::Bundled {
                table: BUNDLED_NAME.to_string(),
                message: e.to_string(),
            })?;
        Ok(table)
    }

    /// Adds the user's values from CSV `text` (`file` names it in errors): a species and phase
    /// already held gets the user's value in front of the bundled ones; a new one is added.
    pub fn add_user_file(&mut self, text: &str, file: &str) -> Result<(), EstimateError> {
        self.add_file(text, file, true)
    }

    fn add_file(&mut self, text: &str, file: &str, user: bool) -> Result<(), EstimateError> {
        let data = DataTable::read(text, file)?;
        data.check_columns(&COLUMNS, VALUE_KEY)?;
        let columns = ColumnIndex::find(&data)?;
        let mut seen: BTreeMap<(String, Phase, String), u64> = BTreeMap::new();
        for record in &data.records {
            let row = columns.parse_row(&data, record, user)?;
            let key = (row.species.clone(), row.phase, row.source_given.clone());
            if let Some(first) = seen.insert(key, record.line) {
                return Err(data.error(
                    record.line,
                    columns.species,
                    format!(
                        "{}({}) from source \"{}\" is given twice (also on line {first})",
                        row.species, row.phase, row.source_given
                    ),
                ));
            }
            self.merge(row, user)
                .map_err(|m| data.error(record.line, columns.formula.unwrap_or(0), m))?;
        }
        Ok(())
    }

    fn merge(&mut self, row: Row, user: bool) -> Result<(), String> {
        let species = self.canonical(&row.species).to_string();
        for alias in &row.aliases {
            self.aliases.insert(alias.clone(), species.clone());
        }
        if row.standard_state && user {
            for entry in self.entries.values_mut().filter(|e| e.species == species) {
                entry.standard_state = false;
            }
        }
        let entry = self
            .entries
            .entry((species.clone(), row.phase))
            .or_insert_with(|| Entry {
                species: species.clone(),
                phase: row.phase,
                formula: None,
                composition: None,
                standard_state: false,
                values: Vec::new(),
            });
        merge_formula(entry, row.formula, user)?;
        entry.standard_state |= row.standard_state;
        if user {
            entry.values.insert(0, row.value);
        } else {
            entry.values.push(row.value);
        }
        Ok(())
    }

    /// The table's own name of `name` (an alias resolved).
    pub fn canonical<'n>(&'n self, name: &'n str) -> &'n str {
        self.aliases.get(name).map_or(name, String::as_str)
    }

    /// Whether the table holds `name` (or an alias of it) in any phase.
    pub fn knows(&self, name: &str) -> bool {
        let species = self.canonical(name);
        self.entries.values().any(|e| e.species == species)
    }

    /// The entry of `name` in `phase`, or, without a phase, its only or standard phase.
    pub fn lookup(
        &self,
        name: &str,
        phase: Option<Phase>,
    ) -> Result<(&Entry, PhaseBasis), EstimateError> {
        let species = self.canonical(name);
        let held: Vec<&Entry> = self
            .entries
            .values()
            .filter(|e| e.species == species)
            .collect();
        let phases = || {
            held.iter()
                .map(|e| e.phase.code())
                .collect::<Vec<_>>()
                .join(", ")
        };
        match phase {
            Some(p) => held
                .iter()
                .find(|e| e.phase == p)
                .map(|e| (*e, PhaseBasis::Given))
                .ok_or_else(|| EstimateError::UnknownPhase {
                    species: species.to_string(),
                    phase: p.code().to_string(),
                    held: phases(),
                }),
            None => match held.as_slice() {
                [] => Err(EstimateError::UnknownSpecies {
                    names: name.to_string(),
                    known: self.known_species(),
                }),
                [only] => Ok((*only, PhaseBasis::OnlyPhase)),
                several => several
                    .iter()
                    .find(|e| e.standard_state)
                    .map(|e| (*e, PhaseBasis::StandardState))
                    .ok_or_else(|| EstimateError::AmbiguousPhase {
                        species: species.to_string(),
                        held: phases(),
                        first: several[0].phase.code().to_string(),
                    }),
            },
        }
    }

    /// Every species with its phases, e.g. "Br2(g, l), CH4(g)", for error messages.
    pub fn known_species(&self) -> String {
        let mut by_species: BTreeMap<&str, Vec<&str>> = BTreeMap::new();
        for entry in self.entries.values() {
            by_species
                .entry(&entry.species)
                .or_default()
                .push(entry.phase.code());
        }
        by_species
            .iter()
            .map(|(s, p)| format!("{s}({})", p.join(", ")))
            .collect::<Vec<_>>()
            .join(", ")
    }

    /// Every source tag held, sorted.
    pub fn sources(&self) -> Vec<String> {
        let mut all: Vec<String> = self
            .entries
            .values()
            .flat_map(|e| e.values.iter().map(|v| v.source.clone()))
            .collect();
        all.sort();
        all.dedup();
        all
    }
}

/// The order of sources: the user's values first, then `preferred` (each a prefix of a source
/// tag, any case), then [`DEFAULT_SOURCE_ORDER`], then the rest.
#[derive(Debug, Clone, Default)]
pub struct SourceOrder {
    pub preferred: Vec<String>,
}

impl SourceOrder {
    /// Checks that every preferred name matches a source in `table`.
    pub fn new(preferred: Vec<String>, table: &FormationTable) -> Result<Self, EstimateError> {
        let sources = table.sources();
        for name in &preferred {
            if !sources.iter().any(|s| matches_family(s, name)) {
                return Err(EstimateError::Preference(format!(
                    "no source \"{name}\" in the table; sources held: {}",
                    sources.join(", ")
                )));
            }
        }
        Ok(SourceOrder { preferred })
    }

    fn rank(&self, value: &SourcedValue) -> usize {
        if value.user_origin.is_some() {
            return 0;
        }
        let in_list = |list: &[&str]| list.iter().position(|f| matches_family(&value.source, f));
        let preferred: Vec<&str> = self.preferred.iter().map(String::as_str).collect();
        if let Some(i) = in_list(&preferred) {
            return 1 + i;
        }
        match in_list(&DEFAULT_SOURCE_ORDER) {
            Some(i) => 1 + preferred.len() + i,
            None => 1 + preferred.len() + DEFAULT_SOURCE_ORDER.len(),
        }
    }

    /// The value of `entry` to use: the best-ranked one (the first of equal rank).
    pub fn choose<'e>(&self, entry: &'e Entry) -> &'e SourcedValue {
        entry
            .values
            .iter()
            .min_by_key(|v| self.rank(v))
            .unwrap_or(&entry.values[0])
    }

    /// The best-ranked source that both entries hold, with their two values.
    pub fn common<'e>(
        &self,
        a: &'e Entry,
        b: &'e Entry,
    ) -> Option<(&'e SourcedValue, &'e SourcedValue)> {
        a.values
            .iter()
            .filter_map(|va| {
                b.values
                    .iter()
                    .find(|vb| vb.source == va.source)
                    .map(|vb| (va, vb))
            })
            .min_by_key(|(va, _)| self.rank(va))
    }

    /// The order as printed, e.g. "your file, ATcT, JANAF, CRC, NASA, Yaws".
    pub fn describe(&self) -> String {
        let mut names = vec!["your own values (--data)".to_string()];
        names.extend(self.preferred.iter().cloned());
        names.extend(
            DEFAULT_SOURCE_ORDER
                .iter()
                .filter(|d| !self.preferred.iter().any(|p| p.eq_ignore_ascii_case(d)))
                .map(|d| d.to_string()),
        );
        names.join(" > ")
    }
}

fn matches_family(source: &str, family: &str) -> bool {
    source
        .get(..family.len())
        .is_some_and(|head| head.eq_ignore_ascii_case(family))
}

fn merge_formula(
    entry: &mut Entry,
    formula: Option<(String, Composition)>,
    user: bool,
) -> Result<(), String> {
    let Some((text, composition)) = formula else {
        return Ok(());
    };
    match &entry.composition {
        Some(held) if *held != composition && !user => Err(format!(
            "formula {text} differs from {} given before for {}({})",
            entry.formula.as_deref().unwrap_or(""),
            entry.species,
            entry.phase
        )),
        _ => {
            entry.formula = Some(text);
            entry.composition = Some(composition);
            Ok(())
        }
    }
}

/// One row of a formation file, checked.
struct Row {
    species: String,
    phase: Phase,
    formula: Option<(String, Composition)>,
    value: SourcedValue,
    /// The source column as written ("" when empty).
    source_given: String,
    standard_state: bool,
    aliases: Vec<String>,
}

/// Where each column of a formation file is.
struct ColumnIndex {
    species: usize,
    phase: usize,
    value: usize,
    factor: f64,
    formula: Option<usize>,
    source: Option<usize>,
    standard_state: Option<usize>,
    aliases: Option<usize>,
}

impl ColumnIndex {
    fn find(data: &DataTable) -> Result<ColumnIndex, EstimateError> {
        let (value, factor) = data.molar_energy_column(VALUE_KEY)?;
        Ok(ColumnIndex {
            species: data.required_column("species")?,
            phase: data.required_column("phase")?,
            value,
            factor,
            formula: data.column("formula"),
            source: data.column("source"),
            standard_state: data.column("standard_state"),
            aliases: data.column("aliases"),
        })
    }

    fn parse_row(
        &self,
        data: &DataTable,
        record: &Record,
        user: bool,
    ) -> Result<Row, EstimateError> {
        let species = species_name(data, record, self.species)?;
        let phase_text = data.field(record, self.phase);
        let phase = Phase::parse(phase_text).ok_or_else(|| {
            data.error(
                record.line,
                self.phase,
                format!("phase \"{phase_text}\"; accepted: g, l, s, aq"),
            )
        })?;
        let formula = match self.formula.map(|c| (c, data.field(record, c))) {
            Some((c, text)) if !text.is_empty() => {
                let composition = parse_formula(text).map_err(|m| data.error(record.line, c, m))?;
                Some((text.to_string(), composition))
            }
            _ => None,
        };
        let kj_mol = data.number(record, self.value, self.factor)?;
        let source = self.source(data, record, user)?;
        let user_origin = user.then(|| format!("{}:{}", data.file, record.line));
        let source_given = self
            .source
            .map_or("", |c| data.field(record, c))
            .to_string();
        Ok(Row {
            source_given,
            species,
            phase,
            formula,
            value: SourcedValue {
                kj_mol,
                source,
                user_origin,
            },
            standard_state: self.standard_state(data, record)?,
            aliases: self.aliases(data, record)?,
        })
    }

    fn source(
        &self,
        data: &DataTable,
        record: &Record,
        user: bool,
    ) -> Result<String, EstimateError> {
        let text = self.source.map_or("", |c| data.field(record, c));
        match (text.is_empty(), user) {
            (false, _) => Ok(text.to_string()),
            (true, true) => Ok(format!("{}:{}", data.file, record.line)),
            (true, false) => Err(data.error(
                record.line,
                self.source.unwrap_or(0),
                "a bundled value needs its source",
            )),
        }
    }

    fn standard_state(&self, data: &DataTable, record: &Record) -> Result<bool, EstimateError> {
        let Some(c) = self.standard_state else {
            return Ok(false);
        };
        match data.field(record, c).to_ascii_lowercase().as_str() {
            "yes" | "true" => Ok(true),
            "" | "no" | "false" => Ok(false),
            other => Err(data.error(
                record.line,
                c,
                format!("standard_state \"{other}\"; accepted: yes, no or empty"),
            )),
        }
    }

    fn aliases(&self, data: &DataTable, record: &Record) -> Result<Vec<String>, EstimateError> {
        let Some(c) = self.aliases else {
            return Ok(Vec::new());
        };
        let text = data.field(record, c);
        text.split(';')
            .map(str::trim)
            .filter(|a| !a.is_empty())
            .map(|a| {
                check_name(a)
                    .map(|()| a.to_string())
                    .map_err(|m| data.error(record.line, c, m))
            })
            .collect()
    }
}

fn species_name(data: &DataTable, record: &Record, column: usize) -> Result<String, EstimateError> {
    let name = data.field(record, column);
    check_name(name).map_err(|m| data.error(record.line, column, m))?;
    Ok(name.to_string())
}

/// A name must be usable in an equation as it stands, with no phase of its own.
fn check_name(name: &str) -> Result<(), String> {
    if let (bare, Some(phase)) = split_phase(name) {
        return Err(format!(
            "species \"{name}\": write the phase in the phase column (\"{bare}\" and \"{phase}\")"
        ));
    }
    let usable = parse_equation(&format!("{name} -> X")).is_ok_and(|eq| {
        eq.reactants.len() == 1
            && eq.reactants[0].species == name
            && eq.reactants[0].coefficient == 1.0
    });
    if usable {
        Ok(())
    } else {
        Err(format!(
            "species \"{name}\" cannot be written in an equation: a name starts with a letter and holds letters, digits, _ ( ) [ ] ' or ,"
        ))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bundled_table_loads_with_the_reference_species() {
        let t = FormationTable::bundled().unwrap();
        for (name, phase) in [
            ("CH4", Phase::G),
            ("Br2", Phase::L),
            ("Br2", Phase::G),
            ("I2", Phase::S),
            ("benzene", Phase::L),
            ("NBS", Phase::S),
            ("HCl", Phase::Aq),
        ] {
            assert!(t.lookup(name, Some(phase)).is_ok(), "{name}({phase})");
        }
    }

    #[test]
    fn phase_defaults_to_the_only_or_the_standard_one() {
        let t = FormationTable::bundled().unwrap();
        let (e, basis) = t.lookup("Br2", None).unwrap();
        assert_eq!((e.phase, basis), (Phase::L, PhaseBasis::StandardState));
        let (e, basis) = t.lookup("HCl", None).unwrap();
        assert_eq!((e.phase, basis), (Phase::G, PhaseBasis::StandardState));
        let (e, basis) = t.lookup("C6H6", None).unwrap();
        assert_eq!(
            (e.species.as_str(), basis),
            ("benzene", PhaseBasis::OnlyPhase)
        );
        assert!(matches!(
            t.lookup("NBS", Some(Phase::G)),
            Err(EstimateError::UnknownPhase { .. })
        ));
    }

    #[test]
    fn atct_is_preferred_then_janaf_then_crc() {
        let t = FormationTable::bundled().unwrap();
        let order = SourceOrder::default();
        let (ch4, _) = t.lookup("CH4", None).unwrap();
        assert_eq!(order.choose(ch4).source, "ATcT 1.112");
        let crc = SourceOrder::new(vec!["crc".into()], &t).unwrap();
        assert_eq!(crc.choose(ch4).source, "CRC");
        assert!(SourceOrder::new(vec!["Nowhere".into()], &t).is_err());
        let (ch3f, _) = t.lookup("CH3F", None).unwrap();
        assert_eq!(crc.choose(ch3f).source, "ATcT 1.112");
    }

    #[test]
    fn user_values_come_first() {
        let mut t = FormationTable::bundled().unwrap();
        t.add_user_file(
            "species,phase,formula,dHf [kcal/mol],source\nHCl,g,HCl,-22.0,my lab\nX1,l,C2H4O,-50,\n",
            "own.csv",
        )
        .unwrap();
        let (hcl, _) = t.lookup("HCl", Some(Phase::G)).unwrap();
        let chosen = SourceOrder::default().choose(hcl);
        assert_eq!(chosen.source, "my lab");
        assert!((chosen.kj_mol + 22.0 * 4.184).abs() < 1e-9);
        assert_eq!(chosen.user_origin.as_deref(), Some("own.csv:2"));
        let (x1, _) = t.lookup("X1", None).unwrap();
        assert_eq!(x1.values[0].source, "own.csv:3");
    }
}
