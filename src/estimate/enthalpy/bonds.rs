//! The bond route: ΔrH ≈ Σ D(bonds broken) − Σ D(bonds formed), with the bundled D298 table
//! (gas, 298.15 K), bonds listed by the user (`"CH3-H, Cl-Cl"`, a count and an own value
//! allowed: `"2 C-H=413"`) or found from the species when each has one bond in the table.

use super::csvdata::DataTable;
use super::phased::{Phase, PhasedEquation, Side};
use crate::estimate::error::EstimateError;
use std::collections::BTreeMap;

const BUNDLED: &str = include_str!("../data/bonds.csv");
const BUNDLED_NAME: &str = "src/estimate/data/bonds.csv";

/// One bond A–B with its dissociation enthalpy.
#[derive(Debug, Clone, PartialEq)]
pub struct Bond {
    pub name: String,
    pub fragments: (String, String),
    /// The molecule whose only bond this is (CH4 for CH3–H), if any.
    pub species: Option<String>,
    pub kj_mol: f64,
    pub source: String,
}

/// A bond counted in a reaction.
#[derive(Debug, Clone, PartialEq)]
pub struct CountedBond {
    pub count: f64,
    pub bond: Bond,
}

/// The bonds broken and formed, and the reaction enthalpy they give.
#[derive(Debug, Clone, PartialEq)]
pub struct BondBalance {
    pub broken: Vec<CountedBond>,
    pub formed: Vec<CountedBond>,
    /// True when the bonds were found from the species, not listed by the user.
    pub from_species: bool,
}

impl BondBalance {
    /// Σ D(broken) − Σ D(formed), kJ/mol.
    pub fn enthalpy_kj_mol(&self) -> f64 {
        let sum = |list: &[CountedBond]| list.iter().map(|b| b.count * b.bond.kj_mol).sum::<f64>();
        sum(&self.broken) - sum(&self.formed)
    }
}

/// The bundled table of bond dissociation enthalpies.
#[derive(Debug, Clone)]
pub struct BondTable {
    bonds: Vec<Bond>,
}

impl BondTable {
    pub fn bundled() -> Result<BondTable, EstimateError> {
        read_bonds(BUNDLED, BUNDLED_NAME).map_err(|e| EstimateError::Bundled {
            table: BUNDLED_NAME.to_string(),
            message: e.to_string(),
        })
    }

    /// The bond A–B (either order).
    pub fn find(&self, a: &str, b: &str) -> Option<&Bond> {
        self.bonds.iter().find(|bond| {
            let (x, y) = &bond.fragments;
            (x == a && y == b) || (x == b && y == a)
        })
    }

    fn of_species(&self, species: &str) -> Option<&Bond> {
        self.bonds
            .iter()
            .find(|b| b.species.as_deref() == Some(species))
    }

    fn names(&self) -> String {
        self.bonds
            .iter()
            .map(|b| b.name.as_str())
            .collect::<Vec<_>>()
            .join(", ")
    }

    fn species_with_bonds(&self) -> String {
        self.bonds
            .iter()
            .filter_map(|b| b.species.as_deref())
            .collect::<Vec<_>>()
            .join(", ")
    }

    /// The bonds of the user's lists `broken` and `formed`; their fragments must match.
    pub fn listed(&self, broken: &str, formed: &str) -> Result<BondBalance, EstimateError> {
        let balance = BondBalance {
            broken: self.parse_list(broken, "--broken")?,
            formed: self.parse_list(formed, "--formed")?,
            from_species: false,
        };
        check_fragments(&balance)?;
        Ok(balance)
    }

