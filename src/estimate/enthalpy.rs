//! The reaction enthalpy of an equation estimated before any experiment: from standard
//! enthalpies of formation (bundled table and the user's own) or from bond dissociation
//! enthalpies, with the phase of each species, the element balance, the spread across
//! sources, and the heat of absorbing the HX formed in water as an option.

pub mod bonds;
mod csvdata;
pub mod formation;
pub mod formula;
pub mod phased;

use crate::estimate::error::EstimateError;
use bonds::{BondBalance, BondTable};
use formation::{Entry, FormationTable, PhaseBasis, SourceOrder, SourcedValue};
use formula::imbalance;
use phased::{Phase, PhasedEquation, PhasedTerm, Side, parse_phased_equation};
use std::path::PathBuf;

/// 1 kcal = 4.184 kJ (thermochemical calorie).
pub const KJ_PER_KCAL: f64 = 4.184;

/// The hydrogen halides whose absorption in water `absorb_hx` adds.
const HYDROGEN_HALIDES: [&str; 4] = ["HF", "HCl", "HBr", "HI"];

/// How the reaction enthalpy is estimated.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Method {
    /// ΔrH = Σ ν ΔfH°(products) − Σ ν ΔfH°(reactants).
    Formation,
    /// ΔrH ≈ Σ D(bonds broken) − Σ D(bonds formed), gas phase.
    Bonds,
}

impl Method {
    pub fn key(self) -> &'static str {
        match self {
            Method::Formation => "formation",
            Method::Bonds => "bonds",
        }
    }

    pub fn describe(self) -> &'static str {
        match self {
            Method::Formation => {
                "standard enthalpies of formation at 298.15 K: ΔrH = Σ ν ΔfH°(products) − Σ ν ΔfH°(reactants)"
            }
            Method::Bonds => {
                "bond dissociation enthalpies D298 (gas): ΔrH ≈ Σ D(bonds broken) − Σ D(bonds formed)"
            }
        }
    }
}

/// What to estimate, as asked.
#[derive(Debug, Clone)]
pub struct EnthalpyRequest {
    pub equation: String,
    pub method: Method,
    /// The user's own ΔfH values (CSV).
    pub data_file: Option<PathBuf>,
    /// Bonds broken and formed, for the bond route (both or neither).
    pub broken: Option<String>,
    pub formed: Option<String>,
    /// Add the heat of absorbing the gaseous HX formed in water (infinite dilution).
    pub absorb_hx: bool,
    /// Sources preferred before the default order, each a prefix of a source tag.
    pub prefer: Vec<String>,
}

impl EnthalpyRequest {
    pub fn new(equation: &str, method: Method) -> Self {
        EnthalpyRequest {
            equation: equation.to_string(),
            method,
            data_file: None,
            broken: None,
            formed: None,
            absorb_hx: false,
            prefer: Vec::new(),
        }
    }
}

/// One species of the equation as used.
#[derive(Debug, Clone, PartialEq)]
pub struct SpeciesLine {
    pub written: String,
    pub species: String,
    pub side: Side,
    pub coefficient: f64,
    pub phase: Phase,
    /// None on the bond route for a species the formation table does not hold.
    pub phase_basis: Option<PhaseBasis>,
    pub formula: Option<String>,
    /// The ΔfH° used (formation route) and every value held for the species and phase.
    pub chosen: Option<SourcedValue>,
    pub values: Vec<SourcedValue>,
}

impl SpeciesLine {
    /// ν ΔfH°, with ν negative for reactants.
    pub fn contribution(&self) -> Option<f64> {
        let sign = if self.side == Side::Product {
            1.0
        } else {
            -1.0
        };
        self.chosen
            .as_ref()
            .map(|v| sign * self.coefficient * v.kj_mol)
    }

