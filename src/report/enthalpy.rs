//! The reaction-enthalpy estimate (`exoscreen enthalpy`) as a terminal report and as JSON.

use super::cautions::CAUTIONS;
use super::{cautions_section, new_table};
use crate::estimate::ESTIMATE_FLAG;
use crate::estimate::enthalpy::bonds::CountedBond;
use crate::estimate::enthalpy::phased::Side;
use crate::estimate::enthalpy::{ASSUMPTIONS, EnthalpyEstimate, KJ_PER_KCAL, Method, SpeciesLine};
use comfy_table::{Cell, CellAlignment};
use serde::Serialize;

// ---------------------------------------------------------------------------------------------
// Terminal
// ---------------------------------------------------------------------------------------------

pub fn render_table(estimate: &EnthalpyEstimate) -> String {
    let mut out = format!(
        "exoscreen {} — reaction enthalpy estimate\n{}\n\n",
        env!("CARGO_PKG_VERSION"),
        estimate.equation
    );
    out.push_str(&format!("Method: {}\n", estimate.method.describe()));
    if estimate.method == Method::Formation {
        out.push_str(&format!("Source order: {}\n", estimate.source_order));
    }
    out.push_str("\nSPECIES\n");
    out.push_str(&species_table(estimate).to_string());
    out.push('\n');
    if let Some(bonds) = &estimate.bonds {
        out.push_str("\nBONDS\n");
        out.push_str(&bonds_table(&bonds.broken, &bonds.formed).to_string());
        out.push('\n');
    }
    out.push_str("\nRESULT\n");
    out.push_str(&result_lines(estimate));
    out.push_str(&format!("\n  {ESTIMATE_FLAG}\n"));
    out.push_str(&format!(
        "\nFOR THE CASE FILE\n  {}\n",
        estimate.case_line()
    ));
    push_list(&mut out, "NOTES", &estimate.notes);
    push_list(&mut out, "ASSUMPTIONS", &ASSUMPTIONS);
    out.push_str(&cautions_section());
    out
}

fn species_table(estimate: &EnthalpyEstimate) -> comfy_table::Table {
    let formation = estimate.method == Method::Formation;
    let header: &[&str] = if formation {
        &[
            "species",
            "side",
            "ν",
            "phase",
            "phase from",
            "ΔfH° kJ/mol",
            "source",
            "ν·ΔfH° kJ/mol",
            "all sources kJ/mol",
        ]
    } else {
        &["species", "side", "ν", "phase", "formula"]
    };
    let mut table = new_table(header);
    for line in &estimate.species {
        let mut row = vec![
            Cell::new(&line.written),
            Cell::new(side_name(line.side)),
            Cell::new(trim(line.coefficient)).set_alignment(CellAlignment::Right),
            Cell::new(line.phase.code()),
        ];
        if formation {
            row.extend(formation_cells(line));
        } else {
            row.push(Cell::new(line.formula.as_deref().unwrap_or("—")));
        }
        table.add_row(row);
    }
    table
}

fn formation_cells(line: &SpeciesLine) -> Vec<Cell> {
    let basis = line.phase_basis.map_or("—", |b| b.describe());
    let (value, source) = line
        .chosen
        .as_ref()
        .map_or((f64::NAN, String::new()), |v| (v.kj_mol, v.source.clone()));
    let held = match line.range() {
        Some((lo, hi)) if line.values.len() > 1 => {
            format!("{} values, {} to {}", line.values.len(), trim(lo), trim(hi))
        }
        _ => "1 value".to_string(),
    };
    vec![
        Cell::new(basis),
        number(value, 3),
        Cell::new(source),
        number(line.contribution().unwrap_or(f64::NAN), 3),
        Cell::new(held),
    ]
}