    /// The bonds found from the species: each must be gas and have one bond in the table.
    pub fn from_equation(&self, equation: &PhasedEquation) -> Result<BondBalance, EstimateError> {
        let mut balance = BondBalance {
            broken: Vec::new(),
            formed: Vec::new(),
            from_species: true,
        };
        for term in &equation.terms {
            if let Some(phase) = term.phase.filter(|p| *p != Phase::G) {
                return Err(EstimateError::Bonds(format!(
                    "{}({phase}): bond dissociation enthalpies are gas-phase values; the bond route takes gas species only (write {}(g) or use the formation route)",
                    term.name, term.name
                )));
            }
            let bond = self.of_species(&term.name).ok_or_else(|| {
                EstimateError::Bonds(format!(
                    "the table has no bond for {}: the bonds are found by themselves only for reactions among {} (one bond each); otherwise list them, e.g. --broken \"CH3-H, Cl-Cl\" --formed \"CH3-Cl, H-Cl\" (known bonds: {}; an own value as \"C-H=413\" in kJ/mol)",
                    term.name,
                    self.species_with_bonds(),
                    self.names()
                ))
            })?;
            let counted = CountedBond {
                count: term.coefficient,
                bond: bond.clone(),
            };
            match term.side {
                Side::Reactant => balance.broken.push(counted),
                Side::Product => balance.formed.push(counted),
            }
        }
        check_fragments(&balance)?;
        Ok(balance)
    }

    fn parse_list(&self, text: &str, option: &str) -> Result<Vec<CountedBond>, EstimateError> {
        let items: Vec<&str> = text.split(',').map(str::trim).collect();
        if items.iter().all(|i| i.is_empty()) {
            return Err(EstimateError::Bonds(format!(
                "{option} is empty; list bonds as \"CH3-H, Cl-Cl\""
            )));
        }
        items
            .iter()
            .map(|item| self.parse_item(item, option))
            .collect()
    }

    fn parse_item(&self, item: &str, option: &str) -> Result<CountedBond, EstimateError> {
        let bad = |why: &str| {
            EstimateError::Bonds(format!(
                "{option} \"{item}\": {why}; write a bond as A-B with an optional count and own value in kJ/mol, e.g. \"CH3-H\", \"2 C-H\", \"C-H=413\"; known bonds: {}",
                self.names()
            ))
        };
        let (count, rest) =
            split_count(item).ok_or_else(|| bad("the count is not a positive number"))?;
        let (bond_text, own_value) = match rest.split_once('=') {
            Some((b, v)) => {
                let value = v
                    .trim()
                    .trim_end_matches("kJ/mol")
                    .trim()
                    .parse::<f64>()
                    .ok()
                    .filter(|x| x.is_finite() && *x > 0.0)
                    .ok_or_else(|| bad("the value after '=' is not a positive number"))?;
                (b.trim(), Some(value))
            }
            None => (rest, None),
        };
        let (a, b) = split_bond(bond_text).ok_or_else(|| bad("not a bond A-B"))?;
        let bond = match (own_value, self.find(&a, &b)) {
            (Some(kj_mol), _) => Bond {
                name: format!("{a}-{b}"),
                fragments: (a, b),
                species: None,
                kj_mol,
                source: "given on the command line".to_string(),
            },
            (None, Some(found)) => found.clone(),
            (None, None) => return Err(bad("not in the table (give its value as A-B=VALUE)")),
        };
        Ok(CountedBond { count, bond })
    }
}

/// "2 C-H" -> (2, "C-H"); "C-H" -> (1, "C-H").
fn split_count(item: &str) -> Option<(f64, &str)> {
    let end = item
        .char_indices()
        .find(|(_, c)| !(c.is_ascii_digit() || *c == '.'))
        .map_or(item.len(), |(i, _)| i);
    if end == 0 {
        return Some((1.0, item));
    }
    let count = item[..end].parse::<f64>().ok().filter(|c| *c > 0.0)?;
    let rest = item[end..].trim();
    Some((count, rest))
}

/// "CH3-Cl" (or with an en dash) -> ("CH3", "Cl").
fn split_bond(text: &str) -> Option<(String, String)> {
    let normalised = text.replace(['–', '—'], "-");
    let (a, b) = normalised.split_once('-')?;
    let (a, b) = (a.trim(), b.trim());
    let fragment_ok = |f: &str| !f.is_empty() && f.chars().all(|c| c.is_alphanumeric() || c == '_');
    (fragment_ok(a) && fragment_ok(b)).then(|| (a.to_string(), b.to_string()))
}