    /// The lowest and highest value held.
    pub fn range(&self) -> Option<(f64, f64)> {
        (!self.values.is_empty()).then(|| {
            self.values
                .iter()
                .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
                    (lo.min(v.kj_mol), hi.max(v.kj_mol))
                })
        })
    }
}

/// The heat of absorbing one gaseous HX formed in water, at infinite dilution.
#[derive(Debug, Clone, PartialEq)]
pub struct Absorption {
    pub species: String,
    /// Moles absorbed per mole of reaction as written.
    pub moles: f64,
    /// ΔfH°(HX, aq) − ΔfH°(HX, g), kJ/mol of HX.
    pub kj_per_mol_hx: f64,
    pub source: String,
}

/// The estimate and everything needed to read it.
#[derive(Debug, Clone, PartialEq)]
pub struct EnthalpyEstimate {
    /// The equation as given.
    pub given: String,
    /// The equation with the phase used for every species.
    pub equation: String,
    pub method: Method,
    pub species: Vec<SpeciesLine>,
    pub bonds: Option<BondBalance>,
    /// ΔrH of the reaction as written, kJ/mol.
    pub reaction_kj_mol: f64,
    /// The lowest and highest ΔrH over every choice of source (formation route).
    pub spread_kj_mol: Option<(f64, f64)>,
    pub absorption: Vec<Absorption>,
    /// Every source tag whose value was used.
    pub sources: Vec<String>,
    /// The order of sources applied (formation route).
    pub source_order: String,
    pub balance_checked: bool,
    pub notes: Vec<String>,
}

impl EnthalpyEstimate {
    /// The absorption heat added, kJ/mol of reaction.
    pub fn absorption_kj_mol(&self) -> f64 {
        self.absorption
            .iter()
            .map(|a| a.moles * a.kj_per_mol_hx)
            .sum()
    }

    /// The reaction enthalpy plus the absorption heat: the value for a case file.
    pub fn total_kj_mol(&self) -> f64 {
        self.reaction_kj_mol + self.absorption_kj_mol()
    }

    /// The line for a case file's reaction, e.g. `enthalpy: -100.3 kJ/mol`.
    pub fn case_line(&self) -> String {
        format!("enthalpy: {:.1} kJ/mol", self.total_kj_mol())
    }
}

/// What every estimate assumes, printed with it.
pub const ASSUMPTIONS: [&str; 3] = [
    "ΔrH at 298.15 K and 1 bar with the phases shown; at the process temperature it differs by the integral of ΔCp dT, and heats of solution and mixing in the reaction medium are not included.",
    "Only the reaction as written: side reactions, over-halogenation and decomposition add heat that this figure does not hold.",
    "Values from tables are read from the bundled table or your file; check them against the primary source before relying on them.",
];

/// Estimates the enthalpy of `request.equation`.
pub fn estimate_enthalpy(request: &EnthalpyRequest) -> Result<EnthalpyEstimate, EstimateError> {
    let equation = parse_phased_equation(&request.equation)?;
    let table = load_table(request)?;
    let order = SourceOrder::new(request.prefer.clone(), &table)?;
    let mut notes = Vec::new();
    let species = resolve_species(&equation, &table, request.method)?;
    let balance_checked = check_balance(&species, &table, &mut notes)?;
    let (reaction_kj_mol, spread_kj_mol, bonds, species) = match request.method {
        Method::Formation => {
            let species = choose_values(species, &order);
            let (sum, spread) = formation_sum(&species);
            (sum, Some(spread), None, species)
        }
        Method::Bonds => {
            let balance = bond_balance(request, &equation)?;
            (balance.enthalpy_kj_mol(), None, Some(balance), species)
        }
    };
    let absorption = if request.absorb_hx {
        absorptions(&species, &table, &order, &mut notes)
    } else {
        Vec::new()
    };
    notes.extend(phase_notes(&species, &table));
    let sources = used_sources(&species, bonds.as_ref(), &absorption);
    notes.extend(source_notes(request.method, &species, &sources));
    Ok(EnthalpyEstimate {
        given: equation.text.clone(),
        equation: written_with_phases(&species),
        method: request.method,
        species,
        bonds,
        reaction_kj_mol,
        spread_kj_mol,
        absorption,
        sources,
        source_order: order.describe(),
        balance_checked,
        notes,
    })
}

