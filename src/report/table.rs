//! The terminal report: the case in brief, the figures with their units and basis, the class
//! and what it means, the warnings and the cautions.

use super::{Exporter, Source, cautions_section, celsius, new_table};
use crate::assess::Assessment;
use crate::assess::class::class_meaning;
use crate::case::Dosing;
use crate::model::plant::Jacket;
use comfy_table::{Cell, CellAlignment, Table};

pub struct TableExporter;

const HOUR: f64 = 3600.0;

impl Exporter for TableExporter {
    fn render(&self, a: &Assessment, source: &Source) -> String {
        let mut out = String::new();
        out.push_str(&format!(
            "exoscreen {} — screening of {}\n",
            env!("CARGO_PKG_VERSION"),
            source.file
        ));
        out.push_str(&format!("{}\n\n", a.case.title));
        out.push_str("CASE\n");
        out.push_str(&case_table(a).to_string());
        out.push_str("\n\nFIGURES\n");
        out.push_str(&figures_table(a).to_string());
        out.push_str("\n\n");
        out.push_str(&verdict(a));
        out.push_str(&after_failure(a));
        out.push_str("\nWARNINGS\n");
        if a.warnings.is_empty() {
            out.push_str("  none\n");
        }
        for w in &a.warnings {
            out.push_str(&format!("  ! [{}] {}\n", w.code, w.message));
        }
        out.push_str(&cautions_section());
        out
    }
}

fn case_table(a: &Assessment) -> Table {
    let mut t = new_table(&["item", "value"]);
    for [item, value] in case_rows(a) {
        t.add_row(vec![item, value]);
    }
    t
}