/// The fragments freed by the bonds broken must be those the bonds formed bind.
fn check_fragments(balance: &BondBalance) -> Result<(), EstimateError> {
    let count = |list: &[CountedBond]| {
        let mut fragments: BTreeMap<String, f64> = BTreeMap::new();
        for b in list {
            for f in [&b.bond.fragments.0, &b.bond.fragments.1] {
                *fragments.entry(f.clone()).or_insert(0.0) += b.count;
            }
        }
        fragments
    };
    let (freed, bound) = (count(&balance.broken), count(&balance.formed));
    let differs = freed.keys().chain(bound.keys()).any(|f| {
        (freed.get(f).copied().unwrap_or(0.0) - bound.get(f).copied().unwrap_or(0.0)).abs() > 1e-9
    });
    if differs {
        return Err(EstimateError::Bonds(format!(
            "the bonds broken free {} but those formed bind {}: the same fragments must be freed and bound",
            describe(&freed),
            describe(&bound)
        )));
    }
    Ok(())
}

fn describe(fragments: &BTreeMap<String, f64>) -> String {
    fragments
        .iter()
        .map(|(f, n)| format!("{n} {f}"))
        .collect::<Vec<_>>()
        .join(" + ")
}

fn read_bonds(text: &str, file: &str) -> Result<BondTable, EstimateError> {
    let data = DataTable::read(text, file)?;
    data.check_columns(&["bond", "species", "source"], "D298")?;
    let bond_column = data.required_column("bond")?;
    let source_column = data.required_column("source")?;
    let species_column = data.column("species");
    let (value_column, factor) = data.molar_energy_column("D298")?;
    let mut bonds = Vec::new();
    for record in &data.records {
        let name = data.field(record, bond_column);
        let fragments = split_bond(name).ok_or_else(|| {
            data.error(
                record.line,
                bond_column,
                format!("\"{name}\" is not a bond A-B"),
            )
        })?;
        let species = species_column
            .map(|c| data.field(record, c).to_string())
            .filter(|s| !s.is_empty());
        bonds.push(Bond {
            name: name.to_string(),
            fragments,
            species,
            kj_mol: data.number(record, value_column, factor)?,
            source: data.field(record, source_column).to_string(),
        });
    }
    Ok(BondTable { bonds })
}

#[cfg(test)]
mod tests {
    use super::super::phased::parse_phased_equation;
    use super::*;

    #[test]
    fn listed_bonds_sum_and_check_fragments() {
        let t = BondTable::bundled().unwrap();
        let b = t.listed("CH3-H, Cl-Cl", "Cl-CH3, H–Cl").unwrap();
        // ATcT D298 of the bundled table (reference §9 [D]): 439.03 + 242.60 − 350.42 − 431.47.
        assert!((b.enthalpy_kj_mol() - (439.03 + 242.60 - 350.42 - 431.47)).abs() < 1e-9);
        assert!(t.listed("CH3-H, Cl-Cl", "CH3-Cl").is_err());
        assert!(t.listed("CH3-H", "Xx-Yy").is_err());
        let own = t.listed("C-H=413", "C-C=348").unwrap_err();
        assert!(own.to_string().contains("fragments"), "{own}");
        let own = t.listed("2 C-H=413", "C-C=348, H-H=436").unwrap();
        assert!((own.enthalpy_kj_mol() - (826.0 - 784.0)).abs() < 1e-9);
    }

    #[test]
    fn bonds_are_found_from_gas_species() {
        let t = BondTable::bundled().unwrap();
        let eq = parse_phased_equation("CH4 + Br2(g) -> CH3Br + HBr").unwrap();
        let b = t.from_equation(&eq).unwrap();
        assert!(b.from_species);
        assert_eq!(b.broken.len(), 2);
        let liquid = parse_phased_equation("CH4 + Br2(l) -> CH3Br + HBr").unwrap();
        assert!(t.from_equation(&liquid).is_err());
        let other = parse_phased_equation("C6H6 + Cl2 -> PhCl + HCl").unwrap();
        assert!(t.from_equation(&other).is_err());
    }
}