fn bonds_table(broken: &[CountedBond], formed: &[CountedBond]) -> comfy_table::Table {
    let mut table = new_table(&[
        "",
        "bond",
        "count",
        "D298 kJ/mol",
        "source",
        "± count·D kJ/mol",
    ]);
    for (label, sign, list) in [("broken", 1.0, broken), ("formed", -1.0, formed)] {
        for b in list {
            table.add_row(vec![
                Cell::new(label),
                Cell::new(&b.bond.name),
                Cell::new(trim(b.count)).set_alignment(CellAlignment::Right),
                number(b.bond.kj_mol, 2),
                Cell::new(&b.bond.source),
                number(sign * b.count * b.bond.kj_mol, 2),
            ]);
        }
    }
    table
}

fn result_lines(estimate: &EnthalpyEstimate) -> String {
    let mut out = format!(
        "  ΔrH, reaction as written          {:>10.2} kJ/mol  ({:.2} kcal/mol)\n",
        estimate.reaction_kj_mol,
        estimate.reaction_kj_mol / KJ_PER_KCAL
    );
    if let Some((low, high)) = estimate.spread_kj_mol {
        out.push_str(&format!(
            "  spread over the sources held      {low:>10.2} to {high:.2} kJ/mol (width {:.2})\n",
            high - low
        ));
    }
    for a in &estimate.absorption {
        out.push_str(&format!(
            "  {} absorbed in water              {:>10.2} kJ/mol  ({} × {:.1} kJ/mol, {}, infinite dilution: concentrated acid releases less)\n",
            a.species,
            a.moles * a.kj_per_mol_hx,
            trim(a.moles),
            a.kj_per_mol_hx,
            a.source
        ));
    }
    if !estimate.absorption.is_empty() {
        out.push_str(&format!(
            "  total with absorption             {:>10.2} kJ/mol  ({:.2} kcal/mol)\n",
            estimate.total_kj_mol(),
            estimate.total_kj_mol() / KJ_PER_KCAL
        ));
    }
    let balance = if estimate.balance_checked {
        "elements balance"
    } else {
        "element balance not checked (see the notes)"
    };
    out.push_str(&format!("  {balance}\n"));
    out.push_str(&format!(
        "  sources used: {}\n",
        estimate.sources.join(", ")
    ));
    out
}

fn push_list<S: AsRef<str>>(out: &mut String, heading: &str, items: &[S]) {
    if items.is_empty() {
        return;
    }
    out.push_str(&format!("\n{heading}\n"));
    for item in items {
        out.push_str(&format!("  - {}\n", item.as_ref()));
    }
}

fn side_name(side: Side) -> &'static str {
    match side {
        Side::Reactant => "reactant",
        Side::Product => "product",
    }
}

fn number(value: f64, decimals: usize) -> Cell {
    let text = if value.is_finite() {
        // + 0.0 turns −0 into 0.
        format!("{:.decimals$}", value + 0.0)
    } else {
        "—".to_string()
    };
    Cell::new(text).set_alignment(CellAlignment::Right)
}

/// A number without trailing zeros: 1, 0.5, -92.173.
fn trim(value: f64) -> String {
    let text = format!("{:.6}", value + 0.0);
    text.trim_end_matches('0').trim_end_matches('.').to_string()
}

// ---------------------------------------------------------------------------------------------
// JSON
// ---------------------------------------------------------------------------------------------

#[allow(non_snake_case)]
#[derive(Serialize)]
struct Report<'a> {
    estimate: bool,
    flag: &'static str,
    exoscreen_version: &'static str,
    equation: &'a str,
    equation_used: &'a str,
    method: &'static str,
    method_description: &'static str,
    enthalpy_kJ_mol: f64,
    enthalpy_kcal_mol: f64,
    reaction_enthalpy_kJ_mol: f64,
    absorption_kJ_mol: Option<f64>,
    spread_kJ_mol: Option<Spread>,
    sources: &'a [String],
    source_order: Option<&'a str>,
    species: Vec<SpeciesJson<'a>>,
    bonds: Option<BondsJson<'a>>,
    absorption: Vec<AbsorptionJson<'a>>,
    element_balance_checked: bool,
    case_line: String,
    notes: &'a [String],
    assumptions: &'static [&'static str],
    cautions: &'static [&'static str],
}