/// The case in brief, one (item, value with units) pair a row; the stage-gate document
/// shows the same rows.
pub(crate) fn case_rows(a: &Assessment) -> Vec<[String; 2]> {
    let p = &a.plant;
    let mut t = Rows::default();
    let g = &p.geometry;
    let v0 = p.charge.mass / p.charge.density;
    let v1 = v0
        + p.feed
            .as_ref()
            .map_or(0.0, |f| f.stream.mass / f.stream.density);
    t.add_row(vec![
        "vessel".to_string(),
        format!("D {:.3} m, {} bottom, nominal {:.3} m3 (shell top {:.3} m), jacket to {:.3} m, U {:.0} W/(m2 K)", g.diameter(), g.bottom().name(), a.case.vessel.nominal_volume.get::<uom::si::volume::cubic_meter>(), g.height(), p.jacket_height, p.u),
    ]);
    if let Some(film) = &a.case.vessel.film {
        let r = film.model.resistances(g.diameter());
        t.add_row(vec![
            "heat transfer".to_string(),
            format!(
                "U from resistances: 1/U = {}",
                r.breakdown()
                    .iter()
                    .map(|(name, value, share)| format!(
                        "{name} {value:.2e} ({:.0} %)",
                        100.0 * share
                    ))
                    .collect::<Vec<_>>()
                    .join(" + ")
            ),
        ]);
    }
    if let Some(ambient) = &p.ambient {
        t.add_row(vec![
            "ambient loss".to_string(),
            format!(
                "{:.2} W/K to {:.1} degC, in normal operation only (adiabatic after a cooling failure)",
                ambient.conductance,
                ambient.temperature - 273.15
            ),
        ]);
    }
    t.add_row(vec![
        "fill".to_string(),
        format!(
            "{v0:.3} -> {v1:.3} m3; level {:.3} -> {:.3} m; cooled area {:.2} -> {:.2} m2",
            g.level(v0),
            g.level(v1),
            g.jacketed_area(v0, p.jacket_height),
            g.jacketed_area(v1, p.jacket_height)
        ),
    ]);
    t.add_row(vec![
        "charge".to_string(),
        format!(
            "{:.1} kg, cp {:.3} kJ/(kg K), {:.0} kg/m3; {}",
            p.charge.mass,
            p.charge.specific_heat / 1e3,
            p.charge.density,
            amounts(p, &p.charge.amounts)
        ),
    ]);
    match &p.feed {
        Some(f) => t.add_row(vec![
            "feed".to_string(),
            format!(
                "{:.1} kg at {:.1} degC over {:.2} -> {:.2} h ({:.1} kg/h); {}",
                f.stream.mass,
                celsius(f.temperature),
                f.start / HOUR,
                f.end() / HOUR,
                f.mass_rate() * HOUR,
                amounts(p, &f.stream.amounts)
            ),
        ]),
        None => t.add_row(vec!["feed".to_string(), "none (batch)".to_string()]),
    };
    for (r, law) in a.case.reactions.iter().zip(&p.network.reactions) {
        t.add_row(vec![
            "reaction".to_string(),
            format!(
                "{}: dH {:.1} kJ/mol, k {:.4e} {} at {:.1} degC, Ea {:.1} kJ/mol",
                r.equation.text,
                -law.heat_of_reaction / 1e3,
                law.k_ref,
                rate_constant_unit(law.orders.iter().map(|(_, n)| n).sum()),
                celsius(law.reference_temperature),
                law.activation_energy / 1e3
            ),
        ]);
    }
    let jacket = match p.jacket {
        Jacket::Constant(t) => format!("coolant {:.1} degC (constant)", celsius(t)),
        Jacket::Hold {
            minimum,
            maximum,
            lag,
            ..
        } => format!(
            "jacket held at Tp within {:.1} .. {:.1} degC, lag {:.1} min",
            celsius(minimum),
            celsius(maximum),
            lag / 60.0
        ),
    };
    t.add_row(vec![
        "temperatures".to_string(),
        format!(
            "Tp {:.1} degC, {jacket}, MTT {:.1} degC",
            celsius(p.process_temperature),
            celsius(p.mtt)
        ),
    ]);
    let mut protections = Vec::new();
    if let Some(limit) = p.stop_feed_above {
        protections.push(format!(
            "dosing interlock: feed stops above {:.1} degC",
            celsius(limit)
        ));
    }
    if let Some(b) = &p.boiling {
        let condenser = b
            .condenser_capacity
            .map_or("no condenser given".to_string(), |c| {
                format!("condenser {:.0} kW", c / 1e3)
            });
        protections.push(format!(
            "solvent boils at {:.1} degC ({:.1} kJ/mol), {condenser}",
            celsius(b.boiling_point),
            b.heat_of_vaporisation / 1e3
        ));
    }
    if !protections.is_empty() {
        t.add_row(vec!["protections".to_string(), protections.join("; ")]);
    }
    let dosing = match p.dosing_after_failure {
        Dosing::Continues => "feed continues",
        Dosing::Stops => "feed stops",
    };
    t.add_row(vec![
        "cooling failure".to_string(),
        format!("{dosing}; followed {:.1} h", p.failure_horizon / HOUR),
    ]);
    let decomposition = match &p.decomposition {
        Some(d) => format!(
            "{:.0} kJ/kg, {:.3} W/kg at {:.1} degC, Ea {:.1} kJ/mol, order {}",
            d.energy / 1e3,
            d.q_ref,
            celsius(d.reference_temperature),
            d.activation_energy / 1e3,
            d.order
        ),
        None => "no data".to_string(),
    };
    t.add_row(vec!["decomposition".to_string(), decomposition]);
    t.0
}

/// Rows collected with the same calls as a table's.
#[derive(Default)]
struct Rows(Vec<[String; 2]>);

impl Rows {
    fn add_row(&mut self, row: Vec<String>) -> &mut Self {
        let mut cells = row.into_iter();
        let item = cells.next().unwrap_or_default();
        let value = cells.next().unwrap_or_default();
        self.0.push([item, value]);
        self
    }
}

fn amounts(p: &crate::model::plant::Plant, n: &[f64]) -> String {
    let parts: Vec<String> = p
        .network
        .species
        .iter()
        .zip(n)
        .filter(|(_, v)| **v > 0.0)
        .map(|(s, v)| format!("{s} {:.3} kmol", v / 1e3))
        .collect();
    if parts.is_empty() {
        "no reactants".to_string()
    } else {
        parts.join(", ")
    }
}