fn load_table(request: &EnthalpyRequest) -> Result<FormationTable, EstimateError> {
    let mut table = FormationTable::bundled()?;
    if let Some(path) = &request.data_file {
        let file = path.display().to_string();
        let text = std::fs::read_to_string(path).map_err(|e| EstimateError::DataFileRead {
            file: file.clone(),
            message: e.to_string(),
        })?;
        table.add_user_file(&text, &file)?;
    }
    Ok(table)
}

/// Every species with its phase; on the formation route every one must be in the table.
fn resolve_species(
    equation: &PhasedEquation,
    table: &FormationTable,
    method: Method,
) -> Result<Vec<SpeciesLine>, EstimateError> {
    if method == Method::Formation {
        let unknown: Vec<&str> = equation
            .terms
            .iter()
            .filter(|t| !table.knows(&t.name))
            .map(|t| t.name.as_str())
            .collect();
        if !unknown.is_empty() {
            return Err(EstimateError::UnknownSpecies {
                names: unknown.join(", "),
                known: table.known_species(),
            });
        }
    }
    equation
        .terms
        .iter()
        .map(|term| match method {
            Method::Formation => {
                let (entry, basis) = table.lookup(&term.name, term.phase)?;
                Ok(line_from_entry(term, entry, Some(basis)))
            }
            Method::Bonds => match term.phase {
                Some(phase) if phase != Phase::G => Err(EstimateError::Bonds(format!(
                    "{}({phase}): bond dissociation enthalpies are gas-phase values; the bond route takes gas species only (write {}(g) or use the formation route)",
                    term.name, term.name
                ))),
                _ => Ok(gas_line(term, table)),
            },
        })
        .collect()
}

fn line_from_entry(term: &PhasedTerm, entry: &Entry, basis: Option<PhaseBasis>) -> SpeciesLine {
    SpeciesLine {
        written: term.name.clone(),
        species: entry.species.clone(),
        side: term.side,
        coefficient: term.coefficient,
        phase: entry.phase,
        phase_basis: basis,
        formula: entry.formula.clone(),
        chosen: None,
        values: entry.values.clone(),
    }
}

/// On the bond route every species is gas; the table gives its formula where it holds it.
fn gas_line(term: &PhasedTerm, table: &FormationTable) -> SpeciesLine {
    match table.lookup(&term.name, Some(Phase::G)) {
        Ok((entry, _)) => {
            let mut line = line_from_entry(term, entry, None);
            line.values.clear();
            line
        }
        Err(_) => SpeciesLine {
            written: term.name.clone(),
            species: term.name.clone(),
            side: term.side,
            coefficient: term.coefficient,
            phase: Phase::G,
            phase_basis: None,
            formula: None,
            chosen: None,
            values: Vec::new(),
        },
    }
}

/// Checks the element balance when every species has a formula; says so when not.
fn check_balance(
    species: &[SpeciesLine],
    table: &FormationTable,
    notes: &mut Vec<String>,
) -> Result<bool, EstimateError> {
    let compositions: Vec<_> = species
        .iter()
        .map(|line| {
            table
                .lookup(&line.species, Some(line.phase))
                .ok()
                .and_then(|(e, _)| e.composition.clone())
        })
        .collect();
    let missing: Vec<&str> = species
        .iter()
        .zip(&compositions)
        .filter(|(_, c)| c.is_none())
        .map(|(l, _)| l.written.as_str())
        .collect();
    if !missing.is_empty() {
        notes.push(format!(
            "Element balance not checked: no formula for {} (give one in the formula column of --data).",
            missing.join(", ")
        ));
        return Ok(false);
    }
    let signed = species.iter().map(|l| {
        if l.side == Side::Product {
            l.coefficient
        } else {
            -l.coefficient
        }
    });
    let net = imbalance(signed.zip(compositions.iter().flatten()));
    if net.is_empty() {
        return Ok(true);
    }
    let elements = net
        .iter()
        .map(|(element, n)| format!("{element} {n:+}"))
        .collect::<Vec<_>>()
        .join(", ");
    Err(EstimateError::Unbalanced { elements })
}