#[derive(Serialize)]
struct Spread {
    low: f64,
    high: f64,
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct SpeciesJson<'a> {
    species: &'a str,
    written: &'a str,
    side: Side,
    coefficient: f64,
    phase: &'static str,
    phase_basis: Option<&'static str>,
    formula: Option<&'a str>,
    dHf_kJ_mol: Option<f64>,
    source: Option<&'a str>,
    user_origin: Option<&'a str>,
    contribution_kJ_mol: Option<f64>,
    values: Vec<ValueJson<'a>>,
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct ValueJson<'a> {
    dHf_kJ_mol: f64,
    source: &'a str,
}

#[derive(Serialize)]
struct BondsJson<'a> {
    from_species: bool,
    broken: Vec<BondJson<'a>>,
    formed: Vec<BondJson<'a>>,
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct BondJson<'a> {
    bond: &'a str,
    count: f64,
    D298_kJ_mol: f64,
    source: &'a str,
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct AbsorptionJson<'a> {
    species: &'a str,
    moles: f64,
    heat_of_solution_kJ_mol: f64,
    source: &'a str,
    basis: &'static str,
}

pub fn render_json(estimate: &EnthalpyEstimate) -> String {
    let formation = estimate.method == Method::Formation;
    let report = Report {
        estimate: true,
        flag: ESTIMATE_FLAG,
        exoscreen_version: env!("CARGO_PKG_VERSION"),
        equation: &estimate.given,
        equation_used: &estimate.equation,
        method: estimate.method.key(),
        method_description: estimate.method.describe(),
        enthalpy_kJ_mol: estimate.total_kj_mol(),
        enthalpy_kcal_mol: estimate.total_kj_mol() / KJ_PER_KCAL,
        reaction_enthalpy_kJ_mol: estimate.reaction_kj_mol,
        absorption_kJ_mol: (!estimate.absorption.is_empty()).then(|| estimate.absorption_kj_mol()),
        spread_kJ_mol: estimate
            .spread_kj_mol
            .map(|(low, high)| Spread { low, high }),
        sources: &estimate.sources,
        source_order: formation.then_some(estimate.source_order.as_str()),
        species: estimate.species.iter().map(species_json).collect(),
        bonds: estimate.bonds.as_ref().map(|b| BondsJson {
            from_species: b.from_species,
            broken: b.broken.iter().map(bond_json).collect(),
            formed: b.formed.iter().map(bond_json).collect(),
        }),
        absorption: estimate
            .absorption
            .iter()
            .map(|a| AbsorptionJson {
                species: &a.species,
                moles: a.moles,
                heat_of_solution_kJ_mol: a.kj_per_mol_hx,
                source: &a.source,
                basis: "infinite dilution (concentrated acid releases less)",
            })
            .collect(),
        element_balance_checked: estimate.balance_checked,
        case_line: estimate.case_line(),
        notes: &estimate.notes,
        assumptions: &ASSUMPTIONS,
        cautions: &CAUTIONS,
    };
    let mut text =
        serde_json::to_string_pretty(&report).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"));
    text.push('\n');
    text
}

fn species_json(line: &SpeciesLine) -> SpeciesJson<'_> {
    SpeciesJson {
        species: &line.species,
        written: &line.written,
        side: line.side,
        coefficient: line.coefficient,
        phase: line.phase.code(),
        phase_basis: line.phase_basis.map(|b| b.describe()),
        formula: line.formula.as_deref(),
        dHf_kJ_mol: line.chosen.as_ref().map(|v| v.kj_mol),
        source: line.chosen.as_ref().map(|v| v.source.as_str()),
        user_origin: line.chosen.as_ref().and_then(|v| v.user_origin.as_deref()),
        contribution_kJ_mol: line.contribution(),
        values: line
            .values
            .iter()
            .map(|v| ValueJson {
                dHf_kJ_mol: v.kj_mol,
                source: &v.source,
            })
            .collect(),
    }
}

fn bond_json(b: &CountedBond) -> BondJson<'_> {
    BondJson {
        bond: &b.bond.name,
        count: b.count,
        D298_kJ_mol: b.bond.kj_mol,
        source: &b.bond.source,
    }
}