fn row(t: &mut Table, name: &str, value: String, unit: &str, basis: String) {
    t.add_row(vec![
        Cell::new(name),
        Cell::new(value).set_alignment(CellAlignment::Right),
        Cell::new(unit),
        Cell::new(basis),
    ]);
}

fn opt(value: Option<f64>, digits: usize) -> String {
    value.map_or("—".to_string(), |v| format!("{v:.digits$}"))
}

fn figures_table(a: &Assessment) -> Table {
    let f = &a.figures;
    let n = &f.normal;
    let mut t = new_table(&["figure", "value", "unit", "basis"]);
    row(
        &mut t,
        "adiabatic temperature rise",
        format!("{:.1}", f.adiabatic_rise),
        "K",
        format!(
            "releasable heat {:.0} MJ / C_final {:.0} kJ/K",
            f.releasable_heat / 1e6,
            f.final_heat_capacity / 1e3
        ),
    );
    row(
        &mut t,
        "max thermal accumulation",
        format!("{:.1}", 100.0 * f.max_accumulation),
        "%",
        format!("at {:.2} h", f.max_accumulation_time / HOUR),
    );
    row(
        &mut t,
        "MTSR",
        format!("{:.1}", celsius(f.mtsr)),
        "degC",
        format!("max of T + Q_acc/C(t), at {:.2} h", f.mtsr_time / HOUR),
    );
    row(
        &mut t,
        "simulated MTSR",
        format!("{:.1}", celsius(f.worst.max_temperature)),
        "degC",
        format!(
            "worst cooling failure at {:.2} h, decomposition off ({} runs)",
            f.worst.failure_time / HOUR,
            f.worst.runs
        ),
    );
    row(
        &mut t,
        "MTT",
        format!("{:.1}", celsius(f.mtt)),
        "degC",
        "from the case (boiling point or relief set point)".to_string(),
    );
    row(
        &mut t,
        "TD24",
        opt(f.td24.map(celsius), 1),
        "degC",
        "TMRad = 24 h, zero order (Townsend and Tou)".to_string(),
    );
    row(
        &mut t,
        "TMRad at MTSR",
        opt(f.tmr_ad_at_mtsr.map(|s| s / HOUR), 2),
        "h",
        "cp_final R T^2 / (q(T) Ea)".to_string(),
    );
    row(
        &mut t,
        "criticality class",
        f.class.map_or("none".to_string(), |c| c.to_string()),
        "",
        "Stoessel; needs decomposition data".to_string(),
    );
    row(
        &mut t,
        "final conversion",
        opt(f.final_conversion.map(|x| 100.0 * x), 1),
        "%",
        format!(
            "of {} at the end of normal operation",
            f.conversion_species.as_deref().unwrap_or("—")
        ),
    );
    row(
        &mut t,
        "max temperature, normal",
        format!("{:.1}", celsius(n.max_temperature)),
        "degC",
        format!("at {:.2} h", n.max_temperature_time / HOUR),
    );
    row(
        &mut t,
        "peak reaction power",
        format!("{:.1}", n.peak_reaction_power / 1e3),
        "kW",
        format!("at {:.2} h", n.peak_time / HOUR),
    );
    row(
        &mut t,
        "cooling at the peak",
        format!("{:.1}", n.cooling_at_peak / 1e3),
        "kW",
        "U A(h) (T - T_coolant)".to_string(),
    );
    row(
        &mut t,
        "cooling capacity at Tp",
        format!("{:.1}", n.cooling_capacity_at_tp / 1e3),
        "kW",
        "U A(h) (Tp - T_cold) at the peak, T_cold the coldest jacket".to_string(),
    );
    if matches!(a.plant.jacket, Jacket::Hold { .. }) {
        row(
            &mut t,
            "coldest jacket, normal",
            format!("{:.1}", celsius(n.min_coolant_temperature)),
            "degC",
            "what holding Tp took".to_string(),
        );
    }
    t
}