fn choose_values(species: Vec<SpeciesLine>, order: &SourceOrder) -> Vec<SpeciesLine> {
    species
        .into_iter()
        .map(|mut line| {
            let entry_like = Entry {
                species: line.species.clone(),
                phase: line.phase,
                formula: None,
                composition: None,
                standard_state: false,
                values: line.values.clone(),
            };
            line.chosen = Some(order.choose(&entry_like).clone());
            line
        })
        .collect()
}

/// The sum with the chosen values, and its range over every choice of source.
fn formation_sum(species: &[SpeciesLine]) -> (f64, (f64, f64)) {
    let mut sum = 0.0;
    let (mut low, mut high) = (0.0, 0.0);
    for line in species {
        sum += line.contribution().unwrap_or(0.0);
        let (lo, hi) = line.range().unwrap_or((0.0, 0.0));
        let nu = if line.side == Side::Product {
            line.coefficient
        } else {
            -line.coefficient
        };
        low += (nu * lo).min(nu * hi);
        high += (nu * lo).max(nu * hi);
    }
    (sum, (low, high))
}

fn bond_balance(
    request: &EnthalpyRequest,
    equation: &PhasedEquation,
) -> Result<BondBalance, EstimateError> {
    let table = BondTable::bundled()?;
    match (&request.broken, &request.formed) {
        (Some(broken), Some(formed)) => table.listed(broken, formed),
        (None, None) => table.from_equation(equation),
        _ => Err(EstimateError::Bonds(
            "give both --broken and --formed, or neither (the bonds are then found from the species)"
                .to_string(),
        )),
    }
}

/// The absorption in water of each gaseous hydrogen halide formed (net).
fn absorptions(
    species: &[SpeciesLine],
    table: &FormationTable,
    order: &SourceOrder,
    notes: &mut Vec<String>,
) -> Vec<Absorption> {
    let mut found = Vec::new();
    for hx in HYDROGEN_HALIDES {
        let moles: f64 = species
            .iter()
            .filter(|l| l.species == hx && l.phase == Phase::G)
            .map(|l| {
                if l.side == Side::Product {
                    l.coefficient
                } else {
                    -l.coefficient
                }
            })
            .sum();
        if moles <= 1e-12 {
            continue;
        }
        match absorption_heat(table, order, hx) {
            Some((kj_per_mol_hx, source)) => found.push(Absorption {
                species: hx.to_string(),
                moles,
                kj_per_mol_hx,
                source,
            }),
            None => notes.push(format!(
                "No heat of solution for {hx}: the table has no {hx}(aq) (for HF, a weak acid, the ionised infinite-dilution value would not apply); give {hx}(aq) with --data or add it yourself."
            )),
        }
    }
    if !found.is_empty() {
        notes.push(
            "The case-file line includes the heat of absorbing the HX in water: use it so only if the HX is absorbed in the reaction mass itself (an aqueous phase in the vessel); a scrubber outside takes that heat, and the reaction enthalpy alone belongs in the case."
                .to_string(),
        );
    }
    if found.is_empty() && notes.iter().all(|n| !n.starts_with("No heat of solution")) {
        notes.push("--absorb-hx: no gaseous HX is formed, nothing is absorbed.".to_string());
    }
    found
}