/// The full model from the worst failure time, and the off-gas.
fn after_failure(a: &Assessment) -> String {
    let mut out = String::new();
    if let Some(r) = &a.runaway {
        out.push_str(&format!(
            "\nAFTER THE WORST COOLING FAILURE ({:.2} h), FULL MODEL WITH THE DECOMPOSITION\n",
            r.failure_time / HOUR
        ));
        let mut t = new_table(&["figure", "value", "unit", "basis"]);
        row(
            &mut t,
            "maximum temperature",
            format!("{:.1}", celsius(r.max_temperature)),
            "degC",
            format!("followed {:.1} h", a.plant.failure_horizon / HOUR),
        );
        row(
            &mut t,
            "time to maximum rate",
            format!("{:.2}", r.time_to_max_rate / HOUR),
            "h",
            format!("from the failure; max rate {:.3} K/min", r.max_rate * 60.0),
        );
        row(
            &mut t,
            "decomposition conversion",
            format!("{:.1}", 100.0 * r.decomposition_conversion),
            "%",
            "at the end of the run".to_string(),
        );
        if let Some(b) = &r.boiling {
            let start = b
                .starts_after
                .map_or("does not boil".to_string(), |s| format!("{:.2}", s / HOUR));
            row(
                &mut t,
                "boiling starts",
                start,
                "h",
                format!("after the failure, at {:.1} degC", celsius(b.boiling_point)),
            );
            row(
                &mut t,
                "peak vapour rate",
                format!("{:.0}", b.peak_vapour_rate_kg_h),
                "kg/h",
                format!("{:.2} mol/s", b.peak_vapour_rate_mol_s),
            );
            let condenser = condenser_text(b);
            row(
                &mut t,
                "peak heat to condense",
                format!("{:.0}", b.peak_heat / 1e3),
                "kW",
                condenser,
            );
        }
        out.push_str(&t.to_string());
        out.push('\n');
    }
    if !a.normal_off_gas.is_empty() {
        out.push_str("\nOFF-GAS (peak rates)\n");
        let mut t = new_table(&["species", "normal operation", "after the worst failure"]);
        for normal in &a.normal_off_gas {
            let failure = a
                .runaway
                .as_ref()
                .and_then(|r| r.off_gas.iter().find(|p| p.species == normal.species));
            t.add_row(vec![
                normal.species.clone(),
                format!(
                    "{:.1} kg/h ({:.3} mol/s)",
                    normal.peak_kg_h, normal.peak_mol_s
                ),
                failure.map_or("—".to_string(), |p| {
                    format!("{:.1} kg/h ({:.3} mol/s)", p.peak_kg_h, p.peak_mol_s)
                }),
            ]);
        }
        out.push_str(&t.to_string());
        out.push('\n');
    }
    out
}

fn verdict(a: &Assessment) -> String {
    match a.figures.class {
        Some(c) => format!("CRITICALITY CLASS {c}\n  {}\n", class_meaning(c)),
        None => "CRITICALITY CLASS: none — there are no decomposition data, so TD24 and the class cannot be given. Obtain DSC/ARC data of the reaction mass before relying on this screening.\n".to_string(),
    }
}

/// The SI unit of a rate constant of overall order n: (m^3/mol)^(n-1)/s.
fn rate_constant_unit(order: f64) -> String {
    let exponent = order - 1.0;
    if exponent.abs() < 1e-12 {
        "1/s".to_string()
    } else if (exponent - 1.0).abs() < 1e-12 {
        "m^3/(mol*s)".to_string()
    } else {
        format!("(m^3/mol)^{exponent}/s")
    }
}

/// Whether the vapour of a boiling runaway stays within the condenser, for both reports.
pub(crate) fn condenser_text(b: &crate::assess::runaway::Boiling) -> String {
    match (b.condenser_capacity, b.condenser_exceeded_after) {
        (Some(c), Some(when)) => format!(
            "exceeds the condenser ({:.0} kW) {:.2} h after the failure",
            c / 1e3,
            when / HOUR
        ),
        (Some(c), None) => format!("within the condenser ({:.0} kW)", c / 1e3),
        (None, _) => "no condenser given".to_string(),
    }
}