/// ΔfH°(aq) − ΔfH°(g) of `hx` from one source that holds both (the best-ranked), or else
/// from the values chosen for each.
fn absorption_heat(table: &FormationTable, order: &SourceOrder, hx: &str) -> Option<(f64, String)> {
    let (gas, _) = table.lookup(hx, Some(Phase::G)).ok()?;
    let (aq, _) = table.lookup(hx, Some(Phase::Aq)).ok()?;
    match order.common(aq, gas) {
        Some((va, vg)) => Some((va.kj_mol - vg.kj_mol, va.source.clone())),
        None => {
            let (va, vg) = (order.choose(aq), order.choose(gas));
            Some((
                va.kj_mol - vg.kj_mol,
                format!("{} (aq), {} (g)", va.source, vg.source),
            ))
        }
    }
}

fn phase_notes(species: &[SpeciesLine], table: &FormationTable) -> Vec<String> {
    species
        .iter()
        .filter(|l| l.phase_basis == Some(PhaseBasis::StandardState))
        .map(|l| {
            let choices = Phase::ALL
                .iter()
                .filter(|p| table.lookup(&l.species, Some(**p)).is_ok())
                .map(|p| format!("{}({p})", l.written))
                .collect::<Vec<_>>()
                .join(" or ");
            format!(
                "{}: no phase written; used {}, its standard state at 298.15 K and 1 bar (write {choices} to choose).",
                l.written, l.phase
            )
        })
        .collect()
}

fn used_sources(
    species: &[SpeciesLine],
    bonds: Option<&BondBalance>,
    absorption: &[Absorption],
) -> Vec<String> {
    let mut sources: Vec<String> = species
        .iter()
        .filter_map(|l| l.chosen.as_ref().map(|v| v.source.clone()))
        .collect();
    if let Some(b) = bonds {
        sources.extend(
            b.broken
                .iter()
                .chain(&b.formed)
                .map(|c| c.bond.source.clone()),
        );
    }
    sources.extend(absorption.iter().map(|a| a.source.clone()));
    let mut unique = Vec::new();
    for s in sources {
        if !unique.contains(&s) {
            unique.push(s);
        }
    }
    unique
}

fn source_notes(method: Method, species: &[SpeciesLine], sources: &[String]) -> Vec<String> {
    let mut notes = Vec::new();
    let families: Vec<&String> = sources
        .iter()
        .filter(|s| s.as_str() != "definition")
        .collect();
    if method == Method::Formation && families.len() > 1 {
        notes.push(format!(
            "Values from more than one source ({}): each table has its own reference data; the spread shows how much the choice matters.",
            families.iter().map(|s| s.as_str()).collect::<Vec<_>>().join(", ")
        ));
    }
    for line in species {
        let origin = line.chosen.as_ref().and_then(|v| v.user_origin.as_ref());
        let overrides = line.values.iter().any(|v| v.user_origin.is_none());
        if let (Some(origin), true) = (origin, overrides) {
            notes.push(format!(
                "{}({}): your value ({origin}) is used before the bundled ones, which stay in the spread.",
                line.written, line.phase
            ));
        }
    }
    if method == Method::Bonds {
        notes.push(
            "Bond dissociation enthalpies are gas-phase values at 298.15 K: a reaction in solution differs by the heats of vaporisation and solution of the species."
                .to_string(),
        );
    }
    notes
}

fn written_with_phases(species: &[SpeciesLine]) -> String {
    let side = |which: Side| {
        species
            .iter()
            .filter(|l| l.side == which)
            .map(|l| {
                let coefficient = if (l.coefficient - 1.0).abs() < 1e-12 {
                    String::new()
                } else {
                    format!("{} ", l.coefficient)
                };
                format!("{coefficient}{}({})", l.written, l.phase)
            })
            .collect::<Vec<_>>()
            .join(" + ")
    };
    format!("{} -> {}", side(Side::Reactant), side(Side::Product))
}
